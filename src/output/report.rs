//! The confidence report (`--report FILE.json`): per page, how much text was found and how sure the
//! recognizer was; which pages need a human look, and why; totals for the run.
//!
//! The low-confidence threshold and the flag rules are defined here once ([`LOW_CONFIDENCE`],
//! [`is_flagged`], [`page_flags`]) so every view of the text (this report, the proofreading view)
//! marks the same words and pages.

use serde::Serialize;

use crate::error::{Error, Result};
use crate::pipeline::PageDone;
use crate::text::{PageText, Word};

/// A word whose recognizer confidence is below this needs a human look.
///
/// Word confidence is the mean of the word's per-character CTC peak probabilities
/// (`recognize`). Chosen at stop 35 on measurements (`mistara eval` counts the words it flags and
/// the wrong words among them): on the validation lines of the training faces (val4, default
/// model) 0.95 flags 10 % of the words and holds 75 % of the wrong ones, where 0.8, the guess
/// before, flagged 2 % and held 29 %; on held-out lines 13–17 % flagged, 70–75 % of the wrong
/// ones held (0.8: 3 %, 19–21 %).
pub const LOW_CONFIDENCE: f32 = 0.95;

/// A page is flagged when more than this share of its words are low-confidence.
///
/// Chosen at stop 35 on a 40-page book in training faces with heavy scan damage (`synth book
/// --fonts train --degrade 0.8 --seed 77`): it flags the pages read with CER 2.7 % or more but one
/// (and two at 1.8–1.9 %), where the rule before (0.10 of the words below 0.8) flagged three of
/// them. On the 50-page held-out book of `examples/book_bench` it flags the 15 pages read at 3.3–5.8
/// % and none of the 35 read at 1.7 % or better; the rule before flagged none.
pub const LOW_SHARE_FLAG: f64 = 0.20;

/// Whether a word of this confidence needs a human look: below [`LOW_CONFIDENCE`], or not a
/// number.
pub fn is_low_confidence(confidence: f32) -> bool {
    confidence.is_nan() || confidence < LOW_CONFIDENCE
}

/// Whether a word needs a human look: its confidence is below [`LOW_CONFIDENCE`] (or not a number).
pub fn is_flagged(word: &Word) -> bool {
    is_low_confidence(word.confidence)
}

/// Why a page needs a human look.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "why", rename_all = "snake_case")]
pub enum PageFlag {
    /// The page was read but no text was found on it.
    NoTextFound,
    /// More than [`LOW_SHARE_FLAG`] of the page's words are below [`LOW_CONFIDENCE`].
    ManyLowConfidenceWords {
        /// Share of low-confidence words, 0 to 1.
        share: f64,
    },
    /// The page could not be decoded or analysed and was kept without text.
    Unreadable {
        /// What went wrong.
        error: String,
    },
}

/// The flags of a page that was read (an empty list: no human look needed by these rules).
pub fn page_flags(text: &PageText) -> Vec<PageFlag> {
    let words = text.word_count();
    if words == 0 {
        return vec![PageFlag::NoTextFound];
    }
    let low = text
        .lines
        .iter()
        .flat_map(|l| &l.words)
        .filter(|w| is_flagged(w))
        .count();
    let share = low as f64 / words as f64;
    if share > LOW_SHARE_FLAG {
        vec![PageFlag::ManyLowConfidenceWords { share }]
    } else {
        Vec::new()
    }
}

/// What happened to a page.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum PageStatus {
    /// Its text was found (recognized, or laid from a transcript).
    Read,
    /// A PDF page that already carried text, left as it was.
    HadText,
    /// Outside the pages asked for.
    NotRead,
    /// Could not be decoded or analysed; kept without text.
    Unreadable,
}

/// One page of the report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PageSummary {
    /// 1-based page number.
    pub page: usize,
    /// What happened to it.
    pub status: PageStatus,
    /// Text lines.
    pub lines: usize,
    /// Words.
    pub words: usize,
    /// Mean word confidence, 0 to 1 (`null` without words).
    pub mean_confidence: Option<f64>,
    /// Words below [`LOW_CONFIDENCE`].
    pub low_confidence_words: usize,
    /// Their share of the page's words (`null` without words).
    pub low_confidence_share: Option<f64>,
    /// Needs a human look.
    pub flagged: bool,
    /// Why it is flagged.
    pub flags: Vec<PageFlag>,
    /// Time spent finding and recognizing the text, in milliseconds.
    pub read_ms: f64,
}

