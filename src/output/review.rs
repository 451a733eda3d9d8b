//! The proofreading view (`ocr --review DIR`): one self-contained HTML page per document that shows
//! every page image with its word boxes shaded by confidence, the recognized text beside it line
//! by line, and the flagged words (see [`crate::output::report::is_flagged`]) marked in both, with
//! keyboard navigation from one flagged word to the next.
//!
//! Page images are written as they arrive ([`ReviewWriter::add_page`]), downscaled grey JPEGs in
//! `DIR/pages/`; [`ReviewWriter::finish`] writes `DIR/index.html`. Everything goes into a hidden
//! temporary folder inside `DIR` first and is moved into place only at the end, so a failed run
//! leaves an earlier review of the same folder as it was. The page needs no server, no network and
//! nothing outside `DIR`: style and script are inline (`review.css`, `review.js` beside this file).

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use image::imageops::FilterType;
use image::GrayImage;

use crate::error::{Error, Result};
use crate::output::report::is_flagged;
use crate::output::MACHINE_TEXT_NOTICE;
use crate::pipeline::PageDone;
use crate::text::{PageText, Word};

const STYLE: &str = include_str!("review.css");
const SCRIPT: &str = include_str!("review.js");

/// Settings of the proofreading view.
#[derive(Debug, Clone)]
pub struct ReviewConfig {
    /// Page images taller than this are scaled down to it, in pixels.
    pub max_height_px: u32,
    /// JPEG quality of the page images, 1–100.
    pub jpeg_quality: u8,
}

impl Default for ReviewConfig {
    fn default() -> Self {
        // 1,200 px tall shows a page's words legibly on a laptop screen: our choice, no source.
        ReviewConfig {
            max_height_px: 1200,
            jpeg_quality: 80,
        }
    }
}

/// What the written view holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct ReviewSummary {
    /// Pages in the document.
    pub pages: usize,
    /// Flagged words in all pages.
    pub flagged_words: usize,
}

/// One page as the view shows it.
struct ViewPage {
    number: usize,
    /// File name under `pages/` and its size in pixels; `None` when the page was not read.
    image: Option<(String, u32, u32)>,
    /// Size of the analysed page image the word boxes refer to, in pixels.
    source_px: (u32, u32),
    text: PageText,
    had_text: bool,
}

/// Writes the proofreading view page by page; see the module docs.
pub struct ReviewWriter {
    dir: PathBuf,
    work: tempfile::TempDir,
    title: String,
    config: ReviewConfig,
    pages: Vec<ViewPage>,
}

impl ReviewWriter {
    /// Prepare `dir` (created when missing) for a view titled `title` (e.g. the output's name).
    pub fn create(dir: &Path, title: &str, config: ReviewConfig) -> Result<ReviewWriter> {
        let out_err = |why: String| Error::Output {
            path: dir.to_path_buf(),
            why,
        };
        if dir.exists() && !dir.is_dir() {
            return Err(out_err(
                "exists and is not a folder; give a folder for the review".into(),
            ));
        }
        std::fs::create_dir_all(dir).map_err(|e| out_err(format!("cannot create it: {e}")))?;
        let work = tempfile::Builder::new()
            .prefix(".mistara-review-")
            .tempdir_in(dir)
            .map_err(|e| out_err(format!("cannot write in it: {e}")))?;
        std::fs::create_dir(work.path().join("pages"))
            .map_err(|e| out_err(format!("cannot write in it: {e}")))?;
        Ok(ReviewWriter {
            dir: dir.to_path_buf(),
            work,
            title: title.to_string(),
            config,
            pages: Vec::new(),
        })
    }

