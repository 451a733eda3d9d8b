//! One document through all stages: pages in, text found, outputs written.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::input::{self, Format, ImageDocument};
use crate::limits::Limits;
use std::io::Write;

use rayon::prelude::*;

use crate::input::SourcePage;
use crate::output::pdf_fresh::FreshPdf;
use crate::output::pdf_overlay::{self, LayerPage};
use crate::output::text_layer::LayerOptions;
use crate::output::AtomicFile;
use crate::output::DocumentInfo;
use crate::page::PageImage;
use crate::text::PageText;

/// Known text of a document, page by page (words with boxes in page-image pixels).
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
pub struct Transcript {
    /// One entry per page, in order.
    pub pages: Vec<PageText>,
}

impl Transcript {
    /// Read a transcript JSON file.
    pub fn load(path: &Path) -> Result<Transcript> {
        let data = std::fs::read(path).map_err(|e| Error::io(path, e))?;
        serde_json::from_slice(&data)
            .map_err(|e| Error::input(path, format!("not a mistara transcript: {e}")))
    }
}

/// Where the text of each page comes from.
pub trait PageReader: Sync {
    /// Find and recognize the text of one page.
    fn read_page(&self, page: &PageImage) -> Result<PageText>;
}

/// Settings of one `ocr` run, validated.
#[derive(Debug, Clone)]
pub struct OcrSettings {
    /// Resolution assumed when an image carries none.
    pub dpi: f32,
    /// 1-based pages to give text; `None` = all.
    pub pages: Option<BTreeSet<usize>>,
    /// Text-layer options.
    pub layer: LayerOptions,
    /// Size limits.
    pub limits: Limits,
}

impl Default for OcrSettings {
    fn default() -> Self {
        OcrSettings {
            dpi: 300.0,
            pages: None,
            layer: LayerOptions::default(),
            limits: Limits::default(),
        }
    }
}

