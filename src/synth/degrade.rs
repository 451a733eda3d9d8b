//! Scan damage: turns a clean ink-coverage image into something that looks scanned.
//!
//! Each effect has a strength drawn from the overall `strength` (0 clean … 1 very poor) and the
//! caller's seeded RNG, so the same seed gives the same pixels. Effects that move pixels (skew,
//! gutter curl) move the ground-truth boxes passed in with them. Owns only pixels and boxes;
//! which text is where is [`super::page`]'s business.

use image::codecs::jpeg::JpegEncoder;
use image::imageops::{resize, FilterType};
use image::{GrayImage, ImageFormat, Luma};
use imageproc::geometric_transformations::{warp, warp_with, Border, Interpolation, Projection};
use rand::Rng;

use crate::layout::geometry::Rect;

/// What the damage did, for the ground truth.
#[derive(Debug, Clone, Copy, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct DamageLog {
    /// Skew applied, degrees clockwise.
    pub skew_deg: f32,
    /// Gaussian blur sigma in pixels (0: none).
    pub blur_px: f32,
    /// JPEG quality used (0: not JPEG-compressed).
    pub jpeg_quality: u8,
    /// Whether the page was thresholded to black and white.
    pub bilevel: bool,
    /// Downscale factor of the simulated low-resolution scan (1: none).
    pub resample: f32,
}

/// Settings for one damage pass.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DamageConfig {
    /// Overall strength, 0 (clean) to 1.
    pub strength: f32,
    /// Largest skew at strength 1, degrees.
    pub max_skew_deg: f32,
    /// Where the gutter is, for the curl near it: `Some(true)` left edge, `Some(false)` right
    /// edge. `None` for single lines: no curl, skew as a cheap vertical shear, and no simulated
    /// low resolution (lines are already drawn at 150–600 dpi).
    pub gutter_left: Option<bool>,
}

/// Ground-truth geometry that moves with the pixels.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Marks {
    /// Word and line boxes; after a move, the bounds of the moved box.
    pub boxes: Vec<Rect>,
    /// Points (baseline ends), moved exactly.
    pub points: Vec<(f32, f32)>,
}

impl Marks {
    fn map(&mut self, f: impl Fn(f32, f32) -> (f32, f32)) {
        for b in self.boxes.iter_mut() {
            *b = map_box(b, &f);
        }
        for p in self.points.iter_mut() {
            *p = f(p.0, p.1);
        }
    }
}

/// Coverage (0 paper … 255 full ink) → scanned grey page (255 paper, dark ink), marks moved along.
pub fn scan<R: Rng>(
    coverage: &GrayImage,
    boxes: &mut Marks,
    cfg: &DamageConfig,
    rng: &mut R,
) -> (GrayImage, DamageLog) {
    let s = cfg.strength.clamp(0.0, 1.0);
    let mut log = DamageLog {
        resample: 1.0,
        ..DamageLog::default()
    };
    if s == 0.0 {
        let mut out = coverage.clone();
        out.pixels_mut().for_each(|p| p.0[0] = 255 - p.0[0]);
        return (out, log);
    }
    let mut img = ink_on_paper(coverage, s, rng);
    if let Some(left) = cfg.gutter_left {
        if rng.random_bool((s * 0.6) as f64) {
            img = curl(&img, boxes, s * rng.random_range(0.3..1.0), left);
        }
    }
    if rng.random_bool((0.3 + 0.7 * s) as f64) {
        log.skew_deg = rng.random_range(-1.0..1.0) * cfg.max_skew_deg * s;
        img = match cfg.gutter_left {
            Some(_) => skew(&img, boxes, log.skew_deg),
            None => shear(&img, boxes, log.skew_deg),
        };
    }
    if rng.random_bool((s * 0.8) as f64) {
        log.blur_px = rng.random_range(0.3..0.5 + 1.0 * s);
        img = blur(&img, log.blur_px);
    }
    if cfg.gutter_left.is_some() && rng.random_bool((s * 0.5) as f64) {
        log.resample = rng.random_range(1.0 - 0.5 * s..0.95);
        img = low_resolution(&img, log.resample);
    }
    speckle(&mut img, s, rng);
    if rng.random_bool((s * 0.3) as f64) {
        log.bilevel = true;
        let level = bilevel_level(&img, rng.random_range(0.5..0.75));
        threshold(&mut img, level);
    } else if rng.random_bool((s * 0.7) as f64) {
        log.jpeg_quality = rng.random_range((90.0 - 60.0 * s) as u8..=90);
        img = jpeg_round_trip(&img, log.jpeg_quality);
    }
    (img, log)
}

