//! The overlay on PDF inputs through the command line: the original document kept (images byte
//! for byte, page boxes, outline, page labels, annotations, Info), the layer read back by outside
//! readers where the page shows the words, and bad PDFs that must fail cleanly.
//!
//! Fixtures: tests/data/pdf/make_fixtures.py (see pdf_input.rs).

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use lopdf::{Document, Object, ObjectId};
use mistara::input::pdf;
use mistara::layout::geometry::Rect;
use mistara::limits::Limits;
use mistara::pipeline::Transcript;
use mistara::text::{PageText, RegionKind, TextLine, Word};

use crate::pdf_input::fixture;
use crate::util::{extract, mistara, normalized_lines, run, Reader};

/// One line of two words over the dark bars of a 96 × 64 page image (right-to-left: the first
/// word is the right one).
fn bar_line() -> PageText {
    let words = vec![
        Word {
            text: "مكتبة".into(),
            bbox: Rect::new(50.0, 8.0, 88.0, 24.0),
            confidence: 1.0,
        },
        Word {
            text: "الوادي".into(),
            bbox: Rect::new(8.0, 8.0, 44.0, 24.0),
            confidence: 1.0,
        },
    ];
    PageText {
        lines: vec![TextLine {
            words,
            bbox: Rect::new(8.0, 8.0, 88.0, 24.0),
            region: RegionKind::Body,
        }],
    }
}

fn image_streams(doc: &Document) -> HashMap<ObjectId, Vec<u8>> {
    doc.objects
        .iter()
        .filter_map(|(id, o)| o.as_stream().ok().map(|s| (*id, s)))
        .filter(|(_, s)| {
            s.dict
                .get(b"Subtype")
                .and_then(Object::as_name)
                .is_ok_and(|n| n == b"Image")
        })
        .map(|(id, s)| (id, s.content.clone()))
        .collect()
}

fn media_boxes(doc: &Document) -> Vec<Vec<f32>> {
    doc.page_iter()
        .map(|p| {
            let o = pdf::inherited(doc, p, b"MediaBox").unwrap();
            o.as_array()
                .unwrap()
                .iter()
                .map(|v| v.as_float().unwrap())
                .collect()
        })
        .collect()
}

struct Run {
    dir: tempfile::TempDir,
    out: PathBuf,
    status: i32,
    stderr: String,
}

fn ocr(input: &Path, pages: Vec<PageText>) -> Run {
    let dir = tempfile::tempdir().unwrap();
    let t = dir.path().join("transcript.json");
    std::fs::write(&t, serde_json::to_vec(&Transcript { pages }).unwrap()).unwrap();
    let out = dir.path().join("out.pdf");
    let o = run(mistara()
        .arg("ocr")
        .arg(input)
        .arg("-o")
        .arg(&out)
        .arg("--layer-from")
        .arg(&t));
    Run {
        out,
        status: o.status.code().unwrap_or(-1),
        stderr: String::from_utf8_lossy(&o.stderr).into_owned(),
        dir,
    }
}

#[test]
fn book_keeps_images_boxes_outline_labels_annotations_and_info() {
    check_book("book.pdf");
}

#[test]
fn book_with_object_streams_keeps_everything_too() {
    check_book("book_object_streams.pdf");
}

fn check_book(name: &str) {
    let input = fixture(name);
    let before = std::fs::read(&input).unwrap();
    let r = ocr(&input, vec![bar_line(), bar_line(), PageText::default()]);
    assert_eq!(r.status, 0, "{}", r.stderr);
    assert!(
        r.stderr.contains("page(s) 3 already carry text"),
        "{}",
        r.stderr
    );
    assert_eq!(std::fs::read(&input).unwrap(), before, "input changed");

    // lopdf (crates.io) reads both files back.
    let orig = Document::load(&input).unwrap();
    let new = Document::load(&r.out).unwrap();
    assert_eq!(new.get_pages().len(), 3);
    assert_eq!(media_boxes(&new), media_boxes(&orig));
    let new_images: Vec<Vec<u8>> = image_streams(&new).into_values().collect();
    let old_images = image_streams(&orig);
    assert_eq!(old_images.len(), 2);
    for (id, bytes) in &old_images {
        assert!(
            new_images.contains(bytes),
            "image {id:?} not kept byte for byte"
        );
    }
    let cat = new.catalog().unwrap();
    assert!(
        cat.get(b"Outlines").is_ok() && cat.get(b"PageLabels").is_ok(),
        "outline or page labels lost"
    );
    let p1 = new.page_iter().next().unwrap();
    assert_eq!(
        new.get_page_annotations(p1).unwrap().len(),
        1,
        "annotation lost"
    );
    let info = new
        .trailer
        .get(b"Info")
        .and_then(|i| new.get_dictionary(i.as_reference().unwrap()))
        .unwrap();
    assert_eq!(
        info.get(b"Title").unwrap().as_str().unwrap(),
        b"Wadi al-Rayhan library register"
    );
    assert!(
        info.get(mistara::output::pdf_overlay::NOTICE_KEY.as_bytes())
            .is_ok(),
        "machine-text notice missing"
    );
    // Page 3 already carried text: its contents are untouched.
    let p3 = new.page_iter().nth(2).unwrap();
    let o3 = orig.page_iter().nth(2).unwrap();
    assert_eq!(new.get_page_content(p3), orig.get_page_content(o3));
    assert_eq!(
        new.get_page_contents(p1).len(),
        3,
        "expected q, original, layer"
    );
}

