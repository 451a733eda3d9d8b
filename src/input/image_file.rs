//! Image-file pages: multi-page TIFF (the `tiff` crate), PNG and JPEG (the `image` crate) and
//! JPEG 2000 (`hayro-jpeg2000`), each with its resolution and the way it goes into a new PDF.
//!
//! Sizes are checked against [`Limits`] from the header, before any pixel buffer exists. Lossy
//! data is never re-encoded: a JPEG or JPEG 2000 file is embedded as it came ([`Embed`]); the
//! decoded pixels only feed page analysis. Sniffing the format and opening files is left to
//! `input/mod.rs`, drawing the new PDF to `output/pdf_fresh.rs`.

use std::io::Cursor;

use image::{
    DynamicImage, ExtendedColorType, GrayImage, ImageDecoder, ImageFormat, ImageReader, RgbImage,
};
use tiff::decoder::{Decoder as TiffDecoder, DecodingResult, Limits as TiffLimits};
use tiff::tags::Tag;
use tiff::ColorType as TiffColor;

mod headers;

use super::{Embed, Format, ImageDocument, SourcePage};
use crate::error::{Error, Result};
use crate::limits::Limits;
use crate::page::PageImage;
use headers::{jp2_dpi, jpeg_info, plausible, png_dpi};

/// Most directories (pages) a TIFF may have: a guard against endless IFD chains that the cycle
/// check cannot see (a long chain of distinct offsets). 100 000 pages: common practice, no source.
const MAX_TIFF_PAGES: usize = 100_000;

/// Horizontal and vertical resolution, dots per inch.
type Dpi = (f32, f32);

/// One decoded page before it becomes a [`SourcePage`].
struct Decoded {
    pixels: Pixels,
    /// Resolution from the file, when it gives a plausible one.
    dpi: Option<Dpi>,
    /// How to embed it, when the format decides (JPEG, JPEG 2000); otherwise from the pixels.
    embed: Option<Embed>,
}

/// Pixels as the file gives them, before they become a [`PageImage`] and an [`Embed`].
enum Pixels {
    /// 1 bit per pixel, expanded to 0 (black) and 255 (white).
    Bilevel(GrayImage),
    /// Grey levels, 0 = black.
    Gray(GrayImage),
    /// Colour; any alpha already laid over white paper.
    Rgb(RgbImage),
}

/// Count the pages of an image file: TIFF directories (IFDs), 1 for the other formats.
///
/// Each TIFF directory is read and checked (the `tiff` crate refuses IFD cycles); a broken one is
/// an error naming it, so a damaged file fails before any page is written.
pub fn page_count(format: Format, data: &[u8]) -> Result<usize, String> {
    if format != Format::Tiff {
        return Ok(1);
    }
    let mut dec = open_tiff(data, &Limits::default())?;
    let mut count = 1;
    while dec.more_images() {
        if count >= MAX_TIFF_PAGES {
            return Err(format!(
                "TIFF has more than {MAX_TIFF_PAGES} directories (an endless IFD chain?)"
            ));
        }
        dec.next_image()
            .map_err(|e| tiff_why(&e, &format!("TIFF directory {} is broken", count + 1)))?;
        count += 1;
    }
    Ok(count)
}

