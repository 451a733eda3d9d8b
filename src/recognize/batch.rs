//! Line images → one padded tensor batch the network reads.
//!
//! Each line is scaled to the network's height (aspect ratio kept), turned into ink values
//! (1 = ink, 0 = paper, stretched between the line's darkest and lightest pixel), and flipped
//! left-to-right so that column 0 is the right edge of the line: the network then reads in Arabic
//! reading order and CTC output order is logical order. Lines are padded with paper on the left
//! of the original image (the end of the flipped one).

use burn::tensor::{Device, Tensor, TensorData};
use image::{imageops, GrayImage};

/// A tensor batch and the true width of each line in it.
#[derive(Debug)]
pub struct LineBatch {
    /// Ink values, `[batch, 1, height, width]`.
    pub pixels: Tensor<4>,
    /// Width of each line after scaling, in columns, before padding.
    pub widths: Vec<usize>,
    /// Scale from original line-image x to batch column: `column = x_px * scale[i]`.
    pub scales: Vec<f32>,
}

/// Widths are padded up to a multiple of this (the network's horizontal down-sampling).
pub const WIDTH_STEP: usize = 4;

/// Shortest line accepted after scaling, in columns (a few CTC frames).
pub const MIN_WIDTH: usize = 8;

/// One line scaled to `height` rows: ink values row-major (flipped), its width and x scale.
pub fn line_ink(line: &GrayImage, height: usize, max_width: usize) -> (Vec<f32>, usize, f32) {
    let (w, h) = line.dimensions();
    let scale = height as f32 / h.max(1) as f32;
    let new_w = ((w as f32 * scale).round() as usize).clamp(MIN_WIDTH, max_width);
    let scaled = imageops::resize(line, new_w as u32, height as u32, imageops::FilterType::Triangle);
    let (lo, hi) = scaled
        .pixels()
        .fold((255u8, 0u8), |(lo, hi), p| (lo.min(p[0]), hi.max(p[0])));
    // Stretch only when there is real contrast; a blank line stays blank: common practice, no source.
    let (lo, span) = if hi.saturating_sub(lo) >= 32 {
        (lo as f32, (hi - lo) as f32)
    } else {
        (0.0, 255.0)
    };
    let mut ink = vec![0.0f32; new_w * height];
    for (x, y, p) in scaled.enumerate_pixels() {
        let v = ((lo + span - p[0] as f32) / span).clamp(0.0, 1.0);
        ink[y as usize * new_w + (new_w - 1 - x as usize)] = v;
    }
    (ink, new_w, new_w as f32 / w.max(1) as f32)
}

/// Build a batch from line images.
///
/// # Shapes
/// Output `pixels`: `[lines.len(), 1, height, W]` with `W` = the widest scaled line rounded up to
/// [`WIDTH_STEP`].
pub fn make_batch(lines: &[&GrayImage], height: usize, max_width: usize, device: &Device) -> LineBatch {
    let inks: Vec<(Vec<f32>, usize, f32)> = lines.iter().map(|l| line_ink(l, height, max_width)).collect();
    let widest = inks.iter().map(|i| i.1).max().unwrap_or(MIN_WIDTH);
    let width = widest.div_ceil(WIDTH_STEP) * WIDTH_STEP;
    let mut data = vec![0.0f32; lines.len() * height * width];
    for (b, (ink, w, _)) in inks.iter().enumerate() {
        for y in 0..height {
            let dst = (b * height + y) * width;
            data[dst..dst + w].copy_from_slice(&ink[y * w..(y + 1) * w]);
        }
    }
    let pixels = Tensor::<4>::from_data(TensorData::new(data, [lines.len(), 1, height, width]), device);
    LineBatch {
        pixels,
        widths: inks.iter().map(|i| i.1).collect(),
        scales: inks.iter().map(|i| i.2).collect(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn line_is_flipped_so_right_edge_comes_first() {
        // 8×2 image: a black column at the far right (x = 7), white elsewhere.
        let img = GrayImage::from_fn(8, 2, |x, _| image::Luma([if x == 7 { 0 } else { 255 }]));
        let (ink, w, scale) = line_ink(&img, 2, 100);
        assert_eq!((w, scale), (8, 1.0));
        assert_eq!(ink[0], 1.0, "right-most ink must be column 0");
        assert_eq!(ink[7], 0.0);
    }

    #[test]
    fn batch_pads_to_width_step_with_paper() {
        let a = GrayImage::from_pixel(10, 4, image::Luma([0]));
        let b = GrayImage::from_pixel(20, 4, image::Luma([0]));
        let batch = make_batch(&[&a, &b], 4, 1000, &Device::flex());
        assert_eq!(batch.pixels.dims(), [2, 1, 4, 20]);
        assert_eq!(batch.widths, vec![10, 20]);
        let v: Vec<f32> = batch.pixels.into_data().try_into_vec::<f32>().unwrap();
        // Uniform black has no contrast: values are raw ink (1.0); padding is paper (0.0).
        assert_eq!(v[9], 1.0);
        assert_eq!(v[10], 0.0);
    }
}
