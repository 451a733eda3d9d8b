//! PDF inputs: every image decoding path against the pattern its fixture was drawn with, page
//! geometry (/Rotate, rotated matrices, Form XObjects, rasterized pages), the overlay that keeps
//! the original document, and bad PDFs that must fail cleanly.
//!
//! Fixtures: tests/data/pdf/make_fixtures.py (Pillow 13.0.0 encoders, PyMuPDF 2.0 encryption; each
//! fixture image is decoded by MuPDF there and checked against the same pattern, so the truth the
//! tests use was confirmed by a decoder we did not write).

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use image::GrayImage;
use lopdf::{Document, Object, ObjectId};
use mistara::input::pdf::{self, PdfDocument};
use mistara::layout::geometry::Rect;
use mistara::limits::Limits;
use mistara::pipeline::Transcript;
use mistara::text::{PageText, RegionKind, TextLine, Word};

use crate::util::{extract, mistara, normalized_lines, run, Reader};

fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/pdf")
        .join(name)
}

fn open(name: &str, dpi: f32) -> PdfDocument {
    let path = fixture(name);
    let data = std::fs::read(&path).unwrap();
    pdf::open(&path, data, dpi, Limits::default()).unwrap_or_else(|e| panic!("{name}: {e}"))
}

fn png(name: &str) -> GrayImage {
    image::open(fixture(name)).unwrap().to_luma8()
}

/// Mean absolute difference of two grey images of the same size.
fn mean_diff(a: &GrayImage, b: &GrayImage) -> f32 {
    assert_eq!(a.dimensions(), b.dimensions(), "sizes differ");
    let sum: u64 = a
        .as_raw()
        .iter()
        .zip(b.as_raw())
        .map(|(x, y)| x.abs_diff(*y) as u64)
        .sum();
    sum as f32 / a.as_raw().len() as f32
}

/// Decode page 1 of a fixture and compare with a pattern within a mean tolerance.
fn assert_decodes_to(name: &str, want: &GrayImage, tolerance: f32) -> mistara::input::SourcePage {
    let page = open(name, 300.0)
        .page(1)
        .unwrap_or_else(|e| panic!("{name}: {e}"));
    let d = mean_diff(&page.image.gray, want);
    assert!(d <= tolerance, "{name}: mean |diff| {d} > {tolerance}");
    page
}

#[test]
fn flate_with_png_predictor() {
    assert_decodes_to("flate_png_predictor.pdf", &png("pattern.png"), 0.0);
}

#[test]
fn flate_with_tiff_predictor_rgb() {
    // Neutral RGB: BT.601 luma of (v, v, v) is v.
    assert_decodes_to("flate_tiff_predictor_rgb.pdf", &png("pattern.png"), 0.0);
}

#[test]
fn flate_indexed_four_bit() {
    let mut want = png("pattern.png");
    want.pixels_mut().for_each(|p| p.0[0] = p.0[0] / 17 * 17); // the fixture's 16-level palette
    assert_decodes_to("flate_indexed_4bit.pdf", &want, 0.0);
}

#[test]
fn flate_image_mask_with_inverted_decode() {
    assert_decodes_to("flate_imagemask.pdf", &png("pattern_bw.png"), 0.0);
}

#[test]
fn dct_gray() {
    // Lossy: quality 95 JPEG; MuPDF decodes it 0.04 away from the pattern (make_fixtures.py).
    assert_decodes_to("dct_gray.pdf", &png("pattern.png"), 1.0);
}

#[test]
fn dct_adobe_inverted_cmyk() {
    // Pillow writes Adobe-inverted CMYK; /Decode [1 0 1 0 1 0 1 0] turns it back (ISO 32000-1 §8.9.5.2).
    assert_decodes_to("dct_cmyk_adobe.pdf", &png("pattern.png"), 1.0);
}

#[test]
fn jpx_lossless_gray() {
    assert_decodes_to("jpx_gray_lossless.pdf", &png("pattern.png"), 0.0);
}

#[test]
fn ccitt_group4() {
    assert_decodes_to("ccitt_g4.pdf", &png("pattern_bw.png"), 0.0);
}

#[test]
fn ccitt_group3_one_dimensional() {
    assert_decodes_to("ccitt_g3_1d.pdf", &png("pattern_bw.png"), 0.0);
}

#[test]
fn ccitt_group3_two_dimensional() {
    assert_decodes_to("ccitt_g3_2d.pdf", &png("pattern_bw.png"), 0.0);
}

#[test]
fn jbig2_generic_region_with_globals() {
    assert_decodes_to("jbig2_generic_mmr.pdf", &png("pattern_bw.png"), 0.0);
}

#[test]
fn scan_in_a_form_xobject_is_taken_at_its_own_size() {
    // At 300 dpi a rendering would be twice the image's 150 dpi size; the scan itself is 96 × 64.
    let page = assert_decodes_to("form_wrapped.pdf", &png("pattern.png"), 0.0);
    assert!(
        (page.image.dpi_x - 150.0).abs() < 0.01,
        "{}",
        page.image.dpi_x
    );
}

/// Where the upright image's top-left corner lands in page space.
fn top_left_on_page(page: &mistara::input::SourcePage) -> (f32, f32) {
    let h = page.image.gray.height() as f32;
    page.image.placement.to_page.apply(0.0, h)
}

#[test]
fn page_rotate_90_gives_upright_pixels() {
    let page = assert_decodes_to("rotate_90.pdf", &png("pattern.png"), 0.0);
    // /Rotate 90 turns the page clockwise (ISO 32000-1 §7.7.3.3): what shows at the top left is the
    // page's lower-left corner (0, 0).
    let (x, y) = top_left_on_page(&page);
    assert!(x.abs() < 0.01 && y.abs() < 0.01, "({x}, {y})");
}

#[test]
fn rotated_image_matrix_gives_upright_pixels() {
    let page = assert_decodes_to("cm_rotated.pdf", &png("pattern.png"), 0.0);
    let (x, y) = top_left_on_page(&page);
    let top = page.image.placement.media_box[3];
    assert!(
        x.abs() < 0.01 && (y - top).abs() < 0.01,
        "({x}, {y}) vs top {top}"
    );
}

#[test]
fn vector_page_is_rasterized_at_the_requested_dpi() {
    let doc = open("vector_page.pdf", 144.0);
    let page = doc.page(1).unwrap();
    let img = &page.image;
    // 72 pt at 144 dpi = 144 px; the square is 10–20 pt = 20–40 px from the lower left.
    assert_eq!(img.gray.dimensions(), (144, 144));
    let (x, y) = img.placement.to_page.apply(30.0, 30.0);
    assert!(
        (x - 15.0).abs() < 0.01 && (y - 15.0).abs() < 0.01,
        "({x}, {y})"
    );
    assert!(
        img.gray.get_pixel(30, 144 - 30).0[0] < 50,
        "square not drawn where the placement says"
    );
    assert!(img.gray.get_pixel(100, 40).0[0] > 200, "paper is not white");
}

#[test]
fn empty_user_password_opens() {
    assert_decodes_to(
        "encrypted_empty_user_password.pdf",
        &png("pattern.png"),
        0.0,
    );
}

// ------------------------------------------------------------------ the overlay through the CLI

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
    let input = fixture("book.pdf");
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
