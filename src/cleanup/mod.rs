//! Page clean-up before analysis: background normalization, binarization, noise removal, orientation
//! and deskew.
//!
//! [`clean`] turns a [`PageImage`] into a [`CleanPage`]: the straightened grey page (for the line
//! reader), its binary twin (for layout), and the [`PageTransform`] that maps every point found on
//! them back to the pixels of the page image as it came in. Layout lives in [`crate::layout`].

pub mod binarize;
pub mod denoise;
pub mod deskew;
pub mod orient;

use image::GrayImage;

use crate::layout::geometry::Rect;
use crate::page::PageImage;
use binarize::ThresholdMethod;
pub use deskew::PageTransform;

/// Settings of the clean-up stage.
#[derive(Debug, Clone, PartialEq)]
pub struct CleanupConfig {
    /// Threshold method; `Auto` picks one per page.
    pub method: ThresholdMethod,
    /// Sauvola `k` (scikit-image's default 0.2).
    pub sauvola_k: f64,
    /// Sauvola window in pixels (odd); `None`: about 1/10 inch at the page's resolution.
    pub sauvola_window_px: Option<u32>,
    /// Flatten uneven paper (gutter shadow, lighting) before thresholding.
    pub normalize_background: bool,
    /// Remove borders, punch holes and speckle.
    pub denoise: bool,
    /// Turn pages whose text is sideways or upside down.
    pub fix_orientation: bool,
    /// Largest skew searched, degrees; 0 turns deskew off.
    pub max_skew_deg: f32,
}

impl Default for CleanupConfig {
    fn default() -> Self {
        CleanupConfig {
            method: ThresholdMethod::Auto,
            sauvola_k: 0.2,
            sauvola_window_px: None,
            normalize_background: true,
            denoise: true,
            fix_orientation: true,
            max_skew_deg: 15.0,
        }
    }
}

/// A page ready for layout analysis.
#[derive(Debug, Clone)]
pub struct CleanPage {
    /// Straightened, background-normalized grey pixels (0 ink, 255 paper).
    pub gray: GrayImage,
    /// Straightened binary pixels: 0 ink, 255 paper; same size as `gray`.
    pub binary: GrayImage,
    /// How `gray` and `binary` were made from the page image.
    pub transform: PageTransform,
    /// The threshold method used.
    pub method: ThresholdMethod,
    /// Resolution (the page image's vertical dpi).
    pub dpi: f32,
    /// What the noise removal took away.
    pub removed: denoise::Removed,
}

impl CleanPage {
    /// A point of this page on the original page image.
    pub fn to_original(&self, x: f32, y: f32) -> (f32, f32) {
        self.transform.to_original(x, y)
    }

    /// The corners of a box of this page on the original page image (top-right, top-left,
    /// bottom-left, bottom-right: reading order for right-to-left text).
    pub fn quad_to_original(&self, r: &Rect) -> [(f32, f32); 4] {
        [(r.x1, r.y0), (r.x0, r.y0), (r.x0, r.y1), (r.x1, r.y1)]
            .map(|(x, y)| self.to_original(x, y))
    }

    /// The axis-aligned box holding a box of this page, on the original page image.
    pub fn rect_to_original(&self, r: &Rect) -> Rect {
        let q = self.quad_to_original(r);
        let (mut x0, mut y0, mut x1, mut y1) = (f32::MAX, f32::MAX, f32::MIN, f32::MIN);
        for (x, y) in q {
            (x0, y0, x1, y1) = (x0.min(x), y0.min(y), x1.max(x), y1.max(y));
        }
        Rect::new(x0, y0, x1, y1)
    }
}

