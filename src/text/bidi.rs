//! Logical ↔ visual order with the Unicode Bidirectional Algorithm (UAX #9, via `unicode-bidi`).
//!
//! Recognized text is stored in logical order. A PDF draws glyphs left to right, so the text layer
//! needs each word's glyphs, and a line's words, in visual order of a right-to-left paragraph.

use unicode_bidi::{BidiInfo, Level};

/// A word's characters in visual (left-to-right drawing) order, as part of a right-to-left paragraph.
///
/// Arabic letters come out reversed, digit and Latin runs stay as written (UAX #9 rules W1–W7, L2).
/// Characters are not mirrored (rule L4 is left out): poppler, pdf.js and MuPDF turn a reversed run
/// back by plain reversal, so `(نص)` must be stored as `)صن(` to come out as `(نص)`. PDFium alone
/// mirrors while it reverses (measured; see tests/integration/readers.rs).
pub fn visual_word(word: &str) -> String {
    if word.is_empty() {
        return String::new();
    }
    let info = BidiInfo::new(word, Some(Level::rtl()));
    let para = &info.paragraphs[0];
    let (levels, runs) = info.visual_runs(para, para.range.clone());
    let mut out = String::with_capacity(word.len());
    for run in runs {
        let text = &word[run.clone()];
        if levels[run.start].is_rtl() {
            out.extend(text.chars().rev());
        } else {
            out.push_str(text);
        }
    }
    out
}

/// The left-to-right visual position of each word of a logical-order line in a right-to-left paragraph.
///
/// Returns word indices sorted from the leftmost word to the rightmost.
pub fn visual_word_order(words: &[&str]) -> Vec<usize> {
    let line = words.join(" ");
    if line.is_empty() {
        return Vec::new();
    }
    let info = BidiInfo::new(&line, Some(Level::rtl()));
    let para = &info.paragraphs[0];
    let levels = info.reordered_levels_per_char(para, para.range.clone());
    let visual_to_logical = BidiInfo::reorder_visual(&levels);
    // Char index → word index.
    let mut word_of_char = Vec::with_capacity(levels.len());
    for (i, w) in words.iter().enumerate() {
        word_of_char.extend(std::iter::repeat_n(Some(i), w.chars().count()));
        word_of_char.push(None);
    }
    let mut order = Vec::with_capacity(words.len());
    for logical in visual_to_logical {
        if let Some(Some(w)) = word_of_char.get(logical) {
            if !order.contains(w) {
                order.push(*w);
            }
        }
    }
    order
}

#[cfg(test)]
mod tests {
    use super::*;

    // Expected orders follow UAX #9 (Unicode 15) rules W2, W4, N1, L2 applied by hand.
    #[test]
    fn arabic_word_is_reversed() {
        assert_eq!(visual_word("مكتبة"), "ةبتكم");
    }

    #[test]
    fn numbers_keep_their_order() {
        assert_eq!(visual_word("١٩٣٤"), "١٩٣٤");
        assert_eq!(visual_word("2024/117"), "2024/117");
    }

    #[test]
    fn latin_word_keeps_its_order() {
        assert_eq!(visual_word("Leiden"), "Leiden");
    }

    #[test]
    fn rtl_line_words_reverse() {
        assert_eq!(visual_word_order(&["سجل", "القضايا", "ص"]), vec![2, 1, 0]);
    }

    #[test]
    fn numbers_separated_by_a_space_are_separate_runs() {
        // "سنة 1934 1935 الموافق": by rule N1 numbers count as R for the space between them,
        // so that space is at level 1 and each number is its own level-2 run: visual order is
        // الموافق 1935 1934 سنة (left to right) — UAX #9 §3.3.5, N1.
        let order = visual_word_order(&["سنة", "1934", "1935", "الموافق"]);
        assert_eq!(order, vec![3, 2, 1, 0]);
        // A number and a Latin word are one LTR run (L between EN and L): they keep their order.
        let order = visual_word_order(&["رقم", "Case", "7", "هنا"]);
        assert_eq!(order, vec![3, 1, 2, 0]);
    }
}
