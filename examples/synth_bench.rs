//! Throughput of synthetic data: lines/s and pages/s on a fixed number of threads.
//!
//! `cargo run --release --example synth_bench -- [threads] [lines] [pages] [degrade]`
//! (defaults: 2 threads, 2000 lines, 20 pages, degrade 0.5). Measures making the images in memory
//! plus PNG encoding, as `mistara synth lines|pages` does, without the disk writes.
//!
//! Measured 2026-12-02 on the shared 2-core development machine (load average ~9 from other
//! work, so wall clock understates the machine), mistara built at opt-level 3
//! (`CARGO_PROFILE_DEV_OPT_LEVEL=3`; dependencies are at opt-level 3 in every profile), 2 threads:
//! - lines, degrade 0.5: 1000 in 5.6 s of CPU (≈ 360 lines/s on two free cores; 88 lines/s wall);
//! - lines, clean: 1000 in 2.5 s of CPU (≈ 800 lines/s on two free cores; 200 lines/s wall);
//! - pages, degrade 0.5: 10 in 6.9 s of CPU (≈ 2.9 pages/s on two free cores; 0.72 pages/s wall).

use std::time::Instant;

use mistara::synth::page::PageOptions;
use mistara::synth::truth::{make_page, truth_json};
use mistara::synth::{make_line, png_bytes, SynthConfig};
use rayon::prelude::*;

fn arg<T: std::str::FromStr>(n: usize, default: T) -> T {
    std::env::args()
        .nth(n)
        .and_then(|a| a.parse().ok())
        .unwrap_or(default)
}

fn main() {
    let threads: usize = arg(1, 2);
    let lines: usize = arg(2, 2000);
    let pages: usize = arg(3, 20);
    let degrade: f32 = arg(4, 0.5);
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build_global()
        .expect("thread pool");
    let cfg = SynthConfig {
        degrade,
        ..SynthConfig::default()
    };
    let _ = make_line(&cfg, 0); // parse the font shelf before timing

    let t = Instant::now();
    let bytes: usize = (0..lines)
        .into_par_iter()
        .map(|i| png_bytes(&make_line(&cfg, i as u64).image, 300.0).len())
        .sum();
    let line_s = t.elapsed().as_secs_f64();

    let t = Instant::now();
    let page_bytes: usize = (0..pages)
        .into_par_iter()
        .map(|i| {
            let p = make_page(&cfg, i as u64, PageOptions::default());
            png_bytes(&p.image, p.truth.dpi).len() + truth_json(&p.truth).len()
        })
        .sum();
    let page_s = t.elapsed().as_secs_f64();

    println!("threads {threads}, degrade {degrade}");
    println!(
        "lines: {lines} in {line_s:.2} s = {:.0} lines/s ({:.1} KiB PNG per line)",
        lines as f64 / line_s,
        bytes as f64 / lines as f64 / 1024.0
    );
    println!(
        "pages: {pages} in {page_s:.2} s = {:.2} pages/s ({:.0} KiB per page)",
        pages as f64 / page_s,
        page_bytes as f64 / pages as f64 / 1024.0
    );
}
