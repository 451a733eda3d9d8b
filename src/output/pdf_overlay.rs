//! The text layer added to a copy of an input PDF (lopdf): every page, image, outline entry,
//! page label, annotation and metadata entry of the original is kept; each page with text gets its
//! original contents wrapped in `q … Q` and one more content stream with the invisible layer.
//!
//! Existing streams are never re-encoded: lopdf writes a loaded stream's bytes as they came. The
//! layer's content and font are built by `text_layer` and `pdf_font`; this module only places
//! them as lopdf objects.

use lopdf::{Dictionary, Document, Object, ObjectId, Stream, StringFormat};
use pdf_writer::{Content, Name};

use super::pdf_font::{deflate, FontStreams, BASE_FONT, LAYER_FONT_TTF};
use super::text_layer::{write_layer, LayerOptions};
use super::DocumentInfo;
use crate::input::pdf::{deref, inherited, survey_page, PdfDocument};
use crate::layout::geometry::Affine;
use crate::text::PageText;

/// Base of the layer font's resource name; a number is added when a page already uses it.
const FONT_NAME: &str = "MistaraF1";
/// Info dictionary key that carries the machine-text notice beside the original entries.
pub const NOTICE_KEY: &str = "MistaraTextNotice";

/// The text layer of one page and where its pixels sit on the page.
#[derive(Debug, Clone)]
pub struct LayerPage {
    /// Words with boxes in page-image pixels.
    pub text: PageText,
    /// Height of the page image in pixels.
    pub height_px: f32,
    /// Map from y-up page-image pixels to page space.
    pub to_page: Affine,
}

/// The rewritten document.
#[derive(Debug, Clone)]
pub struct Overlaid {
    /// The new PDF's bytes.
    pub pdf: Vec<u8>,
    /// 1-based pages that received a text layer.
    pub layered: Vec<usize>,
}

/// Add a text layer to the pages of `source` that have one in `layers` (indexed by page, 0-based;
/// `None` or an empty text leaves the page as it is).
pub fn overlay(
    source: &PdfDocument,
    layers: &[Option<LayerPage>],
    opts: LayerOptions,
    info: &DocumentInfo,
) -> Result<Overlaid, String> {
    let mut doc = source.doc.clone();
    if doc.encryption_state.is_some() {
        // Opened with the empty user password: objects are decrypted in memory, so the copy is
        // written without encryption (an encrypted trailer over plain objects would be unreadable).
        if let Ok(id) = doc.trailer.get(b"Encrypt").and_then(Object::as_reference) {
            doc.objects.remove(&id);
        }
        doc.trailer.remove(b"Encrypt");
        doc.encryption_state = None;
    }
    let mut font: Option<ObjectId> = None;
    let mut layered = Vec::new();
    for (i, &page_id) in source.pages.iter().enumerate() {
        let Some(Some(layer)) = layers.get(i) else {
            continue;
        };
        if layer.text.lines.iter().all(|l| l.words.is_empty()) {
            continue;
        }
        let font_id = *font.get_or_insert_with(|| add_font(&mut doc));
        let open_saves = survey_page(&source.doc, page_id)
            .map(|s| s.open_saves)
            .unwrap_or(0);
        add_layer(&mut doc, page_id, font_id, layer, open_saves, opts)?;
        layered.push(i + 1);
    }
    add_notice(&mut doc, info);
    let mut out = Vec::new();
    doc.save_to(&mut out)
        .map_err(|e| format!("cannot serialize the PDF: {e}"))?;
    Ok(Overlaid { pdf: out, layered })
}

fn stream(dict: Dictionary, content: Vec<u8>) -> Object {
    Object::Stream(Stream::new(dict, content).with_compression(false))
}

fn name(s: &str) -> Object {
    Object::Name(s.as_bytes().to_vec())
}

/// The layer font as lopdf objects, mirroring `pdf_font::write_font` (ISO 32000-1 §9.7).
fn add_font(doc: &mut Document) -> ObjectId {
    let streams = FontStreams::new();
    let flate = |mut d: Dictionary| {
        d.set("Filter", name("FlateDecode"));
        d
    };
    let mut file = Dictionary::new();
    file.set("Length1", LAYER_FONT_TTF.len() as i64);
    let file = doc.add_object(stream(flate(file), streams.font_file));
    let to_unicode = doc.add_object(stream(flate(Dictionary::new()), streams.to_unicode));
    let cid_to_gid = doc.add_object(stream(flate(Dictionary::new()), streams.cid_to_gid));
    let descriptor = doc.add_object(Dictionary::from_iter(vec![
        ("Type", name("FontDescriptor")),
        ("FontName", name(BASE_FONT)),
        ("Flags", Object::Integer(4)), // symbolic (§9.8.2, Table 123)
        (
            "FontBBox",
            Object::Array(vec![0.into(), (-200).into(), 500.into(), 800.into()]),
        ),
        ("ItalicAngle", 0.into()),
        ("Ascent", 800.into()),
        ("Descent", (-200).into()),
        ("CapHeight", 800.into()),
        ("StemV", 80.into()),
        ("FontFile2", Object::Reference(file)),
    ]));
    let system_info = Dictionary::from_iter(vec![
        ("Registry", Object::string_literal("Adobe")),
        ("Ordering", Object::string_literal("Identity")),
        ("Supplement", 0.into()),
    ]);
    let cid = doc.add_object(Dictionary::from_iter(vec![
        ("Type", name("Font")),
        ("Subtype", name("CIDFontType2")),
        ("BaseFont", name(BASE_FONT)),
        ("CIDSystemInfo", Object::Dictionary(system_info)),
        ("FontDescriptor", Object::Reference(descriptor)),
        ("DW", 500.into()),
        ("CIDToGIDMap", Object::Reference(cid_to_gid)),
    ]));
    doc.add_object(Dictionary::from_iter(vec![
        ("Type", name("Font")),
        ("Subtype", name("Type0")),
        ("BaseFont", name(BASE_FONT)),
        ("Encoding", name("Identity-H")),
        (
            "DescendantFonts",
            Object::Array(vec![Object::Reference(cid)]),
        ),
        ("ToUnicode", Object::Reference(to_unicode)),
    ]))
}

