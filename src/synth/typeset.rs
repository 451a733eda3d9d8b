//! Setting words into lines: widths, line breaks, right-aligned, centred and justified lines, and
//! stretching with tatweel.
//!
//! Each word is shaped on its own (Arabic joining never crosses a space) and placed in the visual
//! order that the Unicode bidi algorithm gives the line ([`crate::text::bidi::visual_word_order`]),
//! so every word's ink box is exact. Word gaps never let two words' ink boxes touch. Where lines go
//! on the page is [`super::page`]'s business.

use rand::Rng;

use super::corpus::{DUAL_JOINING, RIGHT_JOINING};
use super::render::{ink_box, shape_line, ShapedLine};
use super::shelf::Shelf;
use crate::layout::geometry::Rect;
use crate::text::bidi::visual_word_order;

/// U+0640 ARABIC TATWEEL, the joining stroke used to stretch words.
pub const TATWEEL: char = '\u{0640}';

/// A shaped word with its ink box relative to its pen start on the baseline.
#[derive(Debug, Clone)]
pub struct SetWord {
    /// The shaped glyphs and logical text.
    pub shaped: ShapedLine,
    /// Ink box relative to (pen start, baseline); empty words get a zero box.
    pub ink: Rect,
}

impl SetWord {
    /// Shape one word.
    pub fn new(shelf: &Shelf, font: usize, text: &str, em_px: f32) -> SetWord {
        let shaped = shape_line(shelf, font, text, em_px);
        let ink = ink_box(shelf, &shaped, 0..text.len(), (0.0, 0.0)).unwrap_or_default();
        SetWord { shaped, ink }
    }

    /// Advance width in pixels.
    pub fn width(&self) -> f32 {
        self.shaped.width_px
    }
}

/// How a line fills its measure.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Align {
    /// Flush right (start of a right-to-left line), ragged left.
    Right,
    /// Centred.
    Centre,
    /// Both edges flush; extra space shared between word gaps.
    Justify,
}

/// A set line: words in logical order with their pen starts (x) relative to the measure's left edge.
#[derive(Debug, Clone)]
pub struct SetLine {
    /// Words in logical order.
    pub words: Vec<SetWord>,
    /// Pen start of each word, pixels from the left edge of the measure.
    pub x_px: Vec<f32>,
}

impl SetLine {
    /// Ink box of the whole line relative to (measure left, baseline).
    pub fn ink(&self) -> Rect {
        let mut out: Option<Rect> = None;
        for (w, x) in self.words.iter().zip(&self.x_px) {
            let b = shift(&w.ink, *x, 0.0);
            out = Some(out.map_or(b, |o| o.union(&b)));
        }
        out.unwrap_or_default()
    }
}

/// A box moved by (dx, dy).
pub fn shift(r: &Rect, dx: f32, dy: f32) -> Rect {
    Rect::new(r.x0 + dx, r.y0 + dy, r.x1 + dx, r.y1 + dy)
}

/// Pen starts, left to right in visual order, with gaps of at least `space` and never touching ink.
/// Returns (starts in logical order, natural width).
fn natural_positions(words: &[SetWord], space: f32, min_ink_gap: f32) -> (Vec<f32>, f32) {
    let texts: Vec<&str> = words.iter().map(|w| w.shaped.text.as_str()).collect();
    let order = visual_word_order(&texts);
    let mut xs = vec![0.0; words.len()];
    let (mut pen, mut ink_right) = (0.0f32, f32::NEG_INFINITY);
    for (k, &i) in order.iter().enumerate() {
        let w = &words[i];
        let mut x = if k == 0 {
            -w.ink.x0.min(0.0)
        } else {
            pen + space
        };
        x = x.max(ink_right + min_ink_gap - w.ink.x0);
        xs[i] = x;
        pen = x + w.width();
        ink_right = x + w.ink.x1;
    }
    let right = order
        .iter()
        .map(|&i| (xs[i] + words[i].width()).max(xs[i] + words[i].ink.x1))
        .fold(0.0, f32::max);
    (xs, right)
}

