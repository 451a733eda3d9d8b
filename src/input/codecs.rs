//! Image codecs of PDF streams: DCT (JPEG), CCITT fax, JBIG2 and JPEG 2000 turned into PDF-layout
//! samples, and samples of any colour space turned into grey pixels.
//!
//! The decoding itself is left to well-kept crates (zune-jpeg, hayro-ccitt, hayro-jbig2,
//! hayro-jpeg2000); this module sets them up from the stream's parameters, checks sizes against
//! [`Limits`] before allocating, and owns the one conversion to 8-bit grey. Generic filters (Flate
//! with predictors, LZW, ASCII85, …) are decoded by lopdf in `pdf.rs`.

use image::GrayImage;

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
        let mut row = vec![if self.black_bit { 0u8 } else { 0xFF }; self.row_bytes];
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
        self.data.extend_from_slice(&row);
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

/// How samples turn into colour (ISO 32000-1 §8.6).
#[derive(Debug, Clone, PartialEq)]
pub enum ColorModel {
    /// One component, 0 = black (DeviceGray, CalGray, ICCBased N=1).
    Gray,
    /// Three components (DeviceRGB, CalRGB, ICCBased N=3).
    Rgb,
    /// Four components, 1 = full ink (DeviceCMYK, ICCBased N=4).
    Cmyk,
    /// CIE L*a*b*; only L* (0–100) is used for grey.
    Lab,
    /// Separation or DeviceN with `n` colorants: tint 1 = full ink, grey from the mean tint.
    Tint(u8),
    /// A palette (§8.6.6.3): one index per pixel into `lookup`, whose entries are in `base`.
    Indexed {
        /// The palette's colour space.
        base: Box<ColorModel>,
        /// Highest valid index.
        hival: u8,
        /// `(hival + 1) × base components` bytes.
        lookup: Vec<u8>,
    },
}

impl ColorModel {
    /// Components per pixel.
    pub fn components(&self) -> u8 {
        match self {
            ColorModel::Gray | ColorModel::Indexed { .. } => 1,
            ColorModel::Rgb | ColorModel::Lab => 3,
            ColorModel::Cmyk => 4,
            ColorModel::Tint(n) => *n,
        }
    }

    /// Grey level (0 = black, 1 = white) of one pixel whose components are in `c` (each 0–1,
    /// after the Decode array; for Indexed the index itself).
    fn gray(&self, c: &[f32]) -> f32 {
        // Luma weights of ITU-R BT.601 (0.299, 0.587, 0.114).
        let luma = |r: f32, g: f32, b: f32| 0.299 * r + 0.587 * g + 0.114 * b;
        match self {
            ColorModel::Gray => c[0],
            ColorModel::Rgb => luma(c[0], c[1], c[2]),
            // Naive CMYK → RGB, R = (1 − C)(1 − K) (ISO 32000-1 §10.3.5 inverse of §10.3.4).
            ColorModel::Cmyk => {
                let k = 1.0 - c[3];
                luma((1.0 - c[0]) * k, (1.0 - c[1]) * k, (1.0 - c[2]) * k)
            }
            ColorModel::Lab => c[0] / 100.0,
            ColorModel::Tint(_) => 1.0 - c.iter().sum::<f32>() / c.len().max(1) as f32,
            ColorModel::Indexed {
                base,
                hival,
                lookup,
            } => {
                let i = (c[0].round().max(0.0) as usize).min(*hival as usize);
                let n = base.components() as usize;
                let entry: Vec<f32> = (0..n)
                    .map(|k| lookup.get(i * n + k).copied().unwrap_or(0) as f32 / 255.0)
                    .collect();
                let entry = if **base == ColorModel::Lab {
                    lab_from_bytes(&entry)
                } else {
                    entry
                };
                base.gray(&entry)
            }
        }
    }

    /// The default Decode array (§8.9.5.2, Table 90) for `bpc` bits.
    fn default_decode(&self, bpc: u8) -> Vec<f32> {
        match self {
            ColorModel::Indexed { .. } => vec![0.0, ((1u32 << bpc) - 1) as f32],
            ColorModel::Lab => vec![0.0, 100.0, -100.0, 100.0, -100.0, 100.0],
            m => [0.0, 1.0].repeat(m.components() as usize),
        }
    }
}

/// Palette bytes of a Lab base: 0–255 spread over L* 0–100 and a*, b* −100–100.
fn lab_from_bytes(e: &[f32]) -> Vec<f32> {
    vec![e[0] * 100.0, e[1] * 200.0 - 100.0, e[2] * 200.0 - 100.0]
}