/// Give the page its own resource dictionary (a copy of the inherited one, so other pages sharing
/// it are untouched) with the layer font under a free name; returns that name.
fn add_font_resource(doc: &mut Document, page: ObjectId, font: ObjectId) -> Result<String, String> {
    let mut resources = inherited(doc, page, b"Resources")
        .and_then(|r| r.as_dict().ok())
        .cloned()
        .unwrap_or_default();
    let mut fonts = resources
        .get(b"Font")
        .ok()
        .map(|f| deref(doc, f))
        .and_then(|f| f.as_dict().ok())
        .cloned()
        .unwrap_or_default();
    let mut font_name = FONT_NAME.to_string();
    let mut n = 1;
    while fonts.has(font_name.as_bytes()) {
        n += 1;
        font_name = format!("{FONT_NAME}x{n}");
    }
    fonts.set(font_name.as_bytes(), Object::Reference(font));
    resources.set("Font", Object::Dictionary(fonts));
    let page_dict = doc
        .get_dictionary_mut(page)
        .map_err(|e| format!("page object is damaged: {e}"))?;
    page_dict.set("Resources", Object::Dictionary(resources));
    Ok(font_name)
}

/// The page's content streams as a list of references (`Contents` may be one stream or an array,
/// directly or through a reference, §7.7.3.3).
fn content_refs(doc: &Document, page: ObjectId) -> Vec<Object> {
    let Ok(dict) = doc.get_dictionary(page) else {
        return Vec::new();
    };
    match dict.get(b"Contents") {
        Ok(Object::Reference(id)) => match doc.get_object(*id) {
            Ok(Object::Array(a)) => a.clone(),
            _ => vec![Object::Reference(*id)],
        },
        Ok(Object::Array(a)) => a.clone(),
        _ => Vec::new(),
    }
}

fn add_layer(
    doc: &mut Document,
    page: ObjectId,
    font: ObjectId,
    layer: &LayerPage,
    open_saves: usize,
    opts: LayerOptions,
) -> Result<(), String> {
    let font_name = add_font_resource(doc, page, font)?;
    let mut content = Content::new();
    write_layer(
        &mut content,
        &layer.text,
        layer.height_px,
        &layer.to_page,
        Name(font_name.as_bytes()),
        opts,
    );
    // Close whatever the original left open, then our own `q`, so its graphics state cannot
    // reach the layer (§8.4.2).
    let mut bytes = b"Q\n".repeat(open_saves + 1);
    bytes.extend_from_slice(&content.finish());
    let flate = Dictionary::from_iter(vec![("Filter", name("FlateDecode"))]);
    let head = doc.add_object(stream(Dictionary::new(), b"q\n".to_vec()));
    let tail = doc.add_object(stream(flate, deflate(&bytes)));
    let mut contents = vec![Object::Reference(head)];
    contents.extend(content_refs(doc, page));
    contents.push(Object::Reference(tail));
    let page_dict = doc
        .get_dictionary_mut(page)
        .map_err(|e| format!("page object is damaged: {e}"))?;
    page_dict.set("Contents", Object::Array(contents));
    Ok(())
}

/// The machine-text notice in the Info dictionary (§14.3.3), beside every existing entry: under
/// its own key always, and as /Subject when the document has none.
fn add_notice(doc: &mut Document, info: &DocumentInfo) {
    // PDF text strings: ASCII as is, anything else UTF-16BE with a byte order mark (§7.9.2.2).
    let text = |s: &str| match s.is_ascii() {
        true => Object::String(s.as_bytes().to_vec(), StringFormat::Literal),
        false => Object::String(
            [0xFE, 0xFF]
                .into_iter()
                .chain(s.encode_utf16().flat_map(u16::to_be_bytes))
                .collect(),
            StringFormat::Hexadecimal,
        ),
    };
    let existing = doc
        .trailer
        .get(b"Info")
        .ok()
        .and_then(|o| o.as_reference().ok());
    let mut dict = match existing.and_then(|id| doc.get_dictionary(id).ok()) {
        Some(d) => d.clone(),
        None => doc
            .trailer
            .get(b"Info")
            .ok()
            .and_then(|o| o.as_dict().ok())
            .cloned()
            .unwrap_or_default(),
    };
    dict.set(NOTICE_KEY, text(&info.notice));
    if !dict.has(b"Subject") {
        dict.set("Subject", text(&info.notice));
    }
    if !dict.has(b"Producer") {
        dict.set("Producer", text(&info.producer));
    }
    match existing {
        Some(id) => {
            doc.objects.insert(id, Object::Dictionary(dict));
        }
        None => {
            let id = doc.add_object(dict);
            doc.trailer.set("Info", Object::Reference(id));
        }
    }
}
