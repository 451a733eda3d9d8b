//! PDF inputs: every image decoding path against the pattern its fixture was drawn with, and page
//! geometry (/Rotate, rotated matrices, Form XObjects, rasterized pages). The overlay and bad PDFs
//! are in pdf_overlay.rs.
//!
//! Fixtures: tests/data/pdf/make_fixtures.py (Pillow 13.0.0 encoders, qpdf 11.3.0 encryption).
//! Each fixture image is decoded there by MuPDF (PyMuPDF 2.0) and checked against the same
//! pattern, so the truth these tests use was confirmed by a decoder we did not write.

use std::path::{Path, PathBuf};

use image::GrayImage;
use mistara::input::pdf::{self, PdfDocument};
use mistara::limits::Limits;

/// A file of tests/data/pdf.
pub fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/pdf")
        .join(name)
}

/// Open a fixture as mistara does.
pub fn open(name: &str, dpi: f32) -> PdfDocument {
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
fn dct_under_ascii85_filter_chain() {
    assert_decodes_to("dct_under_ascii85.pdf", &png("pattern.png"), 1.0);
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
fn ccitt_group3_byte_aligned_rows() {
    assert_decodes_to("ccitt_g3_1d_byte_aligned.pdf", &png("pattern_bw.png"), 0.0);
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
