//! An invisible text layer a PDF page already carries (from an earlier recognition run, ours or
//! another program's), taken out so that a new layer can take its place.
//!
//! Only text drawn in render mode 3 (invisible, ISO 32000-1 §9.3.6) is ever removed. Whether a
//! page qualifies is decided by the caller from `input::pdf::survey_page`; this module checks it
//! again on the very operators it removes, and refuses a page on which any text shows.

use lopdf::content::Content;
use lopdf::{Dictionary, Document, Object, ObjectId, Stream};

use super::pdf_font::deflate;

/// Most bytes a page's content may inflate to (as in `input::pdf`).
const MAX_CONTENT_BYTES: usize = 64 << 20;

/// Operators of text objects, text state, positioning and showing (ISO 32000-1 §9.3.1 Table 104,
/// §9.4 Tables 106–109). None of them paints anything but text.
const TEXT_OPERATORS: [&str; 17] = [
    "BT", "ET", "Tc", "Tw", "Tz", "TL", "Tf", "Tr", "Ts", "Td", "TD", "Tm", "T*", "Tj", "TJ", "'",
    "\"",
];

/// Operators that show text (§9.4.3, Table 109).
const SHOW_OPERATORS: [&str; 4] = ["Tj", "TJ", "'", "\""];

/// The page's content (all its streams, in order) with every text operator removed, re-encoded
/// as one content stream. Everything else — images, paths, colours, marked content — stays.
///
/// Fails when the content cannot be read, or when any text on the page is drawn in a render mode
/// other than 3: visible text is never removed.
pub fn without_invisible_text(doc: &Document, page: ObjectId) -> Result<Vec<u8>, String> {
    let bytes = doc
        .get_page_content_with_limit(page, MAX_CONTENT_BYTES)
        .map_err(|e| format!("page content cannot be read: {e}"))?;
    let content = Content::decode(&bytes).map_err(|e| format!("page content is damaged: {e}"))?;
    // The render mode is graphics state: saved by `q`, restored by `Q`, 0 at the start (§8.4.1).
    let (mut mode, mut saved) = (0i64, Vec::new());
    for op in &content.operations {
        match op.operator.as_str() {
            "q" => saved.push(mode),
            "Q" => mode = saved.pop().unwrap_or(0),
            "Tr" => {
                mode = op
                    .operands
                    .first()
                    .and_then(|o| o.as_i64().ok())
                    .unwrap_or(0)
            }
            o if SHOW_OPERATORS.contains(&o) && mode != 3 => {
                return Err("the page shows visible text; it is left as it is".into())
            }
            _ => {}
        }
    }
    let kept: Content<Vec<lopdf::content::Operation>> = Content {
        operations: content
            .operations
            .into_iter()
            .filter(|op| !TEXT_OPERATORS.contains(&op.operator.as_str()))
            .collect(),
    };
    kept.encode()
        .map_err(|e| format!("page content cannot be rewritten: {e}"))
}

/// Make `content` the page's only content stream (Flate-compressed). The old streams stay in the
/// file unreferenced by this page, since other pages may share them.
pub fn set_content(doc: &mut Document, page: ObjectId, content: &[u8]) -> Result<(), String> {
    let dict = Dictionary::from_iter(vec![("Filter", Object::Name(b"FlateDecode".to_vec()))]);
    let id = doc.add_object(Stream::new(dict, deflate(content)).with_compression(false));
    doc.get_dictionary_mut(page)
        .map_err(|e| format!("page object is damaged: {e}"))?
        .set("Contents", Object::Reference(id));
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A one-page document whose content is `content`, uncompressed.
    fn page_with(content: &[u8]) -> (Document, ObjectId) {
        let mut doc = Document::with_version("1.7");
        let stream = doc.add_object(Stream::new(Dictionary::new(), content.to_vec()));
        let pages = doc.new_object_id();
        let page = doc.add_object(Dictionary::from_iter(vec![
            ("Type", Object::Name(b"Page".to_vec())),
            ("Parent", Object::Reference(pages)),
            ("Contents", Object::Reference(stream)),
        ]));
        doc.objects.insert(
            pages,
            Object::Dictionary(Dictionary::from_iter(vec![
                ("Type", Object::Name(b"Pages".to_vec())),
                ("Kids", Object::Array(vec![Object::Reference(page)])),
                ("Count", Object::Integer(1)),
            ])),
        );
        let catalog = doc.add_object(Dictionary::from_iter(vec![
            ("Type", Object::Name(b"Catalog".to_vec())),
            ("Pages", Object::Reference(pages)),
        ]));
        doc.trailer.set("Root", Object::Reference(catalog));
        (doc, page)
    }

    fn operators(bytes: &[u8]) -> Vec<String> {
        Content::decode(bytes)
            .unwrap()
            .operations
            .into_iter()
            .map(|o| o.operator)
            .collect()
    }

    #[test]
    fn invisible_text_goes_and_the_scan_stays() {
        // The shape of a layer over a scan: image in q … Q, then text in mode 3 (§9.3.6).
        let (doc, page) = page_with(
            b"q 600 0 0 800 0 0 cm /Im0 Do Q\nq 1 0 0 1 0 0 cm BT 3 Tr /F1 12 Tf 1 0 0 1 50 700 Tm <0041> Tj ET Q\n",
        );
        let kept = without_invisible_text(&doc, page).unwrap();
        assert_eq!(
            operators(&kept),
            ["q", "cm", "Do", "Q", "q", "cm", "Q"],
            "{}",
            String::from_utf8_lossy(&kept)
        );
    }

    #[test]
    fn visible_text_is_refused() {
        // Mode 0 (fill) by default; `3 Tr` inside q … Q does not outlive the Q (§8.4.1).
        for content in [
            &b"BT /F1 12 Tf (A) Tj ET"[..],
            b"q 3 Tr Q BT /F1 12 Tf (A) Tj ET",
            b"BT 7 Tr /F1 12 Tf (A) Tj ET",
        ] {
            let (doc, page) = page_with(content);
            let err = without_invisible_text(&doc, page).unwrap_err();
            assert!(err.contains("visible text"), "{err}");
        }
    }

    #[test]
    fn new_content_replaces_the_old_streams() {
        let (mut doc, page) = page_with(b"BT 3 Tr (A) Tj ET");
        set_content(&mut doc, page, b"q Q").unwrap();
        // lopdf ends each stream it joins with a newline.
        assert_eq!(doc.get_page_content(page), b"q Q\n");
    }
}
