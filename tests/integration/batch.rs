//! `mistara ocr` on folders: one output per document with mirrored names, folders of page images
//! in natural order, resuming, shards that split a shelf exactly once and stay put when files are
//! added, and a failing document that does not stop the others.
//!
//! Texts are laid from transcripts (`--layer-from DIR`), so the outputs are exactly known; the
//! PDFs are read back with poppler's pdftotext (Debian poppler-utils) and lopdf (crates.io).

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::process::Output;

use mistara::pipeline::Transcript;
use mistara::text::PageText;

use crate::image_input::fixture;
use crate::util::{extract, mistara, normalized_lines, run, test_page, Reader};

/// Write a transcript of `pages` at `path` (folders made as needed).
fn transcript(path: &Path, pages: Vec<PageText>) {
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(path, serde_json::to_vec(&Transcript { pages }).unwrap()).unwrap();
}

/// A one-line test page saved as `path` (format from its extension), its transcript at `json`.
fn page_file(path: &Path, json: &Path, line: &str) {
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    let p = test_page(&[line]);
    p.image.save(path).unwrap();
    transcript(json, vec![p.text]);
}

/// `mistara ocr SHELF -o OUT --layer-from TEXTS --quiet` plus `extra`.
fn ocr_batch(shelf: &Path, out: &Path, texts: &Path, extra: &[&str]) -> Output {
    run(mistara()
        .arg("ocr")
        .arg(shelf)
        .arg("-o")
        .arg(out)
        .arg("--layer-from")
        .arg(texts)
        .arg("--quiet")
        .args(extra))
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Every file under `dir`, relative, `/`-separated, sorted.
fn files_under(dir: &Path) -> Vec<String> {
    fn walk(root: &Path, dir: &Path, out: &mut Vec<String>) {
        for e in std::fs::read_dir(dir).unwrap() {
            let p = e.unwrap().path();
            if p.is_dir() {
                walk(root, &p, out);
            } else {
                let rel = p.strip_prefix(root).unwrap().to_string_lossy();
                out.push(rel.replace('\\', "/"));
            }
        }
    }
    let mut out = Vec::new();
    if dir.exists() {
        walk(dir, dir, &mut out);
    }
    out.sort();
    out
}

fn modified(p: &Path) -> std::time::SystemTime {
    std::fs::metadata(p).unwrap().modified().unwrap()
}

/// A shelf: a folder of page images (named so that plain order would be wrong), a multi-page
/// TIFF two folders down, a PDF made by an earlier run, and a note that is neither.
fn make_shelf(root: &Path) -> (PathBuf, PathBuf) {
    let (shelf, texts) = (root.join("shelf"), root.join("texts"));
    let register = shelf.join("register");
    std::fs::create_dir_all(&register).unwrap();
    let lines = ["الصفحة الأولى", "الصفحة الثانية", "الصفحة العاشرة"];
    let mut pages = Vec::new();
    for (n, line) in [1, 2, 10].iter().zip(lines) {
        let p = test_page(&[line]);
        p.image
            .save(register.join(format!("page-{n}.png")))
            .unwrap();
        pages.push(p.text);
    }
    transcript(&texts.join("register.json"), pages);
    let tiff = shelf.join("filings/2024/case-17.tif");
    std::fs::create_dir_all(tiff.parent().unwrap()).unwrap();
    std::fs::copy(fixture("three_pages.tif"), &tiff).unwrap();
    transcript(
        &texts.join("filings/2024/case-17.json"),
        vec![PageText::default(); 3],
    );
    let png = root.join("case-3.png");
    page_file(&png, &root.join("case-3.json"), "قضية رقم ٣");
    let made = run(mistara()
        .arg("ocr")
        .arg(&png)
        .arg("-o")
        .arg(shelf.join("filings/case-3.pdf"))
        .arg("--layer-from")
        .arg(root.join("case-3.json")));
    assert!(made.status.success(), "{}", stderr(&made));
    // The PDF already carries our layer: it is copied with its pages left as they are.
    transcript(
        &texts.join("filings/case-3.json"),
        vec![PageText::default()],
    );
    std::fs::write(shelf.join("filings/notes.txt"), "قائمة الملفات\n").unwrap();
    (shelf, texts)
}

#[test]
fn folders_mirror_names_and_resume() {
    let root = tempfile::tempdir().unwrap();
    let (shelf, texts) = make_shelf(root.path());
    let out = root.path().join("out");
    let o = ocr_batch(&shelf, &out, &texts, &["--txt", out.to_str().unwrap()]);
    let err = stderr(&o);
    assert!(o.status.success(), "{err}");
    assert_eq!(
        files_under(&out),
        [
            "filings/2024/case-17.pdf",
            "filings/2024/case-17.txt",
            "filings/case-3.pdf",
            "filings/case-3.txt",
            "register.pdf",
            "register.txt"
        ]
    );
    assert!(
        err.contains("3 documents: 3 written, 0 up to date, 0 failed; 7 pages")
            && err.contains("1 files neither PDF nor image ignored"),
        "{err}"
    );
    // The folder's pages in natural order: page-1, page-2, page-10 (poppler, form feed per page).
    let text = extract(Reader::Poppler, &out.join("register.pdf"));
    let pages: Vec<Vec<String>> = text
        .split('\u{000C}')
        .map(normalized_lines)
        .filter(|p| !p.is_empty())
        .collect();
    assert_eq!(
        pages,
        [["الصفحة الأولى"], ["الصفحة الثانية"], ["الصفحة العاشرة"]]
    );
    let tiff_pdf = lopdf::Document::load(out.join("filings/2024/case-17.pdf")).unwrap();
    assert_eq!(tiff_pdf.get_pages().len(), 3, "one document, three pages");

    // Again: everything is up to date and nothing is touched.
    let stamps: Vec<_> = files_under(&out)
        .iter()
        .map(|f| modified(&out.join(f)))
        .collect();
    let o = ocr_batch(&shelf, &out, &texts, &["--txt", out.to_str().unwrap()]);
    assert!(
        stderr(&o).contains("0 written, 3 up to date"),
        "{}",
        stderr(&o)
    );
    let again: Vec<_> = files_under(&out)
        .iter()
        .map(|f| modified(&out.join(f)))
        .collect();
    assert_eq!(stamps, again);

    // A changed input and a missing output are redone; the rest stay skipped.
    std::thread::sleep(std::time::Duration::from_millis(20));
    let tiff = shelf.join("filings/2024/case-17.tif");
    std::fs::write(&tiff, std::fs::read(&tiff).unwrap()).unwrap();
    std::fs::remove_file(out.join("register.txt")).unwrap();
    let o = ocr_batch(&shelf, &out, &texts, &["--txt", out.to_str().unwrap()]);
    assert!(
        stderr(&o).contains("2 written, 1 up to date"),
        "{}",
        stderr(&o)
    );
    assert_eq!(files_under(&out).len(), 6);
    let o = ocr_batch(&shelf, &out, &texts, &["--redo"]);
    assert!(
        stderr(&o).contains("3 written, 0 up to date"),
        "{}",
        stderr(&o)
    );
}

/// Eight one-page TIFF documents in `shelf`, transcripts in `texts`.
fn tiff_shelf(root: &Path, names: &[&str]) -> (PathBuf, PathBuf) {
    let (shelf, texts) = (root.join("shelf"), root.join("texts"));
    for name in names {
        page_file(
            &shelf.join(format!("{name}.tif")),
            &texts.join(format!("{name}.json")),
            "ملف",
        );
    }
    (shelf, texts)
}

/// The documents each shard of `count` writes, run into fresh folders named with `tag`.
fn shard_sets(
    root: &Path,
    shelf: &Path,
    texts: &Path,
    count: usize,
    tag: &str,
) -> Vec<BTreeSet<String>> {
    (1..=count)
        .map(|i| {
            let out = root.join(format!("out-{tag}-{i}-of-{count}"));
            let o = ocr_batch(shelf, &out, texts, &["--shard", &format!("{i}/{count}")]);
            assert!(o.status.success(), "{}", stderr(&o));
            files_under(&out).into_iter().collect()
        })
        .collect()
}

#[test]
fn shards_take_every_document_once_and_stay_put() {
    let root = tempfile::tempdir().unwrap();
    let names = [
        "case-01", "case-02", "case-03", "case-04", "case-05", "case-06", "case-07", "case-08",
    ];
    let (shelf, texts) = tiff_shelf(root.path(), &names);
    let sets = shard_sets(root.path(), &shelf, &texts, 3, "first");
    let mut all: Vec<String> = sets.iter().flatten().cloned().collect();
    all.sort();
    let want: Vec<String> = names.iter().map(|n| format!("{n}.pdf")).collect();
    assert_eq!(all, want, "each document in exactly one shard");
    // Same command, same split.
    assert_eq!(shard_sets(root.path(), &shelf, &texts, 3, "again"), sets);
    // A new document joins one shard; nobody else moves.
    tiff_shelf(root.path(), &["case-09"]);
    let grown = shard_sets(root.path(), &shelf, &texts, 3, "grown");
    for (before, after) in sets.iter().zip(&grown) {
        assert!(before.is_subset(after), "{before:?} → {after:?}");
    }
    assert_eq!(grown.iter().map(BTreeSet::len).sum::<usize>(), 9);
}

#[test]
fn a_failing_document_does_not_stop_the_others() {
    let root = tempfile::tempdir().unwrap();
    let (shelf, texts) = tiff_shelf(root.path(), &["a-good", "c-good"]);
    let bad = shelf.join("b-broken.tif");
    let bad_bytes = std::fs::read(fixture("three_pages.tif")).unwrap()[..300].to_vec();
    std::fs::write(&bad, &bad_bytes).unwrap();
    transcript(&texts.join("b-broken.json"), vec![PageText::default(); 3]);
    let out = root.path().join("out");
    let o = ocr_batch(&shelf, &out, &texts, &[]);
    let err = stderr(&o);
    assert_eq!(o.status.code(), Some(1), "{err}");
    assert!(
        err.lines()
            .any(|l| l.starts_with("mistara: error: ") && l.contains("b-broken.tif")),
        "{err}"
    );
    assert!(
        err.contains("3 documents: 2 written, 0 up to date, 1 failed"),
        "{err}"
    );
    assert!(!err.contains("panicked"), "{err}");
    assert_eq!(
        files_under(&out),
        ["a-good.pdf", "c-good.pdf"],
        "no temp file"
    );
    assert_eq!(std::fs::read(&bad).unwrap(), bad_bytes, "input unchanged");
}

#[test]
fn several_pdfs_are_a_batch_and_shared_names_are_refused() {
    let root = tempfile::tempdir().unwrap();
    let (shelf, texts) = tiff_shelf(root.path(), &["deed"]);
    // Two PDFs given as files: each its own output, named after the file.
    let mut pdfs = Vec::new();
    for name in ["deed-a", "deed-b"] {
        let pdf = root.path().join(format!("{name}.pdf"));
        let o = run(mistara()
            .arg("ocr")
            .arg(shelf.join("deed.tif"))
            .arg("-o")
            .arg(&pdf)
            .arg("--layer-from")
            .arg(texts.join("deed.json")));
        assert!(o.status.success(), "{}", stderr(&o));
        transcript(
            &texts.join(format!("{name}.json")),
            vec![PageText::default()],
        );
        pdfs.push(pdf);
    }
    let out = root.path().join("out");
    let o = run(mistara()
        .arg("ocr")
        .args(&pdfs)
        .arg("-o")
        .arg(&out)
        .arg("--layer-from")
        .arg(&texts));
    assert!(o.status.success(), "{}", stderr(&o));
    assert_eq!(files_under(&out), ["deed-a.pdf", "deed-b.pdf"]);

    // deed.tif and deed.pdf side by side would both become deed.pdf: refused, nothing written.
    std::fs::copy(&pdfs[0], shelf.join("deed.pdf")).unwrap();
    let out2 = root.path().join("out2");
    let o = ocr_batch(&shelf, &out2, &texts, &[]);
    assert_eq!(o.status.code(), Some(1));
    let err = stderr(&o);
    assert!(
        err.contains("would both be written as deed.pdf") && err.lines().count() == 1,
        "{err}"
    );
    assert!(!out2.exists());

    // -o naming a file cannot take a batch.
    let o = ocr_batch(&shelf, &pdfs[0], &texts, &[]);
    assert_eq!(o.status.code(), Some(1));
    assert!(stderr(&o).contains("must be a folder"), "{}", stderr(&o));
}
