//! What image headers say besides pixels: a JPEG's size, components and Adobe marker, and the
//! resolution stored by PNG (`pHYs`), JPEG (JFIF APP0, EXIF APP1) and JP2 (`res ` box) files.
//! Plain byte walks over public layouts; the pixel decoders live in the parent module.

use std::io::Cursor;

/// Resolutions outside this range are treated as missing (the same range `--dpi` accepts).
const DPI_RANGE: std::ops::RangeInclusive<f32> = 10.0..=4800.0;

/// A resolution pair if both values are plausible.
pub(super) fn plausible(x: f32, y: f32) -> Option<(f32, f32)> {
    (DPI_RANGE.contains(&x) && DPI_RANGE.contains(&y)).then_some((x, y))
}

/// PNG `pHYs` (PNG spec §11.3.5.3): pixels per metre when the unit is 1.
pub(super) fn png_dpi(data: &[u8]) -> Option<(f32, f32)> {
    let reader = png::Decoder::new(Cursor::new(data)).read_info().ok()?;
    let d = reader.info().pixel_dims?;
    // 1 inch = 0.0254 m exactly (international yard and pound, 1959).
    (d.unit == png::Unit::Meter)
        .then(|| plausible(d.xppu as f32 * 0.0254, d.yppu as f32 * 0.0254))
        .flatten()
}

/// What the markers before a JPEG's first scan say.
#[derive(Debug, Default)]
pub(super) struct JpegInfo {
    pub(super) width: u16,
    pub(super) height: u16,
    pub(super) components: u8,
    /// An Adobe APP14 segment is present (its CMYK samples are stored inverted).
    pub(super) adobe: bool,
    pub(super) dpi: Option<(f32, f32)>,
}

/// Walk the marker segments up to the frame header (ITU-T T.81 §B.1.1, §B.2.2): JFIF APP0
/// density (JFIF 1.02: units 1 = per inch, 2 = per cm), EXIF APP1 resolution (CIPA DC-008
/// Exif 2.3, IFD0 tags 282/283/296), Adobe APP14 (Adobe TN #5116), and the SOFn size.
pub(super) fn jpeg_info(data: &[u8]) -> Result<JpegInfo, String> {
    let short = || "JPEG header ends early (file truncated?)".to_string();
    let mut info = JpegInfo::default();
    let (mut jfif, mut exif) = (None, None);
    let mut i = 2;
    loop {
        let (&ff, &m) = (
            data.get(i).ok_or_else(short)?,
            data.get(i + 1).ok_or_else(short)?,
        );
        if ff != 0xFF {
            return Err(format!(
                "JPEG marker expected at byte {i}; the file is damaged"
            ));
        }
        if m == 0xFF || m == 0x01 || (0xD0..=0xD7).contains(&m) {
            i += if m == 0xFF { 1 } else { 2 }; // fill byte, or a marker without a length
            continue;
        }
        let len = u16::from_be_bytes([
            *data.get(i + 2).ok_or_else(short)?,
            *data.get(i + 3).ok_or_else(short)?,
        ]) as usize;
        let seg = data.get(i + 4..i + 2 + len.max(2)).ok_or_else(short)?;
        match m {
            0xE0 if seg.len() >= 12 && seg.starts_with(b"JFIF\0") => jfif = jfif_dpi(seg),
            0xE1 if seg.starts_with(b"Exif\0\0") => exif = exif_dpi(&seg[6..]),
            0xEE if seg.starts_with(b"Adobe") => info.adobe = true,
            0xC0..=0xCF if !matches!(m, 0xC4 | 0xC8 | 0xCC) => {
                let sof = seg.get(..6).ok_or_else(short)?;
                info.height = u16::from_be_bytes([sof[1], sof[2]]);
                info.width = u16::from_be_bytes([sof[3], sof[4]]);
                info.components = sof[5];
                info.dpi = jfif.or(exif);
                // Decoders fill missing scan data with grey; a JPEG without its EOI marker
                // (T.81 §B.2.1) after the frame header is treated as cut short.
                if !data[i..].windows(2).any(|w| w == [0xFF, 0xD9]) {
                    return Err(
                        "JPEG data ends before its end-of-image marker (file truncated?)".into(),
                    );
                }
                return Ok(info);
            }
            0xDA | 0xD9 => return Err("JPEG has no frame header before its data".into()),
            _ => {}
        }
        i += 2 + len;
    }
}

