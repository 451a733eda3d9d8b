//! The image XObjects of PDF inputs: their dictionaries read (size, colour space, Decode array,
//! image mask, filter chain and its parameters) and their data decoded to grey pixels.
//!
//! General-purpose filters are undone by lopdf; image codecs by `codecs`.

use image::GrayImage;
use lopdf::{Dictionary, Document, Object, Stream};

use super::codecs::{self, FaxParams, Samples};
use super::gray::{to_gray, ColorModel};
use super::pdf::deref;
use crate::limits::Limits;

/// Why an image could not be decoded, by who must act.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ImageError {
    /// The data or dictionary is broken.
    Damaged(String),
    /// A valid image of a kind mistara does not decode itself (the page can still be rendered).
    Unsupported(String),
    /// The image is larger than the limits allow.
    Limit(String),
}

impl From<String> for ImageError {
    fn from(why: String) -> Self {
        ImageError::Damaged(why)
    }
}

impl From<&str> for ImageError {
    fn from(why: &str) -> Self {
        ImageError::Damaged(why.to_string())
    }
}

fn numbers(doc: &Document, obj: Option<&Object>) -> Option<Vec<f32>> {
    let a = deref(doc, obj?).as_array().ok()?;
    Some(
        a.iter()
            .filter_map(|v| deref(doc, v).as_float().ok())
            .collect(),
    )
}

/// What an image dictionary says (ISO 32000-1 §8.9.5, Table 89).
struct ImageDict<'a> {
    width: u32,
    height: u32,
    bpc: u8,
    mask: bool,
    decode: Option<Vec<f32>>,
    /// The filter chain in decoding order, with each filter's parameters.
    filters: Vec<(Vec<u8>, Option<&'a Dictionary>)>,
}

impl<'a> ImageDict<'a> {
    fn read(doc: &'a Document, d: &'a Dictionary) -> Result<ImageDict<'a>, String> {
        let int = |k: &[u8]| {
            d.get(k)
                .ok()
                .map(|o| deref(doc, o))
                .and_then(|o| o.as_i64().ok())
        };
        let (w, h) = (int(b"Width").unwrap_or(0), int(b"Height").unwrap_or(0));
        if !(1..=u32::MAX as i64).contains(&w) || !(1..=u32::MAX as i64).contains(&h) {
            return Err(format!("image declares an impossible size {w}×{h}"));
        }
        let mask = d
            .get(b"ImageMask")
            .ok()
            .and_then(|o| o.as_bool().ok())
            .unwrap_or(false);
        let names: Vec<Vec<u8>> = match d.get(b"Filter").map(|f| deref(doc, f)) {
            Ok(Object::Name(n)) => vec![n.clone()],
            Ok(Object::Array(a)) => a
                .iter()
                .filter_map(|f| deref(doc, f).as_name().ok().map(<[u8]>::to_vec))
                .collect(),
            _ => Vec::new(),
        };
        let parms: Vec<Option<&Dictionary>> = match d.get(b"DecodeParms").map(|p| deref(doc, p)) {
            Ok(Object::Dictionary(p)) => vec![Some(p)],
            Ok(Object::Array(a)) => a.iter().map(|p| deref(doc, p).as_dict().ok()).collect(),
            _ => Vec::new(),
        };
        let filters = names
            .into_iter()
            .enumerate()
            .map(|(i, n)| (n, parms.get(i).copied().flatten()))
            .collect();
        let bpc = if mask {
            1
        } else {
            int(b"BitsPerComponent").unwrap_or(8).clamp(1, 16) as u8
        };
        let decode = numbers(doc, d.get(b"Decode").ok());
        Ok(ImageDict {
            width: w as u32,
            height: h as u32,
            bpc,
            mask,
            decode,
            filters,
        })
    }

    /// The image codec ending the chain, if any.
    fn codec(&self) -> Option<&[u8]> {
        self.filters
            .last()
            .map(|(n, _)| n.as_slice())
            .filter(|f| is_image_codec(f))
    }
}

/// Decode an image XObject to grey pixels at its own geometry.
pub fn decode_image(
    doc: &Document,
    stream: &Stream,
    limits: &Limits,
) -> Result<GrayImage, ImageError> {
    let dict = ImageDict::read(doc, &stream.dict)?;
    limits
        .check_size(dict.width as u64, dict.height as u64)
        .map_err(ImageError::Limit)?;
    let jpx = dict.codec() == Some(b"JPXDecode".as_slice());
    let model = match stream.dict.get(b"ColorSpace") {
        _ if dict.mask => ColorModel::Gray,
        // JPX data may carry its own colour space (§7.4.9, §8.9.5): settled after decoding.
        Err(_) if jpx => ColorModel::Gray,
        cs => color_model(doc, cs.ok())?,
    };
    let samples = decode_samples(doc, stream, &dict, &model, limits)?;
    let model = if dict.mask {
        model
    } else {
        settle_model(model, samples.components)?
    };
    // JPX ignores /Decode except for image masks (§8.9.5.2, Table 89).
    let decode = if jpx && !dict.mask {
        None
    } else {
        dict.decode.as_deref()
    };
    Ok(to_gray(&samples, &model, decode, dict.mask)?)
}

