//! Broad-nib pen for training lines: the clean ink is swept along a short slanted segment, as
//! if the letters had been drawn with a cut reed held at a fixed angle. Strokes across the
//! nib's edge come out thick and strokes along it stay thin, so monoline and low-contrast
//! faces take on the thick-and-thin modulation of hand-lettered and calligraphic print, which
//! the shelf's fonts show only in a few hands. In morphological terms a grey dilation by a line
//! segment (Soille, "Morphological Image Analysis", 2nd ed. 2003, ch. 3: dilation by a line
//! segment; from memory). Owns only pixels and the word boxes that must still hold their ink.

use image::GrayImage;
use imageproc::morphology::{grayscale_dilate, Mask};
use rand::Rng;

use crate::layout::geometry::Rect;

/// Angles of the nib's edge to the baseline, in degrees, counter-clockwise: an edge rising to
/// the right, so that the thick strokes run from upper left to lower right. Chosen by eye on
/// the shelf's faces against pen-drawn hands, not measured; the range is wide on purpose.
const ANGLE_DEG: (f32, f32) = (20.0, 70.0);
/// Nib width, in ems: from a fine pen that barely thickens the strokes to one that doubles the
/// vertical strokes of a book face (stems of book naskh are about 0.08–0.12 em, from memory).
const WIDTH_EM: (f32, f32) = (0.03, 0.09);

/// One pen, for tests and logs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Pen {
    /// Angle of the nib's edge to the baseline, in degrees.
    pub angle_deg: f32,
    /// Length of the edge, in pixels.
    pub width_px: f32,
}

/// Draw a pen for a line set at `em_px` pixels per em: with probability `share` a pen, else none.
pub fn draw<R: Rng>(share: f32, em_px: f32, rng: &mut R) -> Option<Pen> {
    let p = share.clamp(0.0, 1.0);
    if p == 0.0 || !rng.random_bool(p as f64) {
        return None;
    }
    Some(Pen {
        angle_deg: rng.random_range(ANGLE_DEG.0..=ANGLE_DEG.1),
        width_px: rng.random_range(WIDTH_EM.0..=WIDTH_EM.1) * em_px,
    })
}

/// Sweep a coverage image (0 paper … 255 ink) with `pen`: every pixel takes the darkest value
/// on the nib's edge centred on it. Word boxes grow by half the edge on each axis, and two
/// pixels for rounding.
pub fn apply(coverage: &GrayImage, boxes: &mut [Rect], pen: Pen) -> GrayImage {
    let (sin, cos) = pen.angle_deg.to_radians().sin_cos();
    let half = pen.width_px / 2.0;
    // Offsets along the edge at 1-pixel steps, rounded to whole pixels; y grows downwards, so
    // an edge rising to the right steps up (negative y) as x grows. The part of a step left
    // over at the two ends blends in, so that a pen under two pixels still sweeps.
    let steps = half.floor() as i32;
    let part = half - steps as f32;
    let at = |k: i32| {
        let t = k as f32;
        ((t * cos).round() as i32, (-t * sin).round() as i32)
    };
    let whole = segment_mask((-steps..=steps).map(at));
    let ends = segment_mask([at(-steps - 1), at(steps + 1)]);
    let mut out = grayscale_dilate(coverage, &whole);
    let end = grayscale_dilate(coverage, &ends);
    for (o, &e) in out.iter_mut().zip(end.iter()) {
        let (v, e) = (*o as f32, e as f32);
        *o = (v + part * (e - v).max(0.0)).round() as u8;
    }
    let (w, h) = coverage.dimensions();
    let (gx, gy) = (half * cos + 2.0, half * sin + 2.0);
    let (wf, hf) = (w as f32, h as f32);
    for b in boxes.iter_mut() {
        *b = Rect::new(
            (b.x0 - gx).max(0.0),
            (b.y0 - gy).max(0.0),
            (b.x1 + gx).min(wf),
            (b.y1 + gy).min(hf),
        );
    }
    out
}

