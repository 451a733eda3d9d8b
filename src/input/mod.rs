//! Reading scanned pages: image files (PNG, JPEG, JPEG 2000, multi-page TIFF) and PDFs.
//!
//! [`sniff`] tells the format from the first bytes, never from the file name; a PDF opens as a
//! [`pdf::PdfDocument`], an image file as an [`ImageDocument`], and their pages are decoded one
//! at a time so a long book never sits in memory whole.

pub mod codecs;
pub mod gray;
pub mod image_file;
pub mod pdf;
pub mod pdf_image;
pub mod raster;

use std::path::{Path, PathBuf};

use image::RgbImage;

use crate::error::{Error, Result};
use crate::limits::Limits;
use crate::page::PageImage;

/// How a page image from an image file goes into a new PDF, without re-encoding lossy data.
#[derive(Debug, Clone)]
pub enum Embed {
    /// The JPEG file's bytes, embedded unchanged as DCTDecode (ISO 32000-1 §7.4.8).
    Jpeg {
        /// The whole JPEG file.
        data: Vec<u8>,
        /// 1 (grey), 3 (RGB/YCbCr) or 4 (CMYK/YCCK).
        components: u8,
        /// Adobe APP14 CMYK JPEGs store inverted values; the PDF needs `/Decode [1 0 1 0 1 0 1 0]`.
        inverted_cmyk: bool,
    },
    /// A JPEG 2000 codestream or JP2 file, embedded unchanged as JPXDecode (§7.4.9).
    Jpx {
        /// The whole file.
        data: Vec<u8>,
    },
    /// The page's grey pixels are black and white only: embed as 1 bit per pixel.
    Bilevel,
    /// Embed the page's grey pixels, Flate-compressed.
    Gray,
    /// Embed these colour pixels, Flate-compressed.
    Rgb(RgbImage),
}

/// One decoded page of an input.
#[derive(Debug, Clone)]
pub struct SourcePage {
    /// 1-based page number within its file.
    pub number: usize,
    /// The pixels mistara analyses.
    pub image: PageImage,
    /// For image files: how to put the original image into the new PDF. `None` for PDF pages,
    /// which keep their own content.
    pub embed: Option<Embed>,
}

/// What kind of file an input is, from its magic bytes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// `%PDF-` (ISO 32000-1 §7.5.2; readers accept it within the first 1024 bytes).
    Pdf,
    /// PNG signature (ISO/IEC 15948 §5.2).
    Png,
    /// JPEG SOI marker FF D8 FF (ITU-T T.81 §B.1.1.3).
    Jpeg,
    /// TIFF "II*\0" / "MM\0*" (TIFF 6.0 §2), or BigTIFF (version 43).
    Tiff,
    /// JP2 signature box or a raw J2K codestream (ISO/IEC 15444-1 §I.5.1, §A.4.1).
    Jpeg2000,
}

/// Guess the format from the first bytes of a file.
pub fn sniff(head: &[u8]) -> Option<Format> {
    const JP2: &[u8] = &[
        0, 0, 0, 0x0C, b'j', b'P', b' ', b' ', 0x0D, 0x0A, 0x87, 0x0A,
    ];
    let window = &head[..head.len().min(1024)];
    if head.starts_with(b"\x89PNG\r\n\x1a\n") {
        Some(Format::Png)
    } else if head.starts_with(&[0xFF, 0xD8, 0xFF]) {
        Some(Format::Jpeg)
    } else if head.starts_with(b"II*\0")
        || head.starts_with(b"MM\0*")
        || head.starts_with(b"II+\0")
        || head.starts_with(b"MM\0+")
    {
        Some(Format::Tiff)
    } else if head.starts_with(JP2) || head.starts_with(&[0xFF, 0x4F, 0xFF, 0x51]) {
        Some(Format::Jpeg2000)
    } else if window.windows(5).any(|w| w == b"%PDF-") {
        Some(Format::Pdf)
    } else {
        None
    }
}

/// Read a whole input file, refusing empty and unknown files with a clear message.
pub fn read_input(path: &Path) -> Result<(Format, Vec<u8>)> {
    let data = std::fs::read(path).map_err(|e| Error::io(path, e))?;
    if data.is_empty() {
        return Err(Error::input(path, "file is empty"));
    }
    match sniff(&data) {
        Some(f) => Ok((f, data)),
        None => Err(Error::input(
            path,
            "neither a PDF nor a PNG, JPEG, TIFF or JPEG 2000 image",
        )),
    }
}

