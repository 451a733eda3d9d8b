//! Type variation for training lines: wider or narrower letters and heavier or lighter strokes
//! than the shelf's fonts have, so that the recognizer meets more shapes of type than the
//! shelf holds. Works on the clean ink-coverage image before scan damage; owns only pixels and
//! the word boxes that move with them. The word-space factor ([`space_scale`]) is drawn here
//! too but applied when the line is shaped.

use image::imageops::{resize, FilterType};
use image::GrayImage;
use rand::Rng;

use crate::layout::geometry::Rect;

/// Widest horizontal stretch at strength 1, as a natural-log factor (±0.2: 0.82× … 1.22×).
const MAX_LOG_STRETCH: f32 = 0.2;
/// Stroke change per side at strength 1, in ems: −0.012 (thinner) … +0.025 (heavier). Book
/// naskh strokes are roughly 0.08–0.12 em wide (measured on the shelf's naskh faces by eye, from
/// memory of their outlines), so the heaviest setting adds about half a stroke.
const STROKE_RANGE_EM: (f32, f32) = (-0.012, 0.025);

/// Narrowest and widest word space at strength 1, as natural-log factors on the font's own space
/// (0.25× … 1.8×). Justified book lines stretch their spaces to about twice the natural width;
/// tightly set lines, old prints and calligraphic faces leave a quarter or less, so that only
/// the letters' final and initial forms tell where a word ends (common practice, no source).
const LOG_SPACE_RANGE: (f32, f32) = (-1.386, 0.588);

/// Factor on the font's word space for one line; `strength` 0 gives 1 (the font's own). Half
/// the varied lines are set tighter and half looser than the font, each uniform in log space
/// up to the range's end scaled by `strength`.
pub fn space_scale<R: Rng>(strength: f32, rng: &mut R) -> f32 {
    let s = strength.clamp(0.0, 1.0);
    if s == 0.0 || !rng.random_bool(s as f64) {
        return 1.0;
    }
    let end = if rng.random_bool(0.5) {
        LOG_SPACE_RANGE.0
    } else {
        LOG_SPACE_RANGE.1
    };
    (rng.random_range(0.0..1.0f32) * end * s).exp()
}

/// What one variation did, for tests and logs.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Variation {
    /// Horizontal scale factor (1: unchanged).
    pub stretch: f32,
    /// Stroke change per side in pixels (positive: heavier).
    pub stroke_px: f32,
}

/// Draw a variation for a line set at `em_px` pixels per em; `strength` 0 gives none.
pub fn draw<R: Rng>(strength: f32, em_px: f32, rng: &mut R) -> Variation {
    let s = strength.clamp(0.0, 1.0);
    if s == 0.0 || !rng.random_bool(s as f64) {
        return Variation {
            stretch: 1.0,
            stroke_px: 0.0,
        };
    }
    let stretch = (rng.random_range(-1.0..1.0f32) * MAX_LOG_STRETCH * s).exp();
    let per_em = rng.random_range(STROKE_RANGE_EM.0..STROKE_RANGE_EM.1) * s;
    Variation {
        stretch,
        stroke_px: per_em * em_px,
    }
}

/// Apply a variation to a coverage image (0 paper … 255 ink) and the word boxes in it.
pub fn apply(coverage: &GrayImage, boxes: &mut [Rect], v: Variation) -> GrayImage {
    let mut img = if (v.stretch - 1.0).abs() > 1e-3 {
        let (w, h) = coverage.dimensions();
        let nw = ((w as f32 * v.stretch).round() as u32).max(1);
        let sx = nw as f32 / w as f32;
        for b in boxes.iter_mut() {
            *b = Rect::new(b.x0 * sx, b.y0, b.x1 * sx, b.y1);
        }
        resize(coverage, nw, h, FilterType::Triangle)
    } else {
        coverage.clone()
    };
    let mut left = v.stroke_px.abs();
    let heavier = v.stroke_px > 0.0;
    while left > 0.05 {
        let step = left.min(1.0);
        img = grow(&img, step, heavier);
        left -= step;
    }
    if heavier {
        let pad = v.stroke_px.ceil();
        let (w, h) = (img.width() as f32, img.height() as f32);
        for b in boxes.iter_mut() {
            *b = Rect::new(
                (b.x0 - pad).max(0.0),
                (b.y0 - pad).max(0.0),
                (b.x1 + pad).min(w),
                (b.y1 + pad).min(h),
            );
        }
    }
    img
}

