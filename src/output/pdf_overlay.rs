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
use super::pdfa::{ArchivalInfo, PdfDate, ICC_REGISTRY, SRGB_CONDITION, SRGB_ICC};
use super::text_layer::{write_layer, LayerOptions};
use super::DocumentInfo;
use crate::input::pdf::{deref, inherited, survey_page};
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

/// Add a text layer to `pages` (the document's page objects in order) that have one in `layers`
/// (indexed like `pages`; `None` or an empty text leaves the page as it is).
///
/// Takes the document by value: it is changed in place and serialized, never copied whole.
pub fn overlay(
    mut doc: Document,
    pages: &[ObjectId],
    layers: &[Option<LayerPage>],
    opts: LayerOptions,
    info: &DocumentInfo,
) -> Result<Overlaid, String> {
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
    for (i, &page_id) in pages.iter().enumerate() {
        let Some(Some(layer)) = layers.get(i) else {
            continue;
        };
        if layer.text.lines.iter().all(|l| l.words.is_empty()) {
            continue;
        }
        // Surveyed before this page changes: its original content decides how many `Q` close it.
        let open_saves = survey_page(&doc, page_id)
            .map(|s| s.open_saves)
            .unwrap_or(0);
        let font_id = *font.get_or_insert_with(|| add_font(&mut doc));
        add_layer(&mut doc, page_id, font_id, layer, open_saves, opts)?;
        layered.push(i + 1);
    }
    add_notice(&mut doc, info);
    if info.archival {
        make_archival(&mut doc, info);
    }
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

/// The Info dictionary's id (adding an empty one when the document has none); an Info
/// dictionary written directly in the trailer is moved into an object.
fn info_id(doc: &mut Document) -> ObjectId {
    if let Ok(id) = doc.trailer.get(b"Info").and_then(Object::as_reference) {
        if doc.get_dictionary(id).is_ok() {
            return id;
        }
    }
    let dict = doc
        .trailer
        .get(b"Info")
        .ok()
        .and_then(|o| o.as_dict().ok())
        .cloned()
        .unwrap_or_default();
    let id = doc.add_object(dict);
    doc.trailer.set("Info", Object::Reference(id));
    id
}

/// Make the copy PDF/A-2b as far as our own objects go: Info entries and an XMP packet that
/// agree (ISO 19005-2 §6.6.2.3.1), the sRGB output intent (§6.2.3), a file identifier
/// (§6.1.3), a header binary mark (§6.1.2). The input's own content is kept as it is.
fn make_archival(doc: &mut Document, info: &DocumentInfo) {
    let info_ref = info_id(doc);
    let mut dict = doc.get_dictionary(info_ref).cloned().unwrap_or_default();
    let text = |k: &[u8]| {
        dict.get(k)
            .ok()
            .and_then(|o| lopdf::decode_text_string(o).ok())
            .filter(|s| !s.is_empty())
    };
    let now = PdfDate::now();
    let id = file_id(doc);
    let meta = ArchivalInfo {
        title: text(b"Title"),
        author: text(b"Author"),
        subject: text(b"Subject").or_else(|| Some(info.notice.clone())),
        keywords: text(b"Keywords"),
        creator: text(b"Creator"),
        producer: text(b"Producer").unwrap_or_else(|| info.producer.clone()),
        created: text(b"CreationDate")
            .and_then(|d| PdfDate::parse_pdf(&d))
            .unwrap_or(now),
        modified: now,
        id,
    };
    for key in [
        "Title", "Author", "Subject", "Keywords", "Creator", "Producer", "Trapped",
    ] {
        dict.remove(key.as_bytes());
    }
    for (key, value) in meta.info_entries() {
        dict.set(key, lopdf::text_string(&value));
    }
    doc.objects.insert(info_ref, Object::Dictionary(dict));

    let mut xmp = Dictionary::new();
    xmp.set("Type", name("Metadata"));
    xmp.set("Subtype", name("XML"));
    let metadata = doc.add_object(stream(xmp, meta.xmp()));
    let mut icc = Dictionary::from_iter(vec![("N", Object::Integer(3))]);
    icc.set("Filter", name("FlateDecode"));
    let icc = doc.add_object(stream(icc, deflate(SRGB_ICC)));
    let intent = Dictionary::from_iter(vec![
        ("Type", name("OutputIntent")),
        ("S", name("GTS_PDFA1")),
        (
            "OutputConditionIdentifier",
            lopdf::text_string(SRGB_CONDITION),
        ),
        ("RegistryName", lopdf::text_string(ICC_REGISTRY)),
        ("Info", lopdf::text_string(SRGB_CONDITION)),
        ("DestOutputProfile", Object::Reference(icc)),
    ]);
    if let Ok(catalog) = doc.catalog_mut() {
        catalog.set("Metadata", Object::Reference(metadata));
        catalog.set(
            "OutputIntents",
            Object::Array(vec![Object::Dictionary(intent)]),
        );
    }
    let ids = Object::Array(vec![
        Object::String(id.to_vec(), StringFormat::Hexadecimal),
        Object::String(id.to_vec(), StringFormat::Hexadecimal),
    ]);
    if doc.trailer.get(b"ID").is_err() {
        doc.trailer.set("ID", ids);
    }
    if !doc.version.starts_with("1.") {
        doc.version = "1.7".into();
    }
    if doc.binary_mark.len() < 4 || doc.binary_mark.iter().any(|&b| b < 128) {
        doc.binary_mark = vec![0xE2, 0xE3, 0xCF, 0xD3];
    }
}

/// The first file identifier of the document when it has one of 16 bytes, else one made from
/// the document's shape (FNV-1a over object count and page count; deterministic).
fn file_id(doc: &Document) -> [u8; 16] {
    let existing = doc
        .trailer
        .get(b"ID")
        .ok()
        .and_then(|o| o.as_array().ok())
        .and_then(|a| a.first())
        .and_then(|o| o.as_str().ok());
    if let Some(b) = existing.filter(|b| b.len() == 16) {
        let mut id = [0u8; 16];
        id.copy_from_slice(b);
        return id;
    }
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    let shape = [doc.objects.len() as u64, doc.get_pages().len() as u64];
    for b in shape.iter().flat_map(|v| v.to_le_bytes()) {
        h = (h ^ b as u64).wrapping_mul(0x0100_0000_01b3);
    }
    let mut id = [0u8; 16];
    id[..8].copy_from_slice(&h.to_be_bytes());
    id[8..].copy_from_slice(&h.rotate_left(29).to_be_bytes());
    id
}
