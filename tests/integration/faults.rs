//! Unreadable pages and faults around a run: a page that cannot be decoded is reported and kept
//! without text (or fails the document with `--strict`); an output folder that cannot be written
//! and a full disk give one clear line, exit status 1, no output and no temporary file, and the
//! input is never changed.
//!
//! PDF inputs are built here with lopdf (crates.io); outputs are read back with lopdf and
//! poppler's pdftotext (Debian poppler-utils).

use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use image::GrayImage;
use lopdf::{dictionary, Document, Object, Stream};

use crate::util::{extract, mistara, normalized_lines, run, test_page, write_inputs, Reader};

/// One page of a PDF built for a test.
pub struct PdfPage<'a> {
    /// The scan, drawn over the whole page at 150 dpi.
    pub image: &'a GrayImage,
    /// Replace the image's Flate data by bytes that do not inflate.
    pub corrupt: bool,
    /// More content after the image (may use the font /F1, Helvetica).
    pub extra: &'a [u8],
}

/// Bytes that are not a zlib stream (the header's check bits are wrong, RFC 1950 §2.2).
pub const NOT_ZLIB: &[u8] = b"\x78\x00 these bytes were damaged in storage";

/// An image-only PDF (8-bit grey Flate images, one per page, ISO 32000-1 §8.9.5) with optional
/// extra content per page.
pub fn image_pdf(pages: &[PdfPage]) -> Vec<u8> {
    let mut doc = Document::with_version("1.7");
    let tree = doc.new_object_id();
    let font = doc.add_object(dictionary! {
        "Type" => "Font", "Subtype" => "Type1", "BaseFont" => "Helvetica",
        "Encoding" => "WinAnsiEncoding",
    });
    let mut kids = Vec::new();
    for p in pages {
        let (w, h) = p.image.dimensions();
        let data = if p.corrupt {
            NOT_ZLIB.to_vec()
        } else {
            let mut z = flate2::write::ZlibEncoder::new(Vec::new(), flate2::Compression::fast());
            z.write_all(p.image.as_raw()).unwrap();
            z.finish().unwrap()
        };
        let image = doc.add_object(Stream::new(
            dictionary! {
                "Type" => "XObject", "Subtype" => "Image", "Width" => w as i64,
                "Height" => h as i64, "ColorSpace" => "DeviceGray", "BitsPerComponent" => 8,
                "Filter" => "FlateDecode",
            },
            data,
        ));
        let (wp, hp) = (w as f32 * 72.0 / 150.0, h as f32 * 72.0 / 150.0);
        let mut content = format!("q {wp} 0 0 {hp} 0 0 cm /Im0 Do Q\n").into_bytes();
        content.extend_from_slice(p.extra);
        let content = doc.add_object(Stream::new(dictionary! {}, content));
        kids.push(Object::Reference(doc.add_object(dictionary! {
            "Type" => "Page", "Parent" => tree,
            "MediaBox" => vec![0.into(), 0.into(), wp.into(), hp.into()],
            "Contents" => content,
            "Resources" => dictionary! {
                "XObject" => dictionary! { "Im0" => image },
                "Font" => dictionary! { "F1" => font },
            },
        })));
    }
    let count = kids.len() as i64;
    doc.objects.insert(
        tree,
        Object::Dictionary(dictionary! { "Type" => "Pages", "Kids" => kids, "Count" => count }),
    );
    let catalog = doc.add_object(dictionary! { "Type" => "Catalog", "Pages" => tree });
    doc.trailer.set("Root", catalog);
    let mut out = Vec::new();
    doc.save_to(&mut out).unwrap();
    out
}

/// The text poppler extracts, page by page (lines normalized).
pub fn poppler_pages(pdf: &Path, count: usize) -> Vec<Vec<String>> {
    let text = extract(Reader::Poppler, pdf);
    let pages: Vec<Vec<String>> = text.split('\u{000C}').map(normalized_lines).collect();
    assert!(pages.len() >= count, "{pages:?}");
    pages[..count].to_vec()
}

