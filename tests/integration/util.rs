//! Test helpers: run the built binary, make pages with a known transcript, run outside readers.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use image::{GrayImage, Luma};
use mistara::layout::geometry::Rect;
use mistara::pipeline::Transcript;
use mistara::text::bidi::visual_word_order;
use mistara::text::{PageText, RegionKind, TextLine, Word};

/// The built `mistara` binary.
pub fn mistara() -> Command {
    Command::new(env!("CARGO_BIN_EXE_mistara"))
}

/// Run a command, returning its output (never panics on a non-zero exit).
pub fn run(cmd: &mut Command) -> Output {
    cmd.output()
        .unwrap_or_else(|e| panic!("cannot run {cmd:?}: {e}"))
}

/// A page laid out like a right-to-left book page: each line right-aligned at the right margin,
/// words in bidi visual order, widths from character counts. Boxes are exact by construction.
pub struct TestPage {
    /// Page image (dark word boxes on white paper).
    pub image: GrayImage,
    /// The transcript with boxes.
    pub text: PageText,
}

/// Width of one character and of a gap between words, in pixels (150 dpi, ~12 pt text).
pub const CHAR_PX: f32 = 14.0;
const GAP_PX: f32 = 14.0;
const LINE_PX: f32 = 32.0;
const PITCH_PX: f32 = 52.0;

/// Lay out logical-order lines on an A4 page at 150 dpi (1240 × 1754 px).
pub fn test_page(lines: &[&str]) -> TestPage {
    let (w, h) = (1240u32, 1754u32);
    let mut image = GrayImage::from_pixel(w, h, Luma([250]));
    let mut text = PageText::default();
    for (i, line) in lines.iter().enumerate() {
        let words: Vec<&str> = line.split_whitespace().collect();
        let y0 = 120.0 + i as f32 * PITCH_PX;
        let mut right = 1120.0;
        let mut boxes = vec![Rect::default(); words.len()];
        for &wi in visual_word_order(&words).iter().rev() {
            let width = words[wi].chars().count() as f32 * CHAR_PX;
            boxes[wi] = Rect::new(right - width, y0, right, y0 + LINE_PX);
            right -= width + GAP_PX;
        }
        let words: Vec<Word> = words
            .iter()
            .zip(&boxes)
            .map(|(t, b)| Word {
                text: t.to_string(),
                bbox: *b,
                confidence: 1.0,
            })
            .collect();
        for b in &boxes {
            for y in (b.y0 as u32 + 6)..(b.y1 as u32 - 6) {
                for x in (b.x0 as u32 + 1)..(b.x1 as u32 - 1) {
                    image.put_pixel(x, y, Luma([30]));
                }
            }
        }
        let bbox = boxes.iter().skip(1).fold(boxes[0], |a, b| a.union(b));
        text.lines.push(TextLine {
            words,
            bbox,
            region: RegionKind::Body,
        });
    }
    TestPage { image, text }
}

/// Write pages as PNGs (150 dpi) and a transcript into `dir`; returns (png paths, transcript path).
pub fn write_inputs(dir: &Path, pages: &[TestPage]) -> (Vec<PathBuf>, PathBuf) {
    let mut pngs = Vec::new();
    for (i, p) in pages.iter().enumerate() {
        let path = dir.join(format!("page-{:03}.png", i + 1));
        p.image.save(&path).unwrap();
        pngs.push(path);
    }
    let transcript = Transcript {
        pages: pages.iter().map(|p| p.text.clone()).collect(),
    };
    let tpath = dir.join("transcript.json");
    std::fs::write(&tpath, serde_json::to_vec_pretty(&transcript).unwrap()).unwrap();
    (pngs, tpath)
}

/// Text lines as readers are compared: bidi controls U+202A–U+202E removed, runs of white space
/// collapsed, blank lines dropped.
pub fn normalized_lines(text: &str) -> Vec<String> {
    text.replace(
        ['\u{202A}', '\u{202B}', '\u{202C}', '\u{202D}', '\u{202E}'],
        "",
    )
    .lines()
    .map(|l| l.split_whitespace().collect::<Vec<_>>().join(" "))
    .filter(|l| !l.is_empty())
    .collect()
}