/// Ink spread or erosion, ink darkness, paper tone, uneven light, paper grain and show-through.
fn ink_on_paper<R: Rng>(coverage: &GrayImage, s: f32, rng: &mut R) -> GrayImage {
    let (w, h) = coverage.dimensions();
    // Gamma < 1 fattens strokes (ink spread), > 1 thins them (worn type): common practice, no source.
    let gamma = 2f32.powf(rng.random_range(-1.0..0.5) * s);
    let lut: Vec<f32> = (0..256).map(|v| (v as f32 / 255.0).powf(gamma)).collect();
    let ink = rng.random_range(0.0..70.0 * s);
    let paper = 255.0 - rng.random_range(0.0..45.0 * s);
    let (gx, gy) = (
        rng.random_range(-1.0..1.0) * 30.0 * s,
        rng.random_range(-1.0..1.0) * 30.0 * s,
    );
    let grain = 12.0 * s;
    let show = if rng.random_bool((s * 0.5) as f64) {
        rng.random_range(0.04..0.15)
    } else {
        0.0
    };
    let shift = rng.random_range(0..w.max(1) / 8 + 1);
    // Uneven light is separable: a column term plus a row term.
    let col: Vec<f32> = (0..w)
        .map(|x| x as f32 / w as f32 - 0.5)
        .map(|u| gx * u - 20.0 * s * u * u)
        .collect();
    let mut out = GrayImage::new(w, h);
    let (src, dst) = (coverage.as_raw(), &mut *out);
    for y in 0..h as usize {
        let v = y as f32 / h as f32 - 0.5;
        let row_light = paper + gy * v - 20.0 * s * v * v;
        let row = &src[y * w as usize..(y + 1) * w as usize];
        let out_row = &mut dst[y * w as usize..(y + 1) * w as usize];
        let mut noise = (y as u32).wrapping_mul(0x9E37_79B1) | 1;
        for x in 0..w as usize {
            // xorshift32 (Marsaglia 2003) for paper grain: cheap and deterministic.
            noise ^= noise << 13;
            noise ^= noise >> 17;
            noise ^= noise << 5;
            let mut bg = row_light + col[x] + grain * ((noise & 0xFFFF) as f32 / 65535.0 - 0.5);
            if show > 0.0 {
                // The reverse side seen through the paper: mirrored, shifted, faint.
                let mx = (w as usize - 1 - x + shift as usize) % w as usize;
                bg -= show * row[mx] as f32;
            }
            let c = lut[row[x] as usize];
            out_row[x] = (bg * (1.0 - c) + ink * c).clamp(0.0, 255.0) as u8;
        }
    }
    out
}

/// Rotate about the centre, clockwise by `angle_deg`; boxes become the bounds of their turned corners.
pub fn skew(img: &GrayImage, marks: &mut Marks, angle_deg: f32) -> GrayImage {
    let (w, h) = img.dimensions();
    let (cx, cy) = (w as f32 / 2.0, h as f32 / 2.0);
    let proj = Projection::translate(cx, cy)
        * Projection::rotate(angle_deg.to_radians())
        * Projection::translate(-cx, -cy);
    let paper = corner_paper(img);
    marks.map(|x, y| proj * (x, y));
    warp(
        img,
        proj,
        Interpolation::Bilinear,
        Border::Constant(Luma([paper])),
    )
}