/// Decode one page (1-based) of an image file.
pub fn decode_page(doc: &ImageDocument, number: usize) -> Result<SourcePage> {
    let path = &doc.path;
    if number == 0 || number > doc.page_count {
        return Err(Error::input(
            path,
            format!("has no page {number} (it has {})", doc.page_count),
        ));
    }
    let Decoded { pixels, dpi, embed } = match doc.format {
        Format::Tiff => tiff_page(doc, number)?,
        Format::Png | Format::Jpeg | Format::Jpeg2000 => single_page(doc)?,
        Format::Pdf => {
            return Err(Error::Usage(format!(
                "{}: a PDF is not an image file",
                path.display()
            )));
        }
    };
    let (dpi_x, dpi_y) = dpi.unwrap_or((doc.fallback_dpi, doc.fallback_dpi));
    // Colour pixels that are all grey (a grey palette, a grey scan saved as RGB) are grey:
    // lossless, and a third of the size in the PDF.
    let pixels = match pixels {
        Pixels::Rgb(rgb) if rgb.pixels().all(|p| p.0[0] == p.0[1] && p.0[1] == p.0[2]) => {
            Pixels::Gray(
                GrayImage::from_raw(
                    rgb.width(),
                    rgb.height(),
                    rgb.pixels().map(|p| p.0[0]).collect(),
                )
                .expect("one value per pixel"),
            )
        }
        other => other,
    };
    let (gray, default_embed) = match pixels {
        Pixels::Bilevel(g) => (g, Embed::Bilevel),
        Pixels::Gray(g) if g.pixels().all(|p| p.0[0] == 0 || p.0[0] == 255) => (g, Embed::Bilevel),
        Pixels::Gray(g) => (g, Embed::Gray),
        Pixels::Rgb(rgb) => (
            DynamicImage::ImageRgb8(rgb.clone()).to_luma8(),
            Embed::Rgb(rgb),
        ),
    };
    let embed = embed.unwrap_or(default_embed);
    Ok(SourcePage {
        number,
        image: PageImage::new(gray, dpi_x, dpi_y),
        embed: Some(embed),
    })
}

/// The limit error for a declared size, or the allocation cap for `bytes_per_px`.
fn check_size(doc: &ImageDocument, w: u32, h: u32, bytes_per_px: u64) -> Result<()> {
    let limit = |why| Error::Limit {
        path: doc.path.clone(),
        page: None,
        why,
    };
    doc.limits.check_size(w as u64, h as u64).map_err(limit)?;
    let bytes = w as u64 * h as u64 * (bytes_per_px + 1); // + the grey copy for analysis
    if bytes > doc.limits.max_alloc_bytes {
        return Err(limit(format!(
            "decoding {w}×{h} pixels needs {bytes} bytes, more than the limit of {}",
            doc.limits.max_alloc_bytes
        )));
    }
    Ok(())
}

// ---------------------------------------------------------------------------------------------
// TIFF (TIFF 6.0, Adobe 1992)

fn open_tiff<'a>(data: &'a [u8], limits: &Limits) -> Result<TiffDecoder<Cursor<&'a [u8]>>, String> {
    let mut tl = TiffLimits::default();
    tl.decoding_buffer_size = usize::try_from(limits.max_alloc_bytes).unwrap_or(usize::MAX);
    TiffDecoder::new(Cursor::new(data))
        .map(|d| d.with_limits(tl))
        .map_err(|e| tiff_why(&e, "TIFF header or first directory is broken"))
}

/// One line saying what is wrong, with "file truncated?" when the data ends early.
fn tiff_why(e: &tiff::TiffError, what: &str) -> String {
    if matches!(
        e,
        tiff::TiffError::FormatError(tiff::TiffFormatError::CycleInOffsets)
    ) {
        return format!("{what}: its directories (IFDs) point back in a loop; the file is damaged");
    }
    let truncated =
        matches!(e, tiff::TiffError::IoError(io) if io.kind() == std::io::ErrorKind::UnexpectedEof);
    let hint = if truncated {
        " (data ends early: file truncated?)"
    } else {
        ""
    };
    one_line(&format!("{what}: {e}{hint}"))
}

fn one_line(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// A decoder standing at page `number` (1-based).
fn tiff_at<'a>(
    doc: &ImageDocument,
    data: &'a [u8],
    number: usize,
) -> Result<TiffDecoder<Cursor<&'a [u8]>>> {
    let input = |why: String| Error::input(&doc.path, why);
    let mut dec = open_tiff(data, &doc.limits).map_err(input)?;
    dec.seek_to_image(number - 1)
        .map_err(|e| input(tiff_why(&e, &format!("TIFF directory {number} is broken"))))?;
    Ok(dec)
}

