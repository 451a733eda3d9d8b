//! PDF inputs (lopdf): open the document, decide page by page whether it is a scan — one image
//! XObject covering the page — and if so decode that image at its own pixel geometry.
//!
//! Pages that are not a single scan are left to `raster` (hayro). Stream codecs and the colour →
//! grey conversion live in `codecs`; the pixel ↔ page maths in `layout::geometry`.

use std::path::{Path, PathBuf};

use image::GrayImage;
use lopdf::content::Content;
use lopdf::{Dictionary, Document, Object, ObjectId, Stream};

use super::codecs::{self, ColorModel, FaxParams, Samples};
use super::{raster, SourcePage};
use crate::error::{Error, Result};
use crate::layout::geometry::{Affine, Placement};
use crate::limits::Limits;
use crate::page::PageImage;

/// Share of the page box an image must cover to count as the page's scan: common practice, no source.
const MIN_COVER: f32 = 0.8;
/// Deepest nesting of Form XObjects followed (guards against cycles).
const MAX_FORM_DEPTH: usize = 8;
/// Most bytes a page's content streams may inflate to.
const MAX_CONTENT_BYTES: usize = 64 << 20;

/// An opened PDF input.
#[derive(Debug)]
pub struct PdfDocument {
    /// Where it came from.
    pub path: PathBuf,
    /// The file's bytes, as read.
    pub data: Vec<u8>,
    /// The parsed document (decrypted when it opened with the empty user password).
    pub doc: Document,
    /// Page objects in page order.
    pub pages: Vec<ObjectId>,
    /// Resolution for rasterizing pages that are not a single scan.
    pub dpi: f32,
    /// Size limits.
    pub limits: Limits,
}

/// One image painted on a page, with the transform that maps its unit square to page space.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlacedImage {
    /// The image XObject.
    pub id: ObjectId,
    /// The CTM at the `Do` (ISO 32000-1 §8.9.4: the image fills the unit square of this space).
    pub ctm: Affine,
}

/// What a page's content draws.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PageSurvey {
    /// Image XObjects painted, in drawing order.
    pub images: Vec<PlacedImage>,
    /// Anything else visible: paths, shadings, inline images, visible text.
    pub other_marks: bool,
    /// The page shows text (visible or invisible): it may already be searchable.
    pub has_text: bool,
    /// `q` operators the page content leaves without their `Q`.
    pub open_saves: usize,
}

/// Open a PDF: parse it, decrypt with the empty user password when that is allowed, list its pages.
pub fn open(path: &Path, data: Vec<u8>, dpi: f32, limits: Limits) -> Result<PdfDocument> {
    let options = lopdf::LoadOptions {
        max_decompressed_size: Some(limits.max_alloc_bytes as usize),
        ..Default::default()
    };
    let doc = Document::load_mem_with_options(&data, options).map_err(|e| match e {
        lopdf::Error::InvalidPassword => {
            Error::input(path, "encrypted with a password; mistara cannot open it")
        }
        e => Error::input(
            path,
            format!("not a readable PDF ({e}); is the file complete?"),
        ),
    })?;
    match doc.trailer.get(b"Encrypt") {
        // lopdf 0.47 authenticates only an /Encrypt dictionary that is an indirect object.
        Ok(Object::Dictionary(_)) => {
            return Err(Error::Unsupported {
                path: path.to_path_buf(),
                page: None,
                why: "encryption whose dictionary sits inside the trailer; save the PDF without encryption first".into(),
            })
        }
        Ok(_) if doc.encryption_state.is_none() => {
            return Err(Error::input(path, "encrypted with a password; mistara cannot open it"))
        }
        _ => {}
    }
    let pages: Vec<ObjectId> = doc.page_iter().collect();
    if pages.is_empty() {
        return Err(Error::input(
            path,
            "the PDF has no pages (damaged page tree?)",
        ));
    }
    Ok(PdfDocument {
        path: path.to_path_buf(),
        data,
        doc,
        pages,
        dpi,
        limits,
    })
}

impl PdfDocument {
    /// Number of pages.
    pub fn page_count(&self) -> usize {
        self.pages.len()
    }

    /// Decode page `number` (1-based): the scan image if the page is one, else a rendering.
    pub fn page(&self, number: usize) -> Result<SourcePage> {
        self.page_inner(number).map_err(|e| e.on_page(number))
    }