/// A small skew of a single line as a vertical shear: column `x` moves down by `(x - cx)·tan a`.
/// The line image grows in height so no ink is cut; marks move with the ink.
pub fn shear(img: &GrayImage, marks: &mut Marks, angle_deg: f32) -> GrayImage {
    let (w, h) = (img.width() as usize, img.height() as usize);
    let t = angle_deg.to_radians().tan();
    let extra = (t.abs() * w as f32).ceil() as usize;
    let paper = corner_paper(img);
    let top = if t > 0.0 { 0.0 } else { extra as f32 };
    marks.map(|x, y| (x, y + top + x * t));
    // Per column: whole-pixel shift and the fraction taken from the row above.
    let shifts: Vec<(i64, f32)> = (0..w)
        .map(|x| {
            let dy = top + x as f32 * t;
            (dy.floor() as i64, dy - dy.floor())
        })
        .collect();
    let src = img.as_raw();
    let at = |x: usize, y: i64| {
        if (0..h as i64).contains(&y) {
            src[y as usize * w + x] as f32
        } else {
            paper as f32
        }
    };
    let mut out = vec![paper; w * (h + extra)];
    for (y, row) in out.chunks_exact_mut(w).enumerate() {
        for (x, (p, &(d, f))) in row.iter_mut().zip(&shifts).enumerate() {
            let sy = y as i64 - d;
            // Output row y takes (1-f) of source row sy and f of row sy-1.
            *p = (at(x, sy) * (1.0 - f) + at(x, sy - 1) * f).round() as u8;
        }
    }
    GrayImage::from_raw(w as u32, (h + extra) as u32, out).expect("buffer is w × h")
}

/// Gaussian blur of an 8-bit image with integer weights (radius ⌈2σ⌉, edges repeated): the
/// same filter as imageproc's `gaussian_blur_f32`, written for 8-bit slices because it runs on
/// every line image; checked against imageproc in the tests.
pub fn blur(img: &GrayImage, sigma: f32) -> GrayImage {
    let (w, h) = (img.width() as usize, img.height() as usize);
    let r = (2.0 * sigma).ceil().max(1.0) as usize;
    let raw: Vec<f32> = (0..=2 * r)
        .map(|i| (-((i as f32 - r as f32).powi(2)) / (2.0 * sigma * sigma)).exp())
        .collect();
    let sum: f32 = raw.iter().sum();
    let k: Vec<u32> = raw
        .iter()
        .map(|v| (v / sum * 65536.0).round() as u32)
        .collect();
    let src = img.as_raw();
    // Horizontal pass on a padded copy of each row.
    let mut tmp = vec![0u8; w * h];
    let mut padded = vec![0u8; w + 2 * r];
    for (row, out) in src.chunks_exact(w).zip(tmp.chunks_exact_mut(w)) {
        padded[..r].fill(row[0]);
        padded[r..r + w].copy_from_slice(row);
        padded[r + w..].fill(row[w - 1]);
        for (o, win) in out.iter_mut().zip(padded.windows(2 * r + 1)) {
            let acc: u32 = win.iter().zip(&k).map(|(&v, &kk)| v as u32 * kk).sum();
            *o = ((acc + 32768) >> 16).min(255) as u8;
        }
    }
    // Vertical pass row by row, accumulating whole rows.
    let mut out = vec![0u8; w * h];
    let mut acc = vec![0u32; w];
    for (y, orow) in out.chunks_exact_mut(w).enumerate() {
        acc.fill(0);
        for (j, &kk) in k.iter().enumerate() {
            let sy = (y + j).saturating_sub(r).min(h - 1);
            for (a, &v) in acc.iter_mut().zip(&tmp[sy * w..(sy + 1) * w]) {
                *a += v as u32 * kk;
            }
        }
        for (o, &a) in orow.iter_mut().zip(&acc) {
            *o = ((a + 32768) >> 16).min(255) as u8;
        }
    }
    GrayImage::from_raw(w as u32, h as u32, out).expect("buffer is w × h")
}

