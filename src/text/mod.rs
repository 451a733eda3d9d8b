//! Recognized text of a page: lines in reading order, words in logical order, each with its box.

pub mod bidi;
pub mod fold;

use serde::{Deserialize, Serialize};

use crate::layout::geometry::Rect;

/// What a region of the page is, so outputs can keep kinds apart.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum RegionKind {
    /// Main text.
    #[default]
    Body,
    /// Running header.
    Header,
    /// Page number.
    PageNumber,
    /// Footnote below the main text.
    Footnote,
    /// Note or line number in the margin.
    Margin,
    /// Title or heading.
    Title,
}

/// One word: logical-order Unicode text and where it is on the page image.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Word {
    /// Logical-order text, no spaces.
    pub text: String,
    /// Box in pixel space.
    pub bbox: Rect,
    /// Recognizer confidence in `0..=1` (1 for a known transcript).
    pub confidence: f32,
}

/// One text line: words in logical order.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TextLine {
    /// Words in logical (reading) order.
    pub words: Vec<Word>,
    /// Box of the whole line in pixel space.
    pub bbox: Rect,
    /// Region the line belongs to.
    pub region: RegionKind,
}

impl TextLine {
    /// The line's logical text, words joined by one space.
    pub fn text(&self) -> String {
        let words: Vec<&str> = self.words.iter().map(|w| w.text.as_str()).collect();
        words.join(" ")
    }
}

/// All text of one page, lines in reading order.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct PageText {
    /// Lines in reading order.
    pub lines: Vec<TextLine>,
}

impl PageText {
    /// The page's plain text: lines in reading order joined by `\n`.
    pub fn plain_text(&self) -> String {
        let lines: Vec<String> = self.lines.iter().map(TextLine::text).collect();
        lines.join("\n")
    }

    /// Number of words on the page.
    pub fn word_count(&self) -> usize {
        self.lines.iter().map(|l| l.words.len()).sum()
    }
}
