//! `mistara demo`: the README's first command builds the invented book and makes it searchable.

use crate::util::{assert_poppler_reads_txt, mistara, run};

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
    // pdftotext (Debian poppler-utils) reads the same text as --txt, page by page.
    assert_poppler_reads_txt(&searchable, &txt, 6, 1);
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
