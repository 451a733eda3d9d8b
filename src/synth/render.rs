//! Shaping and drawing one line of text: rustybuzz for shaping, ttf-parser outlines, tiny-skia raster.
//!
//! Owns bidi run splitting (UAX #9 via unicode-bidi), font fallback per run, glyph placement in
//! pixels, the ink boxes of words (from the glyphs of each word's clusters) and anti-aliased
//! drawing into a coverage mask. Page layout and scan damage live in [`super::page`] and
//! [`super::degrade`].

use std::ops::Range;

use rustybuzz::ttf_parser::{GlyphId, OutlineBuilder};
use rustybuzz::{Direction, UnicodeBuffer};
use tiny_skia::{FillRule, Mask, PathBuilder, Transform};
use unicode_bidi::{BidiInfo, Level};

use super::shelf::Shelf;
use crate::layout::geometry::Rect;

/// One glyph placed on a line, relative to the pen start and the baseline.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlacedGlyph {
    /// Shelf index of the font that draws it.
    pub font: usize,
    /// Glyph id in that font.
    pub glyph: u16,
    /// Left edge of the glyph origin, pixels right of the line start.
    pub x_px: f32,
    /// Vertical offset of the glyph origin, pixels *up* from the baseline (marks).
    pub rise_px: f32,
    /// Pixels per font unit.
    pub scale: f32,
    /// Byte offset of the glyph's cluster in the logical text.
    pub cluster: usize,
}

/// A shaped line: glyphs in visual order, left to right.
#[derive(Debug, Clone, PartialEq)]
pub struct ShapedLine {
    /// Logical-order text.
    pub text: String,
    /// Glyphs, left to right.
    pub glyphs: Vec<PlacedGlyph>,
    /// Total advance in pixels.
    pub width_px: f32,
    /// Font size in pixels per em.
    pub em_px: f32,
    /// Whether any glyph came from the fallback font.
    pub used_fallback: bool,
}

/// Byte ranges of the space-separated words of a logical line.
pub fn word_ranges(text: &str) -> Vec<Range<usize>> {
    let mut out = Vec::new();
    let mut start = None;
    for (i, c) in text.char_indices() {
        match (c == ' ', start) {
            (true, Some(s)) => {
                out.push(s..i);
                start = None;
            }
            (false, None) => start = Some(i),
            _ => {}
        }
    }
    if let Some(s) = start {
        out.push(s..text.len());
    }
    out
}

/// Whether a character is a combining mark that must stay in its base letter's font.
fn is_mark(c: char) -> bool {
    matches!(c, '\u{0610}'..='\u{061A}' | '\u{064B}'..='\u{065F}' | '\u{0670}')
}

/// Shape a logical-order line in one shelf font (fallback for what it lacks) at `em_px` pixels per em.
///
/// The paragraph is right-to-left; digit and Latin runs are laid left to right inside it
/// (Unicode bidi, UAX #9). Brackets are mirrored by the shaper in right-to-left runs.
pub fn shape_line(shelf: &Shelf, font: usize, text: &str, em_px: f32) -> ShapedLine {
    shape_line_spaced(shelf, font, text, em_px, 1.0)
}

/// [`shape_line`] with every space's advance scaled by `space_scale` (word spaces narrower or
/// wider than the font's own, as in justified or tightly set type).
pub fn shape_line_spaced(
    shelf: &Shelf,
    font: usize,
    text: &str,
    em_px: f32,
    space_scale: f32,
) -> ShapedLine {
    let mut line = ShapedLine {
        text: text.to_string(),
        glyphs: Vec::new(),
        width_px: 0.0,
        em_px,
        used_fallback: false,
    };
    if text.is_empty() {
        return line;
    }
    let info = BidiInfo::new(text, Some(Level::rtl()));
    let para = &info.paragraphs[0];
    let (levels, runs) = info.visual_runs(para, para.range.clone());
    let mut pen = 0.0f32;
    for run in runs {
        let rtl = levels[run.start].is_rtl();
        let mut pieces = font_pieces(shelf, font, text, run);
        if rtl {
            pieces.reverse();
        }
        for (f, range) in pieces {
            line.used_fallback |= f != font;
            let at = Pen {
                x: pen,
                em_px,
                space_scale,
            };
            pen = shape_piece(shelf, f, text, range, rtl, at, &mut line.glyphs);
        }
    }
    line.width_px = pen;
    line
}

