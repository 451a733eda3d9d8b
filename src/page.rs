//! `PageImage`: the grey pixels of one page, its resolution, and where it sits on the output page.

use image::GrayImage;

use crate::layout::geometry::Placement;

/// One page ready for analysis.
#[derive(Debug, Clone)]
pub struct PageImage {
    /// 8-bit grey pixels, 0 = black ink, 255 = white paper.
    pub gray: GrayImage,
    /// Horizontal resolution in dots per inch.
    pub dpi_x: f32,
    /// Vertical resolution in dots per inch.
    pub dpi_y: f32,
    /// Where the pixels land on the PDF page.
    pub placement: Placement,
}

impl PageImage {
    /// A page image that fills a page of its own size at the given resolution.
    pub fn new(gray: GrayImage, dpi_x: f32, dpi_y: f32) -> PageImage {
        let placement = Placement::fill_page(gray.width(), gray.height(), dpi_x, dpi_y);
        PageImage {
            gray,
            dpi_x,
            dpi_y,
            placement,
        }
    }
}