/// A dilation mask of the given offsets from its centre (a pen's edge is at most a tenth of an
/// em, far inside the mask's 511-pixel limit).
fn segment_mask(offsets: impl IntoIterator<Item = (i32, i32)>) -> Mask {
    let offsets: Vec<(i32, i32)> = offsets.into_iter().collect();
    let r = offsets
        .iter()
        .map(|&(x, y)| x.abs().max(y.abs()))
        .max()
        .unwrap_or(0);
    let side = (2 * r + 1) as u32;
    let mut img = GrayImage::new(side, side);
    for (x, y) in offsets {
        img.put_pixel((x + r) as u32, (y + r) as u32, image::Luma([255]));
    }
    Mask::from_image(&img, r as u8, r as u8)
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;

    /// A 60 × 60 image with one stroke a pixel wide: vertical (x 30, y 10..50) or horizontal
    /// (y 30, x 10..50).
    fn stroke(vertical: bool) -> GrayImage {
        GrayImage::from_fn(60, 60, |x, y| {
            let on = if vertical {
                x == 30 && (10..50).contains(&y)
            } else {
                y == 30 && (10..50).contains(&x)
            };
            image::Luma([if on { 255 } else { 0 }])
        })
    }

    /// Width of the ink across the stroke's middle: along row 30 for a vertical stroke, along
    /// column 30 for a horizontal one.
    fn thickness(img: &GrayImage, vertical: bool) -> usize {
        (0..60)
            .filter(|&i| {
                let (x, y) = if vertical { (i, 30) } else { (30, i) };
                img.get_pixel(x, y).0[0] > 0
            })
            .count()
    }

    // The pen's defining property (common practice, no source): a stroke across the nib's edge
    // is as thick as the edge's extent across it, a stroke along the edge keeps its width.
    #[test]
    fn a_flat_nib_thickens_vertical_strokes_and_leaves_horizontal_ones_thin() {
        let pen = Pen {
            angle_deg: 0.0,
            width_px: 10.0,
        };
        let v = apply(&stroke(true), &mut [], pen);
        let h = apply(&stroke(false), &mut [], pen);
        assert_eq!(thickness(&v, true), 11, "vertical stroke across a flat nib");
        assert_eq!(
            thickness(&h, false),
            1,
            "horizontal stroke along a flat nib"
        );
        // Turned a quarter, the nib does the opposite.
        let upright = Pen {
            angle_deg: 90.0,
            width_px: 10.0,
        };
        assert_eq!(thickness(&apply(&stroke(true), &mut [], upright), true), 1);
        assert_eq!(
            thickness(&apply(&stroke(false), &mut [], upright), false),
            11
        );
    }

    #[test]
    fn a_slanted_nib_rises_to_the_right_and_boxes_keep_their_ink() {
        let dot = GrayImage::from_fn(40, 40, |x, y| {
            image::Luma([if (x, y) == (20, 20) { 255 } else { 0 }])
        });
        let mut boxes = [Rect::new(19.0, 19.0, 22.0, 22.0)];
        let pen = Pen {
            angle_deg: 45.0,
            width_px: 12.0,
        };
        let out = apply(&dot, &mut boxes, pen);
        // The dot becomes a diagonal from lower left to upper right.
        assert!(out.get_pixel(24, 16).0[0] == 255 && out.get_pixel(16, 24).0[0] == 255);
        assert!(out.get_pixel(24, 24).0[0] == 0 && out.get_pixel(16, 16).0[0] == 0);
        for (x, y, p) in out.enumerate_pixels() {
            if p.0[0] > 0 {
                let b = boxes[0];
                assert!(
                    b.x0 <= x as f32 && (x as f32) < b.x1 && b.y0 <= y as f32 && (y as f32) < b.y1
                );
            }
        }
    }

    #[test]
    fn pens_are_drawn_in_range_for_the_share_and_repeat_for_a_seed() {
        let draws = |seed, share| {
            let mut rng = ChaCha8Rng::seed_from_u64(seed);
            (0..400)
                .map(|_| draw(share, 100.0, &mut rng))
                .collect::<Vec<_>>()
        };
        assert!(draws(5, 0.0).iter().all(Option::is_none));
        let a = draws(5, 0.5);
        assert_eq!(a, draws(5, 0.5));
        let pens: Vec<Pen> = a.iter().flatten().copied().collect();
        assert!(
            (150..=250).contains(&pens.len()),
            "{} of 400 drawn",
            pens.len()
        );
        for p in &pens {
            assert!((20.0..=70.0).contains(&p.angle_deg) && (3.0..=9.0).contains(&p.width_px));
        }
        assert!(pens.iter().any(|p| p.angle_deg < 30.0) && pens.iter().any(|p| p.angle_deg > 60.0));
    }
}
