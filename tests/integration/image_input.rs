//! Image-file inputs, checked against files made by encoders we did not write: every fixture in
//! tests/data/images (made by make_images.py with Pillow 13.0.0 from PyPI and ImageMagick 6.9.11
//! from Debian) decodes to the formula the script drew, with the resolution the script wrote; and
//! the PDF mistara writes around them is read back with lopdf (crates.io) and the `fax` crate's
//! CCITT G4 decoder (crates.io).

use std::path::{Path, PathBuf};
use std::process::Command;

use image::{GrayImage, RgbImage};
use mistara::input::{Embed, SourcePage};
use mistara::pipeline::{open_images, OcrSettings};

use crate::util::{mistara, run};

const W: u32 = 96;
const H: u32 = 64;

// The same formulas as make_images.py.
fn ink(x: u32, y: u32) -> bool {
    (x < 24 && y < 12) || (y >= 16 && (x / 8 + y / 8) % 3 == 0)
}
fn grey(x: u32, y: u32) -> u8 {
    ((2 * x + 3 * y) % 256) as u8
}
fn grey16(x: u32, y: u32) -> u32 {
    let g = grey(x, y) as u32;
    g * 256 + (255 - g)
}
fn rgb(x: u32, y: u32) -> [u8; 3] {
    [grey(x, y), ((5 * x) % 256) as u8, ((7 * y) % 256) as u8]
}
fn alpha(x: u32, y: u32) -> u8 {
    ((4 * x + y) % 256) as u8
}
fn smooth(x: u32, y: u32) -> [u8; 3] {
    if x < 24 && y < 12 {
        return [0, 0, 0];
    }
    [
        (x as f32 * 255.0 / (W - 1) as f32).round() as u8,
        (y as f32 * 255.0 / (H - 1) as f32).round() as u8,
        128,
    ]
}
/// make_images.py's `cmyk` pattern seen as RGB without colour management,
/// R = (255 − C)(255 − K)/255 (common practice, no source): C, M as drawn, Y = K = 0,
/// and K = 255 in the top-left block.
fn cmyk_as_rgb(x: u32, y: u32) -> [u8; 3] {
    let s = smooth(x, y);
    if s == [0, 0, 0] {
        [0, 0, 0]
    } else {
        [255 - s[0], 255 - s[1], 255]
    }
}

/// A colour pattern: pixel (x, y) → RGB.
type Pattern = fn(u32, u32) -> [u8; 3];

/// Luma as the `image` crate computes it: ITU-R BT.709 weights (its docs; color.rs SRGB_LUMA).
fn luma(p: [u8; 3]) -> f32 {
    0.2126 * p[0] as f32 + 0.7152 * p[1] as f32 + 0.0722 * p[2] as f32
}

pub fn fixture(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/images")
        .join(name)
}

/// All pages of a fixture, decoded through the library with a fallback resolution of 123 dpi.
fn pages(name: &str) -> Vec<SourcePage> {
    let settings = OcrSettings {
        dpi: 123.0,
        ..OcrSettings::default()
    };
    let docs = open_images(&[fixture(name)], &settings).unwrap_or_else(|e| panic!("{name}: {e}"));
    (1..=docs[0].page_count)
        .map(|n| docs[0].page(n).unwrap_or_else(|e| panic!("{name}: {e}")))
        .collect()
}

fn one_page(name: &str) -> SourcePage {
    let mut p = pages(name);
    assert_eq!(p.len(), 1, "{name}");
    p.remove(0)
}

fn assert_dpi(p: &SourcePage, x: f32, y: f32, name: &str) {
    let (gx, gy) = (p.image.dpi_x, p.image.dpi_y);
    assert!(
        (gx - x).abs() < 0.01 && (gy - y).abs() < 0.01,
        "{name}: dpi {gx}×{gy}, expected {x}×{y}"
    );
}

/// Compare every pixel with `expect`; allow `tol` per pixel; report the first few misses.
fn assert_gray(img: &GrayImage, expect: impl Fn(u32, u32) -> f32, tol: f32, name: &str) {
    let mut misses = Vec::new();
    for (x, y, p) in img.enumerate_pixels() {
        let e = expect(x, y);
        if (p.0[0] as f32 - e).abs() > tol {
            misses.push(format!("({x},{y}) got {} want {e:.1}", p.0[0]));
        }
    }
    assert!(
        misses.is_empty(),
        "{name}: {} pixels differ, first: {:?}",
        misses.len(),
        &misses[..misses.len().min(5)]
    );
}

