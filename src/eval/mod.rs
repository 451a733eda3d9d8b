//! Recognition accuracy: CER and WER over transcribed lines, with and without harakat and with
//! search folding; per-font figures when the ground truth names the font; the worst lines.
//!
//! CER = character edits (Levenshtein over Unicode scalar values) / characters in the truth;
//! WER = word edits / words in the truth — the usual definitions (e.g. Morris, Maier & Green
//! 2004 for WER). Both texts are normalized like training labels first.

pub mod align;

use std::collections::BTreeMap;
use std::path::Path;

use self::align::{char_edits, word_edits};
use crate::output::report::is_low_confidence;
use crate::recognize::charset::{is_haraka, normalize_label, strip_marks, TATWEEL};
use crate::recognize::Recognizer;
use crate::train::data::{find_pairs, read_gray};
use crate::{Error, Result};

/// One evaluated line.
#[derive(Debug, Clone, PartialEq)]
pub struct EvalLine {
    /// File stem, e.g. `000123`.
    pub id: String,
    /// Font named by the ground truth, if any.
    pub font: Option<String>,
    /// Normalized ground truth.
    pub truth: String,
    /// Normalized recognized text (harakat kept).
    pub got: String,
    /// Per word of `got`, the recognizer's confidence in each of its letters (harakat and tatweel
    /// left out, as `ocr` leaves them out by default).
    pub letter_confidence: Vec<Vec<f32>>,
}

/// How well a rule for flagging words finds the wrong ones.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct FlagFigures {
    /// Words read (harakat left out).
    pub words: usize,
    /// Of them, words not read right.
    pub wrong: usize,
    /// Words the rule flags.
    pub flagged: usize,
    /// Wrong words the rule flags.
    pub flagged_wrong: usize,
}

/// Error counts and rates for one way of comparing.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Rates {
    /// Character edits.
    pub char_edits: usize,
    /// Characters in the truth.
    pub chars: usize,
    /// Word edits.
    pub word_edits: usize,
    /// Words in the truth.
    pub words: usize,
}

impl Rates {
    /// Character error rate, 0..(may exceed 1).
    pub fn cer(&self) -> f64 {
        self.char_edits as f64 / self.chars.max(1) as f64
    }

    /// Word error rate.
    pub fn wer(&self) -> f64 {
        self.word_edits as f64 / self.words.max(1) as f64
    }

    fn add(&mut self, truth: &str, got: &str) {
        self.char_edits += char_edits(truth, got);
        self.chars += truth.chars().count();
        self.word_edits += word_edits(truth, got);
        self.words += truth.split_whitespace().count();
    }
}

/// The three figures the project reports.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Figures {
    /// Texts as they are.
    pub exact: Rates,
    /// Harakat and tatweel removed from both.
    pub no_harakat: Rates,
    /// Both folded for search ([`fold_for_search`]).
    pub folded: Rates,
}

impl Figures {
    /// Figures over a set of lines.
    pub fn of<'a>(lines: impl IntoIterator<Item = &'a EvalLine>) -> Figures {
        let mut f = Figures::default();
        for l in lines {
            f.exact.add(&l.truth, &l.got);
            f.no_harakat
                .add(&strip_marks(&l.truth), &strip_marks(&l.got));
            f.folded
                .add(&fold_for_search(&l.truth), &fold_for_search(&l.got));
        }
        f
    }
}

/// Character error rate of a `--txt` output (pages split by form feed) against known page text:
/// the truth's words cleaned as the text layer cleans them (harakat dropped unless `opts` keeps
/// them), white space collapsed on both sides; Levenshtein distance over Unicode scalar values.
pub fn text_output_cer(
    truth: &[crate::text::PageText],
    txt: &str,
    opts: crate::output::text_layer::LayerOptions,
) -> f64 {
    let (mut edits, mut len) = (0usize, 0usize);
    for (page, got) in truth.iter().zip(txt.split('\u{c}')) {
        let words: Vec<String> = page
            .lines
            .iter()
            .flat_map(|l| &l.words)
            .map(|w| crate::output::text_layer::clean_word(&w.text, opts))
            .filter(|w| !w.is_empty())
            .collect();
        let want = words.join(" ");
        let got = got.split_whitespace().collect::<Vec<_>>().join(" ");
        edits += char_edits(&want, &got);
        len += want.chars().count();
    }
    edits as f64 / len.max(1) as f64
}

