//! Whole synthetic pages with their ground truth, and `synth pages` output.
//!
//! The ground-truth JSON of a page is a [`crate::text::PageText`] (lines in reading order, words
//! with boxes, region kinds) with extra fields — baseline, font, size, resolution, the damage
//! applied — so the same file can be read as a transcript by `mistara ocr --layer-from`
//! (wrapped as `{"pages": [...]}`). Boxes are in the final (damaged) page's pixels. Words that
//! justification stretched keep their tatweel characters in the truth, because the page shows
//! them; search folding ([`crate::text::fold`]) drops them.

use std::path::Path;

use image::GrayImage;
use rayon::prelude::*;
use serde::{Deserialize, Serialize};
use tiny_skia::Mask;

use super::degrade::{self, DamageConfig, DamageLog, Marks};
use super::page::{draw, lay_out, Layout, PageOptions};
use super::render::draw_line;
use super::shelf::Shelf;
use super::{png_bytes, prepare_dir, write_file, SynthConfig};
use crate::cleanup::CleanPage;
use crate::error::{Error, Result};
use crate::layout::geometry::Rect;
use crate::layout::score::{reading_group, TrueLine};
use crate::text::{RegionKind, Word};

/// Ground truth of one line.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TruthLine {
    /// Words in logical order, boxes in page pixels, confidence 1.
    pub words: Vec<Word>,
    /// Box of the whole line.
    pub bbox: Rect,
    /// Region kind.
    pub region: RegionKind,
    /// Baseline from its left end to its right end, `[x0, y0, x1, y1]` in pixels.
    pub baseline: [f32; 4],
    /// Font file stem, e.g. `Amiri-Regular`.
    pub font: String,
    /// Font family.
    pub family: String,
    /// Type size in points.
    pub size_pt: f32,
}

/// Ground truth of one page.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TruthPage {
    /// Lines in reading order.
    pub lines: Vec<TruthLine>,
    /// Image width in pixels.
    pub width_px: u32,
    /// Image height in pixels.
    pub height_px: u32,
    /// Resolution in dots per inch.
    pub dpi: f32,
    /// Number of text columns.
    pub columns: u8,
    /// Binding edge on the left.
    pub gutter_left: bool,
    /// Seed and index that made the page.
    pub seed: u64,
    /// Index of the page in its run.
    pub index: u64,
    /// Scan damage applied.
    pub damage: DamageLog,
}

/// A finished page: the scanned-looking image and its truth.
#[derive(Debug, Clone)]
pub struct SynthPage {
    /// Grey page image.
    pub image: GrayImage,
    /// Its ground truth.
    pub truth: TruthPage,
}

/// Make page `index` of a run, deterministic in `cfg.seed` and `index`.
pub fn make_page(cfg: &SynthConfig, index: u64, opts: PageOptions) -> SynthPage {
    make_page_marked(cfg, index, opts, false).0
}

/// [`make_page`] plus, per truth line, the centres of its ink pixels (coverage ≥ 50 % when the
/// line is drawn alone, dots and harakat included) moved with the scan damage and still on the
/// scanned image (on a black-and-white scan, on a black pixel): the reference for "a found line
/// holds the true line's ink". Same image and truth as [`make_page`].
pub fn make_page_with_ink(
    cfg: &SynthConfig,
    index: u64,
    opts: PageOptions,
) -> (SynthPage, Vec<Vec<(f32, f32)>>) {
    make_page_marked(cfg, index, opts, true)
}

