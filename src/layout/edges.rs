//! Line boxes out to the strokes' half-contrast edge.

use image::GrayImage;

use super::geometry::Rect;

/// Grey level halfway between the page's ink and its paper (the grey image is
/// background-normalized, so paper is 255): the median grey of the binary ink, sampled.
pub fn half_contrast(gray: &GrayImage, binary: &GrayImage) -> u8 {
    let mut hist = [0u32; 256];
    for (g, b) in gray.as_raw().iter().zip(binary.as_raw()).step_by(3) {
        if *b == 0 {
            hist[*g as usize] += 1;
        }
    }
    let total: u32 = hist.iter().sum();
    let mut seen = 0;
    let ink = hist
        .iter()
        .position(|&n| {
            seen += n;
            2 * seen >= total
        })
        .unwrap_or(0) as u32;
    ((ink + 255) / 2) as u8
}

/// Most pixels a box grows on each side.
const MAX_GROW_PX: u32 = 2;

/// `b` grown side by side while the row or column just outside it holds a pixel darker than
/// `half` next to binary ink inside it.
pub fn grow_to_edges(gray: &GrayImage, binary: &GrayImage, b: Rect, half: u8) -> Rect {
    let (w, h) = gray.dimensions();
    let (mut x0, mut y0) = (b.x0.max(0.0).floor() as u32, b.y0.max(0.0).floor() as u32);
    // Clipped line boxes may have fractional edges: the box never shrinks.
    let (mut x1, mut y1) = ((b.x1.ceil() as u32).min(w), (b.y1.ceil() as u32).min(h));
    if x0 >= x1 || y0 >= y1 {
        return b;
    }
    let dark = |x: u32, y: u32| gray.get_pixel(x, y)[0] < half;
    let ink = |x: u32, y: u32| binary.get_pixel(x, y)[0] == 0 || dark(x, y);
    for _ in 0..MAX_GROW_PX {
        if y0 > 0 && (x0..x1).any(|x| dark(x, y0 - 1) && ink(x, y0)) {
            y0 -= 1;
        }
        if y1 < h && (x0..x1).any(|x| dark(x, y1) && ink(x, y1 - 1)) {
            y1 += 1;
        }
        if x0 > 0 && (y0..y1).any(|y| dark(x0 - 1, y) && ink(x0, y)) {
            x0 -= 1;
        }
        if x1 < w && (y0..y1).any(|y| dark(x1, y) && ink(x1 - 1, y)) {
            x1 += 1;
        }
    }
    Rect::new(x0 as f32, y0 as f32, x1 as f32, y1 as f32)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A page of paper with a 10 × 6 stroke whose binary edge lies one pixel inside its grey edge
    /// on the right and at the bottom (as a local threshold leaves a blurred stroke).
    fn stroke() -> (GrayImage, GrayImage) {
        let mut gray = GrayImage::from_pixel(30, 20, image::Luma([255]));
        let mut binary = gray.clone();
        for y in 5..11 {
            for x in 8..18 {
                gray.put_pixel(x, y, image::Luma([20]));
                binary.put_pixel(x, y, image::Luma([0]));
            }
        }
        for y in 5..12 {
            gray.put_pixel(18, y, image::Luma([110]));
        }
        for x in 8..18 {
            gray.put_pixel(x, 11, image::Luma([120]));
        }
        (gray, binary)
    }

    #[test]
    fn half_contrast_lies_between_ink_and_paper() {
        let (gray, binary) = stroke();
        // Ink 20, paper 255.
        assert_eq!(half_contrast(&gray, &binary), 137);
    }

    #[test]
    fn a_box_grows_to_the_grey_edge_of_its_strokes_only() {
        let (mut gray, binary) = stroke();
        // A dark speck diagonally off the top-left corner touches no side of the box.
        gray.put_pixel(7, 4, image::Luma([0]));
        let b = Rect::new(8.0, 5.0, 18.0, 11.0);
        let grown = grow_to_edges(&gray, &binary, b, half_contrast(&gray, &binary));
        assert_eq!(grown, Rect::new(8.0, 5.0, 19.0, 12.0));
        // Grey lighter than half the contrast is paper.
        let grown = grow_to_edges(&gray, &binary, b, 100);
        assert_eq!(grown, b);
    }
}