impl PageSummary {
    /// Summarize one finished page.
    pub fn of(p: &PageDone) -> PageSummary {
        let status = match (p.unreadable, p.had_text, p.image.is_some()) {
            (Some(_), _, _) => PageStatus::Unreadable,
            (None, true, _) => PageStatus::HadText,
            (None, false, true) => PageStatus::Read,
            (None, false, false) => PageStatus::NotRead,
        };
        let conf: Vec<f64> = p
            .text
            .lines
            .iter()
            .flat_map(|l| &l.words)
            .map(|w| w.confidence as f64)
            .collect();
        let words = conf.len();
        let low = p
            .text
            .lines
            .iter()
            .flat_map(|l| &l.words)
            .filter(|w| is_flagged(w))
            .count();
        let flags = match (status, p.unreadable) {
            (PageStatus::Read, _) => page_flags(p.text),
            (PageStatus::Unreadable, Some(why)) => vec![PageFlag::Unreadable {
                error: why.to_string(),
            }],
            _ => Vec::new(),
        };
        PageSummary {
            page: p.done,
            status,
            lines: p.text.lines.len(),
            words,
            mean_confidence: (words > 0).then(|| conf.iter().sum::<f64>() / words as f64),
            low_confidence_words: low,
            low_confidence_share: (words > 0).then(|| low as f64 / words as f64),
            flagged: !flags.is_empty(),
            flags,
            read_ms: p.read_ms,
        }
    }
}

/// Totals over the run.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Totals {
    /// Pages in the document.
    pub pages: usize,
    /// Pages whose text was found.
    pub pages_read: usize,
    /// Text lines.
    pub lines: usize,
    /// Words.
    pub words: usize,
    /// Mean confidence over all words (`null` without words).
    pub mean_confidence: Option<f64>,
    /// Words below [`LOW_CONFIDENCE`].
    pub low_confidence_words: usize,
    /// Their share of all words (`null` without words).
    pub low_confidence_share: Option<f64>,
    /// 1-based numbers of the flagged pages.
    pub flagged_pages: Vec<usize>,
    /// Time spent finding and recognizing text, summed over pages, in milliseconds.
    pub read_ms: f64,
}

/// The whole report, as written to JSON.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Report {
    /// The caution that the text is machine-recognized.
    pub notice: String,
    /// Software and version.
    pub software: String,
    /// The text came from a supplied transcript, not from recognition.
    pub from_transcript: bool,
    /// The rules behind `flagged`.
    pub rules: Rules,
    /// One entry per page, in order.
    pub pages: Vec<PageSummary>,
    /// Totals.
    pub totals: Totals,
}

/// The thresholds the report used.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Rules {
    /// [`LOW_CONFIDENCE`].
    pub low_confidence_below: f32,
    /// [`LOW_SHARE_FLAG`].
    pub flag_page_when_low_share_above: f64,
    /// The rules in words.
    pub text: &'static str,
}

/// Collects page summaries during a run (small: numbers only) and writes the report at the end.
#[derive(Debug, Clone, Default)]
pub struct ReportBuilder {
    pages: Vec<PageSummary>,
    conf_sum: f64,
    from_transcript: bool,
}

impl ReportBuilder {
    /// A new, empty report.
    pub fn new(from_transcript: bool) -> ReportBuilder {
        ReportBuilder {
            from_transcript,
            ..ReportBuilder::default()
        }
    }

    /// Add one finished page.
    pub fn page(&mut self, p: &PageDone) {
        let s = PageSummary::of(p);
        self.conf_sum += s.mean_confidence.unwrap_or(0.0) * s.words as f64;
        self.pages.push(s);
    }