/// Turn samples into 8-bit grey (0 = black ink, 255 = white paper).
///
/// `decode` is the image's `/Decode` array (§8.9.5.2) or `None` for the default. For an image mask
/// (§8.9.6.2) pass `mask = true`: a sample that decodes to 0 is painted (black), 1 is left white.
pub fn to_gray(
    s: &Samples,
    model: &ColorModel,
    decode: Option<&[f32]>,
    mask: bool,
) -> Result<GrayImage, String> {
    let n = if mask { 1 } else { model.components() as usize };
    if n != s.components as usize {
        return Err(format!(
            "image has {} components per pixel, its colour space needs {n}",
            s.components
        ));
    }
    let (w, h) = (s.width as usize, s.height as usize);
    let row_bytes = s.row_bytes();
    if s.data.len() < row_bytes * h {
        return Err(format!(
            "image data ends early: {} of {} bytes (file truncated?)",
            s.data.len(),
            row_bytes * h
        ));
    }
    let mask_model = ColorModel::Gray;
    let model = if mask { &mask_model } else { model };
    let default = model.default_decode(s.bpc);
    let decode = decode.filter(|d| d.len() >= 2 * n).unwrap_or(&default);
    if s.bpc == 8 && *model == ColorModel::Gray && decode[..2] == [0.0, 1.0] {
        return Ok(
            GrayImage::from_raw(s.width, s.height, s.data[..w * h].to_vec())
                .expect("size checked above"),
        );
    }
    let max = ((1u32 << s.bpc) - 1) as f32;
    let mut out = vec![0u8; w * h];
    let mut comps = vec![0f32; n];
    for y in 0..h {
        let row = &s.data[y * row_bytes..(y + 1) * row_bytes];
        for x in 0..w {
            for (k, c) in comps.iter_mut().enumerate() {
                let v = sample(row, x * n + k, s.bpc) as f32;
                *c = decode[2 * k] + v * (decode[2 * k + 1] - decode[2 * k]) / max;
            }
            let g = if mask { comps[0] } else { model.gray(&comps) };
            out[y * w + x] = (g.clamp(0.0, 1.0) * 255.0).round() as u8;
        }
    }
    Ok(GrayImage::from_raw(s.width, s.height, out).expect("size matches"))
}

/// Sample number `i` of a packed row.
fn sample(row: &[u8], i: usize, bpc: u8) -> u32 {
    match bpc {
        8 => row[i] as u32,
        16 => u16::from_be_bytes([row[2 * i], row[2 * i + 1]]) as u32,
        b => {
            let bit = i * b as usize;
            let byte = row[bit / 8] as u32;
            let shift = 8 - b as usize - bit % 8;
            (byte >> shift) & ((1 << b) - 1)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn one_bit(rows: &[&str]) -> Samples {
        let width = rows[0].len() as u32;
        let mut data = Vec::new();
        for r in rows {
            let mut bytes = vec![0u8; (width as usize).div_ceil(8)];
            for (x, c) in r.chars().enumerate() {
                if c == '1' {
                    bytes[x / 8] |= 0x80 >> (x % 8);
                }
            }
            data.extend(bytes);
        }
        Samples {
            width,
            height: rows.len() as u32,
            bpc: 1,
            components: 1,
            data,
        }
    }

    #[test]
    fn one_bit_gray_and_mask_follow_decode() {
        // DeviceGray 1 bit: 0 = black (ISO 32000-1 §8.9.5.2 default Decode [0 1]).
        let s = one_bit(&["0110", "1001"]);
        let g = to_gray(&s, &ColorModel::Gray, None, false).unwrap();
        assert_eq!(g.as_raw(), &[0, 255, 255, 0, 255, 0, 0, 255]);
        // Decode [1 0] inverts (§8.9.5.2).
        let g = to_gray(&s, &ColorModel::Gray, Some(&[1.0, 0.0]), false).unwrap();
        assert_eq!(g.as_raw(), &[255, 0, 0, 255, 0, 255, 255, 0]);
        // Image mask: sample 0 is painted with the fill colour (black) (§8.9.6.2).
        let g = to_gray(&s, &ColorModel::Gray, None, true).unwrap();
        assert_eq!(g.as_raw(), &[0, 255, 255, 0, 255, 0, 0, 255]);
    }

    #[test]
    fn indexed_two_bit_palette() {
        // 2-bit indices into an RGB palette: black, red, white, blue.
        let model = ColorModel::Indexed {
            base: Box::new(ColorModel::Rgb),
            hival: 3,
            lookup: vec![0, 0, 0, 255, 0, 0, 255, 255, 255, 0, 0, 255],
        };
        let s = Samples {
            width: 4,
            height: 1,
            bpc: 2,
            components: 1,
            data: vec![0b00_01_10_11],
        };
        let g = to_gray(&s, &model, None, false).unwrap();
        // BT.601 luma of red = 0.299 × 255 = 76.2; of blue = 0.114 × 255 = 29.1.
        assert_eq!(g.as_raw(), &[0, 76, 255, 29]);
    }

    #[test]
    fn cmyk_inverted_by_decode() {
        // Adobe-style inverted CMYK sample (255 = no ink) with Decode [1 0 1 0 1 0 1 0] is white.
        let s = Samples {
            width: 2,
            height: 1,
            bpc: 8,
            components: 4,
            data: vec![255, 255, 255, 255, 255, 255, 255, 0],
        };
        let inv = [1.0, 0.0, 1.0, 0.0, 1.0, 0.0, 1.0, 0.0];
        let g = to_gray(&s, &ColorModel::Cmyk, Some(&inv), false).unwrap();
        assert_eq!(g.as_raw(), &[255, 0]);
    }

    #[test]
    fn sixteen_bit_gray() {
        let s = Samples {
            width: 2,
            height: 1,
            bpc: 16,
            components: 1,
            data: vec![0xFF, 0xFF, 0x80, 0x00],
        };
        let g = to_gray(&s, &ColorModel::Gray, None, false).unwrap();
        assert_eq!(g.as_raw(), &[255, 128]);
    }

    #[test]
    fn short_data_is_an_error_not_a_panic() {
        let s = Samples {
            width: 100,
            height: 100,
            bpc: 8,
            components: 1,
            data: vec![0; 10],
        };
        assert!(to_gray(&s, &ColorModel::Gray, None, false)
            .unwrap_err()
            .contains("ends early"));
    }
}
