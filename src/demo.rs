//! `mistara demo`: a small invented scanned book — six pages of the acquisitions register of an
//! invented town library, in two typefaces, with a two-column page, footnotes and Arabic-Indic
//! page numbers — run through the whole pipeline (searchable PDF, text, ALTO, confidence report),
//! with the recognized text compared to the known text.

use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::eval::align::char_edits;
use crate::input::SourcePage;
use crate::output::pdf_fresh::FreshPdf;
use crate::output::sidecar::{SidecarPaths, Sidecars};
use crate::output::text_layer::LayerOptions;
use crate::output::{write_atomic, DocumentInfo};
use crate::page::PageImage;
use crate::pipeline::{self, Observer, OcrSettings, PageDone, PageReader, TextSource, Transcript};
use crate::synth::book::embed_of;
use crate::synth::page::PageOptions;
use crate::synth::shelf::{FontSet, Shelf};
use crate::synth::truth::make_page;
use crate::synth::SynthConfig;
use crate::text::{PageText, TextLine};

/// Pages in the demo book.
pub const DEMO_PAGES: usize = 6;

/// What the demo made and measured.
#[derive(Debug, Clone)]
pub struct DemoReport {
    /// The "scanned" book (image-only PDF).
    pub scan: PathBuf,
    /// The searchable PDF.
    pub searchable: PathBuf,
    /// Plain text of the searchable PDF.
    pub text: PathBuf,
    /// The known text of the book.
    pub truth: PathBuf,
    /// Folder of ALTO files, one per page.
    pub alto: PathBuf,
    /// The confidence report (JSON).
    pub report: PathBuf,
    /// Character error rate of the recognized text against the known text, when recognized.
    pub cer: Option<f64>,
    /// A word of the book to search for.
    pub search_word: String,
}

/// Family of the shelf font used for pages 1–3 and 4–6.
const TYPEFACES: [&str; 2] = ["Amiri", "Noto Naskh Arabic"];

/// Make the invented book: the page images (as they go into a PDF) and their known text.
pub fn make_demo_book() -> Result<(Vec<SourcePage>, Vec<PageText>)> {
    let shelf = Shelf::get();
    let regular = |family: &str| {
        shelf.indices(FontSet::All).into_iter().find(|&i| {
            let e = &shelf.fonts[i].entry;
            e.family == family && e.weight == "regular"
        })
    };
    let faces: Vec<usize> = TYPEFACES
        .iter()
        .map(|f| {
            regular(f).ok_or_else(|| Error::Usage(format!("font {f} missing from fonts_open")))
        })
        .collect::<Result<_>>()?;
    let cfg = SynthConfig {
        seed: 1934,
        degrade: 0.15,
        ..SynthConfig::default()
    };
    let mut pages = Vec::new();
    let mut texts = Vec::new();
    for i in 0..DEMO_PAGES {
        let opts = PageOptions {
            dpi: Some(200.0),
            columns: Some(if i == 2 { 2 } else { 1 }),
            footnote: Some(i == 1 || i == 4),
            arabic_indic_digits: Some(true),
            font: Some(faces[i / 3]),
            prose_only: true,
            harakat_share: None,
            size_in: None,
        };
        let page = make_page(&cfg, i as u64, opts);
        let embed = embed_of(&page);
        let lines = page
            .truth
            .lines
            .iter()
            .map(|l| TextLine {
                words: l.words.clone(),
                bbox: l.bbox,
                region: l.region,
            })
            .collect();
        let image = PageImage::new(page.image, page.truth.dpi, page.truth.dpi);
        pages.push(SourcePage {
            number: i + 1,
            image,
            embed: Some(embed),
        });
        texts.push(PageText { lines });
    }
    Ok((pages, texts))
}

