//! Rectangles and the pixel ↔ page-space affine map — the only place that flips y.
//!
//! Pixel space: origin at the top-left of the page image, x right, y down, unit = one pixel.
//! Page space: PDF user space of the page (ISO 32000-1 §8.3.2.3), origin bottom-left, y up, unit = 1/72 in.

use serde::{Deserialize, Serialize};

/// An axis-aligned box in pixel space; `x0 <= x1`, `y0 <= y1` (y grows downwards).
#[derive(Debug, Clone, Copy, PartialEq, Default, Serialize, Deserialize)]
pub struct Rect {
    /// Left edge.
    pub x0: f32,
    /// Top edge.
    pub y0: f32,
    /// Right edge.
    pub x1: f32,
    /// Bottom edge.
    pub y1: f32,
}

impl Rect {
    /// A box from its edges; swaps them when given in the wrong order.
    pub fn new(x0: f32, y0: f32, x1: f32, y1: f32) -> Rect {
        Rect {
            x0: x0.min(x1),
            y0: y0.min(y1),
            x1: x0.max(x1),
            y1: y0.max(y1),
        }
    }

    /// Width in pixels.
    pub fn width(&self) -> f32 {
        self.x1 - self.x0
    }

    /// Height in pixels.
    pub fn height(&self) -> f32 {
        self.y1 - self.y0
    }

    /// Area in square pixels.
    pub fn area(&self) -> f32 {
        self.width().max(0.0) * self.height().max(0.0)
    }

    /// The smallest box holding both.
    pub fn union(&self, o: &Rect) -> Rect {
        Rect {
            x0: self.x0.min(o.x0),
            y0: self.y0.min(o.y0),
            x1: self.x1.max(o.x1),
            y1: self.y1.max(o.y1),
        }
    }

    /// The common part, or `None` when they do not overlap.
    pub fn intersection(&self, o: &Rect) -> Option<Rect> {
        let r = Rect {
            x0: self.x0.max(o.x0),
            y0: self.y0.max(o.y0),
            x1: self.x1.min(o.x1),
            y1: self.y1.min(o.y1),
        };
        (r.x0 < r.x1 && r.y0 < r.y1).then_some(r)
    }

    /// Intersection over union, 0 when disjoint.
    pub fn iou(&self, o: &Rect) -> f32 {
        let inter = self.intersection(o).map_or(0.0, |r| r.area());
        let union = self.area() + o.area() - inter;
        if union <= 0.0 {
            0.0
        } else {
            inter / union
        }
    }
}

/// An affine map `[a b c d e f]` as PDF writes it (§8.3.4): `x' = a·x + c·y + e`, `y' = b·x + d·y + f`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Affine(pub [f32; 6]);

impl Affine {
    /// The identity map.
    pub const IDENTITY: Affine = Affine([1.0, 0.0, 0.0, 1.0, 0.0, 0.0]);

    /// Apply to a point.
    pub fn apply(&self, x: f32, y: f32) -> (f32, f32) {
        let [a, b, c, d, e, f] = self.0;
        (a * x + c * y + e, b * x + d * y + f)
    }

    /// `self` first, then `then` (PDF's `self × then`).
    pub fn then(&self, then: &Affine) -> Affine {
        let [a, b, c, d, e, f] = self.0;
        let [a2, b2, c2, d2, e2, f2] = then.0;
        Affine([
            a * a2 + b * c2,
            a * b2 + b * d2,
            c * a2 + d * c2,
            c * b2 + d * d2,
            e * a2 + f * c2 + e2,
            e * b2 + f * d2 + f2,
        ])
    }
}

/// Where a page image sits on its PDF page.
///
/// `to_page` maps "image space with y up" — `(x_px, height_px - y_px)` — to page space. For an image
/// drawn by `cm` + `Do` this is the image's unit-square transform scaled by `1/width`, `1/height`
/// (§8.9.4 and §8.9.5: the image occupies the unit square of its user space, first row at the top).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Placement {
    /// Map from y-up pixel space to page space.
    pub to_page: Affine,
    /// The page's MediaBox `[x0 y0 x1 y1]` in points.
    pub media_box: [f32; 4],
}

impl Placement {
    /// A page exactly the size of an image at the given resolution, image filling it.
    pub fn fill_page(width_px: u32, height_px: u32, dpi_x: f32, dpi_y: f32) -> Placement {
        let sx = 72.0 / dpi_x;
        let sy = 72.0 / dpi_y;
        Placement {
            to_page: Affine([sx, 0.0, 0.0, sy, 0.0, 0.0]),
            media_box: [0.0, 0.0, width_px as f32 * sx, height_px as f32 * sy],
        }
    }

    /// The image's own unit-square transform (the `cm` before `Do`) from `to_page`.
    pub fn image_matrix(&self, width_px: u32, height_px: u32) -> Affine {
        Affine([width_px as f32, 0.0, 0.0, height_px as f32, 0.0, 0.0]).then(&self.to_page)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn iou_of_half_overlap() {
        let a = Rect::new(0.0, 0.0, 10.0, 10.0);
        let b = Rect::new(5.0, 0.0, 15.0, 10.0);
        assert!((a.iou(&b) - 50.0 / 150.0).abs() < 1e-6);
        assert_eq!(a.iou(&Rect::new(20.0, 20.0, 30.0, 30.0)), 0.0);
    }

    #[test]
    fn affine_composition_matches_pdf_order() {
        // Scale by 2, then translate by (10, 0): (1,1) → (12, 2). ISO 32000-1 §8.3.4 (matrix product order).
        let s = Affine([2.0, 0.0, 0.0, 2.0, 0.0, 0.0]);
        let t = Affine([1.0, 0.0, 0.0, 1.0, 10.0, 0.0]);
        assert_eq!(s.then(&t).apply(1.0, 1.0), (12.0, 2.0));
    }

    #[test]
    fn fill_page_at_300_dpi_is_a4() {
        let p = Placement::fill_page(2480, 3508, 300.0, 300.0);
        assert!((p.media_box[2] - 595.2).abs() < 0.1); // A4 = 595 × 842 pt (ISO 216)
        assert!((p.media_box[3] - 841.92).abs() < 0.1);
    }
}