fn jfif_dpi(seg: &[u8]) -> Option<(f32, f32)> {
    let x = u16::from_be_bytes([seg[8], seg[9]]) as f32;
    let y = u16::from_be_bytes([seg[10], seg[11]]) as f32;
    match seg[7] {
        1 => plausible(x, y),
        2 => plausible(x * 2.54, y * 2.54),
        _ => None, // 0: aspect ratio only
    }
}

/// Resolution from an EXIF block (a little TIFF structure): IFD0 XResolution, YResolution,
/// ResolutionUnit (default inch).
fn exif_dpi(t: &[u8]) -> Option<(f32, f32)> {
    let le = match t.get(..4)? {
        b"II*\0" => true,
        b"MM\0*" => false,
        _ => return None,
    };
    let u16_at = |o: usize| {
        t.get(o..o + 2).map(|b| {
            if le {
                u16::from_le_bytes([b[0], b[1]])
            } else {
                u16::from_be_bytes([b[0], b[1]])
            }
        })
    };
    let u32_at = |o: usize| {
        t.get(o..o + 4).map(|b| {
            let a = [b[0], b[1], b[2], b[3]];
            if le {
                u32::from_le_bytes(a)
            } else {
                u32::from_be_bytes(a)
            }
        })
    };
    let ifd = u32_at(4)? as usize;
    let (mut x, mut y, mut unit) = (None, None, 2);
    for k in 0..u16_at(ifd)? as usize {
        let e = ifd + 2 + 12 * k;
        let rational = || {
            let at = u32_at(e + 8)? as usize;
            let (n, d) = (u32_at(at)?, u32_at(at + 4)?);
            (d != 0).then(|| n as f32 / d as f32)
        };
        match u16_at(e)? {
            282 => x = rational(),
            283 => y = rational(),
            296 => unit = u16_at(e + 8)?,
            _ => {}
        }
    }
    let (x, y) = (x?, y.or(x)?);
    match unit {
        2 => plausible(x, y),
        3 => plausible(x * 2.54, y * 2.54),
        _ => None,
    }
}

/// JP2 capture (`resc`) or else display (`resd`) resolution inside `jp2h`/`res ` (ISO/IEC
/// 15444-1 §I.5.3.7): `VR = VRN/VRD · 10^VRE` grid points per metre, vertical first.
pub(super) fn jp2_dpi(data: &[u8]) -> Option<(f32, f32)> {
    let res = find_box(find_box(data, b"jp2h")?, b"res ")?;
    let b = find_box(res, b"resc").or_else(|| find_box(res, b"resd"))?;
    let b = b.get(..10)?;
    let ratio = |n: usize, d: usize, e: usize| {
        let num = u16::from_be_bytes([b[n], b[n + 1]]) as f32;
        let den = u16::from_be_bytes([b[d], b[d + 1]]) as f32;
        (den > 0.0).then(|| num / den * 10f32.powi(b[e] as i8 as i32) * 0.0254)
    };
    let (v, h) = (ratio(0, 2, 8)?, ratio(4, 6, 9)?);
    plausible(h, v)
}

