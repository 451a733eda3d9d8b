//! The whole pipeline with the built-in model on a synthetic scanned book in fonts the model
//! never saw: the recognized text is measured against the book's truth, and what a PDF reader
//! extracts from the output equals the `--txt` output.

use mistara::eval::text_output_cer;
use mistara::output::text_layer::LayerOptions;
use mistara::pipeline::Transcript;

use crate::util::{assert_poppler_reads_txt, mistara, run};

/// Character error rate measured on this book (3 pages, heldout fonts, degradation 0.3, seed 3)
/// with the built-in model when it was last changed; the guard allows 3 points of drift.
/// With run r6 it was 47 % until the page analysis stopped cutting justified lines at wide word
/// spaces and stopped turning a deep-tailed typeface's upright page upside down, then 9.0 %, then
/// 8.2 %; run r10 (labels in reading order, LSTM head) reads it at 3.8 %, run r11 (seven more
/// train families, type variation) at 3.9 %, run r12 (28 train families) at 3.0 %, run r14 (two
/// image columns per CTC frame) at 1.8 %, run r17 (two more train families, varied word
/// spaces) at 1.65 %, then 0.80 % once the page analysis kept a title's dots and the stacks
/// over a shin's dots with their lines, run r18 at 0.81 %, run r19 (trained on elastically
/// warped lines) at 0.58 %, run r20 (five more train families) at 0.57 %, and run r21 (more
/// lines of the hardest train families) at 0.63 %, and at 0.57 % once lines were read with a
/// beam and the letter model (stop 35).
const MEASURED_BOOK_CER: f64 = 0.0057;

#[test]
fn heldout_book_is_read_and_its_layer_matches_the_text_output() {
    let dir = tempfile::tempdir().unwrap();
    let book = dir.path().join("book.pdf");
    let made = run(mistara()
        .args(["synth", "book", "--pages", "3", "--fonts", "heldout"])
        .args(["--degrade", "0.3", "--seed", "3", "--out"])
        .arg(&book));
    assert!(
        made.status.success(),
        "{}",
        String::from_utf8_lossy(&made.stderr)
    );
    let (out, txt) = (dir.path().join("out.pdf"), dir.path().join("out.txt"));
    let ocr = run(mistara()
        .arg("ocr")
        .arg(&book)
        .arg("-o")
        .arg(&out)
        .arg("--txt")
        .arg(&txt)
        .arg("--quiet"));
    assert!(
        ocr.status.success(),
        "{}",
        String::from_utf8_lossy(&ocr.stderr)
    );
    let text = std::fs::read_to_string(&txt).unwrap();
    // Fragments shorter than three words are left to the character multiset (see the helper).
    assert_poppler_reads_txt(&out, &text, 3, 3);

    let truth = Transcript::load(&book.with_extension("json")).unwrap();
    let cer = text_output_cer(&truth.pages, &text, LayerOptions::default());
    eprintln!(
        "end-to-end CER on the 3-page heldout book: {:.2} %",
        cer * 100.0
    );
    assert!(
        cer <= MEASURED_BOOK_CER + 0.03,
        "CER {cer:.3} is worse than the measured {MEASURED_BOOK_CER}"
    );
}