/// A copy of the file with the bits of every strip or tile of this page reversed, for pages
/// stored FillOrder 2 (least significant bit first, TIFF 6.0 §8), which the `tiff` crate does
/// not undo itself. libtiff reverses the raw strip bytes the same way before decoding.
fn msb_first_copy(dec: &mut TiffDecoder<Cursor<&[u8]>>, data: &[u8]) -> Result<Vec<u8>, String> {
    let mut list = |strips: Tag, tiles: Tag| -> Vec<u64> {
        let found = dec.find_tag_unsigned_vec::<u64>(strips).ok().flatten();
        found
            .or_else(|| dec.find_tag_unsigned_vec::<u64>(tiles).ok().flatten())
            .unwrap_or_default()
    };
    let offsets = list(Tag::StripOffsets, Tag::TileOffsets);
    let counts = list(Tag::StripByteCounts, Tag::TileByteCounts);
    let mut out = data.to_vec();
    for (&at, &len) in offsets.iter().zip(&counts) {
        let bytes = usize::try_from(at)
            .ok()
            .zip(usize::try_from(len).ok())
            .and_then(|(at, len)| out.get_mut(at..at.checked_add(len)?))
            .ok_or("TIFF strip runs past the end of the file (file truncated?)")?;
        bytes.iter_mut().for_each(|b| *b = b.reverse_bits());
    }
    Ok(out)
}

fn tiff_page(doc: &ImageDocument, number: usize) -> Result<Decoded> {
    let input = |why: String| Error::input(&doc.path, why);
    let reversed;
    let data = doc.bytes()?;
    let mut dec = tiff_at(doc, &data, number)?;
    if dec.find_tag_unsigned::<u16>(Tag::FillOrder).ok().flatten() == Some(2) {
        reversed = msb_first_copy(&mut dec, &data).map_err(input)?;
        dec = tiff_at(doc, &reversed, number)?;
    }
    let (w, h) = dec
        .dimensions()
        .map_err(|e| input(tiff_why(&e, "TIFF size")))?;
    const CONVERT: &str = "save the page as bilevel, grey or RGB and try again";
    let color = dec.colortype().map_err(|e| match e {
        tiff::TiffError::UnsupportedError(u) => {
            unsupported(doc, one_line(&format!("{u}; {CONVERT}")))
        }
        other => input(tiff_why(&other, "TIFF colour type")),
    })?;
    let layout = tiff_layout(color)
        .ok_or_else(|| unsupported(doc, format!("TIFF colour type {color:?}; {CONVERT}")))?;
    let bytes_per_px = u64::from(layout.samples) * u64::from(layout.bits).div_ceil(8);
    check_size(doc, w, h, bytes_per_px)?;
    if layout.samples > 1
        && dec
            .find_tag_unsigned::<u16>(Tag::PlanarConfiguration)
            .ok()
            .flatten()
            == Some(2)
    {
        return Err(unsupported(
            doc,
            "TIFF with colour planes stored separately (PlanarConfiguration 2)".into(),
        ));
    }
    let layout = TiffLayout {
        premultiplied: dec
            .find_tag_unsigned_vec::<u16>(Tag::ExtraSamples)
            .ok()
            .flatten()
            .is_some_and(|v| v.first() == Some(&1)),
        ..layout
    };
    let dpi = tiff_dpi(&mut dec);
    let data = dec
        .read_image()
        .map_err(|e| input(tiff_why(&e, "TIFF image data is damaged")))?;
    let pixels = tiff_pixels(data, w, h, layout).map_err(input)?;
    Ok(Decoded {
        pixels,
        dpi,
        embed: None,
    })
}

fn unsupported(doc: &ImageDocument, why: String) -> Error {
    Error::Unsupported {
        path: doc.path.clone(),
        page: None,
        why,
    }
}

