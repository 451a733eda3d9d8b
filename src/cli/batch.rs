//! `mistara ocr` on a shelf: decide whether a run is a batch, name each document's outputs, run
//! the documents one after another (pages in parallel inside each), skip those already done,
//! keep going past failures, and sum up at the end. The rules live in [`crate::batch`].

use std::path::{Path, PathBuf};
use std::time::Instant;

use anyhow::{bail, Context, Result};

use super::args::OcrArgs;
use super::commands::ocr_document;
use crate::batch::{self, BatchDoc, Shard};
use crate::engine::PageEngine;
use crate::input;
use crate::pipeline::{OcrSettings, TextSource, Transcript};

/// The files one document is written to. Batch names them all in [`DocOutputs::for_doc`];
/// a single-document run takes them from the command line as they are.
#[derive(Debug, Clone)]
pub struct DocOutputs {
    /// The searchable PDF.
    pub pdf: PathBuf,
    /// The plain text, when asked for.
    pub txt: Option<PathBuf>,
    /// The folder of ALTO page files, when asked for.
    pub alto: Option<PathBuf>,
    /// The JSON report, when asked for.
    pub report: Option<PathBuf>,
    /// The folder of the proofreading view, when asked for.
    pub review: Option<PathBuf>,
    /// The folder of page-analysis pictures, when asked for (not an output that marks a
    /// document done).
    pub debug_dir: Option<PathBuf>,
}

impl DocOutputs {
    /// A batch document's outputs: each option's folder, the document's name mirrored in it.
    pub fn for_doc(a: &OcrArgs, doc: &BatchDoc) -> DocOutputs {
        DocOutputs {
            pdf: batch::output_path(&a.output, doc, "pdf"),
            txt: a
                .txt
                .as_ref()
                .map(|dir| batch::output_path(dir, doc, "txt")),
            alto: a
                .alto
                .as_ref()
                .map(|dir| batch::output_path(dir, doc, "alto")),
            report: a
                .report
                .as_ref()
                .map(|dir| batch::output_path(dir, doc, "json")),
            review: a
                .review
                .as_ref()
                .map(|dir| batch::output_path(dir, doc, "review")),
            debug_dir: a
                .debug_dir
                .as_ref()
                .map(|dir| batch::output_path(dir, doc, "debug")),
        }
    }

    /// Every file asked for, to tell whether the document is done.
    pub fn all(&self) -> Vec<&Path> {
        std::iter::once(self.pdf.as_path())
            .chain(self.txt.as_deref())
            .chain(self.alto.as_deref())
            .chain(self.report.as_deref())
            .chain(self.review.as_deref())
            .collect()
    }
}

/// Batch when an input is a folder, when `-o` is an existing folder, or when several inputs
/// include a PDF (PDFs are never merged into one document).
pub fn is_batch(a: &OcrArgs) -> Result<bool> {
    if a.output.is_dir() || a.inputs.iter().any(|p| p.is_dir()) {
        return Ok(true);
    }
    if a.inputs.len() < 2 {
        return Ok(false);
    }
    for p in &a.inputs {
        if input::sniff_file(p)? == Some(input::Format::Pdf) {
            return Ok(true);
        }
    }
    Ok(false)
}

/// What a batch did, for the summary line.
#[derive(Debug, Default)]
struct Tally {
    written: usize,
    skipped: usize,
    failed: usize,
    pages: usize,
    unreadable_pages: usize,
}

