//! One document through all stages: pages in, text found, outputs written.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::input::{self, Format, ImageDocument};
use crate::limits::Limits;
use crate::output::pdf_fresh::FreshPdf;
use crate::output::text_layer::LayerOptions;
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

/// Result of running a document: the output PDF's bytes and the text per page.
pub struct OcrOutput {
    /// The searchable PDF.
    pub pdf: Vec<u8>,
    /// Text per page (empty for pages outside `--pages`).
    pub pages: Vec<PageText>,
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

/// Run image-file inputs into one new searchable PDF.
pub fn ocr_images(
    inputs: &[PathBuf],
    settings: &OcrSettings,
    source: TextSource,
) -> Result<OcrOutput> {
    let docs = open_images(inputs, settings)?;
    let mut pdf = FreshPdf::new(settings.layer);
    let mut texts = Vec::new();
    let mut n = 0;
    for doc in &docs {
        for number in 1..=doc.page_count {
            n += 1;
            let page = doc.page(number)?;
            let wanted = settings.pages.as_ref().is_none_or(|set| set.contains(&n));
            let text = if !wanted {
                PageText::default()
            } else {
                match &source {
                    TextSource::Transcript(t) => t.pages.get(n - 1).cloned().ok_or_else(|| {
                        Error::Usage(format!(
                            "the transcript has {} pages, the input has more",
                            t.pages.len()
                        ))
                    })?,
                    TextSource::Reader(r) => {
                        r.read_page(&page.image).map_err(|e| e.on_page(number))?
                    }
                }
            };
            pdf.add_page(&page, &text);
            texts.push(text);
        }
    }
    Ok(OcrOutput {
        pdf: pdf.finish(&DocumentInfo::default()),
        pages: texts,
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
