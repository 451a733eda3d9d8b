//! The invisible, word-positioned text layer of a page as a PDF content stream.
//!
//! Arrangement (tested against poppler, pdf.js, PDFium and MuPDF; see DEVELOPERS.md):
//! one `BT … ET` per page in text render mode 3 (invisible, ISO 32000-1 §9.3.6), one `Tf` per
//! line whose size is the line's height, words of a line drawn left to right with their glyphs in
//! visual order, each word stretched with `Tz` (§9.3.4) so its glyphs span exactly the word's box,
//! and a space glyph between neighbouring words stretched to fill the gap. Coordinates are pixels
//! of the page image with y up; one `cm` maps them to the page.

use pdf_writer::{Content, Name, Str};

use crate::layout::geometry::{Affine, Rect};
use crate::text::bidi::visual_word;
use crate::text::fold::base_letters;
use crate::text::{PageText, TextLine};

/// Advance of every glyph of the layer font in text space units (500/1000 em).
pub const GLYPH_ADVANCE_EM: f32 = 0.5;
/// Baseline above the bottom of the line box, as a share of the font size (font descent 200/1000).
const BASELINE_RISE: f32 = 0.2;
/// Narrowest gap between words, as a share of `kx · F`, that pdf.js still reads as a space
/// (measured: it reads 0.102–0.6 em gaps as spaces).
const MIN_GAP_EM: f32 = 0.15;

/// Options for the text layer.
#[derive(Debug, Clone, Copy, Default)]
pub struct LayerOptions {
    /// Keep harakat (U+064B–U+0652, U+0670) and tatweel (U+0640) in the layer.
    pub keep_marks: bool,
}

/// Append the text layer of `text` to `content`.
///
/// `to_page` maps y-up pixel space to page space; `height_px` is the page image's height. The
/// resource name `font` must refer to the layer font (see `pdf_font`).
pub fn write_layer(
    content: &mut Content,
    text: &PageText,
    height_px: f32,
    to_page: &Affine,
    font: Name,
    opts: LayerOptions,
) {
    let lines: Vec<PlacedLine> = place_lines(text, height_px, opts);
    if lines.is_empty() {
        return;
    }
    content.save_state();
    content.transform(to_page.0);
    content.begin_text();
    content.set_text_rendering_mode(pdf_writer::types::TextRenderingMode::Invisible);
    for line in &lines {
        content.set_font(font, round3(line.size));
        for (i, w) in line.words.iter().enumerate() {
            content.set_text_matrix([
                round3(line.kx),
                0.0,
                0.0,
                1.0,
                round3(w.x0),
                round3(line.baseline),
            ]);
            let n = w.glyphs.chars().count() as f32;
            content.set_horizontal_scaling(round3(
                100.0 * w.width / (n * GLYPH_ADVANCE_EM * line.size * line.kx),
            ));
            content.show(Str(&utf16_codes(&w.glyphs)));
            if let Some(next) = line.words.get(i + 1) {
                let gap = next.x0 - (w.x0 + w.width);
                content.set_horizontal_scaling(round3(
                    100.0 * gap / (GLYPH_ADVANCE_EM * line.size * line.kx),
                ));
                content.show(Str(&[0x00, 0x20]));
            }
        }
    }
    content.end_text();
    content.restore_state();
}

/// One word as it will be drawn.
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedWord {
    /// Glyphs in visual order.
    pub glyphs: String,
    /// Left edge (y-up pixel space).
    pub x0: f32,
    /// Drawn width.
    pub width: f32,
}

/// One line as it will be drawn.
#[derive(Debug, Clone, PartialEq)]
pub struct PlacedLine {
    /// Font size = line height (pixels).
    pub size: f32,
    /// Baseline y (y-up pixel space).
    pub baseline: f32,
    /// Horizontal text-space scale.
    pub kx: f32,
    /// Words from left to right.
    pub words: Vec<PlacedWord>,
}