#[test]
fn pages_outside_the_range_are_copied_without_a_layer() {
    let input = fixture("book.pdf");
    let dir = tempfile::tempdir().unwrap();
    let t = dir.path().join("t.json");
    let pages = vec![bar_line(), bar_line(), PageText::default()];
    std::fs::write(&t, serde_json::to_vec(&Transcript { pages }).unwrap()).unwrap();
    let (out, txt) = (dir.path().join("out.pdf"), dir.path().join("out.txt"));
    let o = run(mistara()
        .arg("ocr")
        .arg(&input)
        .arg("-o")
        .arg(&out)
        .arg("--txt")
        .arg(&txt)
        .arg("--layer-from")
        .arg(&t)
        .args(["--pages", "2", "--quiet"]));
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let (orig, new) = (
        Document::load(&input).unwrap(),
        Document::load(&out).unwrap(),
    );
    let (p1, o1) = (
        new.page_iter().next().unwrap(),
        orig.page_iter().next().unwrap(),
    );
    assert_eq!(
        new.get_page_contents(p1).len(),
        orig.get_page_contents(o1).len(),
        "page 1 got a layer"
    );
    assert_eq!(
        new.get_page_contents(new.page_iter().nth(1).unwrap()).len(),
        3,
        "page 2 has no layer"
    );
    // Plain text: pages separated by form feed, only page 2 has words.
    let text = std::fs::read_to_string(&txt).unwrap();
    let pages: Vec<&str> = text.split('\u{000C}').collect();
    assert_eq!(pages.len(), 3, "{text:?}");
    assert_eq!(pages[0].trim(), "");
    assert_eq!(pages[1].trim(), "مكتبة الوادي");
}

#[test]
fn poppler_finds_the_layer_words_on_a_pdf_input() {
    let r = ocr(&fixture("flate_png_predictor.pdf"), vec![bar_line()]);
    assert_eq!(r.status, 0, "{}", r.stderr);
    // poppler pdftotext (Debian poppler-utils) reads the layer back in logical order.
    let text = extract(Reader::Poppler, &r.out);
    assert_eq!(normalized_lines(&text), vec!["مكتبة الوادي".to_string()]);
    let q = run(std::process::Command::new("qpdf")
        .arg("--check")
        .arg(&r.out));
    assert!(
        q.status.success(),
        "qpdf --check: {}",
        String::from_utf8_lossy(&q.stdout)
    );
    drop(r.dir);
}

#[test]
fn pdfium_pdfjs_and_mupdf_read_the_layer_of_a_pdf_input() {
    // PDFium (pypdfium2, PyPI), pdf.js (pdfjs-dist, npm) and MuPDF (PyMuPDF, PyPI) on the copy of
    // a turned page: an Arabic-only line, so all three must give it in logical order.
    let r = ocr(&fixture("rotate_90.pdf"), vec![bar_line()]);
    assert_eq!(r.status, 0, "{}", r.stderr);
    for reader in [Reader::Pdfium, Reader::PdfJs, Reader::MuPdf] {
        let text = extract(reader, &r.out);
        assert_eq!(
            normalized_lines(&text),
            vec!["مكتبة الوادي".to_string()],
            "{reader:?}"
        );
    }
}