fn corner_paper(img: &GrayImage) -> u8 {
    let (w, h) = img.dimensions();
    let c = [
        img.get_pixel(0, 0),
        img.get_pixel(w - 1, 0),
        img.get_pixel(0, h - 1),
        img.get_pixel(w - 1, h - 1),
    ];
    (c.iter().map(|p| p.0[0] as u32).sum::<u32>() / 4) as u8
}

/// Bounds of a 5 × 3 grid of points on a box after a point map (the curl bends edges).
fn map_box(b: &Rect, f: impl Fn(f32, f32) -> (f32, f32)) -> Rect {
    let xs: [f32; 5] = std::array::from_fn(|i| b.x0 + (b.x1 - b.x0) * i as f32 / 4.0);
    let ys = [b.y0, (b.y0 + b.y1) / 2.0, b.y1];
    let mut out: Option<Rect> = None;
    for &x in &xs {
        for &y in &ys {
            let (u, v) = f(x, y);
            let r = Rect::new(u, v, u, v);
            out = Some(out.map_or(r, |o| o.union(&r)));
        }
    }
    out.unwrap_or(*b)
}

/// Where the output pixel `(x, y)` of a gutter curl takes its ink from.
fn curl_source(x: f32, y: f32, w: f32, h: f32, amount: f32, left: bool) -> (f32, f32) {
    let zone = 0.12 * w;
    let d = if left { x } else { w - 1.0 - x };
    if d >= zone {
        return (x, y);
    }
    let t = 1.0 - d / zone; // 0 at the zone edge, 1 at the gutter
    let squeeze = amount * 0.08 * zone * t * t;
    let sx = if left { x + squeeze } else { x - squeeze };
    let sy = h / 2.0 + (y - h / 2.0) * (1.0 + amount * 0.04 * t * t);
    (sx, sy)
}

/// Lines bend and squeeze near the gutter edge and the paper darkens there.
pub fn curl(img: &GrayImage, marks: &mut Marks, amount: f32, left: bool) -> GrayImage {
    let (w, h) = (img.width() as f32, img.height() as f32);
    let paper = corner_paper(img);
    let mut out = warp_with(
        img,
        |x, y| curl_source(x, y, w, h, amount, left),
        Interpolation::Bilinear,
        Border::Constant(Luma([paper])),
    );
    for (x, _, p) in out.enumerate_pixels_mut() {
        let d = if left { x as f32 } else { w - 1.0 - x as f32 };
        let t = (1.0 - d / (0.06 * w)).max(0.0);
        p.0[0] = (p.0[0] as f32 * (1.0 - 0.35 * amount * t * t)) as u8;
    }
    // The inverse of the curl by fixed-point iteration: find p with source(p) = q.
    marks.map(|qx, qy| {
        let (mut px, mut py) = (qx, qy);
        for _ in 0..8 {
            let (sx, sy) = curl_source(px, py, w, h, amount, left);
            px += qx - sx;
            py += qy - sy;
        }
        (px, py)
    });
    out
}

/// Scan at a lower resolution and blow back up to the page size.
fn low_resolution(img: &GrayImage, factor: f32) -> GrayImage {
    let (w, h) = img.dimensions();
    let (sw, sh) = (
        ((w as f32 * factor) as u32).max(1),
        ((h as f32 * factor) as u32).max(1),
    );
    let small = resize(img, sw, sh, FilterType::Triangle);
    resize(&small, w, h, FilterType::Triangle)
}

