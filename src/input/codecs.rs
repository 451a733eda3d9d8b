//! Image codecs of PDF streams: DCT (JPEG), CCITT fax, JBIG2 and JPEG 2000 turned into PDF-layout
//! samples (their conversion to grey is in `gray`).
//!
//! The decoding itself is left to well-kept crates (zune-jpeg, hayro-ccitt, hayro-jbig2,
//! hayro-jpeg2000); this module sets them up from the stream's parameters and checks sizes against
//! [`Limits`] before allocating. Generic filters (Flate with predictors, LZW, ASCII85, …) are
//! decoded by lopdf in `pdf_image`.

use crate::limits::Limits;

/// Samples of an image as PDF lays them out (ISO 32000-1 §8.9.3): rows of `width × components`
/// samples of `bpc` bits each, every row padded to a whole byte.
#[derive(Debug, Clone)]
pub struct Samples {
    /// Pixels per row.
    pub width: u32,
    /// Rows.
    pub height: u32,
    /// Bits per component: 1, 2, 4, 8 or 16.
    pub bpc: u8,
    /// Colour components per pixel.
    pub components: u8,
    /// The packed rows.
    pub data: Vec<u8>,
}

impl Samples {
    /// Bytes in one row.
    pub fn row_bytes(&self) -> usize {
        (self.width as usize * self.components as usize * self.bpc as usize).div_ceil(8)
    }
}

/// Parameters of the CCITTFaxDecode filter (ISO 32000-1 §7.4.6, Table 11).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FaxParams {
    /// `K`: < 0 pure two-dimensional (G4), 0 one-dimensional (G3 1-D), > 0 mixed (G3 2-D).
    pub k: i64,
    /// `Columns`, default 1728.
    pub columns: u32,
    /// `Rows`; 0 = unknown.
    pub rows: u32,
    /// `EncodedByteAlign`.
    pub byte_align: bool,
    /// `EndOfLine`.
    pub end_of_line: bool,
    /// `EndOfBlock`, default true.
    pub end_of_block: bool,
    /// `BlackIs1`.
    pub black_is_1: bool,
}

impl Default for FaxParams {
    fn default() -> Self {
        FaxParams {
            k: 0,
            columns: 1728,
            rows: 0,
            byte_align: false,
            end_of_line: false,
            end_of_block: true,
            black_is_1: false,
        }
    }
}

fn check(limits: &Limits, width: u32, height: u32, components: u8) -> Result<(), String> {
    limits.check_size(width as u64, height as u64)?;
    let bytes = width as u64 * height as u64 * components.max(1) as u64;
    if bytes > limits.max_alloc_bytes {
        return Err(format!(
            "image needs {bytes} bytes, more than the limit of {}",
            limits.max_alloc_bytes
        ));
    }
    Ok(())
}

/// Decode a DCTDecode stream (a JPEG, ITU-T T.81) with zune-jpeg to 8-bit samples: 1 component
/// for grey, 3 for YCbCr/RGB (converted to RGB unless `ColorTransform` is 0), 4 for CMYK and YCCK
/// (YCCK converted to CMYK), samples as stored so the PDF's `/Decode` array still applies.
pub fn decode_dct(
    data: &[u8],
    color_transform: Option<i64>,
    limits: &Limits,
) -> Result<Samples, String> {
    use zune_jpeg::zune_core::bytestream::ZCursor;
    use zune_jpeg::zune_core::colorspace::ColorSpace;
    use zune_jpeg::zune_core::options::DecoderOptions;

    let options = DecoderOptions::default()
        .set_max_width(u16::MAX as usize)
        .set_max_height(u16::MAX as usize);
    let mut dec = zune_jpeg::JpegDecoder::new_with_options(ZCursor::new(data), options);
    dec.decode_headers()
        .map_err(|e| format!("JPEG data is damaged: {e:?}"))?;
    let (w, h) = dec.dimensions().ok_or("JPEG data has no frame header")?;
    check(limits, w as u32, h as u32, 4)?;
    let input = dec
        .input_colorspace()
        .ok_or("JPEG data has no colour space")?;
    let out = match input {
        ColorSpace::YCbCr if color_transform == Some(0) => ColorSpace::YCbCr,
        ColorSpace::Luma | ColorSpace::LumaA => ColorSpace::Luma,
        ColorSpace::CMYK => ColorSpace::CMYK,
        ColorSpace::YCCK => ColorSpace::YCCK,
        _ => ColorSpace::RGB,
    };
    dec.set_options(options.jpeg_set_out_colorspace(out));
    let mut pixels = dec
        .decode()
        .map_err(|e| format!("JPEG data is damaged: {e:?}"))?;
    if out == ColorSpace::YCCK {
        // YCCK → CMYK: the YCbCr part gives 255 − R, 255 − G, 255 − B (ITU-T T.871 §7 inverse
        // transform; the same formula pdf.js uses in its jpg.js), K is kept.
        for c in pixels.chunks_exact_mut(4) {
            let (y, cb, cr) = (c[0] as f32, c[1] as f32, c[2] as f32);
            c[0] = (434.456 - y - 1.402 * cr).clamp(0.0, 255.0) as u8;
            c[1] = (119.541 - y + 0.344 * cb + 0.714 * cr).clamp(0.0, 255.0) as u8;
            c[2] = (481.816 - y - 1.772 * cb).clamp(0.0, 255.0) as u8;
        }
    }
    let components = (pixels.len() / (w * h).max(1)) as u8;
    if !matches!(components, 1 | 3 | 4) || pixels.len() != w * h * components as usize {
        return Err("JPEG data ends early (file truncated?)".into());
    }
    Ok(Samples {
        width: w as u32,
        height: h as u32,
        bpc: 8,
        components,
        data: pixels,
    })
}