/// Place words on a measure `width_px` wide. The caller makes sure they fit ([`fits`]).
pub fn set_line(words: Vec<SetWord>, width_px: f32, space: f32, align: Align) -> SetLine {
    let min_gap = (space * 0.3).max(2.0);
    let (mut xs, natural) = natural_positions(&words, space, min_gap);
    let slack = (width_px - natural).max(0.0);
    match align {
        Align::Right => xs.iter_mut().for_each(|x| *x += slack),
        Align::Centre => xs.iter_mut().for_each(|x| *x += slack / 2.0),
        Align::Justify if words.len() > 1 => {
            let texts: Vec<&str> = words.iter().map(|w| w.shaped.text.as_str()).collect();
            let order = visual_word_order(&texts);
            let per_gap = slack / (words.len() - 1) as f32;
            for (k, &i) in order.iter().enumerate() {
                xs[i] += per_gap * k as f32;
            }
        }
        Align::Justify => xs.iter_mut().for_each(|x| *x += slack),
    }
    SetLine { words, x_px: xs }
}

/// Whether these words fit on a measure `width_px` wide.
pub fn fits(words: &[SetWord], width_px: f32, space: f32) -> bool {
    natural_positions(words, space, (space * 0.3).max(2.0)).1 <= width_px
}

/// Byte offsets in `word` where a tatweel may go: after a dual-joining letter (and its marks)
/// that is followed by a letter that joins to it, but never inside lam-alef.
pub fn tatweel_points(word: &str) -> Vec<usize> {
    let chars: Vec<(usize, char)> = word.char_indices().collect();
    let mut out = Vec::new();
    for (k, &(_, c)) in chars.iter().enumerate() {
        if !DUAL_JOINING.contains(c) {
            continue;
        }
        // Skip the letter's marks.
        let mut j = k + 1;
        while j < chars.len() && ('\u{064B}'..='\u{0652}').contains(&chars[j].1) {
            j += 1;
        }
        let Some(&(at, next)) = chars.get(j) else {
            continue;
        };
        let joins = DUAL_JOINING.contains(next) || RIGHT_JOINING.contains(next);
        let lam_alef = c == 'ل' && "اأإآ".contains(next);
        if joins && !lam_alef {
            out.push(at);
        }
    }
    out
}

/// Stretch some words of a justified line with tatweel to eat about half of the slack; returns the
/// new word texts (logical, tatweel included, as the page shows them).
pub fn stretch_with_tatweel<R: Rng>(
    rng: &mut R,
    texts: &[String],
    slack_px: f32,
    tatweel_px: f32,
) -> Vec<String> {
    let mut out = texts.to_vec();
    if tatweel_px <= 0.0 {
        return out;
    }
    let mut budget = ((slack_px * 0.5) / tatweel_px).floor() as usize;
    let mut candidates: Vec<usize> = (0..out.len())
        .filter(|&i| !tatweel_points(&out[i]).is_empty())
        .collect();
    while budget > 0 && !candidates.is_empty() {
        let k = rng.random_range(0..candidates.len());
        let i = candidates.swap_remove(k);
        let points = tatweel_points(&out[i]);
        let at = points[rng.random_range(0..points.len())];
        let n = rng.random_range(1..=3).min(budget);
        out[i].insert_str(at, &TATWEEL.to_string().repeat(n));
        budget -= n;
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tatweel_goes_between_joining_letters_only() {
        // كتاب: after ك (joins to ت) and after ت (joins to ا); not after ا (right-joining).
        assert_eq!(tatweel_points("كتاب"), vec!["ك".len(), "كت".len()]);
        // لا is a ligature: no tatweel between lam and alef; دار has no dual-joining letter.
        assert!(tatweel_points("لا").is_empty());
        assert!(tatweel_points("دار").is_empty());
    }

    #[test]
    fn justified_line_fills_the_measure_and_words_do_not_touch() {
        let shelf = Shelf::get();
        let words: Vec<SetWord> = ["سجل", "المكتبة", "2024/117", "العامة"]
            .iter()
            .map(|t| SetWord::new(shelf, 0, t, 40.0))
            .collect();
        let space = 10.0;
        assert!(fits(&words, 900.0, space));
        let line = set_line(words, 900.0, space, Align::Justify);
        let ink = line.ink();
        assert!(ink.x1 > 890.0 && ink.x0 < 10.0, "{ink:?}");
        let boxes: Vec<Rect> = line
            .words
            .iter()
            .zip(&line.x_px)
            .map(|(w, x)| shift(&w.ink, *x, 0.0))
            .collect();
        for i in 0..boxes.len() {
            for j in i + 1..boxes.len() {
                assert!(boxes[i].intersection(&boxes[j]).is_none(), "{i} {j}");
            }
        }
        // Right-to-left: the first logical word is the rightmost.
        assert!(line.x_px[0] > line.x_px[1] && line.x_px[1] > line.x_px[3]);
    }
}