/// Clean one page: normalize, binarize, denoise, fix orientation, deskew.
pub fn clean(page: &PageImage, cfg: &CleanupConfig) -> CleanPage {
    let dpi = page.dpi_y.max(1.0);
    let (w, h) = page.gray.dimensions();
    let bilevel = binarize::is_bilevel(&page.gray);
    let norm = if cfg.normalize_background && !bilevel {
        binarize::normalize_background(&page.gray, dpi)
    } else {
        page.gray.clone()
    };
    let method = match cfg.method {
        _ if bilevel => ThresholdMethod::Bilevel,
        ThresholdMethod::Auto => binarize::choose_method(&norm, dpi),
        m => m,
    };
    let mut binary = binarize_with(&norm, method, cfg, dpi);
    let removed = if !cfg.denoise {
        denoise::Removed::default()
    } else if method == ThresholdMethod::Sauvola {
        let global = binarize::apply_threshold(&norm, binarize::otsu_threshold(&norm));
        denoise::denoise_with_edges(&mut binary, dpi, denoise::dark_edge_bands(&global, dpi))
    } else {
        denoise::denoise(&mut binary, dpi)
    };
    let sideways = cfg.fix_orientation && orient::lines_run_vertically(&binary, dpi);
    let q = if sideways { 1 } else { 0 };
    let turned = PageTransform::new(w, h, q, 0.0);
    let turned_bin = deskew::transform_gray(&binary, &turned);
    let skew = if cfg.max_skew_deg > 0.0 {
        deskew::estimate_skew_deg(&turned_bin, dpi, cfg.max_skew_deg).0
    } else {
        0.0
    };
    // Below 0.05° a rotation would only blur (common practice, no source).
    let skew = if skew.abs() < 0.05 { 0.0 } else { skew };
    let mut t = PageTransform::new(w, h, q, skew);
    let mut straight = threshold_mid(&deskew::transform_gray(&binary, &t));
    if cfg.fix_orientation && orient::is_upside_down(&straight, sideways) {
        t = PageTransform::new(w, h, q + 2, skew);
        straight = image::imageops::rotate180(&straight);
    }
    let gray = deskew::transform_gray(&norm, &t);
    CleanPage {
        gray,
        binary: straight,
        transform: t,
        method,
        dpi,
        removed,
    }
}

fn binarize_with(
    norm: &GrayImage,
    method: ThresholdMethod,
    cfg: &CleanupConfig,
    dpi: f32,
) -> GrayImage {
    match method {
        ThresholdMethod::Sauvola => {
            let win = cfg
                .sauvola_window_px
                .unwrap_or_else(|| binarize::sauvola_window_for_dpi(dpi))
                | 1;
            binarize::sauvola(norm, win.max(3), cfg.sauvola_k)
        }
        ThresholdMethod::Bilevel => threshold_mid(norm),
        _ => binarize::apply_threshold(norm, binarize::otsu_threshold(norm)),
    }
}

fn threshold_mid(g: &GrayImage) -> GrayImage {
    binarize::apply_threshold(g, 127)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::layout::drawn::{draw_page, PagePlan};

    fn drawn(seed: u64) -> GrayImage {
        let path = concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/layout/DejaVuSans-Arabic-subset.ttf"
        );
        let font = std::fs::read(path).expect("test font");
        draw_page(&font, &PagePlan::random(seed, 100.0))
            .expect("font")
            .image
    }

    #[test]
    fn turned_pages_are_set_upright() {
        // Turned by us, so the truth is exact: k clockwise quarter turns need (4 - k) more.
        let img = drawn(2);
        let mut turned = img.clone();
        for k in 1..4u8 {
            turned = image::imageops::rotate90(&turned);
            let page = clean(
                &PageImage::new(turned.clone(), 100.0, 100.0),
                &CleanupConfig::default(),
            );
            assert_eq!(
                page.transform.quarter_turns,
                (4 - k) % 4,
                "turned {k} times"
            );
        }
        let page = clean(
            &PageImage::new(img, 100.0, 100.0),
            &CleanupConfig::default(),
        );
        assert_eq!(page.transform.quarter_turns, 0);
    }

    #[test]
    fn skewed_drawn_page_is_straightened() {
        let img = drawn(4);
        let (w, h) = img.dimensions();
        for a in [-6.5f32, 2.25] {
            let skewed = deskew::transform_gray(&img, &PageTransform::new(w, h, 0, -a));
            let page = clean(
                &PageImage::new(skewed, 100.0, 100.0),
                &CleanupConfig::default(),
            );
            // 0.1° is the target; the page was rotated by us so the truth is exact.
            assert!(
                (page.transform.skew_deg - a).abs() <= 0.1,
                "true {a}, found {}",
                page.transform.skew_deg
            );
        }
    }

    #[test]
    fn boxes_map_back_to_the_scanned_page() {
        let img = drawn(6);
        let (w, h) = img.dimensions();
        let skewed = deskew::transform_gray(&img, &PageTransform::new(w, h, 0, -3.0));
        let page = clean(
            &PageImage::new(skewed, 100.0, 100.0),
            &CleanupConfig::default(),
        );
        let r = Rect::new(100.0, 200.0, 300.0, 240.0);
        let q = page.quad_to_original(&r);
        for (corner, (x, y)) in [(r.x1, r.y0), (r.x0, r.y0), (r.x0, r.y1), (r.x1, r.y1)]
            .iter()
            .zip(q)
        {
            let back = page.transform.from_original(x, y);
            assert!((back.0 - corner.0).abs() < 0.01 && (back.1 - corner.1).abs() < 0.01);
        }
        let bb = page.rect_to_original(&r);
        assert!(
            bb.width() > r.width() && bb.height() > r.height(),
            "a turned box's hull is larger"
        );
    }
}