fn make_page_marked(
    cfg: &SynthConfig,
    index: u64,
    opts: PageOptions,
    with_ink: bool,
) -> (SynthPage, Vec<Vec<(f32, f32)>>) {
    let shelf = Shelf::get();
    let mut rng = cfg.rng(2, index);
    let fonts = cfg.font_indices(shelf);
    let opts = PageOptions {
        harakat_share: opts.harakat_share.or(Some(cfg.corpus.harakat_share)),
        ..opts
    };
    let layout = lay_out(&mut rng, shelf, &fonts, index as usize + 1, opts);
    let coverage = draw(shelf, &layout);
    let mut marks = marks_of(&layout);
    let ink = if with_ink {
        line_ink(shelf, &layout)
    } else {
        Vec::new()
    };
    let n_points = marks.points.len();
    marks.points.extend(ink.iter().flatten());
    let dc = DamageConfig {
        strength: cfg.degrade,
        max_skew_deg: 5.0,
        gutter_left: Some(layout.gutter_left),
    };
    let (image, damage) = degrade::scan(&coverage, &mut marks, &dc, &mut rng);
    let mut moved = marks.points.split_off(n_points).into_iter();
    // Ink the damage moved past the scan's edge is not on the page image: no analysis can hold
    // it (a margin note the skew pushed half off the sheet). Nor is ink a black-and-white scan
    // left white: worn type thresholded away (a page number's dashes worn to a dot each).
    let (w, h) = (image.width() as f32, image.height() as f32);
    let on_scan = |&(x, y): &(f32, f32)| {
        (0.0..w).contains(&x)
            && (0.0..h).contains(&y)
            && !(damage.bilevel && image.get_pixel(x as u32, y as u32).0[0] == 255)
    };
    let ink = ink
        .iter()
        .map(|l| moved.by_ref().take(l.len()).filter(on_scan).collect())
        .collect();
    let truth = truth_of(shelf, &layout, &marks, cfg.seed, index, damage);
    (SynthPage { image, truth }, ink)
}

/// The true lines of a page for [`crate::layout::score`], on the straightened page `clean`, in
/// issue 5's reading order. The generator lists margin notes before footnotes; the stable sort
/// moves them after the footnotes and a page number at the foot, and keeps every other order.
pub fn true_lines(truth: &TruthPage, ink: &[Vec<(f32, f32)>], clean: &CleanPage) -> Vec<TrueLine> {
    let mid = truth.height_px as f32 / 2.0;
    let mut lines: Vec<(u8, TrueLine)> = truth
        .lines
        .iter()
        .zip(ink)
        .filter(|(_, pts)| !pts.is_empty())
        .map(|(l, pts)| {
            let group = reading_group(l.region, l.bbox.y0 < mid);
            (group, TrueLine::from_original(l.region, pts, clean))
        })
        .collect();
    lines.sort_by_key(|(g, _)| *g);
    lines.into_iter().map(|(_, l)| l).collect()
}

/// Ink pixel centres of each line, drawn alone into a mask the size of its box.
fn line_ink(shelf: &Shelf, layout: &Layout) -> Vec<Vec<(f32, f32)>> {
    layout
        .lines
        .iter()
        .map(|l| {
            let Some(b) = l.word_boxes().into_iter().reduce(|a, b| a.union(&b)) else {
                return Vec::new();
            };
            // Two pixels beyond the padded ink box catch any stray anti-aliased edge.
            let (x0, y0) = ((b.x0 - 2.0).floor(), (b.y0 - 2.0).floor());
            let (w, h) = (
                (b.x1 + 2.0 - x0).ceil() as u32,
                (b.y1 + 2.0 - y0).ceil() as u32,
            );
            let Some(mut mask) = Mask::new(w.max(1), h.max(1)) else {
                return Vec::new();
            };
            for (word, x) in l.set.words.iter().zip(&l.set.x_px) {
                let origin = (l.left_px + x - x0, l.baseline_px - y0);
                draw_line(shelf, &word.shaped, origin, None, &mut mask);
            }
            let w = mask.width();
            mask.data()
                .iter()
                .enumerate()
                .filter(|(_, &v)| v >= 128)
                .map(|(k, _)| {
                    let (x, y) = ((k as u32 % w) as f32, (k as u32 / w) as f32);
                    (x0 + x + 0.5, y0 + y + 0.5)
                })
                .collect()
        })
        .collect()
}

/// Word boxes line by line, then line boxes; baseline ends as points.
fn marks_of(layout: &Layout) -> Marks {
    let mut marks = Marks::default();
    for l in &layout.lines {
        marks.boxes.extend(l.word_boxes());
    }
    for l in &layout.lines {
        let b = l
            .word_boxes()
            .into_iter()
            .reduce(|a, b| a.union(&b))
            .unwrap_or_default();
        marks.boxes.push(b);
        marks.points.push((b.x0, l.baseline_px));
        marks.points.push((b.x1, l.baseline_px));
    }
    marks
}

