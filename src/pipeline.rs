//! One document through all stages: pages in, text found, outputs written.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};
use std::time::Instant;

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::input::{self, Format, ImageDocument};
use crate::limits::Limits;
use std::io::Write;

use crate::input::SourcePage;
use crate::ordered::for_each_in_order;
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
    /// A page that cannot be decoded or analysed fails the document (nothing written) instead of
    /// being kept without text.
    pub strict: bool,
    /// Replace the invisible text layer (render mode 3) a PDF page already carries; pages that
    /// show visible text are never changed.
    pub replace_layer: bool,
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
            strict: false,
            replace_layer: false,
            archival: false,
        }
    }
}

/// The text source of a run.
#[derive(Clone, Copy)]
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
    /// Why the page could not be decoded or analysed (it is kept without text); `None` when it
    /// was read, or not meant to be.
    pub unreadable: Option<&'a str>,
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
    /// 1-based pages of a PDF input whose invisible text layer was replaced by a new one.
    pub layers_replaced: Vec<usize>,
    /// Pages that could not be decoded or analysed, kept without text: 1-based page of the run
    /// and the reason (naming the file and its own page number).
    pub unreadable: Vec<(usize, String)>,
}

/// Counts the pages a run tried to read, to tell a document with some unreadable pages (kept,
/// written) from one where nothing could be read (failed, nothing written).
#[derive(Default)]
struct Troubles {
    read: usize,
    first: Option<Error>,
}

impl Troubles {
    /// Note one page's outcome; the error of the first unreadable page is kept.
    fn note(&mut self, seq: usize, trouble: Option<Error>, out: &mut OcrOutput) {
        match trouble {
            None => self.read += 1,
            Some(e) => {
                out.unreadable.push((seq, e.to_string()));
                self.first.get_or_insert(e);
            }
        }
    }

    /// The first page's error when pages were tried and none of them could be read.
    fn all_failed(&mut self) -> Option<Error> {
        if self.read == 0 {
            self.first.take()
        } else {
            None
        }
    }
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
        // A single-page file is read again when its page is decoded, so memory does not grow
        // with the number of files; a multi-page TIFF keeps its bytes for its pages.
        let data = if page_count > 1 { data } else { Vec::new() };
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
/// Pages are decoded and read in parallel, a bounded number at a time, and written in order, so
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
    let mut out = OcrOutput::default();
    let mut troubles = Troubles::default();
    // Size of a page that could not be decoded: the page before it, else ISO 216 A4 in points.
    let mut last_box = [0.0, 0.0, 595.276, 841.89];
    let numbered =
        |i: usize, &(d, n): &(usize, usize)| read_one(&docs[d], n, i + 1, settings, &source);
    for_each_in_order(&work, pages_in_flight(), numbered, |_, read| {
        let read = read?;
        let seq = out.pages.len() + 1;
        match &read.page {
            Some(page) => {
                last_box = page.image.placement.media_box;
                pdf.add_page(page, &read.text)
            }
            None => pdf.add_blank_page(last_box),
        }
        .map_err(|e| file.err(e))?;
        let why = read.trouble.as_ref().map(Error::to_string);
        observer(&PageDone {
            done: seq,
            total: work.len(),
            image: read.page.as_ref().filter(|_| read.wanted).map(|p| &p.image),
            text: &read.text,
            had_text: false,
            read_ms: read.read_ms,
            unreadable: why.as_deref(),
        })?;
        troubles.note(seq, read.trouble, &mut out);
        out.pages.push(read.text);
        Ok(())
    })?;
    if let Some(e) = troubles.all_failed() {
        return Err(e);
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
    Ok(out)
}

/// Pages read ahead of the one being written: enough to keep every thread busy while one page
/// takes longer than the others, few enough that the page images held stay a few dozen MB.
fn pages_in_flight() -> usize {
    rayon::current_num_threads().max(1) * 3
}

/// A decoded page and what was found on it.
struct ReadPage {
    /// `None` when the page could not be decoded.
    page: Option<SourcePage>,
    text: PageText,
    wanted: bool,
    read_ms: f64,
    /// Why the page could not be decoded or analysed.
    trouble: Option<Error>,
}

/// Decode page `number` of `doc` (`seq`-th page of the run, 1-based) and find its text.
///
/// A page that cannot be decoded or analysed comes back without text and with the reason, or
/// fails the run with `settings.strict`.
fn read_one(
    doc: &ImageDocument,
    number: usize,
    seq: usize,
    settings: &OcrSettings,
    source: &TextSource,
) -> Result<ReadPage> {
    let wanted = settings.pages.as_ref().is_none_or(|set| set.contains(&seq));
    let mut read = ReadPage {
        page: None,
        text: PageText::default(),
        wanted,
        read_ms: 0.0,
        trouble: None,
    };
    let page = match doc.page(number) {
        Ok(page) => read.page.insert(page),
        Err(e) if settings.strict => return Err(e),
        Err(e) => {
            read.trouble = Some(e);
            return Ok(read);
        }
    };
    let start = Instant::now();
    let text = match source {
        _ if !wanted => Ok(PageText::default()),
        TextSource::Transcript(t) => Ok(t.pages[seq - 1].clone()),
        TextSource::Reader(r) => read_text(*r, &page.image, &doc.path, number),
    };
    read.read_ms = start.elapsed().as_secs_f64() * 1000.0;
    match text {
        Ok(text) => read.text = text,
        Err(e) if settings.strict => return Err(e),
        Err(e) => read.trouble = Some(e),
    }
    Ok(read)
}

/// Find the text of page `n` of `path`. A failure — an error, or a panic inside page analysis,
/// which is a bug but must not take the other pages with it — comes back as an error naming the
/// file and the page.
fn read_text(
    reader: &dyn PageReader,
    image: &PageImage,
    path: &Path,
    n: usize,
) -> Result<PageText> {
    let got = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| reader.read_page(image)));
    match got {
        Ok(Ok(text)) => Ok(text),
        Ok(Err(e @ (Error::Input { .. } | Error::Unsupported { .. } | Error::Limit { .. }))) => {
            Err(e.on_page(n))
        }
        Ok(Err(other)) => Err(Error::input_page(path, n, other.to_string())),
        Err(panic) => {
            let what = panic
                .downcast_ref::<&str>()
                .map(|s| s.to_string())
                .or_else(|| panic.downcast_ref::<String>().cloned())
                .unwrap_or_default();
            Err(Error::input_page(
                path,
                n,
                format!("page analysis failed ({what}); please report this page"),
            ))
        }
    }
}