/// Arabic folding for search: hamza and alef forms → bare alef / waw / ya, alef maqsura → ya,
/// ta marbuta → ha, harakat and tatweel removed, Arabic-Indic digits → ASCII digits.
/// Common practice in Arabic information retrieval (e.g. Larkey, Ballesteros & Connell 2002,
/// "light stemming" normalization), no single standard.
pub fn fold_for_search(text: &str) -> String {
    strip_marks(text)
        .chars()
        .map(|c| match c {
            'آ' | 'أ' | 'إ' | 'ٱ' => 'ا',
            'ؤ' => 'و',
            'ئ' | 'ى' => 'ي',
            'ة' => 'ه',
            '\u{0660}'..='\u{0669}' => char::from(b'0' + (c as u32 - 0x0660) as u8),
            _ => c,
        })
        .collect()
}

/// Result of evaluating a folder.
#[derive(Debug, Clone)]
pub struct EvalReport {
    /// Every line.
    pub lines: Vec<EvalLine>,
    /// Over all lines.
    pub all: Figures,
    /// Per font, when fonts are known: name, line count, figures.
    pub per_font: Vec<(String, usize, Figures)>,
}

impl EvalReport {
    /// Build the report from evaluated lines.
    pub fn new(lines: Vec<EvalLine>) -> EvalReport {
        let mut by_font: BTreeMap<String, Vec<&EvalLine>> = BTreeMap::new();
        for l in &lines {
            if let Some(f) = &l.font {
                by_font.entry(f.clone()).or_default().push(l);
            }
        }
        let per_font = by_font
            .into_iter()
            .map(|(f, ls)| (f, ls.len(), Figures::of(ls)))
            .collect();
        EvalReport {
            all: Figures::of(&lines),
            per_font,
            lines,
        }
    }

    /// How many words `flag` (given a word's letter confidences) flags, and how many of the wrong
    /// words among them; a word is right when a least-edit alignment of the line's words, harakat
    /// left out on both sides, pairs it with the same word of the truth.
    pub fn flag_figures(&self, flag: impl Fn(&[f32]) -> bool) -> FlagFigures {
        let mut f = FlagFigures::default();
        for l in &self.lines {
            let (truth, got) = (strip_marks(&l.truth), strip_marks(&l.got));
            let (tw, gw): (Vec<&str>, Vec<&str>) = (
                truth.split_whitespace().collect(),
                got.split_whitespace().collect(),
            );
            if gw.len() != l.letter_confidence.len() {
                continue; // a word of marks alone: its letters cannot be told apart
            }
            for (right, conf) in align::matched_words(&tw, &gw)
                .into_iter()
                .zip(&l.letter_confidence)
            {
                let flagged = flag(conf);
                f.words += 1;
                f.wrong += usize::from(!right);
                f.flagged += usize::from(flagged);
                f.flagged_wrong += usize::from(flagged && !right);
            }
        }
        f
    }

    /// [`Self::flag_figures`] for the rule of the report and the proofreading view: a word is
    /// flagged when the mean of its letter confidences is low ([`is_low_confidence`]).
    pub fn report_flag_figures(&self) -> FlagFigures {
        self.flag_figures(|c| is_low_confidence(c.iter().sum::<f32>() / c.len().max(1) as f32))
    }

    /// The `n` lines with the highest CER, worst first.
    pub fn worst(&self, n: usize) -> Vec<(f64, &EvalLine)> {
        let mut v: Vec<(f64, &EvalLine)> = self
            .lines
            .iter()
            .map(|l| {
                (
                    char_edits(&l.truth, &l.got) as f64 / l.truth.chars().count().max(1) as f64,
                    l,
                )
            })
            .collect();
        v.sort_by(|a, b| b.0.total_cmp(&a.0).then_with(|| a.1.id.cmp(&b.1.id)));
        v.truncate(n);
        v
    }
}

