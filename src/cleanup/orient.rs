//! Which way up the page is: text running across or down the page (90° turns), and upright or upside
//! down (180°).
//!
//! Across vs down compares how sharply the ink gathers into rows along each direction: the
//! projection profile's peakedness (mean square over squared mean within the profile's extent,
//! so that a text block taller than wide gains nothing), each strip of the page profiled apart
//! so that columns do not blur each other. Up vs down uses a trait
//! of Arabic type: the densest row of a line is its baseline, and more ink stands above the baseline
//! (alef, lam, kaf, tall heads, most dots and harakat) than hangs below it. The rule is ours, tested on
//! drawn pages (common practice in script-aware page reading, no source).

use image::GrayImage;

use super::deskew::ink_points;

/// True when the text lines run down the page (the page is turned by 90° or 270°): its ink
/// gathers into rows more sharply down the page than across it.
pub fn lines_run_vertically(binary: &GrayImage, dpi: f32) -> bool {
    let (across, down) = direction_scores(binary, dpi);
    down > SIDEWAYS_MARGIN * across
}

/// How much more peaked the profiles down the page must be than across it to turn a page by a
/// quarter. Measured on the 200 generated pages of `examples/layout_eval` (seed 505, every shelf
/// font), clean and at damage 0.4, 0.6, 0.8 and 1.0: upright pages scored down/across at most
/// 0.74, the same pages turned by 90° at least 1.43. The square-sum score used before (not
/// normalized by the profile's extent) put an upright nastaliq page at 1.06 and the same page
/// turned at 0.95, on the wrong sides of any margin.
const SIDEWAYS_MARGIN: f64 = 1.0;

/// Peakedness of the profiles with lines running across the page and down it, each the best
/// over a few small angles (the page is not deskewed yet).
pub fn direction_scores(binary: &GrayImage, dpi: f32) -> (f64, f64) {
    let pts = ink_points(binary, 60_000);
    if pts.len() < 50 {
        return (1.0, 0.0);
    }
    let (w, h) = (binary.width() as f32, binary.height() as f32);
    let bin = 2.0 * (dpi / 300.0).max(0.25);
    let swapped: Vec<(f32, f32)> = pts.iter().map(|&(x, y)| (y, x)).collect();
    // Strips across the line direction, weighted by their ink: the lines of two columns that do
    // not align blur one whole-page profile but not the profile of each column.
    let best = |p: &[(f32, f32)], ww: f32| {
        let parts = strips(p, STRIPS, ww);
        (-7..=7)
            .map(|a| {
                let angle = (2 * a) as f32;
                let sum: f64 = parts
                    .iter()
                    .map(|s| s.len() as f64 * peakedness(s, angle, bin, ww))
                    .sum();
                sum / pts.len() as f64
            })
            .fold(f64::MIN, f64::max)
    };
    (best(&pts, w), best(&swapped, h))
}

/// Mean square over squared mean of the row counts of `pts` projected at `angle_deg`, rows
/// `bin_px` high, over the rows from the first to the last with ink: 1 for ink spread evenly,
/// larger as it gathers into lines with white between them.
fn peakedness(pts: &[(f32, f32)], angle_deg: f32, bin_px: f32, width_px: f32) -> f64 {
    if pts.is_empty() {
        return 0.0;
    }
    let (s, c) = angle_deg.to_radians().sin_cos();
    // y' = y·cos + x·sin; shifted by the width so that it is never negative.
    let rows: Vec<usize> = pts
        .iter()
        .map(|&(x, y)| (((y + 0.5) * c + (x + 0.5) * s + width_px + 1.0) / bin_px) as usize)
        .collect();
    let (lo, hi) = rows
        .iter()
        .fold((usize::MAX, 0), |(lo, hi), &r| (lo.min(r), hi.max(r)));
    let mut counts = vec![0f64; hi - lo + 1];
    for r in rows {
        counts[r - lo] += 1.0;
    }
    let n = pts.len() as f64;
    let squares: f64 = counts.iter().map(|v| v * v).sum();
    counts.len() as f64 * squares / (n * n)
}

/// Strips the page is cut into across the line direction when comparing directions.
const STRIPS: usize = 4;

/// Points cut into `n` upright strips of a page `width` wide.
fn strips(pts: &[(f32, f32)], n: usize, width: f32) -> Vec<Vec<(f32, f32)>> {
    let mut out: Vec<Vec<(f32, f32)>> = vec![Vec::new(); n];
    for &(x, y) in pts {
        let k = ((x / width.max(1.0) * n as f32) as usize).min(n - 1);
        out[k].push((x, y));
    }
    out
}

/// Ink above and below the baseline summed over all lines of a straightened binary page, each of
/// `STRIPS` upright strips profiled on its own: the lines of two columns that do not align blur
/// one whole-page row profile, and a blurred baseline peak tells nothing about up and down.
pub fn ink_above_below_baselines(binary: &GrayImage) -> (u64, u64) {
    let (w, h) = (binary.width() as usize, binary.height() as usize);
    let raw = binary.as_raw();
    let (mut above, mut below) = (0u64, 0u64);
    for k in 0..STRIPS {
        let (x0, x1) = (k * w / STRIPS, (k + 1) * w / STRIPS);
        let prof: Vec<u32> = (0..h)
            .map(|y| {
                raw[y * w + x0..y * w + x1]
                    .iter()
                    .filter(|&&p| p == 0)
                    .count() as u32
            })
            .collect();
        let (a, b) = above_below(&prof);
        above += a;
        below += b;
    }
    (above, below)
}

