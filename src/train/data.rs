//! Training data: folders of line images with `.gt.txt` transcriptions beside them, read lazily,
//! grouped into batches of similar width, in an order fixed by the seed.

use std::path::{Path, PathBuf};

use image::GrayImage;

use crate::recognize::batch::MIN_WIDTH;
use crate::recognize::charset::Charset;
use crate::recognize::model_file::LabelOrder;
use crate::recognize::net::LineNetConfig;
use crate::{Error, Result};

/// One transcribed line on disk.
#[derive(Debug, Clone)]
pub struct LineSample {
    /// The image file.
    pub image: PathBuf,
    /// Label as class ids (normalized, no blanks).
    pub label: Vec<usize>,
    /// Width after scaling to the network height, in columns.
    pub width_cols: usize,
}

/// What was found in the data folders.
#[derive(Debug, Default)]
pub struct LineSet {
    /// Usable lines, in file-name order.
    pub lines: Vec<LineSample>,
    /// Lines skipped because their text has a character outside the alphabet.
    pub skipped_alphabet: usize,
    /// Lines skipped because the image is too narrow for its text (CTC needs a frame per symbol).
    pub skipped_short: usize,
}

const IMAGE_EXTS: &[&str] = &["png", "tif", "tiff", "jpg", "jpeg"];

/// Image files with a `.gt.txt` beside them, in name order.
pub fn find_pairs(dir: &Path) -> Result<Vec<(PathBuf, PathBuf)>> {
    let entries = std::fs::read_dir(dir).map_err(|e| Error::io(dir, e))?;
    let mut out = Vec::new();
    for e in entries {
        let path = e.map_err(|e| Error::io(dir, e))?.path();
        let Some(name) = path.file_name().and_then(|n| n.to_str()) else {
            continue;
        };
        let Some(stem) = name.strip_suffix(".gt.txt") else {
            continue;
        };
        if let Some(img) = IMAGE_EXTS
            .iter()
            .map(|x| dir.join(format!("{stem}.{x}")))
            .find(|p| p.is_file())
        {
            out.push((img, path));
        }
    }
    out.sort();
    Ok(out)
}

/// Frames a label needs: one per symbol plus one blank between equal neighbours (Graves et al. 2006).
pub fn frames_needed(label: &[usize]) -> usize {
    label.len() + label.windows(2).filter(|w| w[0] == w[1]).count()
}

/// Read every folder's pairs and encode their labels in `order`.
pub fn load_line_set(
    dirs: &[PathBuf],
    net: &LineNetConfig,
    max_width: usize,
    order: LabelOrder,
) -> Result<LineSet> {
    let cs = Charset::new();
    let mut set = LineSet::default();
    for dir in dirs {
        for (img, gt) in find_pairs(dir)? {
            let text = std::fs::read_to_string(&gt).map_err(|e| Error::io(&gt, e))?;
            let Ok(label) = cs.encode_label(&text, order) else {
                set.skipped_alphabet += 1;
                continue;
            };
            let (w, h) =
                image::image_dimensions(&img).map_err(|e| Error::input(&img, e.to_string()))?;
            let width_cols = ((w as f32 * net.height as f32 / h.max(1) as f32).round() as usize)
                .clamp(MIN_WIDTH, max_width);
            if label.is_empty() || frames_needed(&label) > width_cols / net.frame_columns {
                set.skipped_short += 1;
                continue;
            }
            set.lines.push(LineSample {
                image: img,
                label,
                width_cols,
            });
        }
    }
    Ok(set)
}

/// Read one line image as grey.
pub fn read_gray(path: &Path) -> Result<GrayImage> {
    Ok(image::open(path)
        .map_err(|e| Error::input(path, e.to_string()))?
        .to_luma8())
}

/// SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number generators"):
/// a small seeded generator so batch order depends on the seed alone.
#[derive(Debug, Clone)]
pub struct SplitMix64(pub u64);

impl SplitMix64 {
    /// Next 64 random bits.
    pub fn next_u64(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    /// A number in `0..n` (n > 0).
    pub fn below(&mut self, n: usize) -> usize {
        (self.next_u64() % n as u64) as usize
    }

    /// Fisher–Yates shuffle (Knuth, TAOCP vol. 2, Algorithm 3.4.2 P).
    pub fn shuffle<T>(&mut self, v: &mut [T]) {
        for i in (1..v.len()).rev() {
            v.swap(i, self.below(i + 1));
        }
    }
}

/// The batches of one epoch, as indices into `lines`: shuffled, then grouped by width in pools of
/// 32 batches so little padding is wasted, then the batch order shuffled. Fixed by `(seed, epoch)`.
pub fn epoch_batches(
    lines: &[LineSample],
    batch: usize,
    seed: u64,
    epoch: usize,
) -> Vec<Vec<usize>> {
    let mut rng = SplitMix64(seed ^ (epoch as u64).wrapping_mul(0xA24B_AED4_963E_E407));
    let mut idx: Vec<usize> = (0..lines.len()).collect();
    rng.shuffle(&mut idx);
    let mut out = Vec::new();
    for pool in idx.chunks(batch * 32) {
        let mut pool = pool.to_vec();
        pool.sort_by_key(|&i| lines[i].width_cols);
        out.extend(pool.chunks(batch).map(<[usize]>::to_vec));
    }
    rng.shuffle(&mut out);
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fake(n: usize) -> Vec<LineSample> {
        (0..n)
            .map(|i| LineSample {
                image: PathBuf::new(),
                label: vec![1],
                width_cols: 10 + (i * 37) % 300,
            })
            .collect()
    }

    #[test]
    fn epochs_cover_every_line_once_and_depend_on_the_seed() {
        let lines = fake(1000);
        let a = epoch_batches(&lines, 16, 7, 0);
        let mut all: Vec<usize> = a.iter().flatten().copied().collect();
        all.sort();
        assert_eq!(all, (0..1000).collect::<Vec<_>>());
        assert_eq!(a, epoch_batches(&lines, 16, 7, 0));
        assert_ne!(a, epoch_batches(&lines, 16, 7, 1));
        assert_ne!(a, epoch_batches(&lines, 16, 8, 0));
    }

    #[test]
    fn repeated_symbols_need_a_blank_between() {
        assert_eq!(frames_needed(&[3, 3, 4]), 4);
        assert_eq!(frames_needed(&[3, 4, 3]), 3);
    }

    /// A 40-column line with twelve letters has 10 frames at four columns a frame (too few for
    /// CTC, so it is left out) and 20 at two (kept).
    #[test]
    fn lines_too_narrow_for_their_frames_are_left_out() {
        let dir = tempfile::tempdir().unwrap();
        GrayImage::from_pixel(40, 32, image::Luma([255]))
            .save(dir.path().join("a.png"))
            .unwrap();
        std::fs::write(dir.path().join("a.gt.txt"), "بتثجحخدذرزسش").unwrap();
        let dirs = [dir.path().to_path_buf()];
        let four = LineNetConfig::new(Charset::new().classes());
        let set = load_line_set(&dirs, &four, 800, LabelOrder::Reading).unwrap();
        assert_eq!((set.lines.len(), set.skipped_short), (0, 1));
        let two = four.with_frame_columns(2);
        let set = load_line_set(&dirs, &two, 800, LabelOrder::Reading).unwrap();
        assert_eq!((set.lines.len(), set.skipped_short), (1, 0));
    }
}