/// How the samples of a TIFF page are laid out.
#[derive(Debug, Clone, Copy)]
struct TiffLayout {
    /// Samples per pixel.
    samples: u16,
    /// Bits per sample.
    bits: u8,
    /// Four samples are C, M, Y, K (not R, G, B, alpha).
    cmyk: bool,
    /// Alpha is associated (premultiplied; ExtraSamples 1).
    premultiplied: bool,
}

/// The layouts of the colour types mistara reads.
fn tiff_layout(color: TiffColor) -> Option<TiffLayout> {
    let (samples, bits, cmyk) = match color {
        TiffColor::Gray(b @ (1 | 2 | 4 | 8 | 16)) => (1, b, false),
        TiffColor::GrayA(b @ (8 | 16)) => (2, b, false),
        TiffColor::Multiband {
            bit_depth: b @ (8 | 16),
            num_samples: 2,
        } => (2, b, false),
        TiffColor::RGB(b @ (8 | 16)) => (3, b, false),
        TiffColor::RGBA(b @ (8 | 16)) => (4, b, false),
        TiffColor::CMYK(b @ (8 | 16)) => (4, b, true),
        _ => return None,
    };
    Some(TiffLayout {
        samples,
        bits,
        cmyk,
        premultiplied: false,
    })
}

/// XResolution / YResolution in ResolutionUnit (TIFF 6.0 §8: 1 none, 2 inch (default), 3 cm).
fn tiff_dpi(dec: &mut TiffDecoder<Cursor<&[u8]>>) -> Option<Dpi> {
    let rational = |v: tiff::decoder::ifd::Value| match v {
        tiff::decoder::ifd::Value::Rational(n, d) if d != 0 => Some(n as f32 / d as f32),
        other => other.into_f32().ok(),
    };
    let x = dec
        .find_tag(Tag::XResolution)
        .ok()
        .flatten()
        .and_then(rational)?;
    let y = dec
        .find_tag(Tag::YResolution)
        .ok()
        .flatten()
        .and_then(rational)
        .unwrap_or(x);
    match dec
        .find_tag_unsigned::<u16>(Tag::ResolutionUnit)
        .ok()
        .flatten()
        .unwrap_or(2)
    {
        2 => plausible(x, y),
        3 => plausible(x * 2.54, y * 2.54),
        _ => None, // no absolute unit: only the aspect ratio is known
    }
}

/// Turn decoded samples into pixels. The `tiff` crate has already undone WhiteIsZero (it inverts
/// such samples, as libtiff does), so 0 is black here for every photometric interpretation.
fn tiff_pixels(data: DecodingResult, w: u32, h: u32, layout: TiffLayout) -> Result<Pixels, String> {
    let TiffLayout {
        samples,
        bits,
        cmyk,
        premultiplied,
    } = layout;
    let (wu, hu) = (w as usize, h as usize);
    let short = || "TIFF image data is shorter than its size says (file truncated?)".to_string();
    if samples == 1 && bits < 8 {
        let DecodingResult::U8(packed) = data else {
            return Err("unexpected TIFF sample type".into());
        };
        let stride = (wu * bits as usize).div_ceil(8);
        if packed.len() < stride * hu {
            return Err(short());
        }
        let img = unpack_bits(&packed, w, h, stride, bits);
        return Ok(if bits == 1 {
            Pixels::Bilevel(img)
        } else {
            Pixels::Gray(img)
        });
    }
    let s8: Vec<u8> = match data {
        DecodingResult::U8(v) => v,
        // 16 → 8 bits: round(v · 255 / 65535)
        DecodingResult::U16(v) => v
            .into_iter()
            .map(|x| ((x as u32 * 255 + 32_767) / 65_535) as u8)
            .collect(),
        _ => return Err("unexpected TIFF sample type".into()),
    };
    let n = samples as usize;
    if s8.len() < wu * hu * n {
        return Err(short());
    }
    let px = s8.chunks_exact(n).take(wu * hu);
    Ok(match (n, cmyk) {
        (1, _) => {
            Pixels::Gray(GrayImage::from_raw(w, h, s8[..wu * hu].to_vec()).expect("length checked"))
        }
        (2, _) => Pixels::Gray(from_fn_gray(
            w,
            h,
            px.map(|p| over_white(p[0], p[1], premultiplied)),
        )),
        (4, true) => Pixels::Rgb(from_fn_rgb(w, h, px.flat_map(cmyk_to_rgb))),
        (3, _) => Pixels::Rgb(from_fn_rgb(w, h, px.flat_map(|p| [p[0], p[1], p[2]]))),
        _ => Pixels::Rgb(from_fn_rgb(
            w,
            h,
            px.flat_map(|p| [0, 1, 2].map(|i| over_white(p[i], p[3], premultiplied))),
        )),
    })
}