fn truth_of(
    shelf: &Shelf,
    layout: &Layout,
    marks: &Marks,
    seed: u64,
    index: u64,
    damage: DamageLog,
) -> TruthPage {
    let n_words: usize = layout.lines.iter().map(|l| l.set.words.len()).sum();
    let mut word_boxes = marks.boxes[..n_words].iter();
    let lines = layout
        .lines
        .iter()
        .enumerate()
        .map(|(i, l)| {
            let words = l
                .set
                .words
                .iter()
                .map(|w| Word {
                    text: w.shaped.text.clone(),
                    bbox: *word_boxes.next().expect("one box per word"),
                    confidence: 1.0,
                })
                .collect();
            let (p, q) = (marks.points[2 * i], marks.points[2 * i + 1]);
            let f = &shelf.fonts[l.font];
            TruthLine {
                words,
                bbox: marks.boxes[n_words + i],
                region: l.region,
                baseline: [p.0, p.1, q.0, q.1],
                font: f.name().to_string(),
                family: f.entry.family.clone(),
                size_pt: l.size_pt,
            }
        })
        .collect();
    TruthPage {
        lines,
        width_px: layout.width_px,
        height_px: layout.height_px,
        dpi: layout.dpi,
        columns: layout.columns,
        gutter_left: layout.gutter_left,
        seed,
        index,
        damage,
    }
}

/// JSON text of a page's truth.
pub fn truth_json(truth: &TruthPage) -> String {
    serde_json::to_string_pretty(truth).expect("truth serializes")
}

/// Write `count` pages to `dir`: `000000.png` and `000000.json` (ground truth) each.
pub fn write_pages(
    cfg: &SynthConfig,
    dir: &Path,
    count: usize,
    tick: &(dyn Fn() + Sync),
) -> Result<()> {
    cfg.validate()?;
    prepare_dir(dir)?;
    (0..count).into_par_iter().try_for_each(|i| {
        let page = make_page(cfg, i as u64, PageOptions::at_dpi(cfg.dpi));
        let stem = dir.join(format!("{i:06}"));
        write_file(
            &stem.with_extension("png"),
            &png_bytes(&page.image, page.truth.dpi),
        )?;
        write_file(
            &stem.with_extension("json"),
            truth_json(&page.truth).as_bytes(),
        )?;
        tick();
        Ok::<(), Error>(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::synth::shelf::FontSet;

    /// The damaged pages of the layout evaluation's set: every family, seed 505, full damage.
    fn worn_505() -> SynthConfig {
        SynthConfig {
            fonts: FontSet::All,
            seed: 505,
            degrade: 1.0,
            ..SynthConfig::default()
        }
    }

    /// The skew of a worn scan can push a margin note half off the sheet (generated damaged page
    /// 83 of seed 505: a note at the right edge of a 200-dpi page); the ink past the edge is not
    /// on the page image and is not the true line's ink.
    #[test]
    fn true_ink_is_only_ink_on_the_scanned_image() {
        let (page, ink) = make_page_with_ink(&worn_505(), 83, PageOptions::default());
        let (w, h) = (page.image.width() as f32, page.image.height() as f32);
        let points: Vec<&(f32, f32)> = ink.iter().flatten().collect();
        assert!(points.len() > 10_000, "{} ink pixels", points.len());
        let off = points
            .iter()
            .filter(|(x, y)| !(0.0..w).contains(x) || !(0.0..h).contains(y))
            .count();
        assert_eq!(off, 0, "{off} ink pixels off the {w} × {h} scan");
        // The note itself is still there, cut at the edge: some line's ink reaches the last column.
        assert!(points.iter().any(|(x, _)| *x > w - 2.0));
    }

    /// A worn black-and-white scan (generated damaged page 195 of seed 505, thresholded) wears a
    /// page number's dashes to a dot each: the ink it left white is not on the page image.
    #[test]
    fn true_ink_of_a_black_and_white_scan_is_on_black_pixels() {
        let (page, ink) = make_page_with_ink(&worn_505(), 195, PageOptions::default());
        assert!(page.truth.damage.bilevel);
        let points: Vec<&(f32, f32)> = ink.iter().flatten().collect();
        assert!(points.len() > 10_000, "{} ink pixels", points.len());
        let white = points
            .iter()
            .filter(|(x, y)| page.image.get_pixel(*x as u32, *y as u32).0[0] == 255)
            .count();
        assert_eq!(white, 0, "{white} true ink pixels on white");
    }
}
