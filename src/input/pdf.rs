//! PDF inputs (lopdf): open the document, decide page by page whether it is a scan — one image
//! XObject covering the page — and if so decode that image at its own pixel geometry.
//!
//! Pages that are not a single scan are left to `raster` (hayro). Stream codecs and the colour →
//! grey conversion live in `codecs`; the pixel ↔ page maths in `layout::geometry`.

use std::path::{Path, PathBuf};
use std::sync::Arc;

use image::GrayImage;
use lopdf::content::Content;
use lopdf::{Dictionary, Document, Object, ObjectId};

use super::pdf_image::{decode_image, ImageError};
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
    /// The file's bytes, as read (shared with the page renderer).
    pub data: Arc<Vec<u8>>,
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
    /// Some of that text is drawn in a render mode other than 3 (invisible), so it marks the page.
    pub visible_text: bool,
    /// Some of that text sits inside a Form XObject rather than in the page's own content.
    pub form_text: bool,
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
        data: Arc::new(data),
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
        // Content lopdf cannot parse is left to the renderer, which is more lenient; if it fails
        // too, its error is the one reported.
        let survey = survey_page(&self.doc, id).unwrap_or_default();
        if let Some(img) = scan_image(&survey, &media_box) {
            let stream = self
                .doc
                .get_object(img.id)
                .and_then(Object::as_stream)
                .map_err(|e| Error::input(&self.path, e.to_string()))?;
            let gray = match decode_image(&self.doc, stream, &self.limits) {
                Ok(gray) => gray,
                // A valid image mistara does not decode itself: let the renderer draw the page.
                Err(ImageError::Unsupported(_)) => return self.rendered(number, media_box),
                Err(ImageError::Damaged(why)) => return Err(Error::input(&self.path, why)),
                Err(ImageError::Limit(why)) => return Err(self.limit(why)),
            };
            let image = upright(gray, &img.ctm, self.rotation(id), media_box)
                .map_err(|why| Error::input(&self.path, why))?;
            return Ok(SourcePage {
                number,
                image,
                embed: None,
            });
        }
        self.rendered(number, media_box)
    }

    fn limit(&self, why: String) -> Error {
        Error::Limit {
            path: self.path.clone(),
            page: None,
            why,
        }
    }

    /// Page `number` rasterized at the document's resolution.
    fn rendered(&self, number: usize, media_box: [f32; 4]) -> Result<SourcePage> {
        // The renderer decodes every image the page uses at full size: check the declared sizes
        // first, as the scan path does.
        let resources = inherited(&self.doc, self.pages[number - 1], b"Resources")
            .and_then(|r| r.as_dict().ok());
        check_image_sizes(&self.doc, resources, 0, &self.limits).map_err(|why| self.limit(why))?;
        let image =
            raster::render_page(&self.data, number - 1, self.dpi, &self.limits).map_err(|why| {
                match why {
                    raster::RenderError::Limit(why) => self.limit(why),
                    raster::RenderError::Broken(why) => Error::input(&self.path, why),
                }
            })?;
        let placement = Placement {
            media_box,
            ..image.placement
        };
        Ok(SourcePage {
            number,
            image: PageImage { placement, ..image },
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

/// Check the declared size of every image XObject in `resources`, and in the resources of the
/// Form XObjects there (to [`MAX_FORM_DEPTH`]), against the limits.
fn check_image_sizes(
    doc: &Document,
    resources: Option<&Dictionary>,
    depth: usize,
    limits: &Limits,
) -> std::result::Result<(), String> {
    let Some(xobjects) = resources
        .and_then(|r| r.get(b"XObject").ok())
        .and_then(|x| deref(doc, x).as_dict().ok())
    else {
        return Ok(());
    };
    for (_, entry) in xobjects.iter() {
        let Ok(stream) = deref(doc, entry).as_stream() else {
            continue;
        };
        let dict = &stream.dict;
        match dict.get(b"Subtype").and_then(Object::as_name) {
            Ok(b"Image") => {
                let side = |key: &[u8]| {
                    dict.get(key)
                        .ok()
                        .and_then(|o| deref(doc, o).as_i64().ok())
                        .unwrap_or(0)
                        .max(0) as u64
                };
                let (w, h) = (side(b"Width"), side(b"Height"));
                // A missing size is the renderer's to skip; only declared sizes can be too big.
                if w > 0 && h > 0 {
                    limits.check_size(w, h)?;
                }
            }
            Ok(b"Form") if depth < MAX_FORM_DEPTH => {
                let own = dict
                    .get(b"Resources")
                    .ok()
                    .and_then(|r| deref(doc, r).as_dict().ok());
                check_image_sizes(doc, own, depth + 1, limits)?;
            }
            _ => {}
        }
    }
    Ok(())
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
                // Mode 7 still clips what follows: only mode 3 counts as an invisible layer.
                s.visible_text |= render_mode != 3;
                s.form_text |= depth > 0;
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

#[cfg(test)]
mod tests {
    use super::*;

    fn placed(ctm: [f32; 6]) -> PlacedImage {
        PlacedImage {
            id: (1, 0),
            ctm: Affine(ctm),
        }
    }

    #[test]
    fn one_image_over_the_page_is_a_scan() {
        let page = [0.0, 0.0, 600.0, 800.0];
        let full = PageSurvey {
            images: vec![placed([600.0, 0.0, 0.0, 800.0, 0.0, 0.0])],
            ..Default::default()
        };
        assert!(scan_image(&full, &page).is_some());
        // Rotated a quarter turn and still covering the page (§8.3.4 matrix order).
        let turned = PageSurvey {
            images: vec![placed([0.0, -800.0, 600.0, 0.0, 0.0, 800.0])],
            ..Default::default()
        };
        assert!(scan_image(&turned, &page).is_some());
        // Half the page is a picture on a page, not a scan.
        let half = PageSurvey {
            images: vec![placed([600.0, 0.0, 0.0, 400.0, 0.0, 0.0])],
            ..Default::default()
        };
        assert!(scan_image(&half, &page).is_none());
        let two = PageSurvey {
            images: vec![full.images[0], full.images[0]],
            ..Default::default()
        };
        assert!(scan_image(&two, &page).is_none());
        let marked = PageSurvey {
            other_marks: true,
            ..full.clone()
        };
        assert!(scan_image(&marked, &page).is_none());
    }

    #[test]
    fn upside_down_page_is_turned_and_maps_back() {
        // A 4 × 2 image drawn upright on a page shown with /Rotate 180.
        let mut gray = GrayImage::new(4, 2);
        gray.put_pixel(0, 0, image::Luma([7])); // top-left pixel as stored
        let ctm = Affine([400.0, 0.0, 0.0, 200.0, 0.0, 0.0]);
        let page = upright(gray, &ctm, 180, [0.0, 0.0, 400.0, 200.0]).unwrap();
        // Shown upside down, the stored top-left pixel is at the bottom right.
        assert_eq!(page.gray.get_pixel(3, 1).0[0], 7);
        // Turned by 180°, the displayed top-left corner is the page's bottom-right (400, 0) (§7.7.3.3).
        let (x, y) = page.placement.to_page.apply(0.0, 2.0);
        assert!((x - 400.0).abs() < 1e-3 && y.abs() < 1e-3, "({x}, {y})");
        assert!((page.dpi_x - 0.72).abs() < 1e-4, "{}", page.dpi_x); // 4 px over 400 pt
    }
}