/// `<word xMin=".." yMin=".." xMax=".." yMax="..">` boxes from pdftotext -bbox-layout, in points
/// from the top-left of the page as displayed.
fn poppler_word_boxes(pdf: &Path) -> Vec<[f32; 4]> {
    let out = run(std::process::Command::new("pdftotext")
        .arg("-bbox-layout")
        .arg(pdf)
        .arg("-"));
    assert!(out.status.success());
    let xhtml = String::from_utf8(out.stdout).unwrap();
    xhtml
        .split("<word ")
        .skip(1)
        .map(|part| {
            ["xMin", "yMin", "xMax", "yMax"].map(|name| {
                let start = part.find(&format!("{name}=\"")).unwrap() + name.len() + 2;
                part[start..].split('"').next().unwrap().parse().unwrap()
            })
        })
        .collect()
}

fn assert_boxes(pdf: &Path, want: &[[f32; 4]], what: &str) {
    let mut got = poppler_word_boxes(pdf);
    got.sort_by(|a, b| a[0].total_cmp(&b[0]));
    assert_eq!(got.len(), want.len(), "{what}: {got:?}");
    for (g, w) in got.iter().zip(want) {
        assert!(
            g.iter().zip(w).all(|(a, b)| (a - b).abs() < 0.05),
            "{what}: poppler box {g:?}, want {w:?}"
        );
    }
}

#[test]
fn poppler_finds_the_words_where_the_page_shows_them() {
    // The page image is 96 × 64 px at 150 dpi, shown upright whatever the page's /Rotate or the
    // image's matrix: word boxes in pixels × 72/150 are where poppler (pdftotext -bbox-layout,
    // Debian poppler-utils) must report them on the displayed page.
    let s = 72.0 / 150.0;
    let want = [
        [8.0 * s, 8.0 * s, 44.0 * s, 24.0 * s],
        [50.0 * s, 8.0 * s, 88.0 * s, 24.0 * s],
    ];
    for name in [
        "flate_png_predictor.pdf",
        "rotate_90.pdf",
        "cm_rotated.pdf",
        "form_wrapped.pdf",
    ] {
        let r = ocr(&fixture(name), vec![bar_line()]);
        assert_eq!(r.status, 0, "{name}: {}", r.stderr);
        assert_boxes(&r.out, &want, name);
    }
}

#[test]
fn rasterized_page_gets_its_layer_in_place() {
    // vector_page.pdf rendered at 144 dpi: pixel (20, 104)–(40, 124) is 10–20 pt across and
    // 52–62 pt down from the top of its 72 pt page.
    let dir = tempfile::tempdir().unwrap();
    let words = vec![Word {
        text: "سجل".into(),
        bbox: Rect::new(20.0, 104.0, 40.0, 124.0),
        confidence: 1.0,
    }];
    let text = PageText {
        lines: vec![TextLine {
            words,
            bbox: Rect::new(20.0, 104.0, 40.0, 124.0),
            region: RegionKind::Body,
        }],
    };
    let t = dir.path().join("t.json");
    std::fs::write(
        &t,
        serde_json::to_vec(&Transcript { pages: vec![text] }).unwrap(),
    )
    .unwrap();
    let out = dir.path().join("out.pdf");
    let input = fixture("vector_page.pdf");
    let o = run(mistara()
        .arg("ocr")
        .arg(&input)
        .arg("-o")
        .arg(&out)
        .arg("--layer-from")
        .arg(&t)
        .args(["--dpi", "144"]));
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert_boxes(&out, &[[10.0, 52.0, 20.0, 62.0]], "vector page");
}

// ------------------------------------------------------------------ bad PDFs

fn assert_fails_cleanly(input: &Path, what: &str) {
    let before = std::fs::read(input).unwrap();
    let r = ocr(input, vec![bar_line()]);
    assert_eq!(r.status, 1, "{what}: {}", r.stderr);
    assert_eq!(
        r.stderr.trim_end().lines().count(),
        1,
        "{what}: want one error line, got {:?}",
        r.stderr
    );
    assert!(
        r.stderr.starts_with("mistara: error: "),
        "{what}: {}",
        r.stderr
    );
    assert!(!r.stderr.contains("panicked"), "{what}: {}", r.stderr);
    assert!(!r.out.exists(), "{what}: output written");
    let leftovers: Vec<_> = std::fs::read_dir(r.dir.path())
        .unwrap()
        .filter_map(|e| e.ok())
        .map(|e| e.file_name())
        .collect();
    assert_eq!(leftovers.len(), 1, "{what}: stray files {leftovers:?}"); // only transcript.json
    assert_eq!(
        std::fs::read(input).unwrap(),
        before,
        "{what}: input changed"
    );
}