/// Font per line id from `manifest.tsv` (columns `id`, `font`, … with a header) or `fonts.tsv`
/// (`id<TAB>font`, no header) in `dir`; empty when neither exists.
pub fn fonts_in(dir: &Path) -> BTreeMap<String, String> {
    let mut out = BTreeMap::new();
    for name in ["manifest.tsv", "fonts.tsv"] {
        let Ok(text) = std::fs::read_to_string(dir.join(name)) else {
            continue;
        };
        for row in text.lines() {
            let mut cols = row.split('\t');
            if let (Some(id), Some(font)) = (cols.next(), cols.next()) {
                if id != "id" {
                    out.insert(id.to_string(), font.to_string());
                }
            }
        }
    }
    out
}

/// Recognize every line of `dir` and compare with its `.gt.txt`.
pub fn evaluate_dir(dir: &Path, rec: &Recognizer) -> Result<EvalReport> {
    let pairs = find_pairs(dir)?;
    if pairs.is_empty() {
        return Err(Error::Usage(format!(
            "{}: no line images with .gt.txt beside them",
            dir.display()
        )));
    }
    let fonts = fonts_in(dir);
    let mut lines = Vec::with_capacity(pairs.len());
    for chunk in pairs.chunks(64) {
        let images = chunk
            .iter()
            .map(|(img, _)| read_gray(img))
            .collect::<Result<Vec<_>>>()?;
        for ((img, gt), r) in chunk.iter().zip(rec.recognize_lines(&images)) {
            let truth = std::fs::read_to_string(gt).map_err(|e| Error::io(gt, e))?;
            let id = img
                .file_stem()
                .and_then(|s| s.to_str())
                .unwrap_or_default()
                .to_string();
            let letter_confidence = r
                .chars
                .split(|c| c.ch == ' ')
                .map(|w| {
                    w.iter()
                        .filter(|c| !is_haraka(c.ch) && c.ch != TATWEEL)
                        .map(|c| c.confidence)
                        .collect::<Vec<f32>>()
                })
                .filter(|w| !w.is_empty())
                .collect();
            lines.push(EvalLine {
                font: fonts.get(&id).cloned(),
                id,
                truth: normalize_label(&truth),
                got: normalize_label(&r.text),
                letter_confidence,
            });
        }
    }
    Ok(EvalReport::new(lines))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn line(font: &str, truth: &str, got: &str) -> EvalLine {
        EvalLine {
            id: truth.into(),
            font: Some(font.into()),
            truth: truth.into(),
            got: got.into(),
            letter_confidence: Vec::new(),
        }
    }

    #[test]
    fn harakat_and_folding_figures_forgive_what_they_should() {
        // Truth with harakat, reading without: exact counts 2 edits, the other two none.
        let l = line("A", "كَتَب", "كتب");
        let f = Figures::of([&l]);
        assert_eq!((f.exact.char_edits, f.exact.chars), (2, 5));
        assert_eq!(f.no_harakat.char_edits, 0);
        assert_eq!(f.folded.char_edits, 0);
        // Alef with hamza read as bare alef, ta marbuta as ha: only folding forgives.
        let l = line("A", "أسرة", "اسره");
        let f = Figures::of([&l]);
        assert_eq!(
            (
                f.exact.char_edits,
                f.no_harakat.char_edits,
                f.folded.char_edits
            ),
            (2, 2, 0)
        );
        assert_eq!(f.exact.word_edits, 1);
    }

    #[test]
    fn per_font_and_worst_lines() {
        let r = EvalReport::new(vec![
            line("A", "في البيت", "في البيت"),
            line("B", "كتاب", "كتب"),
            line("A", "باب", ""),
        ]);
        assert_eq!(r.per_font.len(), 2);
        assert_eq!((r.per_font[0].0.as_str(), r.per_font[0].1), ("A", 2));
        let w = r.worst(2);
        assert_eq!(w[0].1.truth, "باب");
        assert_eq!(w[0].0, 1.0);
        assert_eq!(w[1].1.truth, "كتاب");
    }

    #[test]
    fn flag_figures_count_flagged_words_and_the_wrong_ones_among_them() {
        let mut l = line("f", "في البيت كتاب", "في الييت كتاب");
        l.letter_confidence = vec![
            vec![0.99, 0.98],
            vec![0.9, 0.2, 0.9, 0.9, 0.9],
            vec![0.6; 4],
        ];
        // A line whose words and confidences do not pair up is left out.
        let mut odd = line("f", "باب", "باب دار");
        odd.letter_confidence = vec![vec![0.1; 3]];
        let r = EvalReport::new(vec![l, odd]);
        let low = |c: &[f32]| c.iter().sum::<f32>() / (c.len() as f32) < 0.8;
        assert_eq!(
            r.flag_figures(low),
            FlagFigures {
                words: 3,
                wrong: 1,
                flagged: 2,
                flagged_wrong: 1
            }
        );
    }

    #[test]
    fn digits_fold_to_ascii() {
        assert_eq!(fold_for_search("سنة ١٩٤٨"), "سنه 1948");
    }

    fn heldout_report(built_in: fn() -> Option<crate::Result<Recognizer>>) -> EvalReport {
        let mut rec = built_in().expect("this build has the model").unwrap();
        rec.options.keep_harakat = true;
        let dir = Path::new(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/lines/heldout"
        ));
        evaluate_dir(dir, &rec).unwrap()
    }

    /// The project's target (issue 4): the shipped model reads the 200 committed lines in fonts it
    /// never saw with CER ≤ 5 %. The larger built-in model does (4.15 % measured); the
    /// default one does not yet (see MODEL.md for the measured CER).
    #[test]
    fn shipped_model_reads_heldout_lines_within_target() {
        let r = heldout_report(Recognizer::built_in_careful);
        assert!(
            r.all.exact.cer() <= 0.05,
            "CER {:.2} %",
            r.all.exact.cer() * 100.0
        );
    }

    /// Regression guard: the shipped models must not get worse than they were when committed
    /// (measured CER on these lines, see MODEL.md, plus 3 points of slack).
    #[test]
    fn shipped_models_do_not_regress_on_heldout_lines() {
        for (name, built_in, measured) in [
            (
                "default",
                Recognizer::built_in as fn() -> _,
                MEASURED_HELDOUT_CER,
            ),
            (
                "careful",
                Recognizer::built_in_careful,
                MEASURED_CAREFUL_HELDOUT_CER,
            ),
        ] {
            let report = heldout_report(built_in);
            let cer = report.all.exact.cer();
            assert!(
                cer <= measured + 0.03,
                "{name} model: CER {:.2} %",
                cer * 100.0
            );
            // The report's word rule points a proofreader at most of the wrong words for a small
            // share of the words (measured at stop 35: 13.5 % of the words flagged holding 69.6 %
            // of the wrong ones with the default model, 12.6 and 62.0 % with the careful one).
            let f = report.report_flag_figures();
            let flagged = f.flagged as f64 / f.words.max(1) as f64;
            let held = f.flagged_wrong as f64 / f.wrong.max(1) as f64;
            assert!(
                f.wrong >= 50 && flagged <= 0.2 && held >= 0.55,
                "{name} model: {f:?}"
            );
        }
    }

    /// CER of the shipped models on `tests/data/lines/heldout` (runs r21 and r26), read as `ocr`
    /// reads (a beam of 8 and the letter model; measured at stop 35; the best path alone gave
    /// 5.32 and 4.46 %).
    const MEASURED_HELDOUT_CER: f64 = 0.0514;
    const MEASURED_CAREFUL_HELDOUT_CER: f64 = 0.0415;
}