/// Collects CCITT rows (colour changes) into packed 1-bit rows in the PDF sense: with
/// `BlackIs1` false, 0 bits are black (ISO 32000-1 §7.4.6, Table 11).
struct FaxRows {
    data: Vec<u8>,
    row_bytes: usize,
    width: u32,
    rows: u32,
    black_bit: bool,
}

impl hayro_ccitt::Decoder for FaxRows {
    fn push_row(&mut self, changes: &[u32]) {
        if self.rows == 0 {
            return; // all rows we asked for are in
        }
        self.rows -= 1;
        let start = self.data.len();
        self.data.resize(
            start + self.row_bytes,
            if self.black_bit { 0 } else { 0xFF },
        );
        let row = &mut self.data[start..];
        for pair in changes.chunks(2) {
            let end = pair.get(1).copied().unwrap_or(self.width).min(self.width);
            for x in pair[0]..end {
                let (byte, bit) = ((x / 8) as usize, 7 - (x % 8));
                if self.black_bit {
                    row[byte] |= 1 << bit;
                } else {
                    row[byte] &= !(1 << bit);
                }
            }
        }
    }
}

/// Decode a CCITTFaxDecode stream (ITU-T T.4 G3 1-D and 2-D, T.6 G4) with hayro-ccitt to
/// 1-bit samples of `height` rows.
pub fn decode_ccitt(
    data: &[u8],
    p: &FaxParams,
    height: u32,
    limits: &Limits,
) -> Result<Samples, String> {
    use hayro_ccitt::{DecodeSettings, DecoderContext, EncodingMode};
    // The image's Height wins over Rows when they differ (as other readers do).
    let rows = if height > 0 { height } else { p.rows };
    check(limits, p.columns, rows.max(1), 1)?;
    let settings = DecodeSettings {
        columns: p.columns,
        rows,
        end_of_block: p.end_of_block,
        end_of_line: p.end_of_line,
        rows_are_byte_aligned: p.byte_align,
        encoding: match p.k {
            k if k < 0 => EncodingMode::Group4,
            0 => EncodingMode::Group3_1D,
            _ => EncodingMode::Group3_2D,
        },
        strict: false,
    };
    let row_bytes = (p.columns as usize).div_ceil(8);
    let mut sink = FaxRows {
        data: Vec::new(),
        row_bytes,
        width: p.columns,
        rows,
        black_bit: p.black_is_1,
    };
    let mut ctx = DecoderContext::new(settings);
    let result = hayro_ccitt::decode(data, &mut sink, &mut ctx);
    let got = (sink.data.len() / row_bytes.max(1)) as u32;
    if got < rows.max(1) {
        return Err(match result {
            Err(e) => format!("CCITT fax data is damaged after {got} of {rows} rows: {e:?}"),
            Ok(_) => {
                format!("CCITT fax data ends early after {got} of {rows} rows (file truncated?)")
            }
        });
    }
    Ok(Samples {
        width: p.columns,
        height: got,
        bpc: 1,
        components: 1,
        data: sink.data,
    })
}

/// Collects JBIG2 pixels into packed 1-bit rows, 0 = black: JBIG2 itself says 1 = black, and the
/// PDF filter hands on the opposite (ISO 32000-1 §7.4.7).
struct BilevelRows {
    data: Vec<u8>,
    row_bytes: usize,
    x: usize,
    y: usize,
}

impl hayro_jbig2::Decoder for BilevelRows {
    fn push_pixel(&mut self, black: bool) {
        if black && self.x < self.row_bytes * 8 {
            if let Some(b) = self.data.get_mut(self.y * self.row_bytes + self.x / 8) {
                *b &= !(0x80 >> (self.x % 8));
            }
        }
        self.x += 1;
    }

    fn push_pixel_chunk(&mut self, black: bool, chunk_count: u32) {
        let start = (self.x / 8).min(self.row_bytes);
        let end = (start + chunk_count as usize).min(self.row_bytes);
        let row = self.y * self.row_bytes;
        if let Some(bytes) = self.data.get_mut(row + start..row + end) {
            bytes.fill(if black { 0 } else { 0xFF });
        }
        self.x += 8 * chunk_count as usize;
    }

