//! Times `find` over a shelf of searchable PDFs.
//!
//! `cargo run --release --example find_bench -- [books] [pages_per_book] [dir]`: writes `books`
//! PDFs of `pages_per_book` pages each (default 20 × 50 = 1,000 pages) into `dir` (default: a
//! temporary folder, removed afterwards; a shelf already there is reused), laid from invented transcripts with `ocr --layer-from`'s
//! library path, then searches the whole shelf several times and prints the times. Pages are
//! 150 dpi grey PNG scans with word-shaped ink and paper speckle, ~25 lines of ~9 words each.
//!
//! Run with `RAYON_NUM_THREADS=2` to match the 2-core target of issue 7.

use std::path::{Path, PathBuf};
use std::time::Instant;

use image::{GrayImage, Luma};
use mistara::layout::geometry::Rect;
use mistara::pipeline::{self, OcrSettings, TextSource, Transcript};
use mistara::search::{self, index::IndexCache};
use mistara::text::fold::FoldOptions;
use mistara::text::{PageText, RegionKind, TextLine, Word};

/// Invented words of our own town-library and filings scenario.
const VOCAB: &[&str] = &[
    "سجل",
    "المقتنيات",
    "مكتبة",
    "وادي",
    "الريحان",
    "العامة",
    "كتاب",
    "قديم",
    "الرف",
    "الثالث",
    "القضية",
    "رقم",
    "أمام",
    "المحكمة",
    "صدر",
    "الحكم",
    "سنة",
    "الموافق",
    "إلى",
    "على",
    "من",
    "في",
    "دفتر",
    "الإعارة",
    "القارئ",
    "الأمين",
    "مجلد",
    "مخطوط",
    "الطبعة",
    "الأولى",
    "تاريخ",
    "الورود",
    "ملف",
    "الدعوى",
    "المدعي",
    "عليه",
    "الجلسة",
    "التالية",
    "قرار",
    "الهيئة",
    "نسخة",
    "مصدقة",
];

/// A small deterministic generator (64-bit LCG, Knuth MMIX constants).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self, n: usize) -> usize {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((self.0 >> 33) % n as u64) as usize
    }
}

fn page_text(rng: &mut Lcg, book: usize, page: usize) -> PageText {
    let mut text = PageText::default();
    for l in 0..25 {
        let y0 = 120.0 + l as f32 * 60.0;
        let mut right = 1120.0;
        let mut words = Vec::new();
        let count = 7 + rng.next(5);
        for i in 0..count {
            let t = if l == 3 && i == 2 {
                format!("{}/{}", 1900 + book, page)
            } else {
                VOCAB[rng.next(VOCAB.len())].to_string()
            };
            let w = t.chars().count() as f32 * 14.0;
            words.push(Word {
                text: t,
                bbox: Rect::new(right - w, y0, right, y0 + 32.0),
                confidence: 1.0,
            });
            right -= w + 14.0;
        }
        let bbox = words
            .iter()
            .skip(1)
            .fold(words[0].bbox, |a, w| a.union(&w.bbox));
        text.lines.push(TextLine {
            words,
            bbox,
            region: RegionKind::Body,
        });
    }
    text
}

fn page_image(rng: &mut Lcg, text: &PageText) -> GrayImage {
    let mut img = GrayImage::from_pixel(1240, 1754, Luma([245]));
    for w in text.lines.iter().flat_map(|l| &l.words) {
        let b = w.bbox;
        for y in (b.y0 as u32 + 6)..(b.y1 as u32 - 6) {
            for x in (b.x0 as u32 + 1)..(b.x1 as u32 - 1) {
                if rng.next(4) != 0 {
                    img.put_pixel(x, y, Luma([25 + rng.next(40) as u8]));
                }
            }
        }
    }
    for _ in 0..4000 {
        let (x, y) = (rng.next(1240) as u32, rng.next(1754) as u32);
        img.put_pixel(x, y, Luma([120]));
    }
    img
}

fn build_shelf(dir: &Path, books: usize, pages: usize) -> Vec<PathBuf> {
    let mut rng = Lcg(7);
    let mut out = Vec::new();
    let scans = dir.join("scans");
    std::fs::create_dir_all(&scans).unwrap();
    // Eight page images shared by all books (drawing and encoding 1,000 would dominate the run).
    let texts: Vec<PageText> = (0..8).map(|p| page_text(&mut rng, 0, p)).collect();
    let pngs: Vec<PathBuf> = texts
        .iter()
        .enumerate()
        .map(|(i, t)| {
            let p = scans.join(format!("scan-{i}.png"));
            page_image(&mut rng, t).save(&p).unwrap();
            p
        })
        .collect();
    for b in 0..books {
        let inputs: Vec<PathBuf> = (0..pages).map(|p| pngs[p % pngs.len()].clone()).collect();
        let transcript = Transcript {
            pages: (0..pages).map(|p| page_text(&mut rng, b, p + 1)).collect(),
        };
        let pdf = dir.join(format!("shelf/book-{b:02}.pdf"));
        std::fs::create_dir_all(pdf.parent().unwrap()).unwrap();
        pipeline::ocr_images(
            &inputs,
            &OcrSettings {
                dpi: 150.0,
                ..OcrSettings::default()
            },
            TextSource::Transcript(&transcript),
            &pdf,
            &mut |_| Ok(()),
        )
        .unwrap();
        out.push(pdf);
    }
    out
}

fn time_search(label: &str, files: &[PathBuf], query: &str, cache: Option<&IndexCache>) {
    let mut times = Vec::new();
    let mut hits = 0;
    for _ in 0..5 {
        let t = Instant::now();
        let results = search::search_files(files, query, &FoldOptions::default(), 30, cache);
        times.push(t.elapsed().as_secs_f64());
        hits = results
            .iter()
            .map(|(_, r)| r.as_ref().map_or(0, |r| r.hits.len()))
            .sum();
    }
    let first = times[0];
    times.sort_by(f64::total_cmp);
    println!(
        "{label:<28} first {:>7.3} s   median {:>7.3} s   best {:>7.3} s   ({hits} hits for {query:?})",
        first, times[2], times[0]
    );
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let books: usize = args.get(1).map_or(20, |s| s.parse().unwrap());
    let pages: usize = args.get(2).map_or(50, |s| s.parse().unwrap());
    let tmp = tempfile::tempdir().unwrap();
    let dir = args.get(3).map_or(tmp.path().to_path_buf(), PathBuf::from);
    let t = Instant::now();
    // A shelf left in `dir` by an earlier run is searched as it is.
    let files = match search::pdf_files(&[dir.join("shelf")]) {
        Ok(f) if f.len() == books => f,
        _ => build_shelf(&dir, books, pages),
    };
    let bytes: u64 = files
        .iter()
        .map(|f| std::fs::metadata(f).unwrap().len())
        .sum();
    println!(
        "shelf: {books} PDFs × {pages} pages = {} pages, {:.1} MB, built in {:.1} s; {} threads",
        books * pages,
        bytes as f64 / 1e6,
        t.elapsed().as_secs_f64(),
        rayon::current_num_threads()
    );
    let folder = vec![dir.join("shelf")];
    let files = search::pdf_files(&folder).unwrap();
    time_search("no index", &files, "المحكمه", None);
    time_search("no index", &files, "1907/33", None);
    let cache = IndexCache::at(dir.join("cache"));
    time_search(
        "index (first run builds it)",
        &files,
        "المحكمه",
        Some(&cache),
    );
    time_search("index", &files, "1907/33", Some(&cache));
}
