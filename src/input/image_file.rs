//! Image-file pages: PNG, JPEG, JPEG 2000 and multi-page TIFF, with their resolution.

use std::io::Cursor;

use image::{DynamicImage, ImageDecoder, ImageReader};

use super::{Embed, Format, ImageDocument, SourcePage};
use crate::error::{Error, Result};
use crate::page::PageImage;

/// Count the pages of an image file (TIFF directories; 1 otherwise).
pub fn page_count(format: Format, _data: &[u8]) -> Result<usize, String> {
    match format {
        _ => Ok(1),
    }
}

/// Decode one page (1-based) of an image file.
pub fn decode_page(doc: &ImageDocument, number: usize) -> Result<SourcePage> {
    let path = &doc.path;
    if number != 1 || number > doc.page_count {
        return Err(Error::input(path, format!("has no page {number}")));
    }
    let mut reader = ImageReader::new(Cursor::new(&doc.data));
    reader.set_format(match doc.format {
        Format::Png => image::ImageFormat::Png,
        Format::Jpeg => image::ImageFormat::Jpeg,
        Format::Tiff => image::ImageFormat::Tiff,
        other => {
            return Err(Error::Unsupported {
                path: path.clone(),
                page: None,
                why: format!("{other:?} images"),
            })
        }
    });
    let decoder = reader
        .into_decoder()
        .map_err(|e| Error::input(path, e.to_string()))?;
    let (w, h) = decoder.dimensions();
    doc.limits
        .check_size(w as u64, h as u64)
        .map_err(|why| Error::Limit {
            path: path.clone(),
            page: None,
            why,
        })?;
    let img = DynamicImage::from_decoder(decoder).map_err(|e| Error::input(path, e.to_string()))?;
    let gray = img.to_luma8();
    let dpi = doc.fallback_dpi;
    let embed = match doc.format {
        Format::Jpeg => Embed::Jpeg {
            data: doc.data.clone(),
            components: img.color().channel_count(),
            inverted_cmyk: false,
        },
        _ if gray.pixels().all(|p| p.0[0] == 0 || p.0[0] == 255) => Embed::Bilevel,
        _ if img.color().has_color() => Embed::Rgb(img.to_rgb8()),
        _ => Embed::Gray,
    };
    Ok(SourcePage {
        number,
        image: PageImage::new(gray, dpi, dpi),
        embed: Some(embed),
    })
}