/// Names in `dir`, sorted.
pub fn listing(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    v.sort();
    v
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

fn ocr(inputs: &[PathBuf], out: &Path, transcript: &Path, extra: &[&str]) -> Output {
    run(mistara()
        .arg("ocr")
        .args(inputs)
        .arg("-o")
        .arg(out)
        .arg("--layer-from")
        .arg(transcript)
        .args(extra))
}

/// One line on stderr, `mistara: error: …` holding every one of `words`; exit status 1.
fn assert_one_line_error(o: &Output, words: &[&str]) {
    let err = stderr(o);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert_eq!(err.lines().count(), 1, "{err}");
    assert!(err.starts_with("mistara: error: "), "{err}");
    for w in words {
        assert!(err.contains(w), "lacks {w:?}: {err}");
    }
}

const LINES: [&str; 3] = ["سجل المقتنيات", "دفتر الإعارة", "فهرس المخطوطات"];

#[test]
fn pdf_page_with_a_damaged_image_is_kept_without_text() {
    let dir = tempfile::tempdir().unwrap();
    let pages: Vec<_> = LINES.iter().map(|l| test_page(&[l])).collect();
    let (_, transcript) = write_inputs(dir.path(), &pages);
    let input = dir.path().join("register.pdf");
    let pdf: Vec<PdfPage> = pages
        .iter()
        .enumerate()
        .map(|(i, p)| PdfPage {
            image: &p.image,
            corrupt: i == 1,
            extra: b"",
        })
        .collect();
    std::fs::write(&input, image_pdf(&pdf)).unwrap();
    let before = std::fs::read(&input).unwrap();
    let out = dir.path().join("out.pdf");

    let o = ocr(
        std::slice::from_ref(&input),
        &out,
        &transcript,
        &["--quiet"],
    );
    let err = stderr(&o);
    assert!(o.status.success(), "{err}");
    let warning = err.lines().find(|l| l.starts_with("mistara: warning: "));
    assert!(
        warning
            .is_some_and(|w| w.contains("register.pdf, page 2") && w.contains("kept without text")),
        "{err}"
    );
    assert_eq!(
        poppler_pages(&out, 3),
        [
            vec![LINES[0].to_string()],
            vec![],
            vec![LINES[2].to_string()]
        ]
    );
    // Page 2 is there, its damaged image kept byte for byte (lopdf reads it back).
    let doc = Document::load(&out).unwrap();
    assert_eq!(doc.get_pages().len(), 3);
    assert!(doc
        .objects
        .values()
        .filter_map(|o| o.as_stream().ok())
        .any(|s| s.content == NOT_ZLIB));

    // --strict: the document fails, nothing is written.
    std::fs::remove_file(&out).unwrap();
    let o = ocr(
        std::slice::from_ref(&input),
        &out,
        &transcript,
        &["--strict"],
    );
    assert_one_line_error(&o, &["register.pdf, page 2", "nothing written"]);
    assert_eq!(
        listing(dir.path()),
        [
            "page-001.png",
            "page-002.png",
            "page-003.png",
            "register.pdf",
            "transcript.json"
        ]
    );
    assert_eq!(std::fs::read(&input).unwrap(), before, "input unchanged");
}

#[test]
fn image_that_cannot_be_decoded_leaves_a_blank_page_in_its_place() {
    let dir = tempfile::tempdir().unwrap();
    let pages: Vec<_> = LINES.iter().map(|l| test_page(&[l])).collect();
    let (pngs, transcript) = write_inputs(dir.path(), &pages);
    // Page 2 cut short: the PNG header is whole, the pixel data is not.
    let cut = std::fs::read(&pngs[1]).unwrap();
    std::fs::write(&pngs[1], &cut[..cut.len() / 2]).unwrap();
    let out = dir.path().join("out.pdf");
    let o = ocr(&pngs, &out, &transcript, &["--quiet"]);
    let err = stderr(&o);
    assert!(o.status.success(), "{err}");
    assert!(
        err.lines().any(|l| l.starts_with("mistara: warning: ")
            && l.contains("page-002.png")
            && l.contains("kept without text")),
        "{err}"
    );
    assert_eq!(
        poppler_pages(&out, 3),
        [
            vec![LINES[0].to_string()],
            vec![],
            vec![LINES[2].to_string()]
        ]
    );
    // The blank page has the size of the page before it.
    let doc = Document::load(&out).unwrap();
    let boxes: Vec<_> = doc
        .page_iter()
        .map(|p| {
            doc.get_dictionary(p)
                .unwrap()
                .get(b"MediaBox")
                .unwrap()
                .clone()
        })
        .collect();
    assert_eq!(boxes.len(), 3);
    assert_eq!(boxes[0], boxes[1]);

    let strict_out = dir.path().join("strict.pdf");
    let o = ocr(&pngs, &strict_out, &transcript, &["--strict"]);
    assert_one_line_error(&o, &["page-002.png"]);
    assert!(!strict_out.exists());
}

#[test]
fn output_folder_that_is_a_file_is_a_clear_error() {
    // Running as root makes chmod 0555 folders writable, so the folder here is a regular file.
    let dir = tempfile::tempdir().unwrap();
    let (pngs, transcript) = write_inputs(dir.path(), &[test_page(&[LINES[0]])]);
    let not_a_folder = dir.path().join("file.txt");
    std::fs::write(&not_a_folder, "قائمة").unwrap();
    let before = listing(dir.path());
    let o = ocr(&pngs, &not_a_folder.join("out.pdf"), &transcript, &[]);
    assert_one_line_error(&o, &["out.pdf", "cannot", "file.txt", "Not a directory"]);
    assert!(!stderr(&o).contains(".mistara-"), "{}", stderr(&o));
    assert_eq!(listing(dir.path()), before);
    assert_eq!(std::fs::read_to_string(&not_a_folder).unwrap(), "قائمة");
}

#[test]
fn full_disk_is_a_clear_error_and_leaves_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let (pngs, transcript) = write_inputs(dir.path(), &[test_page(&[LINES[0], LINES[1]])]);
    let input = std::fs::read(&pngs[0]).unwrap();
    // Control: without a limit the PDF is well over the 2 KiB the limited run may write.
    let free = dir.path().join("free.pdf");
    assert!(ocr(&pngs, &free, &transcript, &[]).status.success());
    let size = std::fs::metadata(&free).unwrap().len();
    assert!(size > 4 * 1024, "{size} bytes");
    std::fs::remove_file(&free).unwrap();
    let before = listing(dir.path());
    // bash's `ulimit -f` counts 1024-byte blocks; with SIGXFSZ ignored, writes past the limit
    // fail with EFBIG, as on a full disk (POSIX setrlimit RLIMIT_FSIZE).
    let out = dir.path().join("out.pdf");
    let o = run(Command::new("bash")
        .arg("-c")
        .arg(r#"ulimit -f 2; trap '' XFSZ; exec "$@""#)
        .arg("bash")
        .arg(mistara().get_program())
        .arg("ocr")
        .args(&pngs)
        .arg("-o")
        .arg(&out)
        .arg("--layer-from")
        .arg(&transcript));
    assert_one_line_error(&o, &["out.pdf", "cannot write", "too large"]);
    assert_eq!(listing(dir.path()), before, "no output, no temp file");
    assert_eq!(std::fs::read(&pngs[0]).unwrap(), input);
}
