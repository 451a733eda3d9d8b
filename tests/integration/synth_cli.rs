//! `mistara synth`: files written, ground truth readable, bad options refused with nothing written.

use crate::util::{mistara, run};

#[test]
fn synth_lines_writes_images_transcripts_and_a_font_manifest() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("lines");
    let o = run(mistara()
        .args([
            "synth",
            "lines",
            "--count",
            "5",
            "--seed",
            "4",
            "--degrade",
            "0.4",
            "--warp",
            "0.8",
            "--out",
        ])
        .arg(&out));
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    for i in 0..5 {
        let img = image::open(out.join(format!("{i:06}.png"))).unwrap();
        assert!(img.width() > 0 && img.height() > 0);
        let text = std::fs::read_to_string(out.join(format!("{i:06}.gt.txt"))).unwrap();
        let line = text.strip_suffix('\n').unwrap();
        assert!(
            !line.contains('\n') && line.trim() == line && !line.is_empty(),
            "{text:?}"
        );
    }
    let manifest = std::fs::read_to_string(out.join("manifest.tsv")).unwrap();
    assert_eq!(manifest.lines().count(), 6);
    assert!(manifest
        .lines()
        .skip(1)
        .all(|l| l.split('\t').count() == 8 && l.contains("train")));
}

#[test]
fn synth_pages_and_book_write_truth_beside_the_images() {
    let dir = tempfile::tempdir().unwrap();
    let pages = dir.path().join("pages");
    let o = run(mistara()
        .args(["synth", "pages", "--count", "2", "--out"])
        .arg(&pages));
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let truth: mistara::text::PageText =
        serde_json::from_slice(&std::fs::read(pages.join("000001.json")).unwrap()).unwrap();
    assert!(truth.word_count() > 20);
    let book = dir.path().join("book.pdf");
    let o = run(mistara()
        .args([
            "synth",
            "book",
            "--pages",
            "2",
            "--fonts",
            "heldout",
            "--degrade",
            "0.7",
            "--out",
        ])
        .arg(&book));
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(std::fs::read(&book).unwrap().starts_with(b"%PDF-"));
    let t: mistara::pipeline::Transcript =
        serde_json::from_slice(&std::fs::read(dir.path().join("book.json")).unwrap()).unwrap();
    assert_eq!(t.pages.len(), 2);
}

#[test]
fn bad_synth_options_fail_cleanly_and_write_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("never");
    let o = run(mistara()
        .args([
            "synth",
            "lines",
            "--count",
            "2",
            "--degrade",
            "1.5",
            "--out",
        ])
        .arg(&out));
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--degrade"));
    assert!(!out.exists());
    let o = run(mistara()
        .args(["synth", "lines", "--count", "2", "--warp", "2", "--out"])
        .arg(&out));
    assert_eq!(o.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--warp"));
    assert!(!out.exists());
    let not_pdf = dir.path().join("book.txt");
    let o = run(mistara()
        .args(["synth", "book", "--pages", "1", "--out"])
        .arg(&not_pdf));
    assert_eq!(o.status.code(), Some(1));
    assert!(!not_pdf.exists() && !dir.path().join("book.json").exists());
    let file = dir.path().join("a-file");
    std::fs::write(&file, b"x").unwrap();
    let o = run(mistara()
        .args(["synth", "pages", "--count", "1", "--out"])
        .arg(&file));
    assert_eq!(o.status.code(), Some(1));
    assert_eq!(std::fs::read(&file).unwrap(), b"x");
}