/// Split a run (logical order) into pieces drawn by one font each.
fn font_pieces(
    shelf: &Shelf,
    font: usize,
    text: &str,
    run: Range<usize>,
) -> Vec<(usize, Range<usize>)> {
    let mut pieces: Vec<(usize, Range<usize>)> = Vec::new();
    for (i, c) in text[run.clone()].char_indices() {
        let at = run.start + i;
        let end = at + c.len_utf8();
        let f = match pieces.last() {
            Some((prev, _)) if is_mark(c) => *prev,
            _ if shelf.fonts[font].covers(c) || c == ' ' => font,
            _ => shelf.fallback,
        };
        match pieces.last_mut() {
            Some((pf, r)) if *pf == f => r.end = end,
            _ => pieces.push((f, at..end)),
        }
    }
    pieces
}

/// Where a piece starts and how it is set.
struct Pen {
    /// Pen position in pixels.
    x: f32,
    /// Pixels per em.
    em_px: f32,
    /// Factor on each space's advance.
    space_scale: f32,
}

/// Shape one piece in one font from `at`; returns the pen position after it.
fn shape_piece(
    shelf: &Shelf,
    font: usize,
    text: &str,
    range: Range<usize>,
    rtl: bool,
    at: Pen,
    out: &mut Vec<PlacedGlyph>,
) -> f32 {
    let face = &shelf.fonts[font].face;
    let scale = at.em_px / face.units_per_em() as f32;
    let mut pen = at.x;
    let shaped = shape_run(face, &text[range.clone()], range.start, rtl);
    for (info, pos) in shaped.glyph_infos().iter().zip(shaped.glyph_positions()) {
        out.push(PlacedGlyph {
            font,
            glyph: info.glyph_id as u16,
            x_px: pen + pos.x_offset as f32 * scale,
            rise_px: pos.y_offset as f32 * scale,
            scale,
            cluster: info.cluster as usize,
        });
        let advance = pos.x_advance as f32 * scale;
        let space = text.as_bytes().get(info.cluster as usize) == Some(&b' ');
        pen += if space {
            advance * at.space_scale
        } else {
            advance
        };
    }
    pen
}

/// Shape `text` as one run in one direction; glyph clusters are byte offsets into `text` plus `base`.
pub fn shape_run(
    face: &rustybuzz::Face<'_>,
    text: &str,
    base: usize,
    rtl: bool,
) -> rustybuzz::GlyphBuffer {
    let mut buf = UnicodeBuffer::new();
    for (i, c) in text.char_indices() {
        buf.add(c, (base + i) as u32);
    }
    buf.guess_segment_properties();
    buf.set_direction(if rtl {
        Direction::RightToLeft
    } else {
        Direction::LeftToRight
    });
    rustybuzz::shape(face, &[], buf)
}

/// Ink box of one glyph drawn with its line start at `origin` = (x, baseline y), pixel space (y down).
pub fn glyph_box(shelf: &Shelf, g: &PlacedGlyph, origin: (f32, f32)) -> Option<Rect> {
    let b = shelf.fonts[g.font]
        .face
        .glyph_bounding_box(GlyphId(g.glyph))?;
    let x = origin.0 + g.x_px;
    let y = origin.1 - g.rise_px;
    Some(Rect::new(
        x + b.x_min as f32 * g.scale,
        y - b.y_max as f32 * g.scale,
        x + b.x_max as f32 * g.scale,
        y - b.y_min as f32 * g.scale,
    ))
}

/// Ink box of the glyphs whose clusters fall in `range` (all glyphs for `0..len`); `None` if no ink.
pub fn ink_box(
    shelf: &Shelf,
    line: &ShapedLine,
    range: Range<usize>,
    origin: (f32, f32),
) -> Option<Rect> {
    line.glyphs
        .iter()
        .filter(|g| range.contains(&g.cluster))
        .filter_map(|g| glyph_box(shelf, g, origin))
        .reduce(|a, b| a.union(&b))
}

/// Maps font units (y up) into pixels (y down) while feeding a tiny-skia path.
struct PixelPen<'a> {
    path: &'a mut PathBuilder,
    x: f32,
    y: f32,
    scale: f32,
}

impl PixelPen<'_> {
    fn p(&self, x: f32, y: f32) -> (f32, f32) {
        (self.x + x * self.scale, self.y - y * self.scale)
    }
}

