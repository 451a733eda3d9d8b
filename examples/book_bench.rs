//! Whole-book benchmark: pages per second, time against a plain rasterizer, peak memory and
//! end-to-end character error rate of `mistara ocr` on a synthetic scanned book.
//!
//! `cargo run --release --example book_bench -- BIN WORKDIR [PAGES] [THREADS] [REPEAT]`
//!
//! - BIN: the `mistara` binary to measure (e.g. `target/release/mistara`).
//! - PAGES (default 50): pages of the synthetic book, made with `BIN synth book` (300 dpi,
//!   heldout fonts, degradation 0.3, JPEG pages except the few that the degradation thresholds).
//! - THREADS (default 2): `--threads` for `ocr`.
//! - REPEAT (default 1): also run `ocr` on the book's page images given REPEAT times over as
//!   image files (e.g. 20 × 50 = 1000 pages), to show that memory stays flat in book length.
//!
//! Each `ocr` run goes through `/usr/bin/time -v` (Debian package `time`) for its peak resident
//! set size; the rasterizer reference is poppler's `pdftoppm -r 300 -gray` on the same PDF, timed
//! in the same run. The character error rate compares the `--txt` output with the book's truth
//! (harakat dropped on both sides, as `ocr` does by default, whitespace collapsed), page by page.

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Instant;

use anyhow::{bail, Context, Result};
use mistara::eval::text_output_cer;
use mistara::output::text_layer::LayerOptions;
use mistara::pipeline::Transcript;

fn main() -> Result<()> {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let [bin, work, rest @ ..] = args.as_slice() else {
        bail!("usage: book_bench BIN WORKDIR [PAGES] [THREADS] [REPEAT]");
    };
    let pages: usize = rest.first().map_or(Ok(50), |s| s.parse())?;
    let threads: usize = rest.get(1).map_or(Ok(2), |s| s.parse())?;
    let repeat: usize = rest.get(2).map_or(Ok(1), |s| s.parse())?;
    let work = PathBuf::from(work);
    std::fs::create_dir_all(&work)?;
    let book = work.join("book.pdf");
    if !book.exists() {
        run(Command::new(bin)
            .args(["synth", "book", "--fonts", "heldout", "--degrade", "0.3"])
            .args([
                "--seed",
                "7",
                "--dpi",
                "300",
                "--pages",
                &pages.to_string(),
                "--out",
            ])
            .arg(&book))?;
    }
    let txt = work.join("book.txt");
    let ocr = timed_rss(
        Command::new(bin)
            .arg("ocr")
            .arg(&book)
            .arg("-o")
            .arg(work.join("book-searchable.pdf"))
            .arg("--txt")
            .arg(&txt)
            .args(["--quiet", "--threads", &threads.to_string()]),
    )?;
    let raster_dir = work.join("raster");
    std::fs::create_dir_all(&raster_dir)?;
    let t0 = Instant::now();
    run(Command::new("pdftoppm")
        .args(["-r", "300", "-gray"])
        .arg(&book)
        .arg(raster_dir.join("p")))?;
    let raster_s = t0.elapsed().as_secs_f64();
    std::fs::remove_dir_all(&raster_dir)?;
    let truth = Transcript::load(&book.with_extension("json"))?;
    let got = std::fs::read_to_string(&txt)?;
    let cer = text_output_cer(&truth.pages, &got, LayerOptions::default());
    println!("book: {pages} pages, 300 dpi, heldout fonts, degradation 0.3, {threads} threads");
    println!(
        "ocr (PDF in):       {:8.1} s  {:5.2} pages/s  peak RSS {:6.0} MB",
        ocr.wall_s,
        pages as f64 / ocr.wall_s,
        ocr.peak_rss_mb
    );
    println!(
        "pdftoppm -r 300 -gray: {raster_s:6.1} s  ratio ocr/pdftoppm {:.1}",
        ocr.wall_s / raster_s
    );
    println!(
        "end-to-end CER (no harakat, whitespace collapsed): {:.2} %",
        cer * 100.0
    );
    if repeat > 1 {
        let images = page_images(&work, &book)?;
        let mut cmd = Command::new(bin);
        cmd.arg("ocr");
        for _ in 0..repeat {
            cmd.args(&images);
        }
        cmd.arg("-o").arg(work.join("repeat.pdf")).args([
            "--quiet",
            "--threads",
            &threads.to_string(),
        ]);
        let r = timed_rss(&mut cmd)?;
        let n = images.len() * repeat;
        println!(
            "ocr (images in):    {:8.1} s  {:5.2} pages/s  peak RSS {:6.0} MB  ({n} pages)",
            r.wall_s,
            n as f64 / r.wall_s,
            r.peak_rss_mb
        );
        std::fs::remove_file(work.join("repeat.pdf"))?;
    }
    Ok(())
}

/// Wall time and peak memory of one command.
struct Measured {
    wall_s: f64,
    peak_rss_mb: f64,
}

/// Run `cmd` under `/usr/bin/time -v` and read its peak resident set size.
fn timed_rss(cmd: &mut Command) -> Result<Measured> {
    let mut timed = Command::new("/usr/bin/time");
    timed.arg("-v").arg(cmd.get_program()).args(cmd.get_args());
    let t0 = Instant::now();
    let out = timed
        .output()
        .context("running /usr/bin/time (Debian package `time`)")?;
    let wall_s = t0.elapsed().as_secs_f64();
    let err = String::from_utf8_lossy(&out.stderr);
    if !out.status.success() {
        bail!("{:?} failed: {err}", cmd.get_program());
    }
    let kb: f64 = err
        .lines()
        .find_map(|l| {
            l.trim()
                .strip_prefix("Maximum resident set size (kbytes): ")
        })
        .context("no peak RSS in /usr/bin/time's report")?
        .trim()
        .parse()?;
    Ok(Measured {
        wall_s,
        peak_rss_mb: kb / 1024.0,
    })
}

fn run(cmd: &mut Command) -> Result<()> {
    let status = cmd
        .status()
        .with_context(|| format!("running {:?}", cmd.get_program()))?;
    if !status.success() {
        bail!("{:?} failed ({status})", cmd.get_program());
    }
    Ok(())
}

/// The book's JPEG page images as files (poppler's `pdfimages -all` writes the embedded streams
/// as they are; the few thresholded G4 pages are left out).
fn page_images(work: &Path, book: &Path) -> Result<Vec<PathBuf>> {
    let dir = work.join("images");
    if !dir.exists() {
        std::fs::create_dir_all(&dir)?;
        run(Command::new("pdfimages")
            .arg("-all")
            .arg(book)
            .arg(dir.join("p")))?;
    }
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir)?
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "jpg"))
        .collect();
    files.sort();
    Ok(files)
}