/// Run every document of the batch (this shard's part) into the `-o` folder.
pub fn run(a: &OcrArgs, settings: &OcrSettings, engine: Option<&PageEngine>) -> Result<()> {
    let start = Instant::now();
    let shard = a.shard.as_deref().map(str::parse::<Shard>).transpose()?;
    for (flag, dir) in std::iter::once(("-o", &a.output)).chain(a.txt.iter().map(|t| ("--txt", t)))
    {
        if dir.exists() && !dir.is_dir() {
            bail!(
                "{flag} {}: a batch writes one file per document, so this must be a folder",
                dir.display()
            );
        }
    }
    let skip: Vec<PathBuf> = std::iter::once(a.output.clone())
        .chain(a.txt.clone())
        .collect();
    let listing = batch::list_documents(&a.inputs, &skip)?;
    if listing.docs.is_empty() {
        bail!("no PDF or image files found in the inputs given");
    }
    let mine: Vec<&BatchDoc> = listing
        .docs
        .iter()
        .filter(|d| shard.is_none_or(|s| s.takes(&d.name)))
        .collect();
    let mut tally = Tally::default();
    for doc in &mine {
        let outputs = DocOutputs::for_doc(a, doc);
        if !a.redo && batch::is_done(doc, &outputs.all()) {
            tally.skipped += 1;
            continue;
        }
        match run_one(a, settings, engine, doc, &outputs) {
            Ok((pages, unreadable)) => {
                tally.written += 1;
                tally.pages += pages;
                tally.unreadable_pages += unreadable;
            }
            Err(e) => {
                tally.failed += 1;
                eprintln!("mistara: error: {e:#}");
            }
        }
    }
    let counts = (mine.len(), listing.docs.len());
    let secs = start.elapsed().as_secs_f64();
    eprintln!(
        "mistara: {}",
        summary(&tally, counts, shard, secs, &listing.ignored)
    );
    if tally.failed > 0 {
        bail!(
            "{} of {} documents failed (see above); run the same command again to retry them",
            tally.failed,
            mine.len()
        );
    }
    Ok(())
}

/// One document: its text source, its folders, the pipeline. Returns (pages, unreadable pages).
fn run_one(
    a: &OcrArgs,
    settings: &OcrSettings,
    engine: Option<&PageEngine>,
    doc: &BatchDoc,
    outputs: &DocOutputs,
) -> Result<(usize, usize)> {
    let what = match &doc.folder {
        Some(f) => format!("{} (page images)", f.display()),
        None => doc.inputs[0].display().to_string(),
    };
    let transcript;
    let source = match (&a.layer_from, engine) {
        (Some(dir), _) => {
            let path = batch::output_path(dir, doc, "json");
            transcript = Transcript::load(&path).with_context(|| format!("{what}: no text"))?;
            TextSource::Transcript(&transcript)
        }
        (None, Some(engine)) => TextSource::Reader(engine),
        (None, None) => bail!("{what}: no recognition model"),
    };
    for file in outputs.all() {
        if let Some(parent) = file.parent() {
            std::fs::create_dir_all(parent).with_context(|| {
                format!("{what}: cannot create the folder {}", parent.display())
            })?;
        }
    }
    let out = ocr_document(&doc.inputs, outputs, settings, source, a.quiet)
        .with_context(|| format!("{what} → {}", outputs.pdf.display()))?;
    Ok((out.pages.len(), out.unreadable.len()))
}

/// `5 documents (shard 2/8 of 37): 3 written, 1 up to date, 1 failed; 42 pages in 9.5 s`, and
/// unreadable pages and ignored files when there are any. `(mine, all)`: documents of this
/// shard, of the whole batch.
fn summary(
    t: &Tally,
    (mine, all): (usize, usize),
    shard: Option<Shard>,
    secs: f64,
    ignored: &[PathBuf],
) -> String {
    let part = match shard {
        Some(s) => format!(" (shard {}/{} of {all})", s.index, s.count),
        None => String::new(),
    };
    let mut line = format!(
        "{mine} documents{part}: {} written, {} up to date, {} failed; {} pages in {secs:.1} s",
        t.written, t.skipped, t.failed, t.pages
    );
    if t.unreadable_pages > 0 {
        line += &format!(" ({} unreadable, kept without text)", t.unreadable_pages);
    }
    if !ignored.is_empty() {
        line += &format!("; {} files neither PDF nor image ignored", ignored.len());
    }
    line
}