/// An outside reader of PDF text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Reader {
    /// poppler's pdftotext (Debian poppler-utils).
    Poppler,
    /// pdf.js getTextContent (npm pdfjs-dist).
    PdfJs,
    /// PDFium through pypdfium2 (PyPI).
    Pdfium,
    /// MuPDF through PyMuPDF (PyPI).
    MuPdf,
}

fn env_or_fail(name: &str) -> String {
    std::env::var(name).unwrap_or_else(|_| {
        panic!("{name} is not set: run the tests with tests/run.sh, which installs the outside PDF readers")
    })
}

/// The text a reader extracts, pages separated by form feed.
pub fn extract(reader: Reader, pdf: &Path) -> String {
    let readers = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/readers");
    let out = match reader {
        Reader::Poppler => run(Command::new("pdftotext")
            .arg("-enc")
            .arg("UTF-8")
            .arg(pdf)
            .arg("-")),
        Reader::PdfJs => run(Command::new("node")
            .arg(readers.join("pdfjs_text.mjs"))
            .arg(pdf)
            .env("NODE_PATH", env_or_fail("MISTARA_READERS_NODE_MODULES"))),
        Reader::Pdfium | Reader::MuPdf => run(Command::new(env_or_fail("MISTARA_READERS_PYTHON"))
            .arg(readers.join("py_text.py"))
            .arg(if reader == Reader::Pdfium {
                "pdfium"
            } else {
                "mupdf"
            })
            .arg(pdf)),
    };
    assert!(
        out.status.success(),
        "{reader:?} failed on {}: {}",
        pdf.display(),
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8(out.stdout).expect("readers print UTF-8")
}

/// Run `mistara ocr INPUTS -o pdf --layer-from transcript --quiet` plus `extra`; panics on failure.
pub fn ocr_with_transcript(inputs: &[PathBuf], transcript: &Path, pdf: &Path, extra: &[&str]) {
    let out = run(mistara()
        .arg("ocr")
        .args(inputs)
        .arg("-o")
        .arg(pdf)
        .arg("--layer-from")
        .arg(transcript)
        .arg("--quiet")
        .args(extra));
    assert!(
        out.status.success(),
        "mistara ocr failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// pdftotext (Debian poppler-utils) reads the same text from `pdf` as the `--txt` output `txt`,
/// page by page, once white space is set aside: every line's letters come out intact and in
/// order, and the page's other characters (digits, punctuation) are all there as a multiset.
/// poppler moves spaces beside commas and numbers and moves punctuation around numbers
/// (`(1)` → `()1`, `2023/89:` → `:2023/89`), and orders blocks such as margin notes by its own
/// layout analysis, so lines are looked up rather than compared in turn. Only lines of at least
/// `min_words` words are looked up: poppler splits and reorders short fragments (a two-word
/// line among one-word scraps) by its own analysis; their characters still count in the multiset.
pub fn assert_poppler_reads_txt(pdf: &Path, txt: &str, page_count: usize, min_words: usize) {
    let pdftotext = run(Command::new("pdftotext")
        .arg("-enc")
        .arg("UTF-8")
        .arg(pdf)
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
        .take(page_count)
        .collect()
    };
    let (got, want) = (pages(&poppler), pages(txt));
    assert_eq!(got.len(), page_count, "pages read by poppler");
    assert_eq!(want.len(), page_count, "pages in --txt");
    let letters = |s: &str| s.chars().filter(|c| c.is_alphabetic()).collect::<String>();
    let sorted = |s: &str| {
        let mut v: Vec<char> = s.chars().filter(|c| !c.is_whitespace()).collect();
        v.sort_unstable();
        v
    };
    for (n, (g, w)) in got.iter().zip(&want).enumerate() {
        let page_letters = letters(g);
        let long = w
            .lines()
            .filter(|l| l.split_whitespace().count() >= min_words);
        for line in long.map(letters).filter(|l| !l.is_empty()) {
            assert!(
                page_letters.contains(&line),
                "page {}: poppler lost the line {line:?}",
                n + 1
            );
        }
        assert_eq!(sorted(g), sorted(w), "page {}: characters differ", n + 1);
    }
}