fn assert_rgb(img: &RgbImage, expect: impl Fn(u32, u32) -> [u8; 3], tol: i32, name: &str) {
    let bad = img.enumerate_pixels().find(|(x, y, p)| {
        let e = expect(*x, *y);
        (0..3).any(|i| (p.0[i] as i32 - e[i] as i32).abs() > tol)
    });
    assert!(
        bad.is_none(),
        "{name}: pixel {bad:?} differs from {:?}",
        bad.map(|(x, y, _)| expect(x, y))
    );
}

fn bilevel_value(x: u32, y: u32) -> f32 {
    if ink(x, y) {
        0.0
    } else {
        255.0
    }
}

#[test]
fn bilevel_tiffs_both_photometric_interpretations() {
    // (file, dpi): Pillow writes BlackIsZero, ImageMagick WhiteIsZero (make_images.py checks the tags).
    let cases = [
        ("bw_none_minisblack.tif", 200.0),
        ("bw_none_miniswhite.tif", 240.0),
        ("bw_packbits.tif", 200.0),
        ("bw_g4.tif", 300.0),
        ("bw_g4_miniswhite.tif", 240.0),
        ("bw_g4_fillorder2.tif", 240.0),
    ];
    for (name, dpi) in cases {
        let p = one_page(name);
        assert_gray(&p.image.gray, bilevel_value, 0.0, name);
        assert!(
            matches!(p.embed, Some(Embed::Bilevel)),
            "{name}: {:?}",
            p.embed
        );
        assert_dpi(&p, dpi, dpi, name);
    }
}

#[test]
fn grey_tiffs_and_resolution_units() {
    let p = one_page("grey8_lzw.tif");
    assert_gray(&p.image.gray, |x, y| grey(x, y) as f32, 0.0, "grey8_lzw");
    assert!(matches!(p.embed, Some(Embed::Gray)));
    assert_dpi(&p, 300.0, 300.0, "grey8_lzw");
    // 118.11 pixels per centimetre (ResolutionUnit 3) × 2.54 = 300.0 dpi
    let p = one_page("grey8_deflate_cm.tif");
    assert_gray(
        &p.image.gray,
        |x, y| grey(x, y) as f32,
        0.0,
        "grey8_deflate_cm",
    );
    assert_dpi(&p, 300.0, 300.0, "grey8_deflate_cm");
    // no resolution tags: the fallback
    assert_dpi(
        &one_page("grey8_none_nores.tif"),
        123.0,
        123.0,
        "grey8_none_nores",
    );
    // 16-bit samples scaled to 8 bits: v · 255 / 65535, any rounding
    let p = one_page("grey16_none.tif");
    assert_gray(
        &p.image.gray,
        |x, y| grey16(x, y) as f32 * 255.0 / 65535.0,
        0.51,
        "grey16_none",
    );
    assert_dpi(&p, 150.0, 150.0, "grey16_none");
}

#[test]
fn colour_tiffs() {
    let p = one_page("rgb8_lzw.tif");
    let Some(Embed::Rgb(img)) = &p.embed else {
        panic!("rgb8_lzw: {:?}", p.embed)
    };
    assert_rgb(img, rgb, 0, "rgb8_lzw");
    assert_gray(&p.image.gray, |x, y| luma(rgb(x, y)), 1.0, "rgb8_lzw grey");
    assert_dpi(&p, 72.0, 144.0, "rgb8_lzw");
    // ImageMagick scaled 8-bit samples by 257 into 16 bits; back to 8 bits they are exact.
    let p = one_page("rgb16_none.tif");
    let Some(Embed::Rgb(img)) = &p.embed else {
        panic!("rgb16_none: {:?}", p.embed)
    };
    assert_rgb(img, rgb, 0, "rgb16_none");
    let p = one_page("cmyk8_lzw.tif");
    let Some(Embed::Rgb(img)) = &p.embed else {
        panic!("cmyk8_lzw: {:?}", p.embed)
    };
    assert_rgb(img, cmyk_as_rgb, 0, "cmyk8_lzw");
    // Unassociated alpha (ExtraSamples 2) laid over white paper: c·a/255 + 255·(1 − a/255).
    let p = one_page("rgba8_deflate.tif");
    let Some(Embed::Rgb(img)) = &p.embed else {
        panic!("rgba8_deflate: {:?}", p.embed)
    };
    let over = |x, y| {
        let a = alpha(x, y) as f32 / 255.0;
        rgb(x, y).map(|c| (c as f32 * a + 255.0 * (1.0 - a)).round() as u8)
    };
    assert_rgb(img, over, 1, "rgba8_deflate");
    assert_dpi(&p, 100.0, 100.0, "rgba8_deflate");
}