/// Run one PDF input into `output` (written atomically): the same document, every page, image,
/// outline and annotation kept, with a text layer added to each scanned page.
///
/// Pages that already show text (text operators in their content) are left as they are and
/// listed in [`OcrOutput::pages_with_text`]; their text in `pages` is empty. With
/// `settings.replace_layer`, a page whose only text is invisible loses that text and gets the new
/// layer instead (listed in [`OcrOutput::layers_replaced`]). A page that cannot be decoded or
/// analysed is kept as it is, without a new layer, and listed in [`OcrOutput::unreadable`].
/// Pages are decoded and read in parallel, a bounded number at a time, and reported in order.
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
    let mut doc = input::pdf::open(path, data, settings.dpi, settings.limits)?;
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
    let mut troubles = Troubles::default();
    let mut layers = Vec::with_capacity(total);
    let mut stripped = Vec::new();
    let numbers: Vec<usize> = (1..=total).collect();
    let empty = PageText::default();
    let laid_out = |_, &n: &usize| layer_one(&doc, n, settings, &source);
    for_each_in_order(&numbers, pages_in_flight(), laid_out, |i, laid| {
        let (n, laid) = (numbers[i], laid?);
        let why = laid.trouble.as_ref().map(Error::to_string);
        observer(&PageDone {
            done: layers.len() + 1,
            total,
            image: laid.image.as_ref(),
            text: laid.layer.as_ref().map_or(&empty, |l| &l.text),
            had_text: laid.had_text,
            read_ms: laid.read_ms,
            unreadable: why.as_deref(),
        })?;
        match laid.stripped {
            Some(content) if laid.layer.is_some() => stripped.push((n, content)),
            _ if laid.had_text => out.pages_with_text.push(n),
            _ => {}
        }
        if laid.tried {
            troubles.note(n, laid.trouble, &mut out);
        }
        out.pages.push(
            laid.layer
                .as_ref()
                .map(|l| l.text.clone())
                .unwrap_or_default(),
        );
        layers.push(laid.layer);
        Ok(())
    })?;
    if let Some(e) = troubles.all_failed() {
        return Err(e);
    }
    for (n, content) in stripped {
        crate::output::old_layer::set_content(&mut doc.doc, doc.pages[n - 1], &content)
            .map_err(|why| Error::input_page(path, n, why))?;
        out.layers_replaced.push(n);
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
#[derive(Default)]
struct LaidPage {
    had_text: bool,
    /// The page was meant to be read (in `--pages`, and without text or with a layer to replace).
    tried: bool,
    layer: Option<LayerPage>,
    image: Option<PageImage>,
    read_ms: f64,
    /// Why the page could not be decoded or analysed.
    trouble: Option<Error>,
    /// The page's content without its old invisible text, when that layer is to be replaced.
    stripped: Option<Vec<u8>>,
}

/// Whether page `n` already carries text, and its layer when it gets one.
fn layer_one(
    doc: &input::pdf::PdfDocument,
    n: usize,
    settings: &OcrSettings,
    source: &TextSource,
) -> Result<LaidPage> {
    let wanted = settings.pages.as_ref().is_none_or(|set| set.contains(&n));
    let id = doc.pages[n - 1];
    let survey = input::pdf::survey_page(&doc.doc, id).unwrap_or_default();
    let mut laid = LaidPage {
        had_text: survey.has_text,
        ..LaidPage::default()
    };
    if survey.has_text && settings.replace_layer && !survey.visible_text && !survey.form_text {
        laid.stripped = crate::output::old_layer::without_invisible_text(&doc.doc, id).ok();
    }
    if !wanted || (laid.had_text && laid.stripped.is_none()) {
        return Ok(laid);
    }
    laid.tried = true;
    let page = match doc.page(n) {
        Ok(page) => page,
        Err(e) if settings.strict => return Err(e),
        Err(e) => {
            laid.trouble = Some(e);
            return Ok(laid);
        }
    };
    let start = Instant::now();
    let text = match source {
        TextSource::Transcript(t) => Ok(t.pages[n - 1].clone()),
        TextSource::Reader(r) => read_text(*r, &page.image, &doc.path, n),
    };
    laid.read_ms = start.elapsed().as_secs_f64() * 1000.0;
    let text = match text {
        Ok(text) => text,
        Err(e) if settings.strict => return Err(e),
        Err(e) => {
            laid.trouble = Some(e);
            return Ok(laid);
        }
    };
    let img = page.image;
    laid.layer = Some(LayerPage {
        text,
        height_px: img.gray.height() as f32,
        to_page: img.placement.to_page,
    });
    laid.image = Some(img);
    Ok(laid)
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

    /// Reads every page but those whose top-left pixel is 0 (fails, as an analysis that gives
    /// up would) or 1 (panics, as a bug in analysis would).
    struct FailsOnBlackCorner;

    impl PageReader for FailsOnBlackCorner {
        fn read_page(&self, page: &PageImage) -> Result<PageText> {
            match page.gray.get_pixel(0, 0).0[0] {
                0 => Err(Error::Usage("no lines found".into())),
                1 => panic!("a bug in page analysis"),
                _ => Ok(PageText::default()),
            }
        }
    }

    /// Three PNG pages in `dir`; those in `failing` (1-based) get a black corner.
    fn pages(dir: &Path, failing: &[usize]) -> Vec<PathBuf> {
        (1..=3)
            .map(|n| {
                let mut img = image::GrayImage::from_pixel(40, 30, image::Luma([255]));
                if failing.contains(&n) {
                    img.put_pixel(0, 0, image::Luma([0]));
                }
                let path = dir.join(format!("p{n}.png"));
                img.save(&path).unwrap();
                path
            })
            .collect()
    }

    #[test]
    fn a_page_that_cannot_be_analysed_is_kept_or_fails_when_strict() {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().join("out.pdf");
        let inputs = pages(dir.path(), &[2]);
        let source = TextSource::Reader(&FailsOnBlackCorner);
        let mut ignore = |_: &PageDone| Ok(());
        let settings = OcrSettings::default();
        let got = ocr_images(&inputs, &settings, source, &out, &mut ignore).unwrap();
        assert_eq!(got.pages.len(), 3);
        assert_eq!(got.unreadable.len(), 1);
        assert_eq!(got.unreadable[0].0, 2);
        assert!(got.unreadable[0]
            .1
            .contains("p2.png, page 1: no lines found"));
        assert!(out.exists());

        // A panic inside analysis is one unreadable page, not a crash.
        let other = tempfile::tempdir().unwrap();
        let panicky = pages(other.path(), &[]);
        let mut img = image::GrayImage::from_pixel(40, 30, image::Luma([255]));
        img.put_pixel(0, 0, image::Luma([1]));
        img.save(&panicky[2]).unwrap();
        let got = ocr_images(&panicky, &settings, source, &out, &mut ignore).unwrap();
        assert_eq!(got.unreadable.len(), 1);
        assert!(got.unreadable[0].1.contains("a bug in page analysis"));

        std::fs::remove_file(&out).unwrap();
        let strict = OcrSettings {
            strict: true,
            ..OcrSettings::default()
        };
        assert!(ocr_images(&inputs, &strict, source, &out, &mut ignore).is_err());
        assert!(!out.exists());

        // Nothing readable at all: the document fails, even without --strict.
        let all = tempfile::tempdir().unwrap();
        let inputs = pages(all.path(), &[1, 2, 3]);
        let err = ocr_images(&inputs, &settings, source, &out, &mut ignore).unwrap_err();
        assert!(err.to_string().contains("no lines found"), "{err}");
        assert!(!out.exists());
    }

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