/// Expand rows of 1-, 2- or 4-bit samples (first pixel in the high bits, TIFF 6.0 §4 FillOrder 1)
/// to 8 bits, scaled so the largest value is 255.
fn unpack_bits(packed: &[u8], w: u32, h: u32, stride: usize, bits: u8) -> GrayImage {
    let (wu, bits) = (w as usize, bits as usize);
    let max = (1u16 << bits) - 1;
    let per_byte = 8 / bits;
    // One table entry per byte value: its `per_byte` samples, already scaled.
    let table: Vec<[u8; 8]> = (0..=255u8)
        .map(|byte| {
            let mut out = [0u8; 8];
            for (k, o) in out.iter_mut().take(per_byte).enumerate() {
                let v = (byte >> (8 - bits * (k + 1))) as u16 & max;
                *o = (v * 255 / max) as u8;
            }
            out
        })
        .collect();
    let mut px = Vec::with_capacity(wu * h as usize);
    for row in packed.chunks(stride).take(h as usize) {
        let start = px.len();
        for &byte in row {
            px.extend_from_slice(&table[byte as usize][..per_byte]);
        }
        px.truncate(start + wu);
    }
    GrayImage::from_raw(w, h, px).expect("rows checked by the caller")
}

/// A colour sample laid over white paper: `c·a + 255·(1 − a)`, or `c + 255 − a` when the
/// colour is premultiplied (TIFF 6.0 §18, ExtraSamples 1 = associated alpha).
fn over_white(c: u8, a: u8, premultiplied: bool) -> u8 {
    if premultiplied {
        c.saturating_add(255 - a)
    } else {
        ((c as u32 * a as u32 + 255 * (255 - a as u32) + 127) / 255) as u8
    }
}

/// Naive CMYK → RGB, `R = (255 − C)(255 − K)/255` (no colour management: common practice, no source).
fn cmyk_to_rgb(p: &[u8]) -> [u8; 3] {
    let k = 255 - p[3] as u32;
    [0, 1, 2].map(|i| ((255 - p[i] as u32) * k / 255) as u8)
}

fn from_fn_gray(w: u32, h: u32, it: impl Iterator<Item = u8>) -> GrayImage {
    GrayImage::from_raw(w, h, it.collect()).expect("one value per pixel")
}

fn from_fn_rgb(w: u32, h: u32, it: impl Iterator<Item = u8>) -> RgbImage {
    RgbImage::from_raw(w, h, it.collect()).expect("three values per pixel")
}

// ---------------------------------------------------------------------------------------------
// PNG, JPEG, JPEG 2000: one page each

fn single_page(doc: &ImageDocument) -> Result<Decoded> {
    let data = doc.bytes()?;
    let data: &[u8] = &data;
    let (dpi, embed) = header_facts(doc, data)?;
    let pixels = if doc.format == Format::Jpeg2000 {
        let settings = hayro_jpeg2000::DecodeSettings::default();
        let dec = hayro_jpeg2000::Image::new(data, &settings).map_err(|e| {
            Error::input(
                &doc.path,
                one_line(&format!("JPEG 2000 header is damaged: {e}")),
            )
        })?;
        decode_with(doc, dec)?
    } else {
        let fmt = if doc.format == Format::Png {
            ImageFormat::Png
        } else {
            ImageFormat::Jpeg
        };
        let mut reader = ImageReader::with_format(Cursor::new(data), fmt);
        reader.limits(image_limits(&doc.limits));
        let dec = reader.into_decoder().map_err(|e| decode_error(doc, e))?;
        decode_with(doc, dec)?
    };
    Ok(Decoded { pixels, dpi, embed })
}