#[test]
fn three_page_tiff_keeps_each_page_size_and_resolution() {
    let p = pages("three_pages.tif");
    assert_eq!(p.len(), 3);
    assert_gray(&p[0].image.gray, bilevel_value, 0.0, "page 1");
    assert!(matches!(p[0].embed, Some(Embed::Bilevel)));
    assert_dpi(&p[0], 200.0, 200.0, "page 1");
    assert_eq!(p[1].image.gray.dimensions(), (80, 40));
    assert_gray(&p[1].image.gray, |x, y| grey(x, y) as f32, 0.0, "page 2");
    assert_dpi(&p[1], 300.0, 300.0, "page 2");
    let Some(Embed::Rgb(img)) = &p[2].embed else {
        panic!("page 3: {:?}", p[2].embed)
    };
    assert_eq!(img.dimensions(), (48, 96));
    assert_rgb(img, rgb, 0, "page 3");
    assert_dpi(&p[2], 150.0, 150.0, "page 3");
    assert_eq!(
        p.iter().map(|p| p.number).collect::<Vec<_>>(),
        vec![1, 2, 3]
    );
}

#[test]
fn png_phys_and_one_bit_png() {
    let p = one_page("rgb_phys.png");
    let Some(Embed::Rgb(img)) = &p.embed else {
        panic!("rgb_phys: {:?}", p.embed)
    };
    assert_rgb(img, rgb, 0, "rgb_phys");
    // Pillow stores 200 dpi as round(200 / 0.0254) = 7874 pixels per metre = 199.9996 dpi.
    assert_dpi(&p, 199.9996, 199.9996, "rgb_phys");
    let p = one_page("bw_1bit.png");
    assert_gray(&p.image.gray, bilevel_value, 0.0, "bw_1bit");
    assert!(matches!(p.embed, Some(Embed::Bilevel)));
    assert_dpi(&p, 123.0, 123.0, "bw_1bit"); // no pHYs
    let p = one_page("bw_palette.png");
    assert_gray(&p.image.gray, bilevel_value, 0.0, "bw_palette");
    assert!(
        matches!(p.embed, Some(Embed::Bilevel)),
        "bw_palette: {:?}",
        p.embed
    );
    let p = one_page("grey_as_rgb.png");
    assert_gray(&p.image.gray, |x, y| grey(x, y) as f32, 0.0, "grey_as_rgb");
    assert!(
        matches!(p.embed, Some(Embed::Gray)),
        "grey_as_rgb: {:?}",
        p.embed
    );
}

/// Mean and largest absolute difference from `expect` over all pixels.
fn error_stats(img: &GrayImage, expect: impl Fn(u32, u32) -> f32) -> (f32, f32) {
    let (mut sum, mut max) = (0.0f32, 0.0f32);
    for (x, y, p) in img.enumerate_pixels() {
        let d = (p.0[0] as f32 - expect(x, y)).abs();
        sum += d;
        max = max.max(d);
    }
    (sum / (img.width() * img.height()) as f32, max)
}

#[test]
fn jpegs_keep_their_bytes_components_and_density() {
    // (file, components, Adobe-inverted CMYK, JFIF dpi, expected colour)
    let cases: [(&str, u8, bool, f32, Pattern); 3] = [
        ("rgb_jfif.jpg", 3, false, 150.0, smooth),
        ("grey_jfif.jpg", 1, false, 96.0, |x, y| [smooth(x, y)[0]; 3]),
        ("cmyk_adobe.jpg", 4, true, 300.0, cmyk_as_rgb),
    ];
    for (name, comps, inverted, dpi, colour) in cases {
        let p = one_page(name);
        let Some(Embed::Jpeg {
            data,
            components,
            inverted_cmyk,
        }) = &p.embed
        else {
            panic!("{name}: {:?}", p.embed)
        };
        assert_eq!(
            data,
            &std::fs::read(fixture(name)).unwrap(),
            "{name}: bytes must be the file's"
        );
        assert_eq!((*components, *inverted_cmyk), (comps, inverted), "{name}");
        assert_dpi(&p, dpi, dpi, name);
        // Lossy at quality 95: tolerance, common practice, no source.
        let (mean, max) = error_stats(&p.image.gray, |x, y| luma(colour(x, y)));
        assert!(
            mean < 3.0 && max < 40.0,
            "{name}: mean error {mean}, max {max}"
        );
        assert!(
            p.image.gray.get_pixel(10, 5).0[0] < 20,
            "{name}: the dark block is at the top left"
        );
    }
}

