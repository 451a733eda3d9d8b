//! Pages that already carry text: left as they are by default (with a note); with
//! `--replace-layer` an invisible layer (render mode 3, ISO 32000-1 §9.3.6) gives way to the new
//! one, so the text is found once, not twice; visible text is never touched. Text is read back
//! with poppler's pdftotext (Debian poppler-utils); objects with lopdf (crates.io).

use std::path::{Path, PathBuf};
use std::process::Output;

use lopdf::Document;

use crate::faults::{image_pdf, poppler_pages, PdfPage};
use crate::util::{mistara, run, test_page, write_inputs};

fn ocr(input: &Path, out: &Path, transcript: &Path, extra: &[&str]) -> Output {
    let o = run(mistara()
        .arg("ocr")
        .arg(input)
        .arg("-o")
        .arg(out)
        .arg("--layer-from")
        .arg(transcript)
        .args(extra));
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    o
}

/// Bytes of every image XObject stream, sorted (the scans must pass through unchanged).
fn image_data(pdf: &Path) -> Vec<Vec<u8>> {
    let doc = Document::load(pdf).unwrap();
    let mut v: Vec<Vec<u8>> = doc
        .objects
        .values()
        .filter_map(|o| o.as_stream().ok())
        .filter(|s| {
            s.dict
                .get(b"Subtype")
                .and_then(|n| n.as_name())
                .is_ok_and(|n| n == b"Image")
        })
        .map(|s| s.content.clone())
        .collect();
    v.sort();
    v
}

/// A transcript file for one page of `line`, written as `name` in `dir`.
fn one_page_transcript(dir: &Path, name: &str, line: &str) -> PathBuf {
    let (_, t) = write_inputs(dir, &[test_page(&[line])]);
    let path = dir.join(name);
    std::fs::rename(t, &path).unwrap();
    path
}

#[test]
fn a_second_run_on_its_own_output_keeps_or_replaces_the_layer() {
    let dir = tempfile::tempdir().unwrap();
    let page = test_page(&["سجل المقتنيات القديم"]);
    let scan = dir.path().join("scan.pdf");
    std::fs::write(
        &scan,
        image_pdf(&[PdfPage {
            image: &page.image,
            corrupt: false,
            extra: b"",
        }]),
    )
    .unwrap();
    let old = one_page_transcript(dir.path(), "old.json", "سجل المقتنيات القديم");
    let new = one_page_transcript(dir.path(), "new.json", "سجل المقتنيات الجديد");
    let first = dir.path().join("first.pdf");
    ocr(&scan, &first, &old, &[]);
    let first_text = poppler_pages(&first, 1);
    assert_eq!(first_text, [["سجل المقتنيات القديم"]]);

    // Without the option: the page is left as it is, and the run says so.
    let kept = dir.path().join("kept.pdf");
    let o = ocr(&first, &kept, &new, &[]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("page(s) 1 already carry text and were left as they were"),
        "{err}"
    );
    assert_eq!(poppler_pages(&kept, 1), first_text);

    // With it: the old layer is gone and the new text is there once.
    let replaced = dir.path().join("replaced.pdf");
    let o = ocr(&first, &replaced, &new, &["--replace-layer"]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("page(s) 1: their invisible text layer was replaced"),
        "{err}"
    );
    assert_eq!(poppler_pages(&replaced, 1), [["سجل المقتنيات الجديد"]]);
    assert_eq!(
        image_data(&replaced),
        image_data(&scan),
        "the scan is untouched"
    );
}

#[test]
fn visible_text_is_never_replaced() {
    let dir = tempfile::tempdir().unwrap();
    let page = test_page(&["دفتر الإعارة"]);
    // Page 1: a scan under another program's invisible layer; page 2: a scan with a visible
    // caption drawn over it (render mode 0, the default).
    let layer = b"BT 3 Tr /F1 24 Tf 72 700 Td (oldlayer) Tj ET\n";
    let caption = b"BT /F1 24 Tf 72 72 Td (Caption) Tj ET\n";
    let input = dir.path().join("mixed.pdf");
    std::fs::write(
        &input,
        image_pdf(&[
            PdfPage {
                image: &page.image,
                corrupt: false,
                extra: layer,
            },
            PdfPage {
                image: &page.image,
                corrupt: false,
                extra: caption,
            },
        ]),
    )
    .unwrap();
    let before = poppler_pages(&input, 2);
    assert_eq!(before, [vec!["oldlayer"], vec!["Caption"]]);
    let (_, t) = write_inputs(dir.path(), &[page, test_page(&["نص لا يوضع"])]);
    let out = dir.path().join("out.pdf");
    let o = ocr(&input, &out, &t, &["--replace-layer"]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("page(s) 2 already carry text"), "{err}");
    assert!(
        err.contains("page(s) 1: their invisible text layer was replaced"),
        "{err}"
    );
    assert_eq!(
        poppler_pages(&out, 2),
        [vec!["دفتر الإعارة"], vec!["Caption"]]
    );
    // Page 2's content is the original stream, byte for byte.
    let (a, b) = (
        Document::load(&input).unwrap(),
        Document::load(&out).unwrap(),
    );
    let page2 = |d: &Document| d.get_page_content(d.page_iter().nth(1).unwrap());
    assert_eq!(page2(&b), page2(&a));
}