    fn page_inner(&self, number: usize) -> Result<SourcePage> {
        let id = *self
            .pages
            .get(number - 1)
            .ok_or_else(|| Error::Usage(format!("page {number} does not exist")))?;
        let media_box = self.media_box(id);
        let survey = survey_page(&self.doc, id).map_err(|why| Error::input(&self.path, why))?;
        if let Some(img) = scan_image(&survey, &media_box) {
            let stream = self
                .doc
                .get_object(img.id)
                .and_then(Object::as_stream)
                .map_err(|e| Error::input(&self.path, e.to_string()))?;
            let gray = decode_image(&self.doc, stream, &self.limits)
                .map_err(|why| Error::input(&self.path, why))?;
            let image = upright(gray, &img.ctm, self.rotation(id), media_box)
                .map_err(|why| Error::input(&self.path, why))?;
            return Ok(SourcePage {
                number,
                image,
                embed: None,
            });
        }
        let image =
            raster::render_page(&self.data, number - 1, self.dpi, &self.limits).map_err(|why| {
                match why {
                    raster::RenderError::Limit(why) => Error::Limit {
                        path: self.path.clone(),
                        page: None,
                        why,
                    },
                    raster::RenderError::Broken(why) => Error::input(&self.path, why),
                }
            })?;
        Ok(SourcePage {
            number,
            image: PageImage {
                placement: Placement {
                    media_box,
                    ..image.placement
                },
                ..image
            },
            embed: None,
        })
    }

    /// The page's MediaBox, inherited from the page tree when the page has none (§7.7.3.4);
    /// US Letter when nobody says (common practice of readers, no source).
    pub fn media_box(&self, page: ObjectId) -> [f32; 4] {
        let numbers = inherited(&self.doc, page, b"MediaBox")
            .and_then(|o| o.as_array().ok())
            .map(|a| {
                a.iter()
                    .filter_map(|v| deref(&self.doc, v).as_float().ok())
                    .collect::<Vec<f32>>()
            });
        match numbers.as_deref() {
            Some([a, b, c, d]) => [a.min(*c), b.min(*d), a.max(*c), b.max(*d)],
            _ => [0.0, 0.0, 612.0, 792.0],
        }
    }

    /// The page's /Rotate in degrees clockwise, normalized to 0, 90, 180 or 270 (§7.7.3.3).
    pub fn rotation(&self, page: ObjectId) -> i64 {
        let r = inherited(&self.doc, page, b"Rotate")
            .and_then(|o| o.as_i64().ok())
            .unwrap_or(0);
        (r.rem_euclid(360) / 90) * 90
    }
}

/// Follow references (a bounded number of times).
pub fn deref<'a>(doc: &'a Document, mut obj: &'a Object) -> &'a Object {
    for _ in 0..32 {
        match obj {
            Object::Reference(id) => match doc.get_object(*id) {
                Ok(o) => obj = o,
                Err(_) => return &Object::Null,
            },
            _ => return obj,
        }
    }
    &Object::Null
}

/// An inheritable page attribute: the page's own or its nearest ancestor's (§7.7.3.4).
pub fn inherited<'a>(doc: &'a Document, page: ObjectId, key: &[u8]) -> Option<&'a Object> {
    let mut node = doc.get_dictionary(page).ok()?;
    for _ in 0..64 {
        if let Ok(v) = node.get(key) {
            return Some(deref(doc, v));
        }
        node = node
            .get(b"Parent")
            .ok()
            .and_then(|p| p.as_reference().ok())
            .and_then(|id| doc.get_dictionary(id).ok())?;
    }
    None
}

/// The single image that makes the page a scan: the only thing drawn, covering most of the page.
pub fn scan_image(s: &PageSurvey, page_box: &[f32; 4]) -> Option<PlacedImage> {
    if s.images.len() != 1 || s.other_marks {
        return None;
    }
    let img = s.images[0];
    let corners =
        [(0.0, 0.0), (1.0, 0.0), (0.0, 1.0), (1.0, 1.0)].map(|(x, y)| img.ctm.apply(x, y));
    let (xs, ys): (Vec<f32>, Vec<f32>) = corners.iter().copied().unzip();
    let fold = |v: &[f32], f: fn(f32, f32) -> f32, init: f32| v.iter().copied().fold(init, f);
    let (x0, x1) = (
        fold(&xs, f32::min, f32::MAX).max(page_box[0]),
        fold(&xs, f32::max, f32::MIN).min(page_box[2]),
    );
    let (y0, y1) = (
        fold(&ys, f32::min, f32::MAX).max(page_box[1]),
        fold(&ys, f32::max, f32::MIN).min(page_box[3]),
    );
    let page_area = (page_box[2] - page_box[0]) * (page_box[3] - page_box[1]);
    let covered = (x1 - x0).max(0.0) * (y1 - y0).max(0.0);
    (page_area > 0.0 && covered >= MIN_COVER * page_area).then_some(img)
}

