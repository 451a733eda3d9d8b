//! `mistara find` on PDFs written by mistara: folding, hits across line breaks, none across pages.

use std::path::PathBuf;

use crate::util::{mistara, ocr_with_transcript, run, test_page, write_inputs};

struct Shelf {
    _dir: tempfile::TempDir,
    pdf: PathBuf,
    bare: PathBuf,
}

fn shelf() -> Shelf {
    let dir = tempfile::tempdir().unwrap();
    let pages = [
        test_page(&[
            "سجل المقتنيات في مكتبة وادي الريحان العامة",
            "وصلت إلى المكتبة كتب قديمة",
            "والمكتبة مفتوحة ما عدا الجمعة",
        ]),
        test_page(&[
            "القضية رقم 2024/117 أمام المَحكَمة",
            "صدر الحكم سنة ١٩٣٤ الموافق 1934",
        ]),
    ];
    let (pngs, transcript) = write_inputs(dir.path(), &pages);
    let pdf = dir.path().join("filings.pdf");
    ocr_with_transcript(&pngs, &transcript, &pdf, &[]);
    // The same pages without text: a PDF with no text layer.
    let empty = dir.path().join("empty.json");
    std::fs::write(&empty, r#"{"pages":[{"lines":[]},{"lines":[]}]}"#).unwrap();
    let bare = dir.path().join("bare").join("scan.pdf");
    std::fs::create_dir_all(bare.parent().unwrap()).unwrap();
    ocr_with_transcript(&pngs, &empty, &bare, &[]);
    Shelf {
        _dir: dir,
        pdf,
        bare,
    }
}

fn find(args: &[&str], paths: &[&PathBuf]) -> (i32, String, String) {
    // The index goes to a folder beside the shelf (through the usual XDG variable), never into
    // the tester's own cache.
    let cache = paths[0].parent().unwrap().join("xdg-cache");
    let out = run(mistara()
        .arg("find")
        .args(args)
        .args(paths)
        .env("XDG_CACHE_HOME", cache));
    (
        out.status.code().unwrap(),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

#[test]
fn folded_search_finds_other_spellings() {
    let s = shelf();
    // ة/ه folded: "المحكمه" finds "المحكمة" on page 2 (the layer itself drops harakat by default).
    let (code, out, _) = find(&["المحكمه"], &[&s.pdf]);
    assert_eq!(code, 0);
    assert!(
        out.contains("filings.pdf:2:") && out.contains("⟦المحكمة⟧"),
        "{out}"
    );
    // Harakat in the query are ignored too.
    let (code, _, _) = find(&["المَحكَمة"], &[&s.pdf]);
    assert_eq!(code, 0);
    // --exact keeps the difference.
    let (code, _, _) = find(&["--exact", "المحكمه"], &[&s.pdf]);
    assert_eq!(code, 1);
}

#[test]
fn digits_match_across_scripts() {
    let s = shelf();
    let (code, out, _) = find(&["1934"], &[&s.pdf]);
    assert_eq!(code, 0);
    assert_eq!(out.lines().count(), 2, "{out}"); // ١٩٣٤ and 1934
    let (_, out, _) = find(&["--distinguish", "digits", "1934"], &[&s.pdf]);
    assert_eq!(out.lines().count(), 1, "{out}");
    let (_, out, _) = find(&["2024/117"], &[&s.pdf]);
    assert!(out.contains("⟦2024/117⟧"), "{out}");
}

#[test]
fn hit_across_line_break_but_not_across_pages() {
    let s = shelf();
    let (code, out, _) = find(&["العامة وصلت"], &[&s.pdf]);
    assert_eq!(code, 0, "{out}");
    assert!(out.contains(":1:"));
    let (code, _, _) = find(&["الجمعة القضية"], &[&s.pdf]);
    assert_eq!(code, 1);
}

#[test]
fn folder_search_reports_pdf_without_text() {
    let s = shelf();
    let folder = s.bare.parent().unwrap().to_path_buf();
    let (code, _, err) = find(&["مكتبة"], &[&folder]);
    assert_eq!(code, 1);
    assert!(err.contains("has no text layer"), "{err}");
}

#[test]
fn json_output_parses() {
    let s = shelf();
    let (code, out, _) = find(&["--json", "مكتبه"], &[&s.pdf]);
    assert_eq!(code, 0);
    let v: serde_json::Value = serde_json::from_str(&out).unwrap();
    let hits = v.as_array().unwrap();
    // Substring search, as Arabic attaches prefixes: مكتبة, المكتبة, والمكتبة.
    assert_eq!(hits.len(), 3, "{out}");
    assert!(hits
        .iter()
        .all(|h| h["page"] == 1 && h["matched"] == "مكتبة"));
}

#[test]
fn leading_article_can_be_ignored() {
    let s = shelf();
    // Page 1 has مكتبة, المكتبة and والمكتبة. Substring search finds the last two for المكتبة;
    // ignoring a leading ال (common Arabic search practice, no source) also finds the bare word.
    let (_, out, _) = find(&["المكتبة"], &[&s.pdf]);
    assert_eq!(out.lines().count(), 2, "{out}");
    let (_, out, _) = find(&["--ignore-article", "المكتبة"], &[&s.pdf]);
    assert_eq!(out.lines().count(), 3, "{out}");
    assert!(out.contains("⟦مكتبة⟧"), "{out}");
}

#[test]
fn index_is_used_and_renewed_when_the_pdf_changes() {
    let s = shelf();
    let index = s.pdf.parent().unwrap().join("my-index");
    let dir_arg = index.to_str().unwrap();
    let (code, first, _) = find(&["--index-dir", dir_arg, "مكتبه"], &[&s.pdf]);
    assert_eq!(code, 0);
    assert_eq!(std::fs::read_dir(&index).unwrap().count(), 1);
    let (_, again, _) = find(&["--index-dir", dir_arg, "مكتبه"], &[&s.pdf]);
    assert_eq!(first, again);
    // The PDF is replaced by one without text: the stale entry must not answer.
    std::fs::copy(&s.bare, &s.pdf).unwrap();
    let (code, _, err) = find(&["--index-dir", dir_arg, "مكتبه"], &[&s.pdf]);
    assert_eq!(code, 1);
    assert!(err.contains("has no text layer"), "{err}");
    // --no-index writes nothing.
    let (code, _, _) = find(&["--no-index", "مكتبه"], &[&s.bare]);
    assert_eq!(code, 1);
    assert!(!s.bare.parent().unwrap().join("xdg-cache").exists());
}

#[test]
fn reads_another_writers_pdf_through_its_tounicode_maps() {
    // tests/data/find/other_writer.pdf: written by Chromium's print-to-PDF (Skia; Debian chromium),
    // Arabic shaped by HarfBuzz, text only reachable through the fonts' ToUnicode CMaps
    // (ISO 32000-1 §9.10.3). Made by make_other_writer.sh beside it; poppler's pdftotext reads
    // the same lines from it.
    let pdf = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/find/other_writer.pdf");
    let dir = tempfile::tempdir().unwrap();
    let shelf = dir.path().join("other.pdf");
    std::fs::copy(&pdf, &shelf).unwrap();
    let (code, out, err) = find(&["مكتبه وادي"], &[&shelf]);
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("other.pdf:1:") && out.contains("⟦مكتبة وادي⟧"),
        "{out}"
    );
    let (_, out, _) = find(&["2024/117"], &[&shelf]);
    assert!(out.contains(":2:") && out.contains("⟦٢٠٢٤/١١٧⟧"), "{out}");
    let (_, out, _) = find(&["الاعاره"], &[&shelf]);
    assert!(out.contains(":2:") && out.contains("⟦الإعارة⟧"), "{out}");
}
