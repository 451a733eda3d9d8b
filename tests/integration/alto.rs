//! `ocr --alto DIR` and `ocr --report FILE.json`: every ALTO page file validates against the
//! official ALTO 4.4 schema (tests/data/alto/, see its README) with xmllint (Debian
//! libxml2-utils), every String box lies inside its page, the words read back by xmllint's XPath
//! are the transcript's words in logical order, and the report's numbers agree with values
//! recomputed from the transcript.

use std::path::{Path, PathBuf};
use std::process::Command;

use mistara::output::alto::page_file_name;
use mistara::output::report::LOW_CONFIDENCE;
use mistara::pipeline::Transcript;

use crate::util::{mistara, ocr_with_transcript, run, test_page, write_inputs};

fn schema() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/alto/alto-4-4.xsd")
}

/// `xmllint --noout --schema alto-4-4.xsd FILE` (Debian libxml2-utils); panics with its message.
pub fn assert_valid_alto(file: &Path) {
    let out = run(Command::new("xmllint")
        .arg("--noout")
        .arg("--schema")
        .arg(schema())
        .arg(file));
    assert!(
        out.status.success(),
        "{} does not validate against ALTO 4.4: {}",
        file.display(),
        String::from_utf8_lossy(&out.stderr)
    );
}

/// The values of attribute `attr` of every element named `element`, in document order, read by
/// xmllint's XPath engine (not by our code).
fn xpath_values(file: &Path, element: &str, attr: &str) -> Vec<String> {
    let expr = format!("//*[local-name()='{element}']/@{attr}");
    let out = run(Command::new("xmllint").arg("--xpath").arg(&expr).arg(file));
    // xmllint exits 10 when the XPath set is empty.
    if out.status.code() == Some(10) {
        return Vec::new();
    }
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    text.lines()
        .filter_map(|l| {
            let l = l.trim();
            let v = l.strip_prefix(&format!("{attr}=\""))?.strip_suffix('"')?;
            Some(unescape(v))
        })
        .collect()
}

fn unescape(s: &str) -> String {
    s.replace("&quot;", "\"")
        .replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&amp;", "&")
}

fn floats(file: &Path, element: &str, attr: &str) -> Vec<f64> {
    xpath_values(file, element, attr)
        .iter()
        .map(|v| {
            v.parse()
                .unwrap_or_else(|_| panic!("{attr}={v:?} is not a number"))
        })
        .collect()
}

/// Every String box lies inside the page's WIDTH × HEIGHT; returns how many Strings were checked.
fn assert_strings_inside_page(file: &Path) -> usize {
    let (w, h) = (
        floats(file, "Page", "WIDTH"),
        floats(file, "Page", "HEIGHT"),
    );
    assert_eq!((w.len(), h.len()), (1, 1), "{}: page size", file.display());
    let hpos = floats(file, "String", "HPOS");
    let vpos = floats(file, "String", "VPOS");
    let width = floats(file, "String", "WIDTH");
    let height = floats(file, "String", "HEIGHT");
    assert!(hpos.len() == vpos.len() && width.len() == hpos.len() && height.len() == hpos.len());
    for i in 0..hpos.len() {
        assert!(
            hpos[i] >= 0.0
                && vpos[i] >= 0.0
                && width[i] >= 0.0
                && height[i] >= 0.0
                && hpos[i] + width[i] <= w[0]
                && vpos[i] + height[i] <= h[0],
            "{}: String {i} at {},{} {}×{} is outside the {}×{} page",
            file.display(),
            hpos[i],
            vpos[i],
            width[i],
            height[i],
            w[0],
            h[0]
        );
    }
    hpos.len()
}

#[test]
fn alto_from_a_transcript_validates_and_keeps_words_in_order() {
    let dir = tempfile::tempdir().unwrap();
    let mut pages = vec![
        test_page(&["سجل المقتنيات لسنة ٢٠٢٤", "كتاب <الأنهار> & الوديان"]),
        test_page(&["مكتبة عين الزيتون العامة"]),
    ];
    // Varied confidences so the report has something to count.
    let confs = [0.95, 0.5, 0.9, 0.3, 1.0, 0.79, 0.81, 0.6];
    let mut k = 0;
    for p in &mut pages {
        for w in p.text.lines.iter_mut().flat_map(|l| &mut l.words) {
            w.confidence = confs[k % confs.len()];
            k += 1;
        }
    }
    let (pngs, transcript) = write_inputs(dir.path(), &pages);
    let (alto, report) = (dir.path().join("alto"), dir.path().join("report.json"));
    ocr_with_transcript(
        &pngs,
        &transcript,
        &dir.path().join("out.pdf"),
        &[
            "--alto",
            alto.to_str().unwrap(),
            "--report",
            report.to_str().unwrap(),
        ],
    );
    let t = Transcript::load(&transcript).unwrap();
    for (i, page) in t.pages.iter().enumerate() {
        let file = alto.join(page_file_name(i + 1));
        assert_valid_alto(&file);
        assert_eq!(assert_strings_inside_page(&file), page.word_count());
        let words: Vec<String> = page
            .lines
            .iter()
            .flat_map(|l| l.words.iter().map(|w| w.text.clone()))
            .collect();
        assert_eq!(xpath_values(&file, "String", "CONTENT"), words);
        let wc: Vec<f64> = floats(&file, "String", "WC");
        let want: Vec<f64> = page
            .lines
            .iter()
            .flat_map(|l| &l.words)
            .map(|w| w.confidence as f64)
            .collect();
        for (g, w) in wc.iter().zip(&want) {
            assert!((g - w).abs() < 1e-3, "WC {g} vs {w}");
        }
    }
    // Nothing else left in the folder (the temporary folder is gone).
    let mut names: Vec<String> = std::fs::read_dir(&alto)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, ["page-0001.xml", "page-0002.xml"]);
    check_report(&report, &t);
}

