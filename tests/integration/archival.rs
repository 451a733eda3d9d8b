//! `ocr --archival`: the PDF/A-2b rules mistara implements, each checked on both PDF writers
//! (a new PDF from images, and the overlay on a scanned PDF) by tools we did not write:
//! qpdf --check (Debian qpdf) for the file structure, lopdf (crates.io) for the objects,
//! xmllint (Debian libxml2-utils) for the XMP packet. No PDF/A validator is installable from
//! the registries this project uses, so conformance is checked rule by rule (ISO 19005-2
//! clause beside each check); rules about the input's own content are not checked here.

use std::path::Path;
use std::process::Command;

use lopdf::{Document, Object};
use mistara::layout::geometry::Rect;
use mistara::pipeline::Transcript;
use mistara::text::{PageText, RegionKind, TextLine, Word};

use crate::pdf_input::fixture;
use crate::util::{ocr_with_transcript, run, test_page, write_inputs};

fn text_of(doc: &Document, dict: &lopdf::Dictionary, key: &[u8]) -> Option<String> {
    let o = dict.get(key).ok()?;
    let o = match o {
        Object::Reference(id) => doc.get_object(*id).ok()?,
        o => o,
    };
    lopdf::decode_text_string(o).ok()
}

/// The value of the first element named `local` (any namespace) in `xml`, by xmllint's XPath.
fn xmp_value(xmp_file: &Path, local: &str) -> String {
    let expr = format!("string((//*[local-name()='{local}'])[1])");
    let out = run(Command::new("xmllint")
        .arg("--xpath")
        .arg(&expr)
        .arg(xmp_file));
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).unwrap().trim().to_string()
}

fn digits(s: &str) -> String {
    s.chars().filter(char::is_ascii_digit).take(14).collect()
}

/// Every PDF/A-2b rule mistara implements, on one file.
fn check_archival(pdf: &Path) {
    // File structure (ISO 19005-2 §6.1): qpdf finds no damage.
    let q = run(Command::new("qpdf").arg("--check").arg(pdf));
    assert!(
        q.status.success(),
        "qpdf --check: {}",
        String::from_utf8_lossy(&q.stdout)
    );
    let bytes = std::fs::read(pdf).unwrap();
    // §6.1.2: "%PDF-1.n", EOL, then "%" and at least four bytes above 127.
    assert!(bytes.starts_with(b"%PDF-1."));
    let eol = bytes.iter().position(|&b| b == b'\n').unwrap();
    assert_eq!(bytes[eol + 1], b'%');
    assert!(
        bytes[eol + 2..eol + 6].iter().all(|&b| b > 127),
        "binary mark"
    );
    let doc = Document::load(pdf).unwrap();
    // §6.1.3: a file identifier, no encryption.
    let id = doc
        .trailer
        .get(b"ID")
        .and_then(Object::as_array)
        .expect("trailer /ID");
    assert_eq!(id.len(), 2);
    assert!(doc.trailer.get(b"Encrypt").is_err());
    let catalog = doc.catalog().unwrap();
    // §6.2.3: one output intent GTS_PDFA1 whose DestOutputProfile is an RGB ICC stream, N = 3.
    let intents = catalog
        .get(b"OutputIntents")
        .and_then(Object::as_array)
        .unwrap();
    let intent = match &intents[0] {
        Object::Reference(r) => doc.get_dictionary(*r).unwrap(),
        o => o.as_dict().unwrap(),
    };
    assert_eq!(
        intent.get(b"S").and_then(Object::as_name).unwrap(),
        b"GTS_PDFA1"
    );
    let icc_ref = intent
        .get(b"DestOutputProfile")
        .and_then(Object::as_reference)
        .unwrap();
    let icc = doc.get_object(icc_ref).and_then(Object::as_stream).unwrap();
    assert_eq!(icc.dict.get(b"N").and_then(Object::as_i64).unwrap(), 3);
    let profile = icc.decompressed_content().unwrap();
    // ICC.1:2001-04 §6.1: signature 'acsp' at 36, data colour space 'RGB ' at 16.
    assert_eq!(&profile[36..40], b"acsp");
    assert_eq!(&profile[16..20], b"RGB ");
    // §6.6.2.1: the XMP metadata stream, not filtered.
    let meta_ref = catalog
        .get(b"Metadata")
        .and_then(Object::as_reference)
        .unwrap();
    let meta = doc
        .get_object(meta_ref)
        .and_then(Object::as_stream)
        .unwrap();
    assert!(meta.dict.get(b"Filter").is_err());
    assert_eq!(
        meta.dict.get(b"Subtype").and_then(Object::as_name).unwrap(),
        b"XML"
    );
    let dir = tempfile::tempdir().unwrap();
    let xmp = dir.path().join("xmp.xml");
    std::fs::write(&xmp, &meta.content).unwrap();
    let wf = run(Command::new("xmllint").arg("--noout").arg(&xmp));
    assert!(wf.status.success(), "XMP is not well-formed XML");
    // §6.6.4: PDF/A identification.
    assert_eq!(xmp_value(&xmp, "part"), "2");
    assert_eq!(xmp_value(&xmp, "conformance"), "B");
    // §6.6.2.3.1: Info entries equal their XMP counterparts.
    let info_ref = doc
        .trailer
        .get(b"Info")
        .and_then(Object::as_reference)
        .unwrap();
    let info = doc.get_dictionary(info_ref).unwrap();
    let producer = text_of(&doc, info, b"Producer").unwrap();
    assert_eq!(xmp_value(&xmp, "Producer"), producer);
    let subject = text_of(&doc, info, b"Subject").unwrap();
    assert_eq!(xmp_value(&xmp, "description"), subject);
    assert!(subject.contains("machine recognition"), "{subject}");
    if let Some(title) = text_of(&doc, info, b"Title") {
        assert_eq!(xmp_value(&xmp, "title"), title);
    }
    for (key, prop) in [
        (&b"CreationDate"[..], "CreateDate"),
        (b"ModDate", "ModifyDate"),
    ] {
        let d = text_of(&doc, info, key).unwrap();
        assert_eq!(digits(&d), digits(&xmp_value(&xmp, prop)), "{prop}");
    }
    // §6.2.10 (transparency): no soft masks, transparency groups or constant alpha below 1.
    for (id, o) in &doc.objects {
        let dict = match o {
            Object::Dictionary(d) => d,
            Object::Stream(s) => &s.dict,
            _ => continue,
        };
        assert!(dict.get(b"SMask").is_err(), "{id:?} has an SMask");
        for k in [&b"CA"[..], &b"ca"[..]] {
            if let Ok(v) = dict.get(k).and_then(Object::as_float) {
                assert_eq!(v, 1.0, "{id:?} /{}", String::from_utf8_lossy(k));
            }
        }
        // §6.2.11.4.1: every font descriptor carries its font program.
        if dict.get(b"Type").and_then(Object::as_name).ok() == Some(&b"FontDescriptor"[..]) {
            assert!(
                dict.has(b"FontFile") || dict.has(b"FontFile2") || dict.has(b"FontFile3"),
                "{id:?}: font not embedded"
            );
        }
    }
}

