//! Bad input fails cleanly: every file in tests/data/bad (made by make_bad.py) gives exit code 1,
//! one line on stderr starting `mistara: error:`, no output file, an unchanged input and no panic;
//! and no prefix of a good image file makes the library panic.

use std::collections::hash_map::DefaultHasher;
use std::hash::{Hash, Hasher};
use std::path::{Path, PathBuf};
use std::process::Command;

use mistara::input::{image_file, sniff, ImageDocument};
use mistara::limits::Limits;

use crate::image_input::fixture;
use crate::util::{mistara, run};

/// Every bad file, with words its error line must hold (besides the file name).
const CASES: [(&str, &[&str]); 15] = [
    ("empty.tif", &["is empty"]),
    ("note_named.pdf", &["neither a PDF nor"]),
    ("truncated.png", &["PNG", "truncated"]),
    ("truncated.jpg", &["JPEG", "truncated"]),
    ("truncated.tif", &["TIFF", "truncated"]),
    ("broken_ifd.tif", &["TIFF", "broken"]),
    ("garbage_ifd.tif", &["TIFF", "broken"]),
    ("ifd_loop.tif", &["TIFF", "loop"]),
    ("palette.tif", &["not supported", "Palette"]),
    ("broken_second_ifd.tif", &["TIFF directory 2 is broken"]),
    ("huge_60000.png", &["60000×60000", "limit"]),
    ("huge_60000.tif", &["60000×60000", "limit"]),
    ("huge_60000.jpg", &["60000×60000", "limit"]),
    ("huge_6bit_rendered.pdf", &["60000×60000", "limit"]),
    ("render_duplicate_object.pdf", &["60000×60000", "limit"]),
];

fn bad_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/bad")
}

fn digest(path: &Path) -> (u64, std::time::SystemTime) {
    let bytes = std::fs::read(path).unwrap();
    let mut h = DefaultHasher::new();
    bytes.hash(&mut h);
    (
        h.finish(),
        std::fs::metadata(path).unwrap().modified().unwrap(),
    )
}

/// Run `mistara ocr` on one input with a one-page empty transcript, its address space capped at
/// 1 GiB (`ulimit -v`, POSIX sh) so that allocating a 60000 × 60000 page (3.6 GB) could not pass
/// unnoticed: it would abort instead of exiting with 1 and the limit message.
fn ocr_capped(input: &Path, out_dir: &Path) -> std::process::Output {
    let transcript = out_dir.join("transcript.json");
    std::fs::write(&transcript, r#"{"pages":[{"lines":[]}]}"#).unwrap();
    run(Command::new("sh")
        .arg("-c")
        .arg(r#"ulimit -v 1048576 && exec "$@""#)
        .arg("sh")
        .arg(mistara().get_program())
        .arg("ocr")
        .arg(input)
        .arg("-o")
        .arg(out_dir.join("out.pdf"))
        .arg("--layer-from")
        .arg(&transcript))
}

#[test]
fn every_bad_file_fails_cleanly() {
    let mut listed: Vec<String> = std::fs::read_dir(bad_dir())
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .filter(|n| !n.ends_with(".py"))
        .collect();
    listed.sort();
    let mut named: Vec<String> = CASES.iter().map(|c| c.0.to_string()).collect();
    named.sort();
    assert_eq!(
        listed, named,
        "every file in tests/data/bad needs a case here"
    );

    for (name, words) in CASES {
        let input = bad_dir().join(name);
        let before = digest(&input);
        let dir = tempfile::tempdir().unwrap();
        let out = ocr_capped(&input, dir.path());
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(
            out.status.code(),
            Some(1),
            "{name}: exit {:?}, stderr {stderr}",
            out.status
        );
        let lines: Vec<&str> = stderr.lines().collect();
        assert_eq!(lines.len(), 1, "{name}: stderr must be one line: {stderr}");
        assert!(lines[0].starts_with("mistara: error: "), "{name}: {stderr}");
        assert!(
            lines[0].contains(name),
            "{name}: the message names the file: {stderr}"
        );
        for w in words {
            assert!(
                lines[0].contains(w),
                "{name}: message lacks {w:?}: {stderr}"
            );
        }
        assert!(!stderr.contains("panicked"), "{name}: {stderr}");
        let left: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(
            left,
            vec![std::ffi::OsString::from("transcript.json")],
            "{name}: no output, no temp file"
        );
        assert_eq!(digest(&input), before, "{name}: input unchanged");
    }
}

#[test]
fn the_memory_cap_lets_a_good_input_through() {
    // Control for the cap above: a good file of the same kind passes under it.
    let dir = tempfile::tempdir().unwrap();
    let out = ocr_capped(&fixture("rgb_phys.png"), dir.path());
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(dir.path().join("out.pdf").exists());
}

/// Open and decode every page of `data` through the library, as the pipeline does.
fn decode_all(data: &[u8]) -> Result<usize, String> {
    let format = sniff(data).ok_or("unknown format")?;
    let page_count = image_file::page_count(format, data)?;
    let doc = ImageDocument {
        path: PathBuf::from("prefix"),
        format,
        data: data.to_vec(),
        page_count,
        fallback_dpi: 300.0,
        limits: Limits::default(),
    };
    for n in 1..=page_count {
        doc.page(n).map_err(|e| e.to_string())?;
    }
    Ok(page_count)
}

#[test]
fn prefixes_of_good_files_never_panic() {
    // Shape after image-rs/image tests/truncate_images.rs; every 7th length keeps the run short.
    for (name, pages) in [
        ("rgb_phys.png", 1),
        ("three_pages.tif", 3),
        ("rgb_jfif.jpg", 1),
        ("grey_lossless.j2k", 1),
    ] {
        let data = std::fs::read(fixture(name)).unwrap();
        assert_eq!(
            decode_all(&data),
            Ok(pages),
            "{name}: the whole file decodes"
        );
        let mut failures = 0;
        for len in (0..data.len()).step_by(7) {
            if let Err(why) = decode_all(&data[..len]) {
                failures += 1;
                assert!(
                    !why.contains('\n'),
                    "{name}[..{len}]: one-line message: {why}"
                );
            }
        }
        // The header alone cannot make a page: the short prefixes must all fail.
        assert!(
            failures >= 8.min(data.len() / 7),
            "{name}: only {failures} prefixes failed"
        );
    }
}