/// The report agrees with counts recomputed here from the transcript.
fn check_report(report: &Path, t: &Transcript) {
    let r: serde_json::Value = serde_json::from_slice(&std::fs::read(report).unwrap()).unwrap();
    let notice = r["notice"].as_str().unwrap();
    assert!(notice.contains("machine recognition") && notice.contains("rules of evidence"));
    let mut all = Vec::new();
    for (i, page) in t.pages.iter().enumerate() {
        let got = &r["pages"][i];
        let conf: Vec<f64> = page
            .lines
            .iter()
            .flat_map(|l| &l.words)
            .map(|w| w.confidence as f64)
            .collect();
        let low = conf.iter().filter(|&&c| c < LOW_CONFIDENCE as f64).count();
        assert_eq!(got["page"], i + 1);
        assert_eq!(got["lines"], page.lines.len());
        assert_eq!(got["words"], conf.len());
        assert_eq!(got["low_confidence_words"], low);
        let mean = conf.iter().sum::<f64>() / conf.len() as f64;
        assert!((got["mean_confidence"].as_f64().unwrap() - mean).abs() < 1e-6);
        let share = low as f64 / conf.len() as f64;
        assert!((got["low_confidence_share"].as_f64().unwrap() - share).abs() < 1e-9);
        assert_eq!(got["flagged"], share > 0.10);
        all.extend(conf);
    }
    let mean = all.iter().sum::<f64>() / all.len() as f64;
    assert_eq!(r["totals"]["words"], all.len());
    assert!((r["totals"]["mean_confidence"].as_f64().unwrap() - mean).abs() < 1e-6);
}

#[test]
fn pages_not_read_get_a_valid_page_file_without_text() {
    let dir = tempfile::tempdir().unwrap();
    let pages = vec![test_page(&["سجل المقتنيات"]), test_page(&["مكتبة عامة"])];
    let (pngs, transcript) = write_inputs(dir.path(), &pages);
    let (alto, report) = (dir.path().join("alto"), dir.path().join("r.json"));
    ocr_with_transcript(
        &pngs,
        &transcript,
        &dir.path().join("out.pdf"),
        &[
            "--pages",
            "1",
            "--alto",
            alto.to_str().unwrap(),
            "--report",
            report.to_str().unwrap(),
        ],
    );
    let second = alto.join(page_file_name(2));
    assert_valid_alto(&second);
    assert!(xpath_values(&second, "String", "CONTENT").is_empty());
    assert_eq!(
        xpath_values(&alto.join(page_file_name(1)), "String", "CONTENT").len(),
        2
    );
    let r: serde_json::Value = serde_json::from_slice(&std::fs::read(&report).unwrap()).unwrap();
    assert_eq!(r["pages"][1]["status"], "not_read");
    assert_eq!(r["pages"][1]["flagged"], false);
    assert_eq!(r["totals"]["pages_read"], 1);
}

#[test]
fn alto_from_the_built_in_recognizer_validates() {
    use mistara::synth::{page::PageOptions, truth::make_page, SynthConfig};
    let dir = tempfile::tempdir().unwrap();
    let page = make_page(
        &SynthConfig::default(),
        7,
        PageOptions {
            dpi: Some(150.0),
            columns: Some(1),
            footnote: Some(true),
            prose_only: true,
            ..PageOptions::default()
        },
    );
    let png = dir.path().join("page.png");
    page.image.save(&png).unwrap();
    let (alto, report) = (dir.path().join("alto"), dir.path().join("r.json"));
    let out = run(mistara()
        .arg("ocr")
        .arg(&png)
        .arg("-o")
        .arg(dir.path().join("out.pdf"))
        .arg("--dpi")
        .arg("150")
        .arg("--alto")
        .arg(&alto)
        .arg("--report")
        .arg(&report)
        .arg("--quiet"));
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let file = alto.join(page_file_name(1));
    assert_valid_alto(&file);
    let strings = assert_strings_inside_page(&file);
    assert!(strings > 20, "only {strings} words recognized");
    let r: serde_json::Value = serde_json::from_slice(&std::fs::read(&report).unwrap()).unwrap();
    assert_eq!(r["totals"]["words"], strings);
    assert_eq!(r["from_transcript"], false);
}

#[test]
fn alto_folder_that_is_a_file_fails_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    let pages = vec![test_page(&["سجل"])];
    let (pngs, transcript) = write_inputs(dir.path(), &pages);
    let not_dir = dir.path().join("taken");
    std::fs::write(&not_dir, b"x").unwrap();
    let pdf = dir.path().join("out.pdf");
    let out = run(mistara()
        .arg("ocr")
        .args(&pngs)
        .arg("-o")
        .arg(&pdf)
        .arg("--layer-from")
        .arg(&transcript)
        .arg("--alto")
        .arg(&not_dir)
        .arg("--quiet"));
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--alto needs a folder"));
    assert!(!pdf.exists());
    assert_eq!(std::fs::read(&not_dir).unwrap(), b"x");
}