/// Walk a page's content (and the Form XObjects it draws) and note what it paints.
pub fn survey_page(doc: &Document, page: ObjectId) -> std::result::Result<PageSurvey, String> {
    let content = doc
        .get_page_content_with_limit(page, MAX_CONTENT_BYTES)
        .map_err(|e| format!("page content cannot be read: {e}"))?;
    let resources = inherited(doc, page, b"Resources").and_then(|r| r.as_dict().ok());
    let mut survey = PageSurvey::default();
    walk(doc, &content, resources, Affine::IDENTITY, 0, &mut survey)?;
    Ok(survey)
}

fn operand_numbers(ops: &[Object]) -> Vec<f32> {
    ops.iter().filter_map(|o| o.as_float().ok()).collect()
}

fn walk(
    doc: &Document,
    content: &[u8],
    resources: Option<&Dictionary>,
    base: Affine,
    depth: usize,
    s: &mut PageSurvey,
) -> std::result::Result<(), String> {
    let ops = Content::decode(content)
        .map_err(|e| format!("page content is damaged: {e}"))?
        .operations;
    // Graphics state that matters here: the CTM and the text render mode (§8.4, §9.3.6).
    let mut stack: Vec<(Affine, i64)> = Vec::new();
    let (mut ctm, mut render_mode) = (base, 0i64);
    for op in &ops {
        match op.operator.as_str() {
            "q" => stack.push((ctm, render_mode)),
            "Q" => (ctm, render_mode) = stack.pop().unwrap_or((base, 0)),
            "cm" => {
                if let [a, b, c, d, e, f] = operand_numbers(&op.operands)[..] {
                    ctm = Affine([a, b, c, d, e, f]).then(&ctm);
                }
            }
            "Tr" => {
                render_mode = op
                    .operands
                    .first()
                    .and_then(|o| o.as_i64().ok())
                    .unwrap_or(0)
            }
            "Tj" | "TJ" | "'" | "\"" => {
                s.has_text = true;
                // Modes 3 (invisible) and 7 (clip only) paint nothing (§9.3.6, Table 106).
                s.other_marks |= render_mode != 3 && render_mode != 7;
            }
            "S" | "s" | "f" | "F" | "f*" | "B" | "B*" | "b" | "b*" | "sh" | "BI" | "EI" => {
                s.other_marks = true
            }
            "Do" => {
                let name = op
                    .operands
                    .first()
                    .and_then(|o| o.as_name().ok())
                    .unwrap_or_default();
                draw_xobject(doc, resources, name, ctm, depth, s)?;
            }
            _ => {}
        }
    }
    if depth == 0 {
        s.open_saves = stack.len();
    }
    Ok(())
}

fn draw_xobject(
    doc: &Document,
    resources: Option<&Dictionary>,
    name: &[u8],
    ctm: Affine,
    depth: usize,
    s: &mut PageSurvey,
) -> std::result::Result<(), String> {
    let entry = resources
        .and_then(|r| r.get(b"XObject").ok())
        .and_then(|x| deref(doc, x).as_dict().ok())
        .and_then(|x| x.get(name).ok());
    let Some(Object::Reference(id)) = entry else {
        s.other_marks = true; // a missing or direct XObject: let the renderer decide
        return Ok(());
    };
    let Ok(stream) = doc.get_object(*id).and_then(Object::as_stream) else {
        s.other_marks = true;
        return Ok(());
    };
    match stream.dict.get(b"Subtype").and_then(Object::as_name) {
        Ok(b"Image") => s.images.push(PlacedImage { id: *id, ctm }),
        Ok(b"Form") if depth < MAX_FORM_DEPTH => {
            let matrix = stream
                .dict
                .get(b"Matrix")
                .ok()
                .and_then(|m| m.as_array().ok())
                .map(|a| operand_numbers(a));
            let m = match matrix.as_deref() {
                Some([a, b, c, d, e, f]) => Affine([*a, *b, *c, *d, *e, *f]),
                _ => Affine::IDENTITY,
            };
            let own = stream
                .dict
                .get(b"Resources")
                .ok()
                .and_then(|r| deref(doc, r).as_dict().ok());
            let content = stream
                .decompressed_content_with_limit(MAX_CONTENT_BYTES)
                .or_else(|_| {
                    stream
                        .filters()
                        .map(|_| Vec::new())
                        .or(Ok::<_, lopdf::Error>(stream.content.clone()))
                })
                .unwrap_or_default();
            walk(doc, &content, own.or(resources), m.then(&ctm), depth + 1, s)?;
        }
        _ => s.other_marks = true,
    }
    Ok(())
}