/// Salt-and-pepper pixels and small dark specks (dust).
fn speckle<R: Rng>(img: &mut GrayImage, s: f32, rng: &mut R) {
    let (w, h) = img.dimensions();
    let area = (w as f64) * (h as f64);
    let dots = (area * 0.0008 * s as f64) as usize;
    for _ in 0..dots {
        let (x, y) = (rng.random_range(0..w), rng.random_range(0..h));
        img.put_pixel(x, y, Luma([if rng.random_bool(0.5) { 0 } else { 255 }]));
    }
    let specks = (area * 0.00002 * s as f64) as usize;
    for _ in 0..specks {
        let (x0, y0) = (rng.random_range(0..w), rng.random_range(0..h));
        let r = rng.random_range(1..3u32);
        for y in y0.saturating_sub(r)..(y0 + r).min(h) {
            for x in x0.saturating_sub(r)..(x0 + r).min(w) {
                img.put_pixel(x, y, Luma([30]));
            }
        }
    }
}

/// A threshold `share` of the way from the ink level (2nd percentile) to the paper level (median),
/// so thin strokes survive as a well-adjusted bilevel scanner keeps them.
pub fn bilevel_level(img: &GrayImage, share: f32) -> u8 {
    let mut hist = [0usize; 256];
    img.pixels().for_each(|p| hist[p.0[0] as usize] += 1);
    let n = img.pixels().len().max(1);
    let percentile = |q: f32| {
        let target = (n as f32 * q) as usize;
        let mut seen = 0;
        hist.iter()
            .position(|&c| {
                seen += c;
                seen > target
            })
            .unwrap_or(255) as f32
    };
    let (ink, paper) = (percentile(0.02), percentile(0.5));
    (ink + (paper - ink) * share).round().clamp(1.0, 254.0) as u8
}

/// Bilevel scanner: every pixel black or white.
pub fn threshold(img: &mut GrayImage, level: u8) {
    img.pixels_mut()
        .for_each(|p| p.0[0] = if p.0[0] < level { 0 } else { 255 });
}