    /// Take one finished page: write its image (when it was read) and keep its text.
    pub fn add_page(&mut self, done: &PageDone) -> Result<()> {
        let number = self.pages.len() + 1;
        let (image, source_px) = match done.image {
            Some(page) => {
                let name = format!("p{number:04}.jpg");
                let small = downscale(&page.gray, self.config.max_height_px);
                let size = small.dimensions();
                self.write_jpeg(&small, &name)?;
                (Some((name, size.0, size.1)), page.gray.dimensions())
            }
            None => (None, (0, 0)),
        };
        self.pages.push(ViewPage {
            number,
            image,
            source_px,
            text: done.text.clone(),
            had_text: done.had_text,
        });
        Ok(())
    }

    fn write_jpeg(&self, img: &GrayImage, name: &str) -> Result<()> {
        let path = self.work.path().join("pages").join(name);
        let err = |why: String| Error::Output {
            path: self.dir.join("pages").join(name),
            why,
        };
        let file = std::fs::File::create(&path).map_err(|e| err(e.to_string()))?;
        let mut w = std::io::BufWriter::new(file);
        image::codecs::jpeg::JpegEncoder::new_with_quality(&mut w, self.config.jpeg_quality)
            .encode_image(img)
            .map_err(|e| err(e.to_string()))?;
        std::io::Write::flush(&mut w).map_err(|e| err(e.to_string()))
    }

    /// Write `index.html` and move the view into place (replacing an earlier view in the folder).
    pub fn finish(self) -> Result<ReviewSummary> {
        let summary = ReviewSummary {
            pages: self.pages.len(),
            flagged_words: self.pages.iter().map(|p| flagged_count(&p.text)).sum(),
        };
        let html = render_html(&self.title, &self.pages, summary);
        let work = self.work.path();
        let err = |path: &Path, e: std::io::Error| Error::Output {
            path: path.to_path_buf(),
            why: e.to_string(),
        };
        std::fs::write(work.join("index.html"), html).map_err(|e| err(&self.dir, e))?;
        let (pages, index) = (self.dir.join("pages"), self.dir.join("index.html"));
        if pages.is_dir() {
            std::fs::rename(&pages, work.join("old-pages")).map_err(|e| err(&pages, e))?;
        } else if pages.exists() {
            return Err(Error::Output {
                path: pages,
                why: "is in the way of the review's page images; move it".into(),
            });
        }
        std::fs::rename(work.join("pages"), &pages).map_err(|e| err(&pages, e))?;
        std::fs::rename(work.join("index.html"), &index).map_err(|e| err(&index, e))?;
        Ok(summary)
    }
}

/// Scale a page down (never up) to at most `max_height_px` tall, keeping its proportions.
fn downscale(gray: &GrayImage, max_height_px: u32) -> GrayImage {
    let (w, h) = gray.dimensions();
    if h <= max_height_px || h == 0 {
        return gray.clone();
    }
    let new_w = ((w as f64 * max_height_px as f64 / h as f64).round() as u32).max(1);
    image::imageops::resize(gray, new_w, max_height_px, FilterType::Triangle)
}

/// Flagged words on a page.
pub fn flagged_count(text: &PageText) -> usize {
    text.lines
        .iter()
        .flat_map(|l| &l.words)
        .filter(|w| is_flagged(w))
        .count()
}

/// Text safe inside HTML elements and quoted attributes.
fn escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

fn render_html(title: &str, pages: &[ViewPage], summary: ReviewSummary) -> String {
    let mut h = String::with_capacity(4096 + pages.len() * 16_384);
    let t = escape(title);
    let _ = write!(
        h,
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <title>Proofreading — {t}</title>\n<style>\n{STYLE}</style>\n</head>\n\
         <body data-ready=\"0\">\n<header id=\"bar\">\n<div class=\"name\">{t}</div>\n\
         <div class=\"counts\"><b id=\"n-pages\">{}</b> pages · <b id=\"n-flags\">{}</b> flagged \
         words · <span id=\"where\">no word selected</span></div>\n\
         <div class=\"keys\"><kbd>n</kbd>/<kbd>j</kbd> next flagged word · <kbd>p</kbd>/<kbd>k</kbd> \
         previous · click a word or a box to pair them</div>\n</header>\n\
         <p class=\"caution\">{}</p>\n<main>\n",
        summary.pages,
        summary.flagged_words,
        escape(MACHINE_TEXT_NOTICE)
    );
    for p in pages {
        render_page(&mut h, p);
    }
    let _ = write!(
        h,
        "</main>\n<script>\n{SCRIPT}</script>\n</body>\n</html>\n"
    );
    h
}