    /// The finished report.
    pub fn build(self) -> Report {
        let words: usize = self.pages.iter().map(|p| p.words).sum();
        let low: usize = self.pages.iter().map(|p| p.low_confidence_words).sum();
        let totals = Totals {
            pages: self.pages.len(),
            pages_read: self
                .pages
                .iter()
                .filter(|p| p.status == PageStatus::Read)
                .count(),
            lines: self.pages.iter().map(|p| p.lines).sum(),
            words,
            mean_confidence: (words > 0).then(|| self.conf_sum / words as f64),
            low_confidence_words: low,
            low_confidence_share: (words > 0).then(|| low as f64 / words as f64),
            flagged_pages: self
                .pages
                .iter()
                .filter(|p| p.flagged)
                .map(|p| p.page)
                .collect(),
            read_ms: self.pages.iter().map(|p| p.read_ms).sum(),
        };
        Report {
            notice: super::MACHINE_TEXT_NOTICE.to_string(),
            software: format!("mistara {}", env!("CARGO_PKG_VERSION")),
            from_transcript: self.from_transcript,
            rules: Rules {
                low_confidence_below: LOW_CONFIDENCE,
                flag_page_when_low_share_above: LOW_SHARE_FLAG,
                text:
                    "A word is low-confidence when its confidence is below low_confidence_below. \
                       A page that was read is flagged when no text was found on it, or when more \
                       than flag_page_when_low_share_above of its words are low-confidence.",
            },
            pages: self.pages,
            totals,
        }
    }

    /// Write the report as pretty JSON to `path`, atomically; refuses to write over an input.
    pub fn write(self, path: &std::path::Path, inputs: &[std::path::PathBuf]) -> Result<()> {
        let json = serde_json::to_vec_pretty(&self.build()).map_err(|e| Error::Output {
            path: path.to_path_buf(),
            why: e.to_string(),
        })?;
        super::write_atomic(path, &json, inputs)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::layout::geometry::Rect;
    use crate::page::PageImage;
    use crate::text::{RegionKind, TextLine};

    fn text(conf: &[f32]) -> PageText {
        let words = conf
            .iter()
            .map(|&c| Word {
                text: "كلمة".into(),
                bbox: Rect::new(0.0, 0.0, 10.0, 10.0),
                confidence: c,
            })
            .collect();
        PageText {
            lines: vec![TextLine {
                words,
                bbox: Rect::new(0.0, 0.0, 10.0, 10.0),
                region: RegionKind::Body,
            }],
        }
    }

    #[test]
    fn threshold_is_strict_and_nan_is_flagged() {
        let w = |c| Word {
            text: "x".into(),
            bbox: Rect::default(),
            confidence: c,
        };
        assert!(!is_flagged(&w(LOW_CONFIDENCE)));
        assert!(is_flagged(&w(LOW_CONFIDENCE - 0.001)));
        assert!(is_flagged(&w(f32::NAN)));
    }

    #[test]
    fn page_flags_follow_the_share_rule() {
        assert_eq!(
            page_flags(&PageText::default()),
            vec![PageFlag::NoTextFound]
        );
        // Of 20 words, as many low as the limit allows: not flagged; one more: flagged.
        let at_limit = (LOW_SHARE_FLAG * 20.0).round() as usize;
        let mut c = vec![0.99; 20];
        c[..at_limit].fill(0.2);
        assert!(page_flags(&text(&c)).is_empty());
        c[at_limit] = 0.5;
        let share = (at_limit + 1) as f64 / 20.0;
        assert_eq!(
            page_flags(&text(&c)),
            vec![PageFlag::ManyLowConfidenceWords { share }]
        );
    }

    #[test]
    fn totals_weight_pages_by_words() {
        let image = PageImage::new(image::GrayImage::new(4, 4), 300.0, 300.0);
        let (a, b) = (text(&[1.0, 1.0, 1.0]), text(&[0.2]));
        let mut r = ReportBuilder::new(false);
        for (i, t) in [&a, &b].into_iter().enumerate() {
            r.page(&PageDone {
                done: i + 1,
                total: 2,
                image: Some(&image),
                text: t,
                had_text: false,
                read_ms: 5.0,
                unreadable: None,
            });
        }
        let r = r.build();
        assert_eq!(r.totals.words, 4);
        assert!((r.totals.mean_confidence.unwrap() - 0.8).abs() < 1e-9);
        assert_eq!(r.totals.flagged_pages, vec![2]);
        assert_eq!(r.totals.read_ms, 10.0);
        assert_eq!(r.pages[1].low_confidence_share, Some(1.0));
    }
}
