//! Elastic warp for training lines: a smooth random displacement of the clean ink, so that
//! the recognizer meets letter shapes no font on the shelf has (deeper or shallower bowls,
//! longer or shorter teeth, a baseline that wanders a little). The displacement field is drawn
//! on a coarse grid and interpolated between its nodes, the same idea as the smoothed random
//! fields of Simard, Steinkraus and Platt (2003), "Best practices for convolutional neural
//! networks applied to visual document analysis", with bilinear interpolation in place of their
//! Gaussian smoothing. Owns only pixels and the word boxes that must still hold their ink.

use image::{GrayImage, Luma};
use imageproc::geometric_transformations::{warp_with, Border, Interpolation};
use rand::Rng;

use crate::layout::geometry::Rect;

/// Distance between the grid's nodes, in ems. About a letter's width in book naskh, so one
/// letter bends as a whole while its neighbours bend another way (common practice, no source).
const CELL_EM: f32 = 0.4;
/// Largest shift of a node at strength 1, in ems, in each direction. With nodes 0.4 em apart
/// a letter is stretched or squeezed by up to two fifths locally and the baseline wanders by
/// a twelfth of an em: plainly bent, still read at a glance (looked at on the shelf's faces
/// against 0.05 em, which hardly showed; not measured).
const MAX_SHIFT_EM: f32 = 0.08;
/// A grid finer than this many pixels would only add noise: small type keeps cells of 4 px.
const MIN_CELL_PX: f32 = 4.0;

/// Warp a coverage image (0 paper … 255 ink) set at `em_px` pixels per em. With probability
/// `strength` the line is warped, by shifts up to `strength × MAX_SHIFT_EM`; otherwise it
/// comes back unchanged. Word boxes grow by the largest shift and a pixel, so they still hold their ink.
pub fn apply<R: Rng>(
    coverage: &GrayImage,
    boxes: &mut [Rect],
    strength: f32,
    em_px: f32,
    rng: &mut R,
) -> GrayImage {
    let s = strength.clamp(0.0, 1.0);
    if s == 0.0 || !rng.random_bool(s as f64) {
        return coverage.clone();
    }
    let shift = MAX_SHIFT_EM * s * em_px;
    let field = Field::draw(coverage.width(), coverage.height(), em_px, shift, rng);
    let out = field.resample(coverage);
    // A pixel reads the input up to `shift` away on each axis, and bilinear sampling one more.
    let grow = shift + 1.0;
    let (w, h) = (out.width() as f32, out.height() as f32);
    for b in boxes.iter_mut() {
        *b = Rect::new(
            (b.x0 - grow).max(0.0),
            (b.y0 - grow).max(0.0),
            (b.x1 + grow).min(w),
            (b.y1 + grow).min(h),
        );
    }
    out
}

/// Displacements at the nodes of a coarse grid; between nodes they are interpolated.
struct Field {
    cell: f32,
    cols: usize,
    /// (dx, dy) per node, row by row.
    nodes: Vec<(f32, f32)>,
}

impl Field {
    fn draw<R: Rng>(w: u32, h: u32, em_px: f32, shift: f32, rng: &mut R) -> Field {
        let cell = (CELL_EM * em_px).max(MIN_CELL_PX);
        let cols = (w as f32 / cell).ceil() as usize + 2;
        let rows = (h as f32 / cell).ceil() as usize + 2;
        let nodes = (0..cols * rows)
            .map(|_| {
                (
                    rng.random_range(-1.0..=1.0f32) * shift,
                    rng.random_range(-1.0..=1.0f32) * shift,
                )
            })
            .collect();
        Field { cell, cols, nodes }
    }

    /// The displacement at pixel centre (x, y): bilinear between the four nodes around it.
    fn at(&self, x: f32, y: f32) -> (f32, f32) {
        let (gx, gy) = (x / self.cell, y / self.cell);
        let (i, j) = (gx.floor() as usize, gy.floor() as usize);
        let (fx, fy) = (gx - i as f32, gy - j as f32);
        let n = |c: usize, r: usize| self.nodes[r * self.cols + c];
        let lerp =
            |a: (f32, f32), b: (f32, f32), t: f32| (a.0 + (b.0 - a.0) * t, a.1 + (b.1 - a.1) * t);
        let top = lerp(n(i, j), n(i + 1, j), fx);
        let bottom = lerp(n(i, j + 1), n(i + 1, j + 1), fx);
        lerp(top, bottom, fy)
    }