impl PlacedLine {
    /// The box each word is laid over, in y-down pixel space (for checks against readers).
    pub fn word_boxes(&self, height_px: f32) -> Vec<Rect> {
        let bottom = height_px - (self.baseline - BASELINE_RISE * self.size);
        self.words
            .iter()
            .map(|w| Rect::new(w.x0, bottom - self.size, w.x0 + w.width, bottom))
            .collect()
    }
}

/// Work out fonts sizes, baselines, scales and word positions for every line of a page.
pub fn place_lines(text: &PageText, height_px: f32, opts: LayerOptions) -> Vec<PlacedLine> {
    let boxes: Vec<Rect> = text.lines.iter().map(|l| l.bbox).collect();
    text.lines
        .iter()
        .enumerate()
        .filter_map(|(i, line)| place_line(line, size_cap(&boxes, i), height_px, opts))
        .collect()
}

/// Font size cap for line `i`: when its box overlaps a neighbour's, at most the distance between
/// their bottoms, so readers do not join the two lines.
fn size_cap(boxes: &[Rect], i: usize) -> f32 {
    let me = boxes[i];
    let mut cap = me.height();
    for (j, other) in boxes.iter().enumerate() {
        let overlaps_x = other.x0 < me.x1 && me.x0 < other.x1;
        let overlaps_y = other.y0 < me.y1 && me.y0 < other.y1;
        if j != i && overlaps_x && overlaps_y {
            let pitch = (other.y1 - me.y1).abs();
            if pitch > 0.0 {
                cap = cap.min(pitch);
            }
        }
    }
    cap.max(1.0)
}

fn place_line(
    line: &TextLine,
    size_cap: f32,
    height_px: f32,
    opts: LayerOptions,
) -> Option<PlacedLine> {
    let mut words: Vec<PlacedWord> = line
        .words
        .iter()
        .filter_map(|w| {
            let text = clean_word(&w.text, opts);
            (!text.is_empty() && w.bbox.width() > 0.0).then(|| PlacedWord {
                glyphs: visual_word(&text),
                x0: w.bbox.x0,
                width: w.bbox.width(),
            })
        })
        .collect();
    if words.is_empty() {
        return None;
    }
    words.sort_by(|a, b| a.x0.total_cmp(&b.x0));
    let size = line.bbox.height().min(size_cap).max(1.0);
    let widest_gap = words
        .windows(2)
        .map(|p| p[1].x0 - (p[0].x0 + p[0].width))
        .fold(0.0f32, f32::max);
    let kx = (widest_gap / (GLYPH_ADVANCE_EM * size)).max(1.0);
    let min_gap = MIN_GAP_EM * kx * size;
    for i in 0..words.len().saturating_sub(1) {
        let next_x0 = words[i + 1].x0;
        let w = &mut words[i];
        if next_x0 - (w.x0 + w.width) < min_gap {
            // Trim the right edge of the left word, keeping at least a fifth of it.
            w.width = (next_x0 - min_gap - w.x0).max(w.width * 0.2);
        }
    }
    let baseline = height_px - line.bbox.y1 + BASELINE_RISE * size;
    Some(PlacedLine {
        size,
        baseline,
        kx,
        words,
    })
}

/// The characters of a word as the layer writes them: presentation forms folded to base letters,
/// controls and spaces dropped, harakat and tatweel dropped unless asked for.
pub fn clean_word(text: &str, opts: LayerOptions) -> String {
    base_letters(text)
        .chars()
        .filter(|&c| !c.is_whitespace() && !c.is_control() && !is_bidi_control(c))
        .filter(|&c| opts.keep_marks || !is_mark_or_tatweel(c))
        .filter(|&c| (c as u32) <= 0xFFFF)
        .collect()
}

/// Harakat (U+064B–U+065F), superscript alef (U+0670) and tatweel (U+0640).
pub fn is_mark_or_tatweel(c: char) -> bool {
    matches!(c as u32, 0x064B..=0x065F | 0x0670 | 0x0640)
}

fn is_bidi_control(c: char) -> bool {
    matches!(c as u32, 0x200E | 0x200F | 0x202A..=0x202E | 0x2066..=0x2069 | 0x061C)
}