/// Compress as JPEG at `quality` and decode again.
pub fn jpeg_round_trip(img: &GrayImage, quality: u8) -> GrayImage {
    let mut buf = Vec::new();
    let encoded = JpegEncoder::new_with_quality(&mut buf, quality).encode_image(img);
    match encoded
        .ok()
        .and_then(|_| image::load_from_memory_with_format(&buf, ImageFormat::Jpeg).ok())
    {
        Some(d) => d.to_luma8(),
        None => img.clone(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;

    fn dot_image(x: u32, y: u32) -> GrayImage {
        let mut img = GrayImage::from_pixel(200, 100, Luma([255]));
        for yy in y - 2..y + 3 {
            for xx in x - 2..x + 3 {
                img.put_pixel(xx, yy, Luma([0]));
            }
        }
        img
    }

    fn dark_centre(img: &GrayImage) -> (f32, f32) {
        let (mut sx, mut sy, mut n) = (0.0, 0.0, 0.0);
        for (x, y, p) in img.enumerate_pixels() {
            // Only dark pixels: the gutter shadow darkens paper too.
            let ink = if p.0[0] < 128 {
                255.0 - p.0[0] as f32
            } else {
                0.0
            };
            sx += x as f32 * ink;
            sy += y as f32 * ink;
            n += ink;
        }
        (sx / n, sy / n)
    }

    #[test]
    fn skew_moves_boxes_with_the_ink() {
        let img = dot_image(170, 20);
        let mut marks = Marks {
            boxes: vec![Rect::new(167.5, 17.5, 172.5, 22.5)],
            points: vec![(170.0, 20.0)],
        };
        let out = skew(&img, &mut marks, 4.0);
        let (x, y) = dark_centre(&out);
        let b = marks.boxes[0];
        assert!((marks.points[0].0 - x).abs() < 0.6 && (marks.points[0].1 - y).abs() < 0.6);
        assert!(
            (x - (b.x0 + b.x1) / 2.0).abs() < 0.6 && (y - (b.y0 + b.y1) / 2.0).abs() < 0.6,
            "{x},{y} vs {b:?}"
        );
        // Clockwise in a y-down image: a point right of the centre moves down.
        assert!(y > 20.5);
    }

    #[test]
    fn curl_moves_boxes_with_the_ink() {
        let img = dot_image(195, 10);
        let mut marks = Marks {
            boxes: vec![Rect::new(192.5, 7.5, 197.5, 12.5)],
            points: vec![],
        };
        let out = curl(&img, &mut marks, 1.0, false);
        let (x, y) = dark_centre(&out);
        let b = marks.boxes[0];
        assert!(
            (x - (b.x0 + b.x1) / 2.0).abs() < 0.8 && (y - (b.y0 + b.y1) / 2.0).abs() < 0.8,
            "{x},{y} vs {b:?}"
        );
    }

    #[test]
    fn zero_strength_is_the_clean_inverse_and_seeds_repeat() {
        let mut cov = GrayImage::new(40, 20);
        cov.put_pixel(3, 4, Luma([255]));
        let cfg = DamageConfig {
            strength: 0.0,
            max_skew_deg: 5.0,
            gutter_left: Some(true),
        };
        let (clean, _) = scan(
            &cov,
            &mut Marks::default(),
            &cfg,
            &mut ChaCha8Rng::seed_from_u64(1),
        );
        assert_eq!(clean.get_pixel(3, 4).0[0], 0);
        assert_eq!(clean.get_pixel(5, 5).0[0], 255);
        let cfg = DamageConfig {
            strength: 0.9,
            ..cfg
        };
        let a = scan(
            &cov,
            &mut Marks::default(),
            &cfg,
            &mut ChaCha8Rng::seed_from_u64(5),
        );
        let b = scan(
            &cov,
            &mut Marks::default(),
            &cfg,
            &mut ChaCha8Rng::seed_from_u64(5),
        );
        assert_eq!(a.0.as_raw(), b.0.as_raw());
    }

    #[test]
    fn shear_moves_the_right_end_down_for_a_clockwise_skew() {
        let img = dot_image(190, 50);
        let mut marks = Marks {
            boxes: vec![],
            points: vec![(190.0, 50.0)],
        };
        let out = shear(&img, &mut marks, 3.0);
        let (x, y) = dark_centre(&out);
        assert!(
            (marks.points[0].1 - y).abs() < 0.3,
            "{:?} vs {y}",
            marks.points[0]
        );
        // Column 190 moves down by 190·tan 3° ≈ 9.96 px (top = 0 for a positive angle).
        assert!(
            (x - 190.0).abs() < 0.1 && (y - (50.0 + 190.0 * 3f32.to_radians().tan())).abs() < 0.3,
            "{x},{y}"
        );
    }

    #[test]
    fn blur_matches_imageproc_gaussian() {
        // Outside reference: imageproc 0.27 `gaussian_blur_f32` (same radius rule, f32 weights).
        let img = GrayImage::from_fn(37, 23, |x, y| Luma([((x * 37 + y * 91) % 256) as u8]));
        for sigma in [0.5f32, 0.9, 1.4] {
            let ours = blur(&img, sigma);
            let theirs = imageproc::filter::gaussian_blur_f32(&img, sigma);
            for (a, b) in ours.pixels().zip(theirs.pixels()) {
                assert!(
                    (a.0[0] as i32 - b.0[0] as i32).abs() <= 2,
                    "sigma {sigma}: {} vs {}",
                    a.0[0],
                    b.0[0]
                );
            }
        }
    }

    #[test]
    fn threshold_leaves_two_levels() {
        let mut img = GrayImage::from_fn(16, 1, |x, _| Luma([(x * 16) as u8]));
        threshold(&mut img, 128);
        assert!(img.pixels().all(|p| p.0[0] == 0 || p.0[0] == 255));
    }

    #[test]
    fn bilevel_level_sits_between_ink_and_paper() {
        // 10 % ink at 20, the rest paper at 220: half way is 120.
        let img = GrayImage::from_fn(100, 10, |x, _| Luma([if x < 10 { 20 } else { 220 }]));
        assert_eq!(bilevel_level(&img, 0.5), 120);
        assert_eq!(bilevel_level(&img, 0.75), 170);
    }
}