/// Build the book in `dir`, make it searchable with `reader` (or, without one, lay the known
/// text as its layer), and measure.
pub fn run_demo(
    dir: &Path,
    reader: Option<&dyn PageReader>,
    observer: &mut Observer,
) -> Result<DemoReport> {
    std::fs::create_dir_all(dir).map_err(|e| Error::Output {
        path: dir.to_path_buf(),
        why: e.to_string(),
    })?;
    let (pages, truth) = make_demo_book()?;
    let scan = dir.join("register-scan.pdf");
    let mut pdf =
        FreshPdf::new(Vec::new(), LayerOptions::default()).map_err(|e| Error::io(&scan, e))?;
    for p in &pages {
        pdf.add_page(p, &PageText::default())
            .map_err(|e| Error::io(&scan, e))?;
    }
    let info = DocumentInfo {
        title: Some("سجل مقتنيات مكتبة عين الزيتون العامة (كتاب تجريبي مصطنع)".into()),
        ..DocumentInfo::default()
    };
    let bytes = pdf.finish(&info).map_err(|e| Error::io(&scan, e))?;
    write_atomic(&scan, &bytes, &[])?;
    let transcript = Transcript {
        pages: truth.clone(),
    };
    let truth_path = dir.join("register-truth.json");
    let json = serde_json::to_vec_pretty(&transcript).map_err(|e| Error::Usage(e.to_string()))?;
    write_atomic(&truth_path, &json, &[])?;

    let searchable = dir.join("register-searchable.pdf");
    let source = match reader {
        Some(r) => TextSource::Reader(r),
        None => TextSource::Transcript(&transcript),
    };
    let sidecar_paths = SidecarPaths {
        alto: Some(dir.join("register-alto")),
        report: Some(dir.join("register-report.json")),
    };
    let mut sidecars = Sidecars::create(
        &sidecar_paths,
        std::slice::from_ref(&scan),
        reader.is_none(),
    )?;
    let mut each_page = |p: &PageDone| {
        observer(p)?;
        sidecars.page(p)
    };
    let out = pipeline::ocr_pdf(
        &scan,
        &OcrSettings::default(),
        source,
        &searchable,
        &mut each_page,
    )?;
    sidecars.commit()?;
    let text = dir.join("register.txt");
    write_atomic(
        &text,
        crate::output::txt::plain_text(&out.pages, LayerOptions::default()).as_bytes(),
        &[],
    )?;
    let cer = reader.map(|_| cer_of(&truth, &out.pages));
    Ok(DemoReport {
        scan,
        searchable,
        text,
        truth: truth_path,
        alto: dir.join("register-alto"),
        report: dir.join("register-report.json"),
        cer,
        search_word: search_word(&truth, &out.pages),
    })
}

/// Character error rate of `got` against `truth`, over whole pages (lines joined by spaces).
pub fn cer_of(truth: &[PageText], got: &[PageText]) -> f64 {
    let flat = |p: &PageText| {
        p.plain_text()
            .split_whitespace()
            .collect::<Vec<_>>()
            .join(" ")
    };
    let (mut edits, mut len) = (0usize, 0usize);
    for (t, g) in truth.iter().zip(got) {
        let t = flat(t);
        edits += char_edits(&t, &flat(g));
        len += t.chars().count();
    }
    edits as f64 / len.max(1) as f64
}

/// A good word to try `mistara find` with: the longest word of the known text that the
/// recognized text also holds (recognition can be wrong), else the longest known word.
fn search_word(truth: &[PageText], got: &[PageText]) -> String {
    let words = |pages: &[PageText]| -> Vec<String> {
        pages
            .iter()
            .flat_map(|p| p.lines.iter().flat_map(|l| &l.words))
            .map(|w| {
                w.text
                    .chars()
                    .filter(|c| c.is_alphabetic())
                    .collect::<String>()
            })
            .filter(|w| !w.is_empty())
            .collect()
    };
    let recognized: std::collections::HashSet<String> = words(got).into_iter().collect();
    let known = words(truth);
    let longest =
        |it: &mut dyn Iterator<Item = &String>| it.max_by_key(|w| w.chars().count()).cloned();
    longest(&mut known.iter().filter(|w| recognized.contains(*w)))
        .or_else(|| longest(&mut known.iter()))
        .unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cer_counts_edits_over_truth_length() {
        let page = |s: &str| {
            let mut t = PageText::default();
            t.lines.push(TextLine {
                words: s
                    .split(' ')
                    .map(|w| crate::text::Word {
                        text: w.into(),
                        bbox: Default::default(),
                        confidence: 1.0,
                    })
                    .collect(),
                bbox: Default::default(),
                region: Default::default(),
            });
            t
        };
        // One substitution in 10 characters (with the space) → 0.1.
        assert!((cer_of(&[page("مكتبة عامة")], &[page("مكتبة عاما")]) - 0.1).abs() < 1e-9);
    }
}