    fn next_line(&mut self) {
        self.y += 1;
        self.x = 0;
    }
}

/// Decode a JBIG2Decode stream (ITU-T T.88, embedded organisation) with its `JBIG2Globals`
/// segments, using hayro-jbig2, to 1-bit samples.
pub fn decode_jbig2(
    data: &[u8],
    globals: Option<&[u8]>,
    limits: &Limits,
) -> Result<Samples, String> {
    let settings = hayro_jbig2::DecodeSettings { strict: false };
    let globals = globals
        .map(|g| hayro_jbig2::Globals::new(g, &settings))
        .transpose()
        .map_err(|e| format!("JBIG2 global segments are damaged: {e:?}"))?;
    let page = hayro_jbig2::Page::new_embedded(data, globals.as_ref(), &settings)
        .map_err(|e| format!("JBIG2 image data is damaged (file truncated?): {e:?}"))?;
    let (w, h) = (page.width(), page.height());
    check(limits, w, h, 1)?;
    let row_bytes = (w as usize).div_ceil(8);
    let mut sink = BilevelRows {
        data: vec![0xFF; row_bytes * h as usize],
        row_bytes,
        x: 0,
        y: 0,
    };
    page.decode(&mut sink)
        .map_err(|e| format!("JBIG2 image data is damaged (file truncated?): {e:?}"))?;
    Ok(Samples {
        width: w,
        height: h,
        bpc: 1,
        components: 1,
        data: sink.data,
    })
}

/// Decode a JPXDecode stream (JPEG 2000, ISO/IEC 15444-1; a JP2 file or a raw codestream) with
/// hayro-jpeg2000 to 8-bit samples; an alpha channel is dropped. Returns the samples and whether
/// the codestream says CMYK (4 components), grey (1) or RGB (3).
pub fn decode_jpx(data: &[u8], limits: &Limits) -> Result<Samples, String> {
    let settings = hayro_jpeg2000::DecodeSettings {
        resolve_palette_indices: true,
        strict: false,
        target_resolution: None,
    };
    let image = hayro_jpeg2000::Image::new(data, &settings)
        .map_err(|e| format!("JPEG 2000 data is damaged: {e:?}"))?;
    let (w, h) = (image.width(), image.height());
    check(limits, w, h, 4)?;
    let colour = image.color_space().num_channels();
    let alpha = image.has_alpha();
    let mut ctx = hayro_jpeg2000::DecoderContext::default();
    let bitmap = image
        .decode(&mut ctx)
        .map_err(|e| format!("JPEG 2000 data is damaged (file truncated?): {e:?}"))?;
    let all = bitmap.data_u8();
    let total = colour as usize + alpha as usize;
    if total == 0 || all.len() != w as usize * h as usize * total {
        return Err("JPEG 2000 data has an unexpected number of components".into());
    }
    let data = if alpha {
        all.chunks_exact(total)
            .flat_map(|p| p[..colour as usize].to_vec())
            .collect()
    } else {
        all
    };
    Ok(Samples {
        width: w,
        height: h,
        bpc: 8,
        components: colour,
        data,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::input::gray::{to_gray, ColorModel};

    #[test]
    fn g4_from_the_fax_crate_decodes_both_ways_of_black_is_1() {
        // The fax crate (crates.io) is an independent T.6 encoder: draw a page, encode, decode.
        use fax::{encoder::Encoder, Color, VecWriter};
        let (w, h) = (37u32, 5u32);
        let black = |x: u32, y: u32| (x + 2 * y) % 7 < 3;
        let mut enc = Encoder::new(VecWriter::new());
        for y in 0..h {
            let pels = (0..w).map(|x| {
                if black(x, y) {
                    Color::Black
                } else {
                    Color::White
                }
            });
            let Ok(()) = enc.encode_line(pels, w);
        }
        let Ok(writer) = enc.finish();
        let data = writer.finish();
        for black_is_1 in [false, true] {
            let p = FaxParams {
                k: -1,
                columns: w,
                rows: h,
                black_is_1,
                ..FaxParams::default()
            };
            let s = decode_ccitt(&data, &p, h, &Limits::default()).unwrap();
            // BlackIs1 false: 0 bits are black (ISO 32000-1 §7.4.6, Table 11); DeviceGray 0 = black.
            let g = to_gray(&s, &ColorModel::Gray, None, false).unwrap();
            for y in 0..h {
                for x in 0..w {
                    let ink = g.get_pixel(x, y).0[0] == 0;
                    assert_eq!(
                        ink,
                        black(x, y) != black_is_1,
                        "({x}, {y}) black_is_1={black_is_1}"
                    );
                }
            }
        }
    }
}