/// Turn the decoded image so that it reads upright as the page is displayed (its CTM and the
/// page's /Rotate together), and build its placement.
///
/// Quarter turns only; the placement maps the turned image's y-up pixels back to page space, so
/// the text layer, drawn in unrotated page space, still lands on the words.
pub fn upright(
    gray: GrayImage,
    ctm: &Affine,
    rotate_deg: i64,
    media_box: [f32; 4],
) -> std::result::Result<PageImage, String> {
    let (w, h) = (gray.width() as f32, gray.height() as f32);
    let to_page = Affine([1.0 / w, 0.0, 0.0, 1.0 / h, 0.0, 0.0]).then(ctm);
    // Page space → display space for /Rotate (clockwise), linear part only (§7.7.3.3).
    let display = match rotate_deg {
        90 => Affine([0.0, -1.0, 1.0, 0.0, 0.0, 0.0]),
        180 => Affine([-1.0, 0.0, 0.0, -1.0, 0.0, 0.0]),
        270 => Affine([0.0, 1.0, -1.0, 0.0, 0.0, 0.0]),
        _ => Affine::IDENTITY,
    };
    let [a, b, ..] = to_page.then(&display).0;
    if a == 0.0 && b == 0.0 {
        return Err("the page image is drawn with zero size".into());
    }
    // Direction of the image's x axis on the displayed page, in quarter turns clockwise.
    let angle_deg = (-b).atan2(a).to_degrees();
    let turns = ((angle_deg / 90.0).round() as i64).rem_euclid(4);
    // Map from the turned image's y-up pixels to the original image's y-up pixels.
    let (gray, back) = match turns {
        1 => (
            image::imageops::rotate90(&gray),
            Affine([0.0, 1.0, -1.0, 0.0, w, 0.0]),
        ),
        2 => (
            image::imageops::rotate180(&gray),
            Affine([-1.0, 0.0, 0.0, -1.0, w, h]),
        ),
        3 => (
            image::imageops::rotate270(&gray),
            Affine([0.0, -1.0, 1.0, 0.0, 0.0, h]),
        ),
        _ => (gray, Affine::IDENTITY),
    };
    let to_page = back.then(&to_page);
    let [a, b, c, d, ..] = to_page.0;
    let dpi = |x: f32, y: f32| 72.0 / x.hypot(y);
    Ok(PageImage {
        gray,
        dpi_x: dpi(a, b),
        dpi_y: dpi(c, d),
        placement: Placement { to_page, media_box },
    })
}

fn numbers(doc: &Document, obj: Option<&Object>) -> Option<Vec<f32>> {
    let a = deref(doc, obj?).as_array().ok()?;
    Some(
        a.iter()
            .filter_map(|v| deref(doc, v).as_float().ok())
            .collect(),
    )
}

