//! The stages of one page: clean-up → page analysis → line recognition → words with boxes on the
//! page image. The pipeline runs this per page; `mistara read` runs it on one image.

use image::GrayImage;

use crate::cleanup::{self, CleanPage, CleanupConfig};
use crate::error::Result;
use crate::layout::geometry::Rect;
use crate::layout::{self, LayoutConfig, Line};
use crate::page::PageImage;
use crate::pipeline::PageReader;
use crate::recognize::{LineResult, Recognizer};
use crate::text::{PageText, RegionKind, TextLine, Word};

/// Everything needed to read pages.
pub struct PageEngine {
    /// Clean-up settings.
    pub cleanup: CleanupConfig,
    /// Page-analysis settings.
    pub layout: LayoutConfig,
    /// The line recognizer.
    pub recognizer: Recognizer,
}

impl PageEngine {
    /// An engine with default settings around a recognizer.
    pub fn new(recognizer: Recognizer) -> PageEngine {
        PageEngine {
            cleanup: CleanupConfig::default(),
            layout: LayoutConfig::default(),
            recognizer,
        }
    }

    /// Read an image that holds one text line (no page analysis): the whole image is the line.
    pub fn read_single_line(&self, gray: &GrayImage) -> PageText {
        let result = self
            .recognizer
            .recognize_lines(std::slice::from_ref(gray))
            .pop()
            .unwrap_or_default();
        let bbox = Rect::new(0.0, 0.0, gray.width() as f32, gray.height() as f32);
        let words = result
            .words
            .iter()
            .map(|w| Word {
                text: w.text.clone(),
                bbox: Rect::new(w.x0_px, 0.0, w.x1_px, bbox.y1),
                confidence: w.confidence,
            })
            .collect();
        PageText {
            lines: vec![TextLine {
                words,
                bbox,
                region: RegionKind::Body,
            }],
        }
    }
}

impl PageReader for PageEngine {
    fn read_page(&self, page: &PageImage) -> Result<PageText> {
        let clean = cleanup::clean(page, &self.cleanup);
        let analysis = layout::analyze(&clean, &self.layout);
        let lines: Vec<&Line> = analysis.lines().collect();
        let images: Vec<GrayImage> = lines
            .iter()
            .map(|l| layout::line_image(&clean, l))
            .collect();
        let results = self.recognizer.recognize_lines(&images);
        let text_lines = lines
            .iter()
            .zip(&results)
            .filter(|(_, r)| !r.words.is_empty())
            .map(|(line, result)| page_line(&clean, line, result))
            .collect();
        Ok(PageText { lines: text_lines })
    }
}

/// Where the line image of `line` starts on the straightened page (see [`layout::line_image`]).
fn crop_origin(line: &Line) -> (f32, f32) {
    let (x, y) = crate::layout::lines::crop_origin(&line.clean_box);
    (x as f32, y as f32)
}

/// A recognized line as words with boxes on the original page image.
///
/// CTC alignments are peaky: a character's frames cover only part of its ink, so the spans of a
/// word's characters are narrower than the word. Word boxes are therefore widened to tile the
/// line: each edge moves to the middle of the gap to the neighbouring word, and the outer words
/// reach the ends of the line.
fn page_line(clean: &CleanPage, line: &Line, result: &LineResult) -> TextLine {
    let (ox, _) = crop_origin(line);
    let b = &line.clean_box;
    let spans: Vec<(f32, f32)> = result
        .words
        .iter()
        .map(|w| {
            let x0 = (ox + w.x0_px).clamp(b.x0, b.x1);
            (x0, (ox + w.x1_px).clamp(x0, b.x1))
        })
        .collect();
    let tiled = tile_spans(&spans, b.x0, b.x1);
    let words = result
        .words
        .iter()
        .zip(tiled)
        .map(|(w, (x0, x1))| Word {
            text: w.text.clone(),
            bbox: clean.rect_to_original(&Rect::new(x0, b.y0, x1.max(x0 + 1.0), b.y1)),
            confidence: w.confidence,
        })
        .collect();
    TextLine {
        words,
        bbox: line.bbox,
        region: line.kind,
    }
}

/// Widen horizontal spans so that, in left-to-right order, they meet half-way across each gap and
/// the outermost reach `left` and `right`. Returns spans in the input order.
pub fn tile_spans(spans: &[(f32, f32)], left: f32, right: f32) -> Vec<(f32, f32)> {
    let mut order: Vec<usize> = (0..spans.len()).collect();
    order.sort_by(|&i, &j| spans[i].0.total_cmp(&spans[j].0));
    let mut out = spans.to_vec();
    for (k, &i) in order.iter().enumerate() {
        let x0 = match k {
            0 => left.min(spans[i].0),
            _ => (spans[order[k - 1]].1 + spans[i].0) / 2.0,
        };
        let x1 = match order.get(k + 1) {
            None => right.max(spans[i].1),
            Some(&n) => (spans[i].1 + spans[n].0) / 2.0,
        };
        out[i] = (x0.min(spans[i].0), x1.max(spans[i].1));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spans_tile_the_line() {
        // Logical order right to left: the first word is the rightmost.
        let spans = [(70.0, 90.0), (40.0, 50.0), (10.0, 20.0)];
        let tiled = tile_spans(&spans, 0.0, 100.0);
        assert_eq!(tiled, vec![(60.0, 100.0), (30.0, 60.0), (0.0, 30.0)]);
        // Overlapping spans keep at least their own extent.
        let tiled = tile_spans(&[(10.0, 30.0), (25.0, 40.0)], 10.0, 40.0);
        assert_eq!(tiled, vec![(10.0, 30.0), (25.0, 40.0)]);
    }

    #[test]
    fn crop_origin_matches_line_image() {
        // The engine maps word positions through the same crop as layout::line_image.
        let gray = GrayImage::from_pixel(400, 200, image::Luma([255]));
        let clean_box = Rect::new(50.3, 40.7, 300.2, 80.1);
        let line = Line {
            kind: RegionKind::Body,
            bbox: clean_box,
            quad: [(0.0, 0.0); 4],
            baseline: [(0.0, 0.0); 2],
            x_height_px: 10.0,
            clean_box,
            clean_baseline_y: 70.0,
        };
        let crop = crate::layout::lines::crop_line(&gray, &clean_box);
        let (ox, oy) = crop_origin(&line);
        let m = (clean_box.height() * 0.1).max(2.0);
        assert_eq!((ox, oy), ((50.3f32 - m).floor(), (40.7f32 - m).floor()));
        assert_eq!(crop.width() as f32, ((300.2f32 + m).ceil() - ox));
    }
}