/// The contents of the first box of type `kind` among the boxes in `data` (ISO/IEC 15444-1 §I.4).
fn find_box<'a>(data: &'a [u8], kind: &[u8; 4]) -> Option<&'a [u8]> {
    let mut i = 0usize;
    while i + 8 <= data.len() {
        let len = u32::from_be_bytes(data[i..i + 4].try_into().ok()?) as usize;
        let (head, len) = match len {
            0 => (8, data.len() - i), // to the end of the file
            1 => (
                16,
                u64::from_be_bytes(data.get(i + 8..i + 16)?.try_into().ok()?) as usize,
            ),
            n => (8, n),
        };
        if len < head || i.checked_add(len)? > data.len() {
            return None;
        }
        if &data[i + 4..i + 8] == kind {
            return Some(&data[i + head..i + len]);
        }
        i += len;
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exif_resolution_in_both_byte_orders() {
        // A minimal EXIF IFD0 (CIPA DC-008 Exif 2.3 §4.6.4, TIFF 6.0 layout): XResolution and
        // YResolution as RATIONALs at offset 50, ResolutionUnit 3 (centimetre).
        fn block(le: bool) -> Vec<u8> {
            let w16 = |v: u16| if le { v.to_le_bytes() } else { v.to_be_bytes() };
            let w32 = |v: u32| if le { v.to_le_bytes() } else { v.to_be_bytes() };
            let mut t = if le {
                b"II*\0".to_vec()
            } else {
                b"MM\0*".to_vec()
            };
            t.extend(w32(8));
            t.extend(w16(3));
            for (tag, typ, value) in [(282u16, 5u16, 50u32), (283, 5, 58), (296, 3, 0)] {
                t.extend(w16(tag));
                t.extend(w16(typ));
                t.extend(w32(1));
                if tag == 296 {
                    t.extend(w16(3));
                    t.extend([0, 0]);
                } else {
                    t.extend(w32(value));
                }
            }
            t.extend(w32(0));
            t.extend(w32(236_220)); // 118.11 px/cm × 2000 = 300 dpi
            t.extend(w32(2000));
            t.extend(w32(78_740)); // 78.74 px/cm = 200 dpi
            t.extend(w32(1000));
            t
        }
        for le in [true, false] {
            let (x, y) = exif_dpi(&block(le)).expect("resolution found");
            assert!(
                (x - 300.0).abs() < 0.01 && (y - 200.0).abs() < 0.01,
                "{x} {y}"
            );
        }
        assert_eq!(exif_dpi(b"II*\0\xff\xff\xff\xff"), None); // IFD offset past the end
    }

    #[test]
    fn jfif_dots_per_centimetre() {
        // JFIF 1.02 APP0 body: "JFIF\0", version 1.2, units 2 (dots/cm), 118 × 59, no thumbnail.
        let seg = [b'J', b'F', b'I', b'F', 0, 1, 2, 2, 0, 118, 0, 59, 0, 0];
        let (x, y) = jfif_dpi(&seg).unwrap();
        assert!(
            (x - 299.72).abs() < 0.01 && (y - 149.86).abs() < 0.01,
            "{x} {y}"
        );
        let aspect_only = [b'J', b'F', b'I', b'F', 0, 1, 2, 0, 0, 1, 0, 1, 0, 0];
        assert_eq!(jfif_dpi(&aspect_only), None);
    }

    #[test]
    fn jp2_capture_resolution_box() {
        // ISO/IEC 15444-1 §I.5.3.7.1: resc = VRcN VRcD HRcN HRcD (u16) VRcE HRcE (i8), per metre.
        // 11811 / 1 × 10^0 px/m = 299.9994 dpi vertically; 7874 / 1 = 199.9996 dpi horizontally.
        let mut resc = vec![0, 0, 0, 18, b'r', b'e', b's', b'c'];
        resc.extend([0x2E, 0x23, 0, 1, 0x1E, 0xC2, 0, 1, 0, 0]);
        let mut res = vec![0, 0, 0, 8 + resc.len() as u8, b'r', b'e', b's', b' '];
        res.extend(&resc);
        let mut jp2h = vec![0, 0, 0, 8 + res.len() as u8, b'j', b'p', b'2', b'h'];
        jp2h.extend(&res);
        let mut file = vec![0, 0, 0, 12, b'j', b'P', b' ', b' ', 13, 10, 0x87, 10];
        file.extend(&jp2h);
        let (x, y) = jp2_dpi(&file).unwrap();
        assert!(
            (x - 199.9996).abs() < 0.01 && (y - 299.9994).abs() < 0.01,
            "{x} {y}"
        );
        assert_eq!(jp2_dpi(&file[..file.len() - 3]), None); // box runs past the end
    }
}