/// The text source of a run.
pub enum TextSource<'a> {
    /// Use these pages' known text.
    Transcript(&'a Transcript),
    /// Recognize.
    Reader(&'a dyn PageReader),
}

/// Progress of a run, reported after each page.
#[derive(Debug, Clone, Copy)]
pub struct Progress {
    /// Pages finished.
    pub done: usize,
    /// Pages in all.
    pub total: usize,
}

/// What a run produced besides the PDF.
#[derive(Debug, Clone, Default)]
pub struct OcrOutput {
    /// Text per page (empty for pages outside `--pages` and pages left as they were).
    pub pages: Vec<PageText>,
    /// 1-based pages of a PDF input that already carried text and were left as they were.
    pub pages_with_text: Vec<usize>,
}

/// Open image-file inputs as documents.
pub fn open_images(inputs: &[PathBuf], settings: &OcrSettings) -> Result<Vec<ImageDocument>> {
    let mut docs = Vec::new();
    for path in inputs {
        let (format, data) = input::read_input(path)?;
        if format == Format::Pdf {
            return Err(Error::Usage(format!(
                "{}: a PDF cannot be combined with other inputs into one output; give it on its own",
                path.display()
            )));
        }
        let page_count =
            input::image_file::page_count(format, &data).map_err(|why| Error::input(path, why))?;
        docs.push(ImageDocument {
            path: path.clone(),
            format,
            data,
            page_count,
            fallback_dpi: settings.dpi,
            limits: settings.limits,
        });
    }
    Ok(docs)
}

/// Run image-file inputs into one new searchable PDF at `output` (written atomically).
///
/// Pages are decoded and read in parallel, a bounded window at a time, and written in order, so
/// memory does not grow with the number of pages. Returns the text of every page.
pub fn ocr_images(
    inputs: &[PathBuf],
    settings: &OcrSettings,
    source: TextSource,
    output: &Path,
    progress: &(dyn Fn(Progress) + Sync),
) -> Result<OcrOutput> {
    let docs = open_images(inputs, settings)?;
    let work: Vec<(usize, usize)> = docs
        .iter()
        .enumerate()
        .flat_map(|(d, doc)| (1..=doc.page_count).map(move |n| (d, n)))
        .collect();
    if let TextSource::Transcript(t) = &source {
        if t.pages.len() < work.len() {
            return Err(Error::Usage(format!(
                "the transcript has {} pages, the input has {}",
                t.pages.len(),
                work.len()
            )));
        }
    }
    let file = AtomicFile::create(output, inputs)?;
    let mut pdf = FreshPdf::new(file.writer()?, settings.layer).map_err(|e| file.err(e))?;
    let mut texts = Vec::with_capacity(work.len());
    let window = rayon::current_num_threads().max(1) * 2;
    for (w, batch) in work.chunks(window).enumerate() {
        let done: Vec<(SourcePage, PageText)> = batch
            .par_iter()
            .enumerate()
            .map(|(i, &(d, n))| read_one(&docs[d], n, w * window + i + 1, settings, &source))
            .collect::<Result<_>>()?;
        for (page, text) in done {
            pdf.add_page(&page, &text).map_err(|e| file.err(e))?;
            texts.push(text);
            progress(Progress {
                done: texts.len(),
                total: work.len(),
            });
        }
    }
    let mut writer = pdf
        .finish(&DocumentInfo::default())
        .map_err(|e| file.err(e))?;
    writer.flush().map_err(|e| file.err(e))?;
    drop(writer);
    file.commit()?;
    Ok(OcrOutput {
        pages: texts,
        pages_with_text: Vec::new(),
    })
}

/// Decode page `number` of `doc` (`seq`-th page of the run, 1-based) and find its text.
fn read_one(
    doc: &ImageDocument,
    number: usize,
    seq: usize,
    settings: &OcrSettings,
    source: &TextSource,
) -> Result<(SourcePage, PageText)> {
    let page = doc.page(number)?;
    let wanted = settings.pages.as_ref().is_none_or(|set| set.contains(&seq));
    let text = match source {
        _ if !wanted => PageText::default(),
        TextSource::Transcript(t) => t.pages[seq - 1].clone(),
        TextSource::Reader(r) => r.read_page(&page.image).map_err(|e| e.on_page(number))?,
    };
    Ok((page, text))
}

/// Run one PDF input into `output` (written atomically): the same document comes back with a
/// text layer on each scanned page.
///
/// Pages that already show text (fonts and text operators in their content) are left as they
/// are and listed in [`OcrOutput::pages_with_text`]; their text in `pages` is empty.
pub fn ocr_pdf(
    path: &Path,
    settings: &OcrSettings,
    source: TextSource,
    output: &Path,
    progress: &(dyn Fn(Progress) + Sync),
) -> Result<OcrOutput> {
    let (format, data) = input::read_input(path)?;
    if format != Format::Pdf {
        return Err(Error::Usage(format!("{}: not a PDF", path.display())));
    }
    crate::output::refuse_overwriting_input(output, &[path.to_path_buf()])?;
    let doc = input::pdf::open(path, data, settings.dpi, settings.limits)?;
    if let TextSource::Transcript(t) = &source {
        if t.pages.len() < doc.pages.len() {
            return Err(Error::Usage(format!(
                "the transcript has {} pages, the input has {}",
                t.pages.len(),
                doc.pages.len()
            )));
        }
    }
    let total = doc.pages.len();
    let results: Vec<(Option<LayerPage>, PageText, bool)> = (0..total)
        .into_par_iter()
        .map(|i| {
            let n = i + 1;
            let wanted = settings.pages.as_ref().is_none_or(|set| set.contains(&n));
            let has_text =
                input::pdf::survey_page(&doc.doc, doc.pages[i]).is_ok_and(|s| s.has_text);
            if !wanted || has_text {
                return Ok((None, PageText::default(), has_text));
            }
            let page = doc.page(n)?;
            let text = match &source {
                TextSource::Transcript(t) => t.pages[i].clone(),
                TextSource::Reader(r) => r.read_page(&page.image).map_err(|e| e.on_page(n))?,
            };
            let img = &page.image;
            let layer = LayerPage {
                text: text.clone(),
                height_px: img.gray.height() as f32,
                to_page: img.placement.to_page,
            };
            progress(Progress { done: n, total });
            Ok((Some(layer), text, false))
        })
        .collect::<Result<_>>()?;
    let mut out = OcrOutput::default();
    let mut layers = Vec::with_capacity(total);
    for (i, (layer, text, has_text)) in results.into_iter().enumerate() {
        if has_text {
            out.pages_with_text.push(i + 1);
        }
        layers.push(layer);
        out.pages.push(text);
    }
    let pdf = pdf_overlay::overlay(&doc, &layers, settings.layer, &DocumentInfo::default())
        .map_err(|why| Error::input(path, why))?;
    crate::output::write_atomic(output, &pdf.pdf, &[path.to_path_buf()])?;
    Ok(out)
}

/// Parse a page range such as `1-5,9` into 1-based page numbers.
pub fn parse_page_range(spec: &str) -> Result<BTreeSet<usize>> {
    let bad = |why: &str| Error::Usage(format!("--pages {spec:?}: {why} (write it like 1-5,9)"));
    let mut set = BTreeSet::new();
    for part in spec.split(',').map(str::trim).filter(|p| !p.is_empty()) {
        let (a, b) = match part.split_once('-') {
            Some((a, b)) => (a.trim(), b.trim()),
            None => (part, part),
        };
        let a: usize = a.parse().map_err(|_| bad("not a page number"))?;
        let b: usize = b.parse().map_err(|_| bad("not a page number"))?;
        if a == 0 || b < a {
            return Err(bad("pages count from 1 and ranges go upwards"));
        }
        if b - a > 1_000_000 {
            return Err(bad("range too long"));
        }
        set.extend(a..=b);
    }
    if set.is_empty() {
        return Err(bad("no pages"));
    }
    Ok(set)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn page_ranges() {
        assert_eq!(
            parse_page_range("1-3,9")
                .unwrap()
                .into_iter()
                .collect::<Vec<_>>(),
            vec![1, 2, 3, 9]
        );
        assert!(parse_page_range("0-2").is_err());
        assert!(parse_page_range("5-2").is_err());
        assert!(parse_page_range("a").is_err());
    }
}