/// The format of a file from its first 1024 bytes; `None` when it is none mistara reads.
pub fn sniff_file(path: &Path) -> Result<Option<Format>> {
    use std::io::Read;
    let mut head = Vec::with_capacity(1024);
    std::fs::File::open(path)
        .and_then(|f| f.take(1024).read_to_end(&mut head))
        .map_err(|e| Error::io(path, e))?;
    Ok(sniff(&head))
}

/// An opened image-file input: all its pages decode on demand.
#[derive(Debug)]
pub struct ImageDocument {
    /// Where it came from.
    pub path: PathBuf,
    /// Its format.
    pub format: Format,
    /// The file's bytes; empty when they are not kept and [`ImageDocument::bytes`] reads them
    /// again (single-page files, so that a run over many files holds only the pages in flight).
    pub data: Vec<u8>,
    /// Number of pages (TIFF directories; 1 for the other formats).
    pub page_count: usize,
    /// Resolution to assume when the file gives none.
    pub fallback_dpi: f32,
    /// Size limits.
    pub limits: Limits,
}

impl ImageDocument {
    /// The file's bytes: the kept ones, or read again from `path`.
    pub fn bytes(&self) -> Result<std::borrow::Cow<'_, [u8]>> {
        if !self.data.is_empty() {
            return Ok(std::borrow::Cow::Borrowed(&self.data));
        }
        let (format, data) = read_input(&self.path)?;
        if format != self.format {
            return Err(Error::input(
                &self.path,
                "changed while mistara was reading it",
            ));
        }
        Ok(std::borrow::Cow::Owned(data))
    }

    /// Decode page `number` (1-based).
    pub fn page(&self, number: usize) -> Result<SourcePage> {
        image_file::decode_page(self, number).map_err(|e| e.on_page(number))
    }
}

/// Open an input held in memory and decode every page, as `ocr` would before analysis; returns
/// the number of pages. `name` only labels error messages. The fuzz target (tests/fuzz) drives
/// the input stage through here: any bytes must give `Ok` or a clean error, never a panic.
pub fn decode_all(name: &Path, data: Vec<u8>, limits: Limits) -> Result<usize> {
    let format = sniff(&data).ok_or_else(|| {
        Error::input(
            name,
            "neither a PDF nor a PNG, JPEG, TIFF or JPEG 2000 image",
        )
    })?;
    if format == Format::Pdf {
        let doc = pdf::open(name, data, 300.0, limits)?;
        for n in 1..=doc.page_count() {
            doc.page(n)?;
        }
        return Ok(doc.page_count());
    }
    let page_count =
        image_file::page_count(format, &data).map_err(|why| Error::input(name, why))?;
    let doc = ImageDocument {
        path: name.to_path_buf(),
        format,
        data,
        page_count,
        fallback_dpi: 300.0,
        limits,
    };
    for n in 1..=page_count {
        doc.page(n)?;
    }
    Ok(page_count)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn decode_all_reads_a_png_and_refuses_text() {
        let mut png = Vec::new();
        image::GrayImage::from_pixel(8, 4, image::Luma([200]))
            .write_to(&mut std::io::Cursor::new(&mut png), image::ImageFormat::Png)
            .unwrap();
        let name = Path::new("mem.png");
        assert_eq!(decode_all(name, png, Limits::default()).unwrap(), 1);
        assert!(decode_all(name, b"plain words".to_vec(), Limits::default()).is_err());
    }

    #[test]
    fn sniffs_magic_bytes() {
        assert_eq!(sniff(b"%PDF-1.7\n"), Some(Format::Pdf));
        assert_eq!(sniff(b"\x89PNG\r\n\x1a\n...."), Some(Format::Png));
        assert_eq!(sniff(&[0xFF, 0xD8, 0xFF, 0xE0]), Some(Format::Jpeg));
        assert_eq!(sniff(b"II*\0\x08\0\0\0"), Some(Format::Tiff));
        assert_eq!(sniff(b"hello, this is text"), None);
    }
}
