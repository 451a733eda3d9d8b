//! The text layer read back by outside readers: poppler (pdftotext, Debian poppler-utils), pdf.js
//! (npm pdfjs-dist), PDFium (pypdfium2, PyPI) and MuPDF (PyMuPDF, PyPI); qpdf checks the syntax.
//!
//! Reader quirks met (also in DEVELOPERS.md):
//! - poppler reorders a line itself and, around a left-to-right run (a number or a Latin word)
//!   inside an Arabic line, moves the neighbouring space, so `سنة ١٩٣٤ الموافق` can come out as
//!   `سنة  ١٩٣٤الموافق`; for such lines we check that every word comes out intact in its line.
//! - poppler treats the Arabic comma U+060C (bidi class CS) like a left-to-right run and moves the
//!   space beside it: `نعم، حضروا` comes out as `نعم ،حضروا`; checked like the lines above.
//! - PDFium mirrors brackets and guillemets while it reverses a right-to-left run (UAX #9 rule L4
//!   applied to text that is already visual), while poppler, pdf.js and MuPDF reverse without
//!   mirroring. The layer stores characters unmirrored (the majority); PDFium's lines with
//!   brackets are checked to differ by exactly that mirroring.
//! - MuPDF reorders Arabic-Indic digits as right-to-left text and moves Western numbers, so it is
//!   checked on lines without numbers or Latin runs only.

use std::path::{Path, PathBuf};
use std::process::Command;

use mistara::output::text_layer::{place_lines, LayerOptions};

use crate::util::{
    extract, normalized_lines, ocr_with_transcript, run, test_page, write_inputs, Reader, TestPage,
};

/// Ten lines of our own prose (an invented town library's acquisitions register).
const REGISTER: [&str; 10] = [
    "سجل المقتنيات في مكتبة وادي الريحان العامة",
    "وصلت إلى المكتبة هذا الشهر مجموعة من الكتب القديمة",
    "أهداها أحد سكان البلدة بعد أن حفظها في بيته طويلا",
    "وفيها كتب في الفقه واللغة والتاريخ والشعر",
    "وقد رتبها أمين المكتبة على الرفوف بحسب موضوعاتها",
    "ويحتاج بعضها إلى ترميم الأغلفة والأوراق الممزقة",
    "وسيتاح الاطلاع عليها للقراء في قاعة المطالعة",
    "ويرجى من الباحثين حجز موعد قبل الزيارة",
    "ولا يسمح بإخراج الكتب النادرة من المبنى",
    "والمكتبة مفتوحة كل يوم ما عدا الجمعة",
];

/// An invented filing: numbers (Western and Arabic-Indic), a case number, a Latin word,
/// « » and parentheses, ، ؛ ؟.
const FILING: [&str; 6] = [
    "القضية رقم 2024/117 أمام محكمة البلدة",
    "صدر الحكم في ١٢ آذار سنة ١٩٣٤ الموافق 1934",
    "قدم المحامي مذكرة بعنوان Memorandum إلى المحكمة",
    "نقلت الوثيقة عن «الجريدة الرسمية» (العدد الثالث)",
    "هل حضر الشهود؟ نعم، حضروا جميعا؛ ثم انصرفوا",
    "الصفحة ٤٥ من السجل",
];

fn has_ltr_run(line: &str) -> bool {
    line.chars()
        .any(|c| c.is_ascii_alphanumeric() || ('\u{0660}'..='\u{0669}').contains(&c))
}

/// Lines poppler reorders around neutral or left-to-right runs (module docs).
fn poppler_shifts_spaces(line: &str) -> bool {
    has_ltr_run(line) || line.contains('\u{060C}')
}

struct Made {
    _dir: tempfile::TempDir,
    pdf: PathBuf,
    pages: Vec<TestPage>,
}

fn make_pdf() -> Made {
    let dir = tempfile::tempdir().unwrap();
    let pages = vec![test_page(&REGISTER), test_page(&FILING)];
    let (pngs, transcript) = write_inputs(dir.path(), &pages);
    let pdf = dir.path().join("out.pdf");
    ocr_with_transcript(&pngs, &transcript, &pdf, &["--dpi", "150"]);
    Made {
        _dir: dir,
        pdf,
        pages,
    }
}

fn pages_of(text: &str) -> Vec<Vec<String>> {
    text.split('\u{000C}')
        .map(normalized_lines)
        .filter(|p| !p.is_empty())
        .collect()
}

fn expected() -> Vec<Vec<String>> {
    vec![
        REGISTER.iter().map(|s| s.to_string()).collect(),
        FILING.iter().map(|s| s.to_string()).collect(),
    ]
}

fn assert_exact(reader: Reader, pdf: &Path) {
    let got = pages_of(&extract(reader, pdf));
    assert_eq!(got, expected(), "{reader:?} text differs");
}

#[test]
fn pdfium_reads_logical_text() {
    let m = make_pdf();
    let got = pages_of(&extract(Reader::Pdfium, &m.pdf));
    // PDFium mirrors brackets in right-to-left runs (module docs): expect exactly that.
    let mirrored = |s: &String| -> String {
        s.chars()
            .map(|c| match c {
                '(' => ')',
                ')' => '(',
                '«' => '»',
                '»' => '«',
                '[' => ']',
                ']' => '[',
                c => c,
            })
            .collect()
    };
    let want: Vec<Vec<String>> = expected()
        .iter()
        .map(|p| p.iter().map(mirrored).collect())
        .collect();
    assert_eq!(got, want, "PDFium text differs");
}

