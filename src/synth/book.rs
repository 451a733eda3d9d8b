//! A synthetic "scanned" book: an image-only PDF (JPEG or CCITT G4 page images, no text) and its
//! ground truth `{"pages": [...]}` beside it as `FILE.json`.
//!
//! The PDF is written by [`crate::output::pdf_fresh::FreshPdf`] with an empty text per page, so it
//! looks like what a scanner hands over. Both files are written atomically.

use std::path::{Path, PathBuf};

use image::codecs::jpeg::JpegEncoder;
use rayon::prelude::*;
use serde::Serialize;

use super::page::PageOptions;
use super::truth::{make_page, SynthPage, TruthPage};
use super::SynthConfig;
use crate::error::{Error, Result};
use crate::input::{Embed, SourcePage};
use crate::output::pdf_fresh::FreshPdf;
use crate::output::text_layer::LayerOptions;
use crate::output::{write_atomic, DocumentInfo};
use crate::page::PageImage;
use crate::text::PageText;

/// Ground truth of a whole book, the shape `mistara ocr --layer-from` reads.
#[derive(Debug, Clone, Serialize)]
pub struct TruthBook<'a> {
    /// Pages in order.
    pub pages: Vec<&'a TruthPage>,
}

/// The truth file's path for a book: `book.pdf` → `book.json`.
pub fn truth_path(pdf: &Path) -> PathBuf {
    pdf.with_extension("json")
}

/// How one page's image goes into the PDF: G4 when thresholded, else JPEG.
pub fn embed_of(page: &SynthPage) -> Embed {
    if page.truth.damage.bilevel {
        return Embed::Bilevel;
    }
    let quality = match page.truth.damage.jpeg_quality {
        0 => 90,
        q => q,
    };
    let mut data = Vec::new();
    JpegEncoder::new_with_quality(&mut data, quality)
        .encode_image(&page.image)
        .expect("encoding a grey image into memory cannot fail");
    Embed::Jpeg {
        data,
        components: 1,
        inverted_cmyk: false,
    }
}

/// Make `pages` pages and return the PDF bytes and the truth JSON. Pages are made in parallel a
/// few at a time, so memory stays bounded however long the book.
pub fn make_book(cfg: &SynthConfig, pages: usize, tick: &(dyn Fn() + Sync)) -> (Vec<u8>, String) {
    let mut pdf =
        FreshPdf::new(Vec::new(), LayerOptions::default()).expect("writing to memory cannot fail");
    let mut truths: Vec<TruthPage> = Vec::with_capacity(pages);
    let batch = rayon::current_num_threads().max(1) * 2;
    for start in (0..pages).step_by(batch) {
        let made: Vec<(SynthPage, Embed)> = (start..(start + batch).min(pages))
            .into_par_iter()
            .map(|i| {
                let p = make_page(cfg, i as u64, PageOptions::at_dpi(cfg.dpi));
                let e = embed_of(&p);
                tick();
                (p, e)
            })
            .collect();
        for (k, (page, embed)) in made.into_iter().enumerate() {
            let image = PageImage::new(page.image, page.truth.dpi, page.truth.dpi);
            let source = SourcePage {
                number: start + k + 1,
                image,
                embed: Some(embed),
            };
            pdf.add_page(&source, &PageText::default())
                .expect("writing to memory cannot fail");
            truths.push(page.truth);
        }
    }
    let info = DocumentInfo {
        title: Some("Synthetic scanned book (mistara synth)".into()),
        ..DocumentInfo::default()
    };
    let bytes = pdf.finish(&info).expect("writing to memory cannot fail");
    let truth = TruthBook {
        pages: truths.iter().collect(),
    };
    (
        bytes,
        serde_json::to_string(&truth).expect("truth serializes"),
    )
}

/// Write the book PDF and its `.json` truth beside it.
pub fn write_book(
    cfg: &SynthConfig,
    out: &Path,
    pages: usize,
    tick: &(dyn Fn() + Sync),
) -> Result<()> {
    cfg.validate()?;
    if pages == 0 {
        return Err(Error::Usage(
            "--pages 0: a book needs at least one page".into(),
        ));
    }
    if out
        .extension()
        .and_then(|e| e.to_str())
        .map(str::to_ascii_lowercase)
        .as_deref()
        != Some("pdf")
    {
        return Err(Error::Usage(format!(
            "--out {}: give a file name ending in .pdf",
            out.display()
        )));
    }
    let (pdf, json) = make_book(cfg, pages, tick);
    write_atomic(&truth_path(out), json.as_bytes(), &[])?;
    write_atomic(out, &pdf, &[])
}