fn render_page(h: &mut String, p: &ViewPage) {
    let n = p.number;
    let Some((file, w, hgt)) = &p.image else {
        let why = if p.had_text {
            "not read: this page already carried text and was left as it was"
        } else {
            "not read: outside the pages asked for"
        };
        let _ = writeln!(
            h,
            "<section class=\"page unread\" id=\"page-{n}\">\n<h2>Page {n}</h2>\n\
             <p class=\"note\">{why}</p>\n</section>"
        );
        return;
    };
    let flagged = flagged_count(&p.text);
    let _ = writeln!(
        h,
        "<section class=\"page\" id=\"page-{n}\">\n<h2>Page {n} <small>{} words, {flagged} \
         flagged</small></h2>\n<div class=\"pair\">\n<div class=\"scan\" style=\"aspect-ratio:{w}/{hgt}\">\
         <img src=\"pages/{file}\" width=\"{w}\" height=\"{hgt}\" alt=\"scan of page {n}\">",
        p.text.word_count()
    );
    let (sw, sh) = (p.source_px.0.max(1) as f32, p.source_px.1.max(1) as f32);
    for (k, word) in words(&p.text) {
        let b = word.bbox;
        let pct = |v: f32, full: f32| (v / full * 100.0).clamp(0.0, 100.0);
        let _ = write!(
            h,
            "\n<div class=\"box{}\" id=\"b{n}-{k}\" data-w=\"{n}-{k}\" title=\"{} · {}\" \
             style=\"left:{:.3}%;top:{:.3}%;width:{:.3}%;height:{:.3}%;--a:{:.2}\"></div>",
            flag_class(word),
            escape(&word.text),
            confidence_label(word),
            pct(b.x0, sw),
            pct(b.y0, sh),
            pct(b.x1, sw) - pct(b.x0, sw),
            pct(b.y1, sh) - pct(b.y0, sh),
            shade(word)
        );
    }
    h.push_str("</div>\n<div class=\"text\" lang=\"ar\" dir=\"rtl\">\n");
    let mut k = 0;
    for line in &p.text.lines {
        h.push_str("<p class=\"line\">");
        for (i, word) in line.words.iter().enumerate() {
            if i > 0 {
                h.push(' ');
            }
            let _ = write!(
                h,
                "<span class=\"w{}\" id=\"t{n}-{k}\" data-w=\"{n}-{k}\" title=\"{}\">{}</span>",
                flag_class(word),
                confidence_label(word),
                escape(&word.text)
            );
            k += 1;
        }
        h.push_str("</p>\n");
    }
    if p.text.lines.is_empty() {
        h.push_str("<p class=\"note\" dir=\"ltr\" lang=\"en\">no text found on this page</p>\n");
    }
    h.push_str("</div>\n</div>\n</section>\n");
}

/// Words of a page with their running number on the page.
fn words(text: &PageText) -> impl Iterator<Item = (usize, &Word)> {
    text.lines.iter().flat_map(|l| &l.words).enumerate()
}

fn flag_class(word: &Word) -> &'static str {
    if is_flagged(word) {
        " flag"
    } else {
        ""
    }
}

fn confidence_label(word: &Word) -> String {
    if word.confidence.is_finite() {
        format!("confidence {:.2}", word.confidence)
    } else {
        "confidence unknown".into()
    }
}

/// Opacity of a box's tint: faint for sure words, strong for doubtful ones (our choice).
fn shade(word: &Word) -> f32 {
    let doubt = if word.confidence.is_finite() {
        1.0 - word.confidence.clamp(0.0, 1.0)
    } else {
        1.0
    };
    0.06 + 0.5 * doubt
}