/// Two-byte codes (CID = Unicode code point) for the layer font's Identity-H encoding.
fn utf16_codes(s: &str) -> Vec<u8> {
    s.chars()
        .flat_map(|c| (c as u32 as u16).to_be_bytes())
        .collect()
}

fn round3(v: f32) -> f32 {
    (v * 1000.0).round() / 1000.0
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::text::{RegionKind, Word};

    fn word(text: &str, x0: f32, x1: f32) -> Word {
        Word {
            text: text.into(),
            bbox: Rect::new(x0, 100.0, x1, 124.0),
            confidence: 1.0,
        }
    }

    fn page(words: Vec<Word>) -> PageText {
        let bbox = words
            .iter()
            .skip(1)
            .fold(words[0].bbox, |acc, w| acc.union(&w.bbox));
        PageText {
            lines: vec![TextLine {
                words,
                bbox,
                region: RegionKind::Body,
            }],
        }
    }

    #[test]
    fn content_stream_is_exact() {
        // Logical "مكتبة الجامعة": first word on the right. 8 px gap.
        let text = page(vec![
            word("مكتبة", 414.0, 484.0),
            word("الجامعة", 329.0, 406.0),
        ]);
        let mut c = Content::new();
        write_layer(
            &mut c,
            &text,
            200.0,
            &Affine::IDENTITY,
            Name(b"F1"),
            LayerOptions::default(),
        );
        let bytes = c.finish();
        let s = String::from_utf8_lossy(&bytes);
        // Size 24, baseline = 200 - 124 + 0.2·24 = 80.8; kx = max(1, 8/12) = 1.
        // Widths: 77/(7·12) = 91.667 %, 70/(5·12) = 116.667 %, gap 8/12 = 66.667 %.
        assert!(s.contains("/F1 24 Tf"), "{s}");
        assert!(s.contains("1 0 0 1 329 80.8 Tm\n91.667 Tz"), "{s}");
        assert!(s.contains("66.667 Tz"), "{s}");
        assert!(s.contains("1 0 0 1 414 80.8 Tm\n116.667 Tz"), "{s}");
        assert!(s.starts_with("q\n1 0 0 1 0 0 cm\nBT\n3 Tr\n"), "{s}");
        assert!(s.trim_end().ends_with("ET\nQ"), "{s}");
    }

    #[test]
    fn glyphs_are_visual_order_utf16() {
        assert_eq!(utf16_codes("بة"), vec![0x06, 0x28, 0x06, 0x29]);
        let placed = place_lines(
            &page(vec![word("مكتبة", 10.0, 80.0)]),
            200.0,
            LayerOptions::default(),
        );
        assert_eq!(placed[0].words[0].glyphs, "ةبتكم");
    }

    #[test]
    fn harakat_and_tatweel_dropped_unless_kept() {
        assert_eq!(clean_word("مَكْتَبَـة", LayerOptions::default()), "مكتبة");
        assert_eq!(
            clean_word("مَكْتَبَـة", LayerOptions { keep_marks: true }),
            "مَكْتَبَـة"
        );
        assert_eq!(clean_word("\u{FEFB}", LayerOptions::default()), "لا");
    }

    #[test]
    fn narrow_gap_is_widened_by_trimming_left_word() {
        let text = page(vec![word("ب", 52.0, 90.0), word("ا", 10.0, 51.0)]);
        let placed = place_lines(&text, 200.0, LayerOptions::default());
        let ws = &placed[0].words;
        let gap = ws[1].x0 - (ws[0].x0 + ws[0].width);
        assert!((gap - MIN_GAP_EM * 24.0).abs() < 1e-3, "gap {gap}");
    }

    #[test]
    fn wide_gap_raises_kx() {
        let text = page(vec![word("ب", 100.0, 120.0), word("ا", 10.0, 40.0)]);
        let placed = place_lines(&text, 200.0, LayerOptions::default());
        assert!((placed[0].kx - 60.0 / 12.0).abs() < 1e-4);
    }
}