/// Undo the filter chain: general filters with lopdf, the final image codec with `codecs`.
fn decode_samples(
    doc: &Document,
    stream: &Stream,
    dict: &ImageDict,
    model: &ColorModel,
    limits: &Limits,
) -> Result<Samples, ImageError> {
    let codec = dict.codec();
    let generic = dict.filters.len() - codec.is_some() as usize;
    let bytes = generic_decode(stream, &dict.filters[..generic], limits)?;
    let parms = dict.filters.last().and_then(|(_, p)| *p);
    Ok(match codec {
        Some(b"DCTDecode" | b"DCT") => {
            let ct = parms
                .and_then(|p| p.get(b"ColorTransform").ok())
                .and_then(|o| o.as_i64().ok());
            codecs::decode_dct(&bytes, ct, limits)?
        }
        Some(b"CCITTFaxDecode" | b"CCF") => {
            codecs::decode_ccitt(&bytes, &fax_params(doc, parms), dict.height, limits)?
        }
        Some(b"JBIG2Decode") => {
            let globals = parms
                .and_then(|p| p.get(b"JBIG2Globals").ok())
                .and_then(|g| deref(doc, g).as_stream().ok())
                .map(|g| {
                    g.decompressed_content_with_limit(limits.max_alloc_bytes as usize)
                        .unwrap_or_else(|_| g.content.clone())
                });
            codecs::decode_jbig2(&bytes, globals.as_deref(), limits)?
        }
        Some(_) => codecs::decode_jpx(&bytes, limits)?,
        None => Samples {
            width: dict.width,
            height: dict.height,
            bpc: dict.bpc,
            components: if dict.mask { 1 } else { model.components() },
            data: bytes,
        },
    })
}

/// JPEG and JPEG 2000 data say themselves how many components they hold; trust them over a
/// colour space that disagrees (and JPX may omit /ColorSpace, §7.4.9).
fn settle_model(model: ColorModel, components: u8) -> Result<ColorModel, String> {
    if components == model.components() {
        return Ok(model);
    }
    match components {
        1 => Ok(ColorModel::Gray),
        3 => Ok(ColorModel::Rgb),
        4 => Ok(ColorModel::Cmyk),
        n => Err(format!(
            "image has {n} components per pixel, which mistara cannot turn into grey"
        )),
    }
}

fn is_image_codec(f: &[u8]) -> bool {
    matches!(
        f,
        b"DCTDecode" | b"DCT" | b"CCITTFaxDecode" | b"CCF" | b"JBIG2Decode" | b"JPXDecode"
    )
}

/// Undo the general-purpose filters (Flate with PNG/TIFF predictors, LZW, ASCII85, …) with lopdf.
fn generic_decode(
    stream: &Stream,
    filters: &[(Vec<u8>, Option<&Dictionary>)],
    limits: &Limits,
) -> Result<Vec<u8>, ImageError> {
    if filters.is_empty() {
        return Ok(stream.content.clone());
    }
    if let Some((f, _)) = filters.iter().find(|(f, _)| is_image_codec(f)) {
        return Err(format!(
            "image codec {} is not the last filter",
            String::from_utf8_lossy(f)
        )
        .into());
    }
    let mut dict = Dictionary::new();
    dict.set(
        "Filter",
        Object::Array(
            filters
                .iter()
                .map(|(f, _)| Object::Name(f.clone()))
                .collect(),
        ),
    );
    let parms = filters
        .iter()
        .map(|(_, p)| p.map_or(Object::Null, |p| Object::Dictionary(p.clone())));
    dict.set("DecodeParms", Object::Array(parms.collect()));
    let tmp = Stream {
        content: stream.content.clone(),
        ..Stream::new(dict, Vec::new())
    };
    tmp.decompressed_content_with_limit(limits.max_alloc_bytes as usize)
        .map_err(|e| match e {
            lopdf::Error::Unimplemented(_) => {
                let names: Vec<_> = filters
                    .iter()
                    .map(|(f, _)| String::from_utf8_lossy(f))
                    .collect();
                ImageError::Unsupported(format!("image filter chain {}", names.join(" ")))
            }
            e => format!("image data cannot be decompressed ({e}); file damaged or truncated?")
                .into(),
        })
}

fn fax_params(doc: &Document, parms: Option<&Dictionary>) -> FaxParams {
    let mut p = FaxParams::default();
    let Some(d) = parms else { return p };
    let get = |k: &[u8]| d.get(k).ok().map(|o| deref(doc, o));
    let int = |k: &[u8]| get(k).and_then(|o| o.as_i64().ok());
    let flag = |k: &[u8], dflt: bool| get(k).and_then(|o| o.as_bool().ok()).unwrap_or(dflt);
    p.k = int(b"K").unwrap_or(0);
    p.columns = int(b"Columns").filter(|c| *c > 0).unwrap_or(1728) as u32;
    p.rows = int(b"Rows").filter(|r| *r > 0).unwrap_or(0) as u32;
    p.byte_align = flag(b"EncodedByteAlign", false);
    p.end_of_line = flag(b"EndOfLine", false);
    p.end_of_block = flag(b"EndOfBlock", true);
    p.black_is_1 = flag(b"BlackIs1", false);
    p
}

