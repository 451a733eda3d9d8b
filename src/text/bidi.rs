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

/// A right-to-left line's characters in reading order: the order in which they stand on the
/// line from its right edge to its left. Returns char indices into `text`: the `i`-th character
/// met from the right is `text`'s character `order[i]`.
///
/// Arabic runs keep their logical order; left-to-right runs (Latin words, numbers) come out
/// backwards, because on the page they stand left to right (UAX #9 rules W1–W7, N1–N2, I1–I2,
/// L1–L2 for a right-to-left paragraph). A recognizer that reads a line from its right edge meets
/// the glyphs in this order, so it is the order its labels are written in.
pub fn reading_order(text: &str) -> Vec<usize> {
    if text.is_empty() {
        return Vec::new();
    }
    let info = BidiInfo::new(text, Some(Level::rtl()));
    let mut order = Vec::with_capacity(text.len());
    for para in &info.paragraphs {
        let levels = info.reordered_levels_per_char(para, para.range.clone());
        let start = text[..para.range.start].chars().count();
        let n = text[para.range.clone()].chars().count();
        // `levels` covers the whole text; this paragraph's chars are start..start + n.
        let visual = BidiInfo::reorder_visual(&levels[start..start + n]);
        order.extend(visual.into_iter().rev().map(|k| start + k));
    }
    order
}

/// `text` (logical order) rewritten in reading order ([`reading_order`]).
pub fn to_reading_order(text: &str) -> String {
    let chars: Vec<char> = text.chars().collect();
    reading_order(text).into_iter().map(|k| chars[k]).collect()
}

/// The way back from reading order: char indices into `read` (characters as met from a line's
/// right edge) in logical order — the `i`-th logical character is `read`'s character `order[i]`.
///
/// Reading order is logical order with each left-to-right run turned round where it stands, and
/// turning a run round again undoes it; only the runs must be found again. Two guesses are
/// tried, each checked by going forward again ([`reading_order`] of the guess must give `read`):
/// first each stretch between Arabic letters turned round whole from its first to its last
/// left-to-right character ("No. 7" stays one phrase), then the runs the bidi algorithm finds in
/// `read` itself (numbers apart, as in "12 - 15"). Several logical texts can stand on the page
/// alike ("abc 12" and "12 abc" inside Arabic); any guess that passes the check stands exactly
/// like `read`. Text that fails both keeps its reading order.
pub fn logical_from_reading(read: &str) -> Vec<usize> {
    let chars: Vec<char> = read.chars().collect();
    let passes = |order: &[usize]| {
        let logical: String = order.iter().map(|&k| chars[k]).collect();
        to_reading_order(&logical) == read
    };
    let whole = stretches_turned(&chars);
    if passes(&whole) {
        return whole;
    }
    let runs = reading_order(read);
    if passes(&runs) {
        return runs;
    }
    (0..chars.len()).collect()
}

/// Indices with each stretch between right-to-left letters (bidi classes R, AL) reversed from its
/// first to its last left-to-right character (classes L, EN, AN).
fn stretches_turned(chars: &[char]) -> Vec<usize> {
    use unicode_bidi::BidiClass::{AL, AN, EN, L, R};
    let class = |c: char| unicode_bidi::bidi_class(c);
    let mut order: Vec<usize> = (0..chars.len()).collect();
    let mut run: Option<(usize, usize)> = None;
    let flush = |run: &mut Option<(usize, usize)>, order: &mut Vec<usize>| {
        if let Some((a, b)) = run.take() {
            order[a..=b].reverse();
        }
    };
    for (i, &c) in chars.iter().enumerate() {
        match class(c) {
            R | AL => flush(&mut run, &mut order),
            L | EN | AN => {
                run = Some(run.map_or((i, i), |(a, _)| (a, i)));
            }
            _ => {}
        }
    }
    flush(&mut run, &mut order);
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

    // Reading order (the order met from the right edge) follows UAX #9 for a right-to-left
    // paragraph, checked here by hand: W2 (EN after AL → AN), W4 (one CS between numbers),
    // W7 (EN after L → L), N1 (neutrals between same-direction runs), L2 (reversal).
    #[test]
    fn reading_order_turns_only_left_to_right_runs() {
        assert_eq!(to_reading_order("سجل القضايا"), "سجل القضايا");
        assert_eq!(to_reading_order("رقم 283 هنا"), "رقم 382 هنا");
        assert_eq!(to_reading_order("No. 283"), "382 .oN");
        assert_eq!(to_reading_order("ص ١٢/٥"), "ص ٥/٢١");
        // Numbers apart: each its own run (N1), so they stay in logical sequence.
        assert_eq!(to_reading_order("من 12 - 15 ص"), "من 21 - 51 ص");
        // A Latin phrase inside Arabic turns round whole.
        assert_eq!(to_reading_order("في Case 7 هنا"), "في 7 esaC هنا");
        // Harakat stay after their letter.
        assert_eq!(to_reading_order("كَتَبَ 12"), "كَتَبَ 21");
    }

    fn back_to_logical(read: &str) -> String {
        let chars: Vec<char> = read.chars().collect();
        logical_from_reading(read)
            .into_iter()
            .map(|k| chars[k])
            .collect()
    }

    #[test]
    fn reading_order_goes_back_to_the_same_page() {
        for text in [
            "سجل القضايا",
            "رقم 283 هنا",
            "No. 283",
            "من 12 - 15 ص",
            "في Case 7 هنا",
            "abc 12",
            "كَتَبَ (ملحق) 2024/117 Leiden",
            "(1) الحاشية",
        ] {
            let read = to_reading_order(text);
            let back = back_to_logical(&read);
            // Same page: the text got back reads the same from the right.
            assert_eq!(to_reading_order(&back), read, "{text}");
        }
        // Where the page allows one reading only, the logical text itself comes back.
        for text in [
            "رقم 283 هنا No. 7",
            "من 12 - 15 ص",
            "في Case 7 هنا",
            "ص ١٢/٥",
        ] {
            let read = to_reading_order(text);
            let back = back_to_logical(&read);
            assert_eq!(back, text);
        }
    }
}
