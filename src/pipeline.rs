//! One document through all stages: pages in, text found, outputs written.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::time::Instant;

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
    /// Write PDF/A-2b (see `output::pdfa`).
    pub archival: bool,
}

impl Default for OcrSettings {
    fn default() -> Self {
        OcrSettings {
            dpi: 300.0,
            pages: None,
            layer: LayerOptions::default(),
            limits: Limits::default(),
            archival: false,
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

/// One finished page, handed to the run's observer in page order (on the calling thread).
///
/// Outputs that are written page by page beside the PDF (ALTO, report, review pages) and the
/// progress display all read from here, so a run never holds a book of page images.
#[derive(Debug, Clone, Copy)]
pub struct PageDone<'a> {
    /// Pages finished, this one included.
    pub done: usize,
    /// Pages in all.
    pub total: usize,
    /// The page image that was analysed; `None` when the page was not read (outside
    /// `--pages`, or a PDF page that already carries text).
    pub image: Option<&'a PageImage>,
    /// The page's text (empty when it was not read).
    pub text: &'a PageText,
    /// A PDF page that already carried text and was left as it was.
    pub had_text: bool,
    /// Wall-clock time spent finding and recognizing the text, in milliseconds.
    pub read_ms: f64,
}

/// What a run calls after each page, in page order; an error stops the run.
pub type Observer<'o> = dyn FnMut(&PageDone) -> Result<()> + 'o;

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
    observer: &mut Observer,
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
        let done: Vec<ReadPage> = batch
            .par_iter()
            .enumerate()
            .map(|(i, &(d, n))| read_one(&docs[d], n, w * window + i + 1, settings, &source))
            .collect::<Result<_>>()?;
        for read in done {
            pdf.add_page(&read.page, &read.text)
                .map_err(|e| file.err(e))?;
            observer(&PageDone {
                done: texts.len() + 1,
                total: work.len(),
                image: read.wanted.then_some(&read.page.image),
                text: &read.text,
                had_text: false,
                read_ms: read.read_ms,
            })?;
            texts.push(read.text);
        }
    }
    let mut writer = pdf
        .finish(&DocumentInfo {
            archival: settings.archival,
            ..DocumentInfo::default()
        })
        .map_err(|e| file.err(e))?;
    writer.flush().map_err(|e| file.err(e))?;
    drop(writer);
    file.commit()?;
    Ok(OcrOutput {
        pages: texts,
        pages_with_text: Vec::new(),
    })
}

/// A decoded page and what was found on it.
struct ReadPage {
    page: SourcePage,
    text: PageText,
    wanted: bool,
    read_ms: f64,
}

/// Decode page `number` of `doc` (`seq`-th page of the run, 1-based) and find its text.
fn read_one(
    doc: &ImageDocument,
    number: usize,
    seq: usize,
    settings: &OcrSettings,
    source: &TextSource,
) -> Result<ReadPage> {
    let page = doc.page(number)?;
    let wanted = settings.pages.as_ref().is_none_or(|set| set.contains(&seq));
    let start = Instant::now();
    let text = match source {
        _ if !wanted => PageText::default(),
        TextSource::Transcript(t) => t.pages[seq - 1].clone(),
        TextSource::Reader(r) => r.read_page(&page.image).map_err(|e| e.on_page(number))?,
    };
    Ok(ReadPage {
        page,
        text,
        wanted,
        read_ms: start.elapsed().as_secs_f64() * 1000.0,
    })
}

/// Run one PDF input into `output` (written atomically): the same document, every page, image,
/// outline and annotation kept, with a text layer added to each scanned page.
///
/// Pages that already show text (text operators in their content) are left as they are and
/// listed in [`OcrOutput::pages_with_text`]; their text in `pages` is empty. Pages are decoded
/// and read in parallel windows, and reported in order.
pub fn ocr_pdf(
    path: &Path,
    settings: &OcrSettings,
    source: TextSource,
    output: &Path,
    observer: &mut Observer,
) -> Result<OcrOutput> {
    let (format, data) = input::read_input(path)?;
    if format != Format::Pdf {
        return Err(Error::Usage(format!("{}: not a PDF", path.display())));
    }
    crate::output::refuse_overwriting_input(output, &[path.to_path_buf()])?;
    let doc = input::pdf::open(path, data, settings.dpi, settings.limits)?;
    let total = doc.page_count();
    if let TextSource::Transcript(t) = &source {
        if t.pages.len() < total {
            return Err(Error::Usage(format!(
                "the transcript has {} pages, the input has {total}",
                t.pages.len()
            )));
        }
    }
    let mut out = OcrOutput::default();
    let mut layers = Vec::with_capacity(total);
    let window = rayon::current_num_threads().max(1) * 2;
    let numbers: Vec<usize> = (1..=total).collect();
    for batch in numbers.chunks(window) {
        let done: Vec<LaidPage> = batch
            .par_iter()
            .map(|&n| layer_one(&doc, n, settings, &source))
            .collect::<Result<_>>()?;
        let empty = PageText::default();
        for (n, laid) in batch.iter().zip(done) {
            if laid.had_text {
                out.pages_with_text.push(*n);
            }
            observer(&PageDone {
                done: layers.len() + 1,
                total,
                image: laid.image.as_ref(),
                text: laid.layer.as_ref().map_or(&empty, |l| &l.text),
                had_text: laid.had_text,
                read_ms: laid.read_ms,
            })?;
            out.pages.push(
                laid.layer
                    .as_ref()
                    .map(|l| l.text.clone())
                    .unwrap_or_default(),
            );
            layers.push(laid.layer);
        }
    }
    let pdf = pdf_overlay::overlay(
        doc.doc,
        &doc.pages,
        &layers,
        settings.layer,
        &DocumentInfo {
            archival: settings.archival,
            ..DocumentInfo::default()
        },
    )
    .map_err(|why| Error::input(path, why))?;
    crate::output::write_atomic(output, &pdf.pdf, &[path.to_path_buf()])?;
    Ok(out)
}

/// A PDF page after reading: its new layer, if it gets one, and the image that was read.
struct LaidPage {
    had_text: bool,
    layer: Option<LayerPage>,
    image: Option<PageImage>,
    read_ms: f64,
}

/// Whether page `n` already carries text, and its layer when it gets one.
fn layer_one(
    doc: &input::pdf::PdfDocument,
    n: usize,
    settings: &OcrSettings,
    source: &TextSource,
) -> Result<LaidPage> {
    let wanted = settings.pages.as_ref().is_none_or(|set| set.contains(&n));
    let had_text = input::pdf::survey_page(&doc.doc, doc.pages[n - 1]).is_ok_and(|s| s.has_text);
    if !wanted || had_text {
        return Ok(LaidPage {
            had_text,
            layer: None,
            image: None,
            read_ms: 0.0,
        });
    }
    let page = doc.page(n)?;
    let start = Instant::now();
    let text = match source {
        TextSource::Transcript(t) => t.pages[n - 1].clone(),
        TextSource::Reader(r) => r.read_page(&page.image).map_err(|e| e.on_page(n))?,
    };
    let read_ms = start.elapsed().as_secs_f64() * 1000.0;
    let img = page.image;
    let height_px = img.gray.height() as f32;
    Ok(LaidPage {
        had_text: false,
        layer: Some(LayerPage {
            text,
            height_px,
            to_page: img.placement.to_page,
        }),
        image: Some(img),
        read_ms,
    })
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