#[test]
fn jpeg_2000_lossless_files() {
    let p = one_page("rgb_lossless.jp2");
    let Some(Embed::Jpx { data }) = &p.embed else {
        panic!("jp2: {:?}", p.embed)
    };
    assert_eq!(data, &std::fs::read(fixture("rgb_lossless.jp2")).unwrap());
    assert_gray(
        &p.image.gray,
        |x, y| luma(rgb(x, y)),
        1.0,
        "rgb_lossless.jp2",
    );
    assert_dpi(&p, 123.0, 123.0, "rgb_lossless.jp2"); // Pillow writes no resolution box
    let p = one_page("grey_lossless.j2k");
    assert!(matches!(p.embed, Some(Embed::Jpx { .. })));
    assert_gray(
        &p.image.gray,
        |x, y| grey(x, y) as f32,
        0.0,
        "grey_lossless.j2k",
    );
}

// ---------------------------------------------------------------------------------------------
// Through the command line: the PDF around image inputs, read back with lopdf.

struct Run {
    /// Holds out.pdf and transcript.json.
    dir: tempfile::TempDir,
    pdf: lopdf::Document,
}

/// `mistara ocr INPUT -o out.pdf --layer-from transcript.json`, one empty page per input page.
fn ocr(inputs: &[&str], page_count: usize) -> Run {
    let dir = tempfile::tempdir().unwrap();
    let transcript = dir.path().join("transcript.json");
    let pages = vec![r#"{"lines":[]}"#; page_count].join(",");
    std::fs::write(&transcript, format!(r#"{{"pages":[{pages}]}}"#)).unwrap();
    let out = dir.path().join("out.pdf");
    let result = run(mistara()
        .arg("ocr")
        .args(inputs.iter().map(|n| fixture(n)))
        .arg("-o")
        .arg(&out)
        .arg("--layer-from")
        .arg(&transcript));
    assert!(
        result.status.success(),
        "mistara failed: {}",
        String::from_utf8_lossy(&result.stderr)
    );
    let pdf = lopdf::Document::load(&out).expect("lopdf reads the output");
    Run { dir, pdf }
}

fn page_image(pdf: &lopdf::Document, page: u32) -> lopdf::xobject::PdfImage<'_> {
    let id = pdf.get_pages()[&page];
    let mut images = pdf.get_page_images(id).unwrap();
    assert_eq!(images.len(), 1, "page {page} holds one image");
    images.remove(0)
}

#[test]
fn jpeg_inputs_are_embedded_byte_for_byte() {
    let r = ocr(&["rgb_jfif.jpg", "cmyk_adobe.jpg"], 2);
    let img = page_image(&r.pdf, 1);
    assert_eq!(
        img.content,
        &std::fs::read(fixture("rgb_jfif.jpg")).unwrap()[..]
    );
    assert_eq!(img.filters.as_deref(), Some(&["DCTDecode".to_string()][..]));
    assert_eq!(img.color_space.as_deref(), Some("DeviceRGB"));
    let img = page_image(&r.pdf, 2);
    assert_eq!(
        img.content,
        &std::fs::read(fixture("cmyk_adobe.jpg")).unwrap()[..]
    );
    assert_eq!(img.color_space.as_deref(), Some("DeviceCMYK"));
    // Adobe CMYK JPEGs hold inverted samples: /Decode [1 0 1 0 1 0 1 0] (ISO 32000-1 §8.9.5.2).
    let decode: Vec<f32> = img
        .origin_dict
        .get(b"Decode")
        .unwrap()
        .as_array()
        .unwrap()
        .iter()
        .map(|o| o.as_float().unwrap())
        .collect();
    assert_eq!(decode, [1.0, 0.0, 1.0, 0.0, 1.0, 0.0, 1.0, 0.0]);
}

#[test]
fn cmyk_jpeg_renders_with_the_right_polarity() {
    // Rendered by poppler's pdftoppm (Debian poppler-utils, installed by tests/run.sh) at the
    // JPEG's own 300 dpi, so page pixels are image pixels. Without /Decode [1 0 …] the inverted
    // Adobe samples render the blue corner near black (checked by removing it: [28, 15, 0]).
    let r = ocr(&["cmyk_adobe.jpg"], 1);
    let pdf = r.dir.path().join("out.pdf");
    let prefix = r.dir.path().join("render");
    let out = run(Command::new("pdftoppm")
        .args(["-r", "300", "-png"])
        .arg(&pdf)
        .arg(&prefix));
    assert!(
        out.status.success(),
        "pdftoppm: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let png = r.dir.path().join("render-1.png");
    let img = image::open(&png).expect("pdftoppm wrote a PNG").to_rgb8();
    assert_eq!(img.dimensions(), (W, H));
    let block = img.get_pixel(10, 5).0; // K = 255
    assert!(
        block.iter().all(|&c| c < 70),
        "block {block:?} should be near black"
    );
    let corner = img.get_pixel(90, 40).0; // C ≈ 242, M ≈ 162, Y = K = 0: a blue
    assert!(
        corner[2] > 140 && corner[0] < 80,
        "corner {corner:?} should be blue"
    );
}

#[test]
fn jpeg_2000_input_is_embedded_as_jpx() {
    let r = ocr(&["rgb_lossless.jp2"], 1);
    let img = page_image(&r.pdf, 1);
    assert_eq!(
        img.content,
        &std::fs::read(fixture("rgb_lossless.jp2")).unwrap()[..]
    );
    assert_eq!(img.filters.as_deref(), Some(&["JPXDecode".to_string()][..]));
}

#[test]
fn three_page_tiff_gives_three_pages_sized_by_resolution() {
    let r = ocr(&["three_pages.tif"], 3);
    let pages = r.pdf.get_pages();
    assert_eq!(pages.len(), 3);
    // (pixels, dpi) per page as make_images.py wrote them; 1 pt = 1/72 in (ISO 32000-1 §8.3.2.3).
    let expect = [
        ((96.0, 64.0), 200.0),
        ((80.0, 40.0), 300.0),
        ((48.0, 96.0), 150.0),
    ];
    for (n, ((w, h), dpi)) in expect.into_iter().enumerate() {
        let page = r.pdf.get_dictionary(pages[&(n as u32 + 1)]).unwrap();
        let mb: Vec<f32> = page
            .get(b"MediaBox")
            .unwrap()
            .as_array()
            .unwrap()
            .iter()
            .map(|o| o.as_float().unwrap())
            .collect();
        let want = [0.0, 0.0, w * 72.0 / dpi, h * 72.0 / dpi];
        assert!(
            mb.iter().zip(want).all(|(a, b)| (a - b).abs() < 0.01),
            "page {}: MediaBox {mb:?}, want {want:?}",
            n + 1
        );
    }
}

#[test]
fn one_bit_tiff_becomes_ccitt_g4_that_decodes_to_the_same_pixels() {
    let r = ocr(&["bw_none_miniswhite.tif"], 1);
    let img = page_image(&r.pdf, 1);
    assert_eq!(
        img.filters.as_deref(),
        Some(&["CCITTFaxDecode".to_string()][..])
    );
    assert_eq!(img.bits_per_component, Some(1));
    let parms = img
        .origin_dict
        .get(b"DecodeParms")
        .unwrap()
        .as_dict()
        .unwrap();
    assert_eq!(parms.get(b"K").unwrap().as_i64().unwrap(), -1); // pure G4 (ISO 32000-1 Table 11)
    assert_eq!((img.width, img.height), (W as i64, H as i64));
    // Decode with the `fax` crate (crates.io), an independent ITU-T T.6 decoder.
    let mut rows: Vec<Vec<bool>> = Vec::new();
    fax::decoder::decode_g4(img.content.iter().copied(), W, Some(H), |transitions| {
        rows.push(
            fax::decoder::pels(transitions, W)
                .map(|c| c == fax::Color::Black)
                .collect(),
        );
    })
    .expect("valid G4 data");
    assert_eq!(rows.len(), H as usize);
    for (y, row) in rows.iter().enumerate() {
        for (x, &black) in row.iter().enumerate() {
            assert_eq!(black, ink(x as u32, y as u32), "pixel ({x},{y})");
        }
    }
}