#[test]
fn encrypted_with_a_user_password_fails_cleanly() {
    let input = fixture("encrypted_user_password.pdf");
    assert_fails_cleanly(&input, "encrypted");
    let r = ocr(&input, vec![bar_line()]);
    assert!(
        r.stderr.contains("encrypted with a password"),
        "{}",
        r.stderr
    );
}

#[test]
fn encryption_dictionary_inside_the_trailer_fails_cleanly() {
    let input = fixture("encrypted_inline_dictionary.pdf");
    assert_fails_cleanly(&input, "inline /Encrypt");
    assert!(ocr(&input, vec![bar_line()])
        .stderr
        .contains("not supported: encryption"));
}

#[test]
fn empty_user_password_gives_a_readable_copy() {
    let r = ocr(
        &fixture("encrypted_empty_user_password.pdf"),
        vec![bar_line()],
    );
    assert_eq!(r.status, 0, "{}", r.stderr);
    // The copy is written decrypted; lopdf reads it without a password and finds the image intact.
    let new = Document::load(&r.out).unwrap();
    assert!(new.trailer.get(b"Encrypt").is_err());
    let orig = Document::load(fixture("encrypted_empty_user_password.pdf")).unwrap();
    let old: Vec<Vec<u8>> = image_streams(&orig).into_values().collect();
    assert_eq!(image_streams(&new).into_values().collect::<Vec<_>>(), old);
}

#[test]
fn no_pages_fails_cleanly() {
    let input = fixture("no_pages.pdf");
    assert_fails_cleanly(&input, "no pages");
    assert!(ocr(&input, vec![]).stderr.contains("no pages"));
}

#[test]
fn truncated_pdfs_fail_cleanly_or_keep_whole_pages() {
    let dir = tempfile::tempdir().unwrap();
    let data = std::fs::read(fixture("book.pdf")).unwrap();
    for cut in [40, data.len() / 3, data.len() / 2, data.len() - 30] {
        let input = dir.path().join(format!("cut-{cut}.pdf"));
        std::fs::write(&input, &data[..cut]).unwrap();
        let before = std::fs::read(&input).unwrap();
        let r = ocr(&input, vec![bar_line(), bar_line(), PageText::default()]);
        assert!(!r.stderr.contains("panicked"), "cut {cut}: {}", r.stderr);
        assert_eq!(std::fs::read(&input).unwrap(), before);
        if r.status != 0 {
            // A file cut before its pages can be found must fail with one line and no output.
            assert_eq!(r.status, 1, "cut {cut}: {}", r.stderr);
            assert_eq!(
                r.stderr.trim_end().lines().count(),
                1,
                "cut {cut}: {}",
                r.stderr
            );
            assert!(!r.out.exists(), "cut {cut}: output written");
        }
    }
    // Cut through the middle of the page objects: nothing can be read.
    let input = dir.path().join("cut-40.pdf");
    assert_fails_cleanly(&input, "truncated at 40 bytes");
}

#[test]
fn image_declaring_sixty_thousand_square_is_refused_before_decoding() {
    let input = fixture("huge_declared_image.pdf");
    assert_fails_cleanly(&input, "huge image");
    let r = ocr(&input, vec![bar_line()]);
    assert!(r.stderr.contains("60000×60000"), "{}", r.stderr);
}

#[test]
fn prefixes_of_good_pdfs_never_panic() {
    // Every prefix length in 1/16 steps of each fixture: an error or a page, never a panic.
    for name in [
        "book.pdf",
        "book_object_streams.pdf",
        "ccitt_g3_2d.pdf",
        "jbig2_generic_mmr.pdf",
        "jpx_gray_lossless.pdf",
        "dct_cmyk_adobe.pdf",
    ] {
        let data = std::fs::read(fixture(name)).unwrap();
        for k in 1..16 {
            let cut = data[..data.len() * k / 16].to_vec();
            if let Ok(doc) = pdf::open(Path::new(name), cut, 72.0, Limits::default()) {
                for n in 1..=doc.page_count() {
                    let _ = doc.page(n);
                }
            }
        }
        let whole = pdf::open(Path::new(name), data, 72.0, Limits::default()).unwrap();
        assert!(whole.page(1).is_ok(), "{name}: the whole file must decode");
    }
}

#[test]
fn text_file_named_pdf_fails_cleanly() {
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("minutes.pdf");
    std::fs::write(
        &input,
        "Minutes of the library committee, read and approved.\n",
    )
    .unwrap();
    assert_fails_cleanly(&input, "text file");
}