/// Ink above and below the peak row of each run of inked rows of a row profile.
fn above_below(prof: &[u32]) -> (u64, u64) {
    let max = prof.iter().copied().max().unwrap_or(0);
    let floor = (max / 20).max(1);
    let (mut above, mut below) = (0u64, 0u64);
    let mut y = 0;
    while y < prof.len() {
        if prof[y] < floor {
            y += 1;
            continue;
        }
        let start = y;
        while y < prof.len() && prof[y] >= floor {
            y += 1;
        }
        let band = &prof[start..y];
        let peak = band
            .iter()
            .enumerate()
            .max_by_key(|(_, &v)| v)
            .map_or(0, |(i, _)| i);
        above += band[..peak].iter().map(|&v| v as u64).sum::<u64>();
        below += band[peak + 1..].iter().map(|&v| v as u64).sum::<u64>();
    }
    (above, below)
}

/// True when a straightened Arabic page appears upside down: clearly more ink below the baselines
/// than above them. Near a tie a page that came with its lines across is left as it is: most
/// pages come upright, and some typefaces with deep tails put almost as much ink below the
/// baseline as above it (a generated page measured 1.009 above/below upright and 1.012 turned).
/// A page that came `sideways` was turned by a quarter either way, with no side more likely, so
/// there the side with more ink above the baselines wins outright.
pub fn is_upside_down(binary: &GrayImage, sideways: bool) -> bool {
    let (above, below) = ink_above_below_baselines(binary);
    let margin = if sideways { 1.0 } else { UPSIDE_DOWN_MARGIN };
    below as f64 > margin * above as f64
}

/// How much more ink must hang below the baselines than stand above them to turn a page.
const UPSIDE_DOWN_MARGIN: f64 = 1.1;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::cleanup::binarize::apply_threshold;
    use crate::synth::{page::PageOptions, shelf::FontSet, truth::make_page, SynthConfig};

    #[test]
    fn two_column_pages_are_judged_upright_and_upside_down() {
        // Straight two-column pages from the page generator that a whole-page row profile left
        // upside down when turned by 180°: their columns' lines do not align.
        let cfg = SynthConfig {
            fonts: FontSet::All,
            seed: 505,
            ..SynthConfig::default()
        };
        for i in [34, 151] {
            let p = make_page(&cfg, i, PageOptions::default());
            assert_eq!(p.truth.columns, 2, "page {i}");
            let upright = apply_threshold(&p.image, 128);
            assert!(!is_upside_down(&upright, false), "page {i} upright");
            let turned = image::imageops::rotate180(&upright);
            assert!(is_upside_down(&turned, false), "page {i} turned by 180°");
        }
    }

    #[test]
    fn pages_turned_a_quarter_come_back_upright_without_the_upright_prior() {
        // Generated pages (every shelf font, seed 505) whose ink above and below the baselines
        // is near a tie: turned by 90°, the margin kept for pages that come across left them
        // upside down (undone by 90° instead of 270°).
        use crate::cleanup::{clean, CleanupConfig};
        use crate::page::PageImage;
        let cfg = SynthConfig {
            fonts: FontSet::All,
            seed: 505,
            ..SynthConfig::default()
        };
        for i in [39, 93] {
            let p = make_page(&cfg, i, PageOptions::default());
            let dpi = p.truth.dpi;
            let turned = image::imageops::rotate90(&p.image);
            let page = clean(&PageImage::new(turned, dpi, dpi), &CleanupConfig::default());
            assert_eq!(page.transform.quarter_turns, 3, "page {i}");
        }
    }

    #[test]
    fn two_column_nastaliq_and_display_pages_are_told_across_from_down() {
        // Generated pages (every shelf font, seed 505) that the square-sum profile score got
        // wrong: a clean two-column nastaliq page (upright scored down/across 1.06, turned 0.95)
        // and a worn two-column page in a heavy display face (1.08 upright).
        use crate::cleanup::{clean, CleanupConfig};
        use crate::page::PageImage;
        let unturned = CleanupConfig {
            fix_orientation: false,
            max_skew_deg: 0.0,
            ..CleanupConfig::default()
        };
        for (i, degrade) in [(130, 0.0), (116, 1.0)] {
            let cfg = SynthConfig {
                fonts: FontSet::All,
                seed: 505,
                degrade,
                ..SynthConfig::default()
            };
            let p = make_page(&cfg, i, PageOptions::default());
            let dpi = p.truth.dpi;
            let binary = clean(&PageImage::new(p.image, dpi, dpi), &unturned).binary;
            assert!(!lines_run_vertically(&binary, dpi), "page {i} upright");
            let turned = image::imageops::rotate90(&binary);
            assert!(lines_run_vertically(&turned, dpi), "page {i} turned");
        }
    }
}
