//! The command line: exit codes, messages, determinism.

use crate::util::{mistara, run, test_page, write_inputs};

#[test]
fn missing_or_corrupt_model_is_a_clear_error_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let (pngs, _) = write_inputs(dir.path(), &[test_page(&["سجل المقتنيات"])]);
    let out_pdf = dir.path().join("out.pdf");
    let corrupt = dir.path().join("model.mstr");
    std::fs::write(&corrupt, b"this is not a model").unwrap();
    let page = std::fs::read(&pngs[0]).unwrap();
    let before = crate::faults::listing(dir.path());
    for model in [dir.path().join("absent.mstr"), corrupt.clone()] {
        let out = run(mistara()
            .arg("ocr")
            .args(&pngs)
            .arg("-o")
            .arg(&out_pdf)
            .arg("--model")
            .arg(&model));
        assert_eq!(out.status.code(), Some(1));
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(
            err.starts_with("mistara: error:")
                && (err.contains("model.mstr") || err.contains("absent.mstr")),
            "{err}"
        );
        assert_eq!(err.lines().count(), 1, "{err}");
        assert!(!out_pdf.exists());
        assert_eq!(
            crate::faults::listing(dir.path()),
            before,
            "no output, no temp file"
        );
    }
    assert_eq!(std::fs::read(&corrupt).unwrap(), b"this is not a model");
    assert_eq!(std::fs::read(&pngs[0]).unwrap(), page, "input unchanged");
}

#[test]
fn thread_count_does_not_change_the_output() {
    let dir = tempfile::tempdir().unwrap();
    let pages: Vec<_> = (0..5)
        .map(|i| {
            test_page(&[
                "سجل المقتنيات في مكتبة",
                if i % 2 == 0 {
                    "الصفحة ٤٥"
                } else {
                    "رقم 2024/117"
                },
            ])
        })
        .collect();
    let (pngs, transcript) = write_inputs(dir.path(), &pages);
    let mut outputs = Vec::new();
    for threads in ["1", "4"] {
        let pdf = dir.path().join(format!("out-{threads}.pdf"));
        let txt = dir.path().join(format!("out-{threads}.txt"));
        let out = run(mistara()
            .arg("ocr")
            .args(&pngs)
            .arg("-o")
            .arg(&pdf)
            .arg("--txt")
            .arg(&txt)
            .arg("--layer-from")
            .arg(&transcript)
            .args(["--threads", threads, "--quiet"]));
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        outputs.push((
            std::fs::read(&pdf).unwrap(),
            std::fs::read_to_string(&txt).unwrap(),
        ));
    }
    assert!(
        outputs[0].0 == outputs[1].0,
        "PDFs differ between 1 and 4 threads"
    );
    assert_eq!(outputs[0].1, outputs[1].1);
    // Five pages, form feeds between them (issue 2: pages separated by U+000C).
    assert_eq!(outputs[0].1.matches('\u{000C}').count(), 4);
    assert!(outputs[0]
        .1
        .starts_with("سجل المقتنيات في مكتبة\nالصفحة ٤٥\n"));
}

#[test]
fn refuses_to_write_over_its_input() {
    let dir = tempfile::tempdir().unwrap();
    let (pngs, transcript) = write_inputs(dir.path(), &[test_page(&["سجل"])]);
    let before = std::fs::read(&pngs[0]).unwrap();
    let out = run(mistara()
        .arg("ocr")
        .arg(&pngs[0])
        .arg("-o")
        .arg(&pngs[0])
        .arg("--layer-from")
        .arg(&transcript));
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("one of the inputs"));
    assert_eq!(std::fs::read(&pngs[0]).unwrap(), before);
}

#[test]
fn help_lists_every_verb() {
    let out = run(mistara().arg("--help"));
    let help = String::from_utf8_lossy(&out.stdout);
    for verb in ["ocr", "read", "synth", "train", "eval", "demo"] {
        assert!(help.contains(verb), "--help lacks {verb}");
    }
}

#[test]
fn bad_page_range_is_a_clear_error() {
    let dir = tempfile::tempdir().unwrap();
    let (pngs, transcript) = write_inputs(dir.path(), &[test_page(&["سجل"])]);
    let out_pdf = dir.path().join("o.pdf");
    let out = run(mistara()
        .arg("ocr")
        .args(&pngs)
        .arg("-o")
        .arg(&out_pdf)
        .arg("--layer-from")
        .arg(&transcript)
        .args(["--pages", "3-1"]));
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--pages"));
    assert!(!out_pdf.exists());
}

