//! Samples of any PDF colour space turned into 8-bit grey (0 = black ink, 255 = white paper):
//! Decode arrays, image masks, palettes, and the grey of RGB, CMYK, Lab and tint spaces.

use image::GrayImage;

use super::codecs::Samples;

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
    let max = ((1u32 << s.bpc) - 1) as f32;
    let level =
        |k: usize, v: u32| decode[2 * k] + v as f32 * (decode[2 * k + 1] - decode[2 * k]) / max;
    let to_u8 = |g: f32| (g.clamp(0.0, 1.0) * 255.0).round() as u8;
    let mut out = vec![0u8; w * h];
    if n == 1 && s.bpc <= 8 {
        // One component of at most 8 bits: every possible sample value looked up once.
        let lut: Vec<u8> = (0..=max as u32)
            .map(|v| {
                to_u8(if mask {
                    level(0, v)
                } else {
                    model.gray(&[level(0, v)])
                })
            })
            .collect();
        if s.bpc == 8 && lut.iter().enumerate().all(|(i, &v)| i == v as usize) {
            out.copy_from_slice(&s.data[..w * h]); // rows of 8-bit samples have no padding
            return Ok(GrayImage::from_raw(s.width, s.height, out).expect("size matches"));
        }
        for (y, line) in out.chunks_exact_mut(w).enumerate() {
            let row = &s.data[y * row_bytes..(y + 1) * row_bytes];
            for (x, px) in line.iter_mut().enumerate() {
                *px = lut[sample(row, x, s.bpc) as usize];
            }
        }
        return Ok(GrayImage::from_raw(s.width, s.height, out).expect("size matches"));
    }
    let mut comps = vec![0f32; n];
    for (y, line) in out.chunks_exact_mut(w).enumerate() {
        let row = &s.data[y * row_bytes..(y + 1) * row_bytes];
        for (x, px) in line.iter_mut().enumerate() {
            for (k, c) in comps.iter_mut().enumerate() {
                *c = level(k, sample(row, x * n + k, s.bpc));
            }
            *px = to_u8(model.gray(&comps));
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