/// Resolve an image's colour space (ISO 32000-1 §8.6).
pub fn color_model(doc: &Document, obj: Option<&Object>) -> Result<ColorModel, ImageError> {
    let Some(obj) = obj.map(|o| deref(doc, o)) else {
        return Err("image has no colour space".into());
    };
    let device = |n: &[u8]| match n {
        b"DeviceGray" | b"G" | b"CalGray" => Some(ColorModel::Gray),
        b"DeviceRGB" | b"RGB" | b"CalRGB" => Some(ColorModel::Rgb),
        b"DeviceCMYK" | b"CMYK" => Some(ColorModel::Cmyk),
        b"Lab" => Some(ColorModel::Lab),
        _ => None,
    };
    let name_of = |o: &Object| String::from_utf8_lossy(o.as_name().unwrap_or(b"?")).into_owned();
    match obj {
        Object::Name(n) => device(n)
            .ok_or_else(|| ImageError::Unsupported(format!("image colour space {}", name_of(obj)))),
        Object::Array(a) if !a.is_empty() => {
            let family = deref(doc, &a[0]).as_name().unwrap_or_default();
            if let Some(m) = device(family) {
                return Ok(m);
            }
            match family {
                b"ICCBased" => {
                    let s = a
                        .get(1)
                        .map(|o| deref(doc, o))
                        .and_then(|o| o.as_stream().ok())
                        .ok_or("ICCBased colour space without a profile")?;
                    match s.dict.get(b"N").and_then(Object::as_i64) {
                        Ok(1) => Ok(ColorModel::Gray),
                        Ok(3) => Ok(ColorModel::Rgb),
                        Ok(4) => Ok(ColorModel::Cmyk),
                        _ => color_model(doc, s.dict.get(b"Alternate").ok()),
                    }
                }
                b"Indexed" | b"I" => indexed(doc, a),
                b"Separation" => Ok(ColorModel::Tint(1)),
                b"DeviceN" => {
                    let n = a
                        .get(1)
                        .map(|o| deref(doc, o))
                        .and_then(|o| o.as_array().ok())
                        .map_or(1, Vec::len);
                    Ok(ColorModel::Tint(n.clamp(1, 32) as u8))
                }
                _ => Err(ImageError::Unsupported(format!(
                    "image colour space {}",
                    String::from_utf8_lossy(family)
                ))),
            }
        }
        _ => Err("image colour space is damaged".into()),
    }
}

fn indexed(doc: &Document, a: &[Object]) -> Result<ColorModel, ImageError> {
    let base = color_model(doc, a.get(1))?;
    let hival = a
        .get(2)
        .map(|o| deref(doc, o))
        .and_then(|o| o.as_i64().ok())
        .unwrap_or(-1);
    if !(0..=255).contains(&hival) {
        return Err("Indexed colour space with a bad highest index".into());
    }
    let lookup = match a.get(3).map(|o| deref(doc, o)) {
        Some(Object::String(s, _)) => s.clone(),
        Some(Object::Stream(s)) => s
            .decompressed_content_with_limit(1 << 20)
            .unwrap_or_else(|_| s.content.clone()),
        _ => return Err("Indexed colour space without a palette".into()),
    };
    Ok(ColorModel::Indexed {
        base: Box::new(base),
        hival: hival as u8,
        lookup,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use lopdf::Stream;

    #[test]
    fn icc_based_uses_n_and_indexed_resolves_its_base() {
        let mut doc = Document::with_version("1.7");
        let mut icc = Dictionary::new();
        icc.set("N", 3);
        let icc = doc.add_object(Stream::new(icc, vec![0; 4]));
        let icc_space = Object::Array(vec![
            Object::Name(b"ICCBased".to_vec()),
            Object::Reference(icc),
        ]);
        assert_eq!(color_model(&doc, Some(&icc_space)), Ok(ColorModel::Rgb)); // §8.6.5.5: N = 3
        let indexed = Object::Array(vec![
            Object::Name(b"Indexed".to_vec()),
            icc_space,
            Object::Integer(1),
            Object::string_literal(vec![0u8, 0, 0, 255, 255, 255]),
        ]);
        let model = color_model(&doc, Some(&indexed)).unwrap();
        assert_eq!(model.components(), 1);
        assert!(matches!(model, ColorModel::Indexed { hival: 1, .. }));
        let pattern = Object::Name(b"Pattern".to_vec());
        assert!(matches!(
            color_model(&doc, Some(&pattern)),
            Err(ImageError::Unsupported(_))
        ));
    }
}