#[test]
fn archival_pdf_from_images_follows_pdf_a_2b_rules() {
    let dir = tempfile::tempdir().unwrap();
    let pages = vec![test_page(&["سجل المقتنيات"]), test_page(&["مكتبة عامة"])];
    let (pngs, transcript) = write_inputs(dir.path(), &pages);
    let pdf = dir.path().join("out.pdf");
    ocr_with_transcript(&pngs, &transcript, &pdf, &["--archival"]);
    check_archival(&pdf);
}

#[test]
fn archival_overlay_on_a_scanned_pdf_follows_pdf_a_2b_rules() {
    let dir = tempfile::tempdir().unwrap();
    let t = dir.path().join("t.json");
    let line = TextLine {
        words: vec![Word {
            text: "مكتبة".into(),
            bbox: Rect::new(4.0, 4.0, 30.0, 16.0),
            confidence: 1.0,
        }],
        bbox: Rect::new(4.0, 4.0, 30.0, 16.0),
        region: RegionKind::Body,
    };
    let pages = vec![PageText { lines: vec![line] }];
    std::fs::write(&t, serde_json::to_vec(&Transcript { pages }).unwrap()).unwrap();
    let pdf = dir.path().join("out.pdf");
    ocr_with_transcript(&[fixture("dct_gray.pdf")], &t, &pdf, &["--archival"]);
    check_archival(&pdf);
}

#[test]
fn without_archival_there_is_no_output_intent() {
    // The checks above must be able to fail: a plain run has neither intent nor XMP.
    let dir = tempfile::tempdir().unwrap();
    let (pngs, transcript) = write_inputs(dir.path(), &[test_page(&["سجل"])]);
    let pdf = dir.path().join("out.pdf");
    ocr_with_transcript(&pngs, &transcript, &pdf, &[]);
    let doc = Document::load(&pdf).unwrap();
    let catalog = doc.catalog().unwrap();
    assert!(catalog.get(b"OutputIntents").is_err() && catalog.get(b"Metadata").is_err());
}
