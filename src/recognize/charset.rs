//! The recognizer's alphabet: class id ↔ character, blank = 0, and the normalization every label
//! and every recognized text goes through.
//!
//! Labels are normalized before they are encoded: Arabic presentation forms become base letters
//! ([`crate::text::fold::base_letters`]), then Unicode NFC (UAX #15), which also puts stacked
//! harakat in canonical order (shadda, ccc 33, after fatha, ccc 30 — UnicodeData.txt), so the
//! same mark sequence always has one spelling.

use unicode_normalization::UnicodeNormalization;

use super::model_file::LabelOrder;
use crate::text::bidi::to_reading_order;
use crate::text::fold::base_letters;

/// Class id of the CTC blank (Graves et al. 2006 use the last index; we use 0, like most code).
pub const BLANK: usize = 0;

/// Harakat kept as separate symbols: fathatan U+064B … sukun U+0652, and superscript alef U+0670.
pub const HARAKAT: &[char] = &[
    '\u{064B}', '\u{064C}', '\u{064D}', '\u{064E}', '\u{064F}', '\u{0650}', '\u{0651}', '\u{0652}',
    '\u{0670}',
];

/// Tatweel (kashida), U+0640.
pub const TATWEEL: char = '\u{0640}';

/// Punctuation and space, Arabic and Latin.
const PUNCT: &str = " ،؛؟.:!«»()[]-/,;?\"'%٪*+=";

/// Every character the recognizer can output, in class order (class id = index + 1).
fn symbols() -> Vec<char> {
    let mut out = Vec::new();
    // Arabic letters: hamza U+0621 … ghain U+063A, feh U+0641 … yeh U+064A (Unicode Arabic block).
    out.extend('\u{0621}'..='\u{063A}');
    out.extend('\u{0641}'..='\u{064A}');
    out.push(TATWEEL);
    out.extend_from_slice(HARAKAT);
    out.extend('\u{0660}'..='\u{0669}'); // Arabic-Indic digits
    out.extend('0'..='9');
    out.extend(PUNCT.chars());
    out.extend('A'..='Z');
    out.extend('a'..='z');
    out
}

/// Class ids ↔ characters.
#[derive(Debug, Clone)]
pub struct Charset {
    chars: Vec<char>,
}

impl Default for Charset {
    fn default() -> Self {
        Charset::new()
    }
}

impl Charset {
    /// The built-in alphabet.
    pub fn new() -> Charset {
        Charset { chars: symbols() }
    }

    /// Number of classes the network outputs, blank included.
    pub fn classes(&self) -> usize {
        self.chars.len() + 1
    }

    /// The character of a class id; `None` for the blank or an id out of range.
    pub fn char_of(&self, class: usize) -> Option<char> {
        class
            .checked_sub(1)
            .and_then(|i| self.chars.get(i).copied())
    }

    /// The class id of a character, if it is in the alphabet.
    pub fn class_of(&self, c: char) -> Option<usize> {
        self.chars.iter().position(|&x| x == c).map(|i| i + 1)
    }

    /// Normalize a label, then encode it. `Err` holds the first character outside the alphabet.
    pub fn encode(&self, text: &str) -> Result<Vec<usize>, char> {
        normalize_label(text)
            .chars()
            .map(|c| self.class_of(c).ok_or(c))
            .collect()
    }

    /// A label as the network is taught it: normalized, put in `order`, encoded.
    pub fn encode_label(&self, text: &str, order: LabelOrder) -> Result<Vec<usize>, char> {
        let text = normalize_label(text);
        let text = match order {
            LabelOrder::Logical => text,
            LabelOrder::Reading => to_reading_order(&text),
        };
        text.chars().map(|c| self.class_of(c).ok_or(c)).collect()
    }

    /// Class ids (no blanks) back to text.
    pub fn decode(&self, classes: &[usize]) -> String {
        classes.iter().filter_map(|&k| self.char_of(k)).collect()
    }
}

/// The one spelling of a label: presentation forms → base letters, NFC, runs of white space → one
/// space, no space at either end.
pub fn normalize_label(text: &str) -> String {
    let nfc: String = base_letters(text).nfc().collect();
    nfc.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Whether `c` is one of the harakat the recognizer knows.
pub fn is_haraka(c: char) -> bool {
    HARAKAT.contains(&c)
}

/// Text without harakat and tatweel (what is written when harakat are not kept).
pub fn strip_marks(text: &str) -> String {
    text.chars()
        .filter(|&c| !is_haraka(c) && c != TATWEEL)
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn alphabet_covers_the_required_letters_and_signs() {
        let cs = Charset::new();
        for c in "ءآأؤإئابةتثجحخدذرزسشصضطظعغفقكلمنهوىي".chars()
        {
            assert!(cs.class_of(c).is_some(), "letter {c} missing");
        }
        for c in "٠١٢٣٤٥٦٧٨٩0123456789،؛؟.:!«»()[]-/ AZaz\u{0640}".chars() {
            assert!(cs.class_of(c).is_some(), "sign {c:?} missing");
        }
        for &h in HARAKAT {
            assert!(cs.class_of(h).is_some());
        }
        assert_eq!(cs.char_of(BLANK), None);
        // Ids are unique: decoding every class gives distinct characters.
        let all: std::collections::BTreeSet<char> =
            (1..cs.classes()).filter_map(|k| cs.char_of(k)).collect();
        assert_eq!(all.len(), cs.classes() - 1);
    }

    #[test]
    fn lam_alef_ligature_is_encoded_as_two_letters() {
        let cs = Charset::new();
        // U+FEFB LAM WITH ALEF ISOLATED FORM → 0644 0627 (UnicodeData.txt decomposition).
        let ids = cs.encode("\u{FEFB}").unwrap();
        assert_eq!(cs.decode(&ids), "\u{0644}\u{0627}");
    }

    #[test]
    fn harakat_get_canonical_order() {
        // shadda (ccc 33) + fatha (ccc 30) → fatha + shadda after canonical reordering (UAX #15).
        assert_eq!(normalize_label("ب\u{0651}\u{064E}"), "ب\u{064E}\u{0651}");
        // alef + hamza above (U+0654) composes to U+0623 under NFC.
        assert_eq!(normalize_label("\u{0627}\u{0654}"), "\u{0623}");
    }

    #[test]
    fn foreign_characters_are_reported() {
        assert_eq!(Charset::new().encode("ب€"), Err('€'));
    }

    #[test]
    fn reading_order_labels_turn_numbers_round() {
        let cs = Charset::new();
        let logical = cs.encode_label("رقم 283", LabelOrder::Logical).unwrap();
        let reading = cs.encode_label("رقم 283", LabelOrder::Reading).unwrap();
        assert_eq!(cs.decode(&logical), "رقم 283");
        assert_eq!(cs.decode(&reading), "رقم 382");
    }

    #[test]
    fn marks_are_stripped() {
        assert_eq!(strip_marks("كَتَـــبَ"), "كتب");
    }
}