impl OutlineBuilder for PixelPen<'_> {
    fn move_to(&mut self, x: f32, y: f32) {
        let (a, b) = self.p(x, y);
        self.path.move_to(a, b);
    }
    fn line_to(&mut self, x: f32, y: f32) {
        let (a, b) = self.p(x, y);
        self.path.line_to(a, b);
    }
    fn quad_to(&mut self, x1: f32, y1: f32, x: f32, y: f32) {
        let ((a1, b1), (a, b)) = (self.p(x1, y1), self.p(x, y));
        self.path.quad_to(a1, b1, a, b);
    }
    fn curve_to(&mut self, x1: f32, y1: f32, x2: f32, y2: f32, x: f32, y: f32) {
        let ((a1, b1), (a2, b2), (a, b)) = (self.p(x1, y1), self.p(x2, y2), self.p(x, y));
        self.path.cubic_to(a1, b1, a2, b2, a, b);
    }
    fn close(&mut self) {
        self.path.close();
    }
}

/// Draw glyphs of a line (only those with clusters in `only`, when given) into a coverage mask.
pub fn draw_line(
    shelf: &Shelf,
    line: &ShapedLine,
    origin: (f32, f32),
    only: Option<Range<usize>>,
    mask: &mut Mask,
) {
    let mut path = PathBuilder::new();
    for g in &line.glyphs {
        if only.as_ref().is_some_and(|r| !r.contains(&g.cluster)) {
            continue;
        }
        let mut pen = PixelPen {
            path: &mut path,
            x: origin.0 + g.x_px,
            y: origin.1 - g.rise_px,
            scale: g.scale,
        };
        shelf.fonts[g.font]
            .face
            .outline_glyph(GlyphId(g.glyph), &mut pen);
    }
    if let Some(p) = path.finish() {
        mask.fill_path(&p, FillRule::Winding, true, Transform::identity());
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn word_ranges_split_on_spaces() {
        let t = "كتب في 2024/117";
        let r = word_ranges(t);
        let words: Vec<&str> = r.iter().map(|r| &t[r.clone()]).collect();
        assert_eq!(words, ["كتب", "في", "2024/117"]);
    }

    #[test]
    fn a_space_scale_widens_only_the_word_spaces() {
        let shelf = Shelf::get();
        let t = "باب في كتب";
        let plain = shape_line(shelf, 0, t, 40.0);
        let wide = shape_line_spaced(shelf, 0, t, 40.0, 2.0);
        let space_px = |l: &ShapedLine| {
            let at = |c: usize| l.glyphs.iter().position(|g| g.cluster == c).unwrap();
            let i = at(t.find(' ').unwrap());
            // Glyphs come in visual order, left to right: the next one starts where the space ends.
            l.glyphs[i + 1].x_px - l.glyphs[i].x_px
        };
        // Two spaces, each twice as wide: the leftmost word stays, the rightmost moves by both
        // extra widths.
        assert!(space_px(&plain) > 0.0);
        let extra = wide.width_px - plain.width_px;
        assert!((extra - 2.0 * space_px(&plain)).abs() < 0.01, "{extra}");
        assert_eq!(plain.glyphs[0].x_px, wide.glyphs[0].x_px);
        let last = plain.glyphs.len() - 1;
        assert!((wide.glyphs[last].x_px - plain.glyphs[last].x_px - extra).abs() < 0.01);
    }

    #[test]
    fn arabic_runs_right_to_left_and_numbers_left_to_right() {
        let shelf = Shelf::get();
        let t = "باب 12";
        let line = shape_line(shelf, 0, t, 40.0);
        // UAX #9: in an RTL paragraph the number run sits left of the Arabic word, digits in order.
        let clusters: Vec<usize> = line.glyphs.iter().map(|g| g.cluster).collect();
        let digit_one = clusters
            .iter()
            .position(|&c| c == t.find('1').unwrap())
            .unwrap();
        let digit_two = clusters
            .iter()
            .position(|&c| c == t.find('2').unwrap())
            .unwrap();
        let first_letter = clusters.iter().position(|&c| c == 0).unwrap();
        assert!(
            digit_one < digit_two && digit_two < first_letter,
            "{clusters:?}"
        );
    }

    #[test]
    fn latin_in_a_noto_face_falls_back() {
        let shelf = Shelf::get();
        let noto = shelf
            .fonts
            .iter()
            .position(|f| f.entry.family == "Noto Sans Arabic")
            .unwrap();
        assert!(!shape_line(shelf, noto, "باب", 30.0).used_fallback);
        let line = shape_line(shelf, noto, "باب Index", 30.0);
        assert!(line.used_fallback);
        assert!(
            line.glyphs.iter().all(|g| g.glyph != 0),
            "no .notdef glyphs"
        );
    }
}