    /// Each output pixel takes the input at its own place moved by the field (imageproc's
    /// bilinear sampling; outside the image is paper).
    fn resample(&self, img: &GrayImage) -> GrayImage {
        warp_with(
            img,
            |x, y| {
                let (dx, dy) = self.at(x + 0.5, y + 0.5);
                (x + dx, y + dy)
            },
            Interpolation::Bilinear,
            Border::Constant(Luma([0])),
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;

    /// A 120 × 40 coverage image with a 6 × 6 dot at (x, y) and a stroke along y 20..26.
    fn page(dot: (u32, u32)) -> GrayImage {
        GrayImage::from_fn(120, 40, |x, y| {
            let in_dot = (dot.0..dot.0 + 6).contains(&x) && (dot.1..dot.1 + 6).contains(&y);
            let in_stroke = (10..110).contains(&x) && (20..26).contains(&y);
            image::Luma([if in_dot || in_stroke { 255 } else { 0 }])
        })
    }

    fn ink(img: &GrayImage) -> f64 {
        img.pixels().map(|p| p.0[0] as f64).sum()
    }

    /// Ink-weighted centre of the pixels in rows `rows`.
    fn centre(img: &GrayImage, rows: std::ops::Range<u32>) -> (f32, f32) {
        let (mut sx, mut sy, mut m) = (0.0, 0.0, 0.0);
        for y in rows {
            for x in 0..img.width() {
                let v = img.get_pixel(x, y).0[0] as f32;
                sx += v * x as f32;
                sy += v * y as f32;
                m += v;
            }
        }
        (sx / m, sy / m)
    }

    #[test]
    fn zero_strength_changes_nothing() {
        let mut rng = ChaCha8Rng::seed_from_u64(1);
        let mut boxes = [Rect::new(10.0, 5.0, 20.0, 15.0)];
        let out = apply(&page((50, 5)), &mut boxes, 0.0, 40.0, &mut rng);
        assert_eq!(out, page((50, 5)));
        assert_eq!(boxes[0], Rect::new(10.0, 5.0, 20.0, 15.0));
    }

    #[test]
    fn a_zero_field_is_the_identity() {
        let field = Field {
            cell: 8.0,
            cols: 40,
            nodes: vec![(0.0, 0.0); 40 * 40],
        };
        assert_eq!(field.resample(&page((50, 5))), page((50, 5)));
        // A whole-pixel shift everywhere moves the ink the other way by that pixel.
        let field = Field {
            cell: 8.0,
            cols: 40,
            nodes: vec![(1.0, 0.0); 40 * 40],
        };
        let moved = field.resample(&page((50, 5)));
        assert_eq!(moved.get_pixel(49, 7).0[0], 255);
        assert_eq!(moved.get_pixel(55, 7).0[0], 0);
    }

    #[test]
    fn warped_lines_bend_within_the_shift_and_keep_their_ink() {
        let em = 40.0;
        let max_shift = MAX_SHIFT_EM * em;
        let before = page((50, 5));
        let dot_before = centre(&before, 0..12);
        let mut moved_some = false;
        for seed in 0..20 {
            let mut rng = ChaCha8Rng::seed_from_u64(seed);
            let mut boxes = [Rect::new(50.0, 5.0, 56.0, 11.0)];
            let out = apply(&before, &mut boxes, 1.0, em, &mut rng);
            assert_eq!(out.dimensions(), before.dimensions());
            // Interpolated shifts move the dot by no more than the largest node shift.
            let dot = centre(&out, 0..12);
            let d = ((dot.0 - dot_before.0).powi(2) + (dot.1 - dot_before.1).powi(2)).sqrt();
            assert!(d <= max_shift * 2f32.sqrt() + 0.5, "seed {seed}: moved {d}");
            moved_some |= d > 0.3;
            // A smooth field neither drops nor doubles ink: up to two fifths of stretch on
            // each axis, averaged over the stroke, stays within a quarter.
            let ratio = ink(&out) / ink(&before);
            assert!(
                (0.75..1.25).contains(&ratio),
                "seed {seed}: ink ratio {ratio}"
            );
            // The grown box still holds all the dot's ink.
            let b = boxes[0];
            let outside: u32 = (0..12)
                .flat_map(|y| (0..120).map(move |x| (x, y)))
                .filter(|&(x, y)| {
                    let (fx, fy) = (x as f32 + 0.5, y as f32 + 0.5);
                    !(b.x0..=b.x1).contains(&fx) || !(b.y0..=b.y1).contains(&fy)
                })
                .map(|(x, y)| out.get_pixel(x, y).0[0] as u32)
                .sum();
            assert_eq!(outside, 0, "seed {seed}: ink outside {b:?}");
        }
        assert!(moved_some, "no seed moved the dot");
    }

    #[test]
    fn the_same_seed_gives_the_same_pixels() {
        let run = |seed| {
            let mut rng = ChaCha8Rng::seed_from_u64(seed);
            apply(&page((50, 5)), &mut [], 1.0, 40.0, &mut rng)
        };
        assert_eq!(run(4), run(4));
        assert_ne!(run(4), run(5));
    }
}