/// Move every edge out (`heavier`) or in by `amount` ≤ 1 pixel: a blend between the image and
/// its 3 × 3 grey dilation (maximum) or erosion (minimum).
fn grow(img: &GrayImage, amount: f32, heavier: bool) -> GrayImage {
    let (w, h) = img.dimensions();
    let (w, h) = (w as usize, h as usize);
    let src = img.as_raw();
    let mut out = vec![0u8; w * h];
    for y in 0..h {
        let (y0, y1) = (y.saturating_sub(1), (y + 1).min(h - 1));
        for x in 0..w {
            let (x0, x1) = (x.saturating_sub(1), (x + 1).min(w - 1));
            let mut ext = src[y * w + x];
            for yy in y0..=y1 {
                for &v in &src[yy * w + x0..=yy * w + x1] {
                    ext = if heavier { ext.max(v) } else { ext.min(v) };
                }
            }
            let c = src[y * w + x] as f32;
            out[y * w + x] = (c + amount * (ext as f32 - c)).round().clamp(0.0, 255.0) as u8;
        }
    }
    GrayImage::from_raw(w as u32, h as u32, out).expect("same size as the input")
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;

    /// A 40 × 20 coverage image with one ink bar at x 10..20, y 5..15.
    fn bar() -> GrayImage {
        GrayImage::from_fn(40, 20, |x, y| {
            image::Luma([if (10..20).contains(&x) && (5..15).contains(&y) {
                255
            } else {
                0
            }])
        })
    }

    fn ink(img: &GrayImage) -> u32 {
        img.pixels().map(|p| p.0[0] as u32).sum()
    }

    #[test]
    fn zero_strength_changes_nothing() {
        let mut rng = ChaCha8Rng::seed_from_u64(1);
        for _ in 0..20 {
            let v = draw(0.0, 50.0, &mut rng);
            assert_eq!((v.stretch, v.stroke_px), (1.0, 0.0));
        }
        let mut boxes = [Rect::new(10.0, 5.0, 20.0, 15.0)];
        let out = apply(&bar(), &mut boxes, draw(0.0, 50.0, &mut rng));
        assert_eq!(out, bar());
        assert_eq!(boxes[0], Rect::new(10.0, 5.0, 20.0, 15.0));
    }

    #[test]
    fn heavier_strokes_add_a_pixel_each_side_and_lighter_take_one() {
        let heavy = apply(
            &bar(),
            &mut [],
            Variation {
                stretch: 1.0,
                stroke_px: 1.0,
            },
        );
        // A full pixel of dilation: the 10 × 10 bar becomes 12 × 12.
        assert_eq!(ink(&heavy), 12 * 12 * 255);
        let light = apply(
            &bar(),
            &mut [],
            Variation {
                stretch: 1.0,
                stroke_px: -1.0,
            },
        );
        assert_eq!(ink(&light), 8 * 8 * 255);
        // Half a pixel: half-strength edges.
        let half = apply(
            &bar(),
            &mut [],
            Variation {
                stretch: 1.0,
                stroke_px: 0.5,
            },
        );
        let expected = 100 * 255 + 44 * 128;
        assert_eq!(ink(&half), expected);
    }

    #[test]
    fn stretch_scales_width_and_boxes_together() {
        let mut boxes = [Rect::new(10.0, 5.0, 20.0, 15.0)];
        let out = apply(
            &bar(),
            &mut boxes,
            Variation {
                stretch: 1.5,
                stroke_px: 0.0,
            },
        );
        assert_eq!(out.dimensions(), (60, 20));
        assert_eq!(boxes[0], Rect::new(15.0, 5.0, 30.0, 15.0));
        // The ink's centre moves with the box: columns 15..30 hold the bar's middle.
        let column_ink = |x: u32| {
            (0..20)
                .map(|y| out.get_pixel(x, y).0[0] as u32)
                .sum::<u32>()
        };
        assert_eq!(column_ink(22), 10 * 255);
        assert_eq!(column_ink(5), 0);
        assert_eq!(column_ink(40), 0);
    }

    #[test]
    fn drawn_variations_stay_in_range_and_repeat_for_a_seed() {
        let draws = |seed| {
            let mut rng = ChaCha8Rng::seed_from_u64(seed);
            (0..200)
                .map(|_| draw(1.0, 100.0, &mut rng))
                .collect::<Vec<_>>()
        };
        let a = draws(7);
        assert_eq!(a, draws(7));
        for v in &a {
            assert!((0.81..=1.23).contains(&v.stretch), "{v:?}");
            assert!((-1.2..=2.5).contains(&v.stroke_px), "{v:?}");
        }
        assert!(a.iter().any(|v| v.stretch > 1.1) && a.iter().any(|v| v.stretch < 0.9));
        assert!(a.iter().any(|v| v.stroke_px > 1.5) && a.iter().any(|v| v.stroke_px < -0.6));
    }

    #[test]
    fn word_spaces_vary_within_range_and_not_at_strength_zero() {
        let mut rng = ChaCha8Rng::seed_from_u64(3);
        assert!((0..50).all(|_| space_scale(0.0, &mut rng) == 1.0));
        let a: Vec<f32> = (0..200).map(|_| space_scale(1.0, &mut rng)).collect();
        assert!(a.iter().all(|s| (0.249..=1.801).contains(s)), "{a:?}");
        assert!(a.iter().any(|&s| s < 0.35) && a.iter().any(|&s| s > 1.5));
        let tighter = a.iter().filter(|&&s| s < 1.0).count();
        assert!((70..=130).contains(&tighter), "{tighter} of 200 tighter");
    }
}