/// Resolution and, for JPEG and JPEG 2000, the untouched embedding, from the headers alone.
/// A JPEG's size is checked here, before the decoder is built.
fn header_facts(doc: &ImageDocument, data: &[u8]) -> Result<(Option<Dpi>, Option<Embed>)> {
    Ok(match doc.format {
        Format::Jpeg => {
            let info = jpeg_info(data).map_err(|why| Error::input(&doc.path, why))?;
            check_size(doc, info.width as u32, info.height as u32, 3)?;
            let inverted_cmyk = info.adobe && info.components == 4;
            (
                info.dpi,
                Some(Embed::Jpeg {
                    data: data.to_vec(),
                    components: info.components,
                    inverted_cmyk,
                }),
            )
        }
        Format::Png => (png_dpi(data), None),
        _ => (
            jp2_dpi(data),
            Some(Embed::Jpx {
                data: data.to_vec(),
            }),
        ),
    })
}

fn image_limits(limits: &Limits) -> image::Limits {
    // The declared size is checked by `check_size`, with mistara's own message; the decoder
    // still gets the allocation cap.
    let mut l = image::Limits::default();
    l.max_alloc = Some(limits.max_alloc_bytes);
    l
}

/// Check the declared size, then decode. `L1` (1-bit grey) stays bilevel; colour stays colour.
fn decode_with(doc: &ImageDocument, dec: impl ImageDecoder) -> Result<Pixels> {
    let (w, h) = dec.dimensions();
    check_size(doc, w, h, dec.color_type().bytes_per_pixel() as u64)?;
    let original = dec.original_color_type();
    let img = DynamicImage::from_decoder(dec).map_err(|e| decode_error(doc, e))?;
    Ok(if original == ExtendedColorType::L1 {
        Pixels::Bilevel(img.to_luma8())
    } else if img.color().has_color() {
        let rgb = if img.color().has_alpha() {
            flatten_rgba(&img)
        } else {
            img.to_rgb8()
        };
        Pixels::Rgb(rgb)
    } else if img.color().has_alpha() {
        let la = img.to_luma_alpha8();
        Pixels::Gray(from_fn_gray(
            la.width(),
            la.height(),
            la.pixels().map(|p| over_white(p.0[0], p.0[1], false)),
        ))
    } else {
        Pixels::Gray(img.to_luma8())
    })
}

fn flatten_rgba(img: &DynamicImage) -> RgbImage {
    let rgba = img.to_rgba8();
    let px = rgba
        .pixels()
        .flat_map(|p| [0, 1, 2].map(|i| over_white(p.0[i], p.0[3], false)));
    from_fn_rgb(rgba.width(), rgba.height(), px)
}

fn decode_error(doc: &ImageDocument, e: image::ImageError) -> Error {
    use image::ImageError as E;
    let name = match doc.format {
        Format::Png => "PNG",
        Format::Jpeg => "JPEG",
        _ => "JPEG 2000",
    };
    match e {
        E::Limits(l) => Error::Limit {
            path: doc.path.clone(),
            page: None,
            why: one_line(&l.to_string()),
        },
        E::Unsupported(u) => unsupported(doc, one_line(&format!("{name}: {u}"))),
        E::IoError(io) if io.kind() == std::io::ErrorKind::UnexpectedEof => Error::input(
            &doc.path,
            format!("{name} data ends early (file truncated?)"),
        ),
        other => Error::input(
            &doc.path,
            one_line(&format!(
                "{name} data is damaged or ends early (file truncated?): {other}"
            )),
        ),
    }
}
