//! A picture of what the analysis did: the straightened page in grey with regions, lines and
//! baselines drawn in colour, written as PNG.
//!
//! Colours: main text blue, header and page number green, title purple, footnotes orange, margin
//! notes teal; rules and pictures red. Line boxes are thin frames in the region's colour, baselines a
//! red line, region boxes a thicker frame. Each region's place in the reading order is marked by that
//! many small squares at its top-right corner.

use std::path::Path;

use image::{Rgb, RgbImage};

use super::geometry::Rect;
use super::{analyze, LayoutConfig, PageLayout, RegionClass};
use crate::cleanup::{clean, CleanPage, CleanupConfig};
use crate::page::PageImage;
use crate::text::RegionKind;

fn colour(class: RegionClass) -> Rgb<u8> {
    match class {
        RegionClass::Text(RegionKind::Body) => Rgb([30, 80, 220]),
        RegionClass::Text(RegionKind::Header | RegionKind::PageNumber) => Rgb([20, 150, 40]),
        RegionClass::Text(RegionKind::Title) => Rgb([140, 40, 170]),
        RegionClass::Text(RegionKind::Footnote) => Rgb([230, 130, 0]),
        RegionClass::Text(RegionKind::Margin) => Rgb([0, 150, 150]),
        RegionClass::Separator | RegionClass::Picture => Rgb([220, 20, 20]),
    }
}

/// Draw the layout over the straightened page.
pub fn render(page: &CleanPage, layout: &PageLayout) -> RgbImage {
    let mut img = RgbImage::from_fn(page.gray.width(), page.gray.height(), |x, y| {
        let g = page.gray.get_pixel(x, y).0[0] / 2 + 127; // paled so the drawing stands out
        Rgb([g, g, g])
    });
    let thick = (page.dpi / 100.0).max(1.0) as i32;
    for (n, r) in layout.regions.iter().enumerate() {
        let c = colour(r.class);
        frame(&mut img, &r.clean_box, c, thick + 1, 2.0 * thick as f32);
        for k in 0..(n + 1).min(20) as i32 {
            let s = 3 * thick;
            let x = r.clean_box.x1 as i32 - (k + 1) * (s + thick);
            fill(&mut img, x, r.clean_box.y0 as i32 - s - 2 * thick, s, s, c);
        }
        for l in &r.lines {
            frame(&mut img, &l.clean_box, c, 1, 0.0);
            let y = l.clean_baseline_y as i32;
            fill(
                &mut img,
                l.clean_box.x0 as i32,
                y,
                l.clean_box.width() as i32,
                thick,
                Rgb([230, 0, 0]),
            );
        }
    }
    img
}

/// Clean and analyse a page as the engine does, and draw the result as PNG bytes: the debug view
/// that `mistara ocr --debug-dir` writes for each page it reads.
pub fn page_view_png(
    image: &PageImage,
    cleanup: &CleanupConfig,
    layout: &LayoutConfig,
) -> image::ImageResult<Vec<u8>> {
    let page = clean(image, cleanup);
    let found = analyze(&page, layout);
    let mut bytes = Vec::new();
    render(&page, &found).write_to(
        &mut std::io::Cursor::new(&mut bytes),
        image::ImageFormat::Png,
    )?;
    Ok(bytes)
}

/// Draw the layout and write it as a PNG.
pub fn write_png(page: &CleanPage, layout: &PageLayout, path: &Path) -> image::ImageResult<()> {
    render(page, layout).save_with_format(path, image::ImageFormat::Png)
}

fn fill(img: &mut RgbImage, x: i32, y: i32, w: i32, h: i32, c: Rgb<u8>) {
    let (iw, ih) = (img.width() as i32, img.height() as i32);
    for yy in y.max(0)..(y + h).min(ih) {
        for xx in x.max(0)..(x + w).min(iw) {
            img.put_pixel(xx as u32, yy as u32, c);
        }
    }
}

fn frame(img: &mut RgbImage, r: &Rect, c: Rgb<u8>, t: i32, grow: f32) {
    let (x0, y0) = ((r.x0 - grow) as i32, (r.y0 - grow) as i32);
    let (x1, y1) = ((r.x1 + grow) as i32, (r.y1 + grow) as i32);
    fill(img, x0, y0, x1 - x0, t, c);
    fill(img, x0, y1 - t, x1 - x0, t, c);
    fill(img, x0, y0, t, y1 - y0, c);
    fill(img, x1 - t, y0, t, y1 - y0, c);
}