/// Decode an image XObject to grey pixels at its own geometry.
pub fn decode_image(
    doc: &Document,
    stream: &Stream,
    limits: &Limits,
) -> std::result::Result<GrayImage, String> {
    let d = &stream.dict;
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
    limits.check_size(w as u64, h as u64)?;
    let mask = d
        .get(b"ImageMask")
        .ok()
        .and_then(|o| o.as_bool().ok())
        .unwrap_or(false);
    let jpx = filters_name_last(doc, d) == Some(b"JPXDecode".as_slice());
    let mut model = match d.get(b"ColorSpace") {
        _ if mask => ColorModel::Gray,
        // JPX data may carry its own colour space (§7.4.9, §8.9.5): settled after decoding.
        Err(_) if jpx => ColorModel::Gray,
        cs => color_model(doc, cs.ok())?,
    };
    let decode = numbers(doc, d.get(b"Decode").ok());
    let filters: Vec<Vec<u8>> = match d.get(b"Filter").map(|f| deref(doc, f)) {
        Ok(Object::Name(n)) => vec![n.clone()],
        Ok(Object::Array(a)) => a
            .iter()
            .filter_map(|f| deref(doc, f).as_name().ok().map(<[u8]>::to_vec))
            .collect(),
        _ => Vec::new(),
    };
    let parms_list: Vec<Option<&Dictionary>> = match d.get(b"DecodeParms").map(|p| deref(doc, p)) {
        Ok(Object::Dictionary(p)) => vec![Some(p)],
        Ok(Object::Array(a)) => a.iter().map(|p| deref(doc, p).as_dict().ok()).collect(),
        _ => Vec::new(),
    };
    let image_codec = filters.last().filter(|f| is_image_codec(f)).cloned();
    let generic = filters.len() - image_codec.is_some() as usize;
    let bytes = generic_decode(stream, &filters[..generic], &parms_list, limits)?;
    let parms = parms_list.get(generic).copied().flatten();
    let bpc = if mask {
        1
    } else {
        int(b"BitsPerComponent").unwrap_or(8) as u8
    };
    let samples = match image_codec.as_deref() {
        Some(b"DCTDecode" | b"DCT") => {
            let ct = parms
                .and_then(|p| p.get(b"ColorTransform").ok())
                .and_then(|o| o.as_i64().ok());
            codecs::decode_dct(&bytes, ct, limits)?
        }
        Some(b"CCITTFaxDecode" | b"CCF") => {
            codecs::decode_ccitt(&bytes, &fax_params(doc, parms), h as u32, limits)?
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
        None => {
            let components = if mask { 1 } else { model.components() };
            Samples {
                width: w as u32,
                height: h as u32,
                bpc,
                components,
                data: bytes,
            }
        }
    };
    // JPEG and JPEG 2000 data say themselves how many components they hold; trust them over a
    // colour space that disagrees (and JPX may omit /ColorSpace, §7.4.9).
    if !mask && samples.components != model.components() {
        model = match samples.components {
            1 => ColorModel::Gray,
            3 => ColorModel::Rgb,
            4 => ColorModel::Cmyk,
            n => {
                return Err(format!(
                    "image has {n} components per pixel, which mistara cannot turn into grey"
                ))
            }
        };
    }
    let decode = if jpx && !mask { None } else { decode };
    codecs::to_gray(&samples, &model, decode.as_deref(), mask)
}

fn filters_name_last<'a>(doc: &'a Document, d: &'a Dictionary) -> Option<&'a [u8]> {
    match d.get(b"Filter").map(|f| deref(doc, f)) {
        Ok(Object::Name(n)) => Some(n),
        Ok(Object::Array(a)) => a.last().and_then(|f| deref(doc, f).as_name().ok()),
        _ => None,
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
    filters: &[Vec<u8>],
    parms: &[Option<&Dictionary>],
    limits: &Limits,
) -> std::result::Result<Vec<u8>, String> {
    if filters.is_empty() {
        return Ok(stream.content.clone());
    }
    if let Some(f) = filters.iter().find(|f| is_image_codec(f)) {
        return Err(format!(
            "image codec {} is not the last filter",
            String::from_utf8_lossy(f)
        ));
    }
    let mut dict = Dictionary::new();
    dict.set(
        "Filter",
        Object::Array(filters.iter().map(|f| Object::Name(f.clone())).collect()),
    );
    let parms: Vec<Object> = (0..filters.len())
        .map(|i| {
            parms
                .get(i)
                .copied()
                .flatten()
                .map_or(Object::Null, |p| Object::Dictionary(p.clone()))
        })
        .collect();
    dict.set("DecodeParms", Object::Array(parms));
    let tmp = Stream::new(dict, Vec::new());
    let tmp = Stream {
        content: stream.content.clone(),
        ..tmp
    };
    tmp.decompressed_content_with_limit(limits.max_alloc_bytes as usize)
        .map_err(|e| format!("image data cannot be decompressed ({e}); file damaged or truncated?"))
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
pub fn color_model(
    doc: &Document,
    obj: Option<&Object>,
) -> std::result::Result<ColorModel, String> {
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
        Object::Name(n) => {
            device(n).ok_or_else(|| format!("image colour space {} is not supported", name_of(obj)))
        }
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
                _ => Err(format!(
                    "image colour space {} is not supported",
                    String::from_utf8_lossy(family)
                )),
            }
        }
        _ => Err("image colour space is damaged".into()),
    }
}

fn indexed(doc: &Document, a: &[Object]) -> std::result::Result<ColorModel, String> {
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