#[test]
fn pdfjs_reads_logical_text() {
    let m = make_pdf();
    assert_exact(Reader::PdfJs, &m.pdf);
}

#[test]
fn poppler_reads_logical_text() {
    let m = make_pdf();
    let got = pages_of(&extract(Reader::Poppler, &m.pdf));
    let want = expected();
    assert_eq!(got.len(), want.len(), "page count: {got:?}");
    for (g, w) in got.iter().zip(&want) {
        assert_eq!(g.len(), w.len(), "line count: {g:?}");
        for (gl, wl) in g.iter().zip(w) {
            if poppler_shifts_spaces(wl) {
                // poppler's space shift around left-to-right runs and commas (module docs).
                for word in wl
                    .split_whitespace()
                    .map(|w| w.trim_end_matches('\u{060C}'))
                {
                    assert!(
                        gl.contains(word),
                        "poppler lost {word:?} from line {wl:?}: got {gl:?}"
                    );
                }
                let squeeze = |s: &str| s.split_whitespace().collect::<String>();
                assert_eq!(
                    squeeze(gl).chars().count(),
                    squeeze(wl).chars().count(),
                    "{gl:?} vs {wl:?}"
                );
            } else {
                assert_eq!(gl, wl);
            }
        }
    }
}

#[test]
fn mupdf_reads_lines_without_numbers() {
    let m = make_pdf();
    let got = pages_of(&extract(Reader::MuPdf, &m.pdf));
    let want = expected();
    assert_eq!(got.len(), want.len(), "{got:?}");
    let mut checked = 0;
    for (g, w) in got.iter().zip(&want) {
        assert_eq!(g.len(), w.len(), "line count: {g:?}");
        for (gl, wl) in g.iter().zip(w) {
            if !has_ltr_run(wl) {
                assert_eq!(gl, wl);
                checked += 1;
            }
        }
    }
    assert!(checked >= 12, "only {checked} lines checked");
}

#[test]
fn poppler_word_boxes_match_placed_boxes() {
    let m = make_pdf();
    let out = run(Command::new("pdftotext")
        .args(["-bbox-layout", "-f", "1", "-l", "1"])
        .arg(&m.pdf)
        .arg("-"));
    assert!(out.status.success());
    let xhtml = String::from_utf8(out.stdout).unwrap();
    let found = parse_bbox_words(&xhtml);
    let page = &m.pages[0];
    let placed = place_lines(
        &page.text,
        page.image.height() as f32,
        LayerOptions::default(),
    );
    let scale = 72.0 / 150.0; // pixels at 150 dpi → points
    let mut n = 0;
    for line in &placed {
        for (w, b) in line
            .words
            .iter()
            .zip(line.word_boxes(page.image.height() as f32))
        {
            let want = [b.x0 * scale, b.y0 * scale, b.x1 * scale, b.y1 * scale];
            let best = found
                .iter()
                .filter(|(t, _)| *t == w.glyphs)
                .map(|(_, r)| iou(r, &want))
                .fold(0.0, f32::max);
            assert!(
                best >= 0.8,
                "word {:?}: best IoU {best:.2} against poppler's boxes",
                w.glyphs
            );
            n += 1;
        }
    }
    assert_eq!(
        n,
        REGISTER
            .iter()
            .map(|l| l.split_whitespace().count())
            .sum::<usize>()
    );
}

/// `<word xMin=".." yMin=".." xMax=".." yMax="..">text</word>` from pdftotext -bbox-layout.
fn parse_bbox_words(xhtml: &str) -> Vec<(String, [f32; 4])> {
    let mut out = Vec::new();
    for part in xhtml.split("<word ").skip(1) {
        let attr = |name: &str| -> f32 {
            let start = part.find(&format!("{name}=\"")).unwrap() + name.len() + 2;
            part[start..].split('"').next().unwrap().parse().unwrap()
        };
        let text = part
            .split('>')
            .nth(1)
            .unwrap()
            .split('<')
            .next()
            .unwrap()
            .to_string();
        out.push((
            text,
            [attr("xMin"), attr("yMin"), attr("xMax"), attr("yMax")],
        ));
    }
    out
}

fn iou(a: &[f32; 4], b: &[f32; 4]) -> f32 {
    let ix = (a[2].min(b[2]) - a[0].max(b[0])).max(0.0);
    let iy = (a[3].min(b[3]) - a[1].max(b[1])).max(0.0);
    let inter = ix * iy;
    inter / ((a[2] - a[0]) * (a[3] - a[1]) + (b[2] - b[0]) * (b[3] - b[1]) - inter)
}

#[test]
fn qpdf_check_is_clean() {
    let m = make_pdf();
    let out = run(Command::new("qpdf").arg("--check").arg(&m.pdf));
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(
        out.status.success(),
        "qpdf --check: {stdout}{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        stdout.contains("No syntax or stream encoding errors"),
        "{stdout}"
    );
}