/// `mistara read` on committed line images (train fonts, not trained on; one with digits and
/// brackets, one with harakat) prints their text, harakat kept, with either built-in model: a
/// short line of three words is read as one line, not analysed as a page. Line 000016 is left
/// out: both models misread a letter and a haraka of it (see the ignored unit test in
/// `src/recognize/mod.rs`).
#[test]
fn read_prints_the_text_of_committed_lines() {
    let dir = std::path::Path::new(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/lines/read"
    ));
    for model in [&[][..], &["--careful"][..]] {
        for id in ["000002", "000003", "000004", "000007"] {
            let out = run(mistara()
                .arg("read")
                .arg("--keep-harakat")
                .args(model)
                .arg(dir.join(format!("{id}.png"))));
            assert_eq!(out.status.code(), Some(0), "{id} {model:?}");
            let got = String::from_utf8(out.stdout).unwrap();
            let want = std::fs::read_to_string(dir.join(format!("{id}.gt.txt"))).unwrap();
            use mistara::recognize::charset::normalize_label;
            assert_eq!(
                normalize_label(&got),
                normalize_label(&want),
                "{id} {model:?}"
            );
        }
    }
}

/// Exact CER in percent of `mistara eval` with `flags` on the committed held-out lines.
fn heldout_cer(flags: &[&str]) -> f64 {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/tests/data/lines/heldout");
    let out = run(mistara().args(["eval", dir, "--worst", "0"]).args(flags));
    assert_eq!(out.status.code(), Some(0), "{flags:?}");
    let text = String::from_utf8(out.stdout).unwrap();
    let line = text
        .lines()
        .find(|l| l.starts_with("exact"))
        .expect("an exact row");
    line.split_whitespace().nth(1).unwrap().parse().unwrap()
}

/// `--careful` reads with the larger built-in model: on the committed held-out lines its exact
/// CER is under issue 4's 5 % (4.15 % measured), where the default model's is not (5.14 %).
#[test]
fn careful_reads_the_held_out_lines_with_the_larger_model() {
    let (default, careful) = (heldout_cer(&[]), heldout_cer(&["--careful"]));
    assert!(
        careful <= 5.0 && default > careful,
        "default {default} %, careful {careful} %"
    );
}

/// Lines are read with a beam and the letter model unless asked otherwise: on the committed
/// held-out lines the default reading has a lower exact CER than the likeliest path (`--beam 0`;
/// 5.14 against 5.32 % when measured) and than the beam without the letter model
/// (`--lm-weight 0`).
#[test]
fn the_letter_model_is_on_by_default_and_can_be_turned_off() {
    let with = heldout_cer(&[]);
    let (path, beam_alone) = (
        heldout_cer(&["--beam", "0"]),
        heldout_cer(&["--lm-weight", "0"]),
    );
    assert!(
        with < path && with < beam_alone,
        "letter model {with} %, likeliest path {path} %, beam alone {beam_alone} %"
    );
}

/// A weight that is negative or not a number, or a beam too wide to be of use, is refused with a
/// message naming the option.
#[test]
fn a_negative_letter_model_weight_or_a_huge_beam_is_refused() {
    let line = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/tests/data/lines/read/000002.png"
    );
    for w in ["--lm-weight=-1", "--lm-weight=nan", "--beam=100000"] {
        let out = run(mistara().args(["read", w, line]));
        assert_eq!(out.status.code(), Some(1), "{w}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(&w[..w.find('=').unwrap()]), "{w}: {err}");
    }
}

/// The larger built-in model and a model file are two answers to one question: asking for both
/// is a usage error (exit 2) that names them, before any input is read.
#[test]
fn careful_and_a_model_file_cannot_go_together() {
    let out = run(mistara()
        .args(["read", "--careful", "--model", "m.mstr"])
        .arg("no-such-line.png"));
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("--careful") && err.contains("--model"),
        "{err}"
    );
}

#[test]
fn rehearsal_lines_are_not_drawn_for_a_missing_data_folder() {
    let dir = tempfile::tempdir().unwrap();
    let out_dir = dir.path().join("run");
    let out = run(mistara()
        .arg("train")
        .arg(dir.path().join("absent"))
        .arg("--rehearse")
        .arg("5")
        .arg("--out")
        .arg(&out_dir)
        .arg("--quiet"));
    assert_eq!(out.status.code(), Some(1), "{out:?}");
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("absent") && err.contains("no such folder"),
        "{err}"
    );
    assert!(!out_dir.exists(), "nothing drawn");
}
