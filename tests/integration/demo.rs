//! `mistara demo`: the README's first command builds the invented book and makes it searchable.

use std::process::Command;

use crate::util::{mistara, run};

#[test]
fn demo_makes_a_searchable_book_whose_text_poppler_reads_back() {
    let dir = tempfile::tempdir().unwrap();
    let out = run(mistara().arg("demo").arg(dir.path()));
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let stdout = String::from_utf8_lossy(&out.stdout);
    let searchable = dir.path().join("register-searchable.pdf");
    let txt = std::fs::read_to_string(dir.path().join("register.txt")).unwrap();
    assert!(stdout.contains("register-searchable.pdf"), "{stdout}");
    // pdftotext (Debian poppler-utils) reads the same text as --txt, page by page, once white
    // space is removed: poppler moves spaces beside commas and numbers (see readers.rs).
    let pdftotext = run(Command::new("pdftotext")
        .arg("-enc")
        .arg("UTF-8")
        .arg(&searchable)
        .arg("-"));
    assert!(pdftotext.status.success());
    let poppler = String::from_utf8(pdftotext.stdout).unwrap();
    let pages = |s: &str| -> Vec<String> {
        s.replace(
            ['\u{202A}', '\u{202B}', '\u{202C}', '\u{202D}', '\u{202E}'],
            "",
        )
        .split('\u{000C}')
        .map(str::to_string)
        .filter(|p| !p.trim().is_empty())
        .collect()
    };
    let (got, want) = (pages(&poppler), pages(&txt));
    assert_eq!(got.len(), 6, "six pages");
    assert_eq!(want.len(), 6, "six pages");
    let letters = |s: &str| s.chars().filter(|c| c.is_alphabetic()).collect::<String>();
    for (g, w) in got.iter().zip(&want) {
        // Every line's letters come out intact and in order (poppler orders blocks such as
        // margin notes by its own layout analysis, so lines are looked up, not compared in turn).
        let page_letters = letters(g);
        for line in w.lines().map(letters).filter(|l| !l.is_empty()) {
            assert!(
                page_letters.contains(&line),
                "poppler lost the line {line:?}"
            );
        }
        // Digits and punctuation are all there too: poppler moves them around numbers
        // (`(1)` → `()1`, `2023/89:` → `:2023/89`), so compare them as multisets.
        let sorted = |s: &str| {
            let mut v: Vec<char> = s.chars().filter(|c| !c.is_whitespace()).collect();
            v.sort_unstable();
            v
        };
        assert_eq!(sorted(g), sorted(w));
    }
    // The suggested search word is found.
    let word = stdout
        .lines()
        .find_map(|l| l.trim().strip_prefix("Try a search:  mistara find "))
        .unwrap();
    let word = word.split_whitespace().next().unwrap();
    let found = run(mistara().arg("find").arg(word).arg(&searchable));
    assert_eq!(
        found.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&found.stderr)
    );
    // One ALTO file per page, each valid against the ALTO 4.4 schema (xmllint, see alto.rs), and a
    // report with one entry per page.
    assert!(stdout.contains("register-alto"), "{stdout}");
    for n in 1..=6 {
        let file = dir
            .path()
            .join("register-alto")
            .join(format!("page-{n:04}.xml"));
        crate::alto::assert_valid_alto(&file);
    }
    let report: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.path().join("register-report.json")).unwrap())
            .unwrap();
    assert_eq!(report["pages"].as_array().map(Vec::len), Some(6));
}
