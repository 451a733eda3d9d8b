//! Time of the page analysis (clean-up + layout, no recognition) per 300-dpi A5 page on one thread.
//!
//! `cargo run --release --example analysis_speed -- [pages]` makes `pages` generated A5 pages at
//! 300 dpi (ISO 216 A5: 148 × 210 mm = 1748 × 2480 px), half clean and half damaged, and runs
//! `cleanup::clean` then `layout::analyze` on each, on the calling thread. It prints wall time and
//! this thread's CPU time per page (CPU time from `/proc/thread-self/stat`, 10 ms ticks, summed
//! over all pages; it is the figure to trust on a loaded machine), then the same split by stage,
//! with the stages of `clean` called one by one in the same order.

use std::time::Instant;

use image::GrayImage;
use mistara::cleanup::{binarize, clean, denoise, deskew, orient, CleanupConfig, PageTransform};
use mistara::layout::components::find_components;
use mistara::layout::{analyze, LayoutConfig};
use mistara::page::PageImage;
use mistara::synth::page::PageOptions;
use mistara::synth::shelf::FontSet;
use mistara::synth::truth::make_page;
use mistara::synth::SynthConfig;

/// ISO 216 A5 in inches (148 × 210 mm, 25.4 mm to the inch).
const A5_IN: (f32, f32) = (148.0 / 25.4, 210.0 / 25.4);

/// This thread's user + system CPU time in milliseconds (Linux; 0 elsewhere).
fn cpu_ms() -> f64 {
    let Ok(stat) = std::fs::read_to_string("/proc/thread-self/stat") else {
        return 0.0;
    };
    // Fields after the command name (which is in parentheses): utime is field 14, stime 15.
    let rest = stat.rsplit_once(')').map_or("", |r| r.1);
    let f: Vec<f64> = rest
        .split_whitespace()
        .map(|v| v.parse().unwrap_or(0.0))
        .collect();
    // After ')': state is field 3, so utime (14) and stime (15) are at 11 and 12; 100 ticks/s.
    (f.get(11).unwrap_or(&0.0) + f.get(12).unwrap_or(&0.0)) * 10.0
}

/// Wall and CPU milliseconds spent in `f`, added to `acc`.
fn timed<T>(acc: &mut (f64, f64), f: impl FnOnce() -> T) -> T {
    let (c0, t0) = (cpu_ms(), Instant::now());
    let out = f();
    acc.0 += t0.elapsed().as_secs_f64() * 1e3;
    acc.1 += cpu_ms() - c0;
    out
}

const STAGES: [&str; 9] = [
    "normalize background",
    "choose + binarize",
    "denoise",
    "orientation (90°)",
    "skew estimate",
    "straighten binary",
    "upside down + straighten grey",
    "components",
    "layout (all of analyze)",
];

/// The stages of `clean` one by one (same calls, same order), then `analyze`.
fn stages(img: &PageImage, acc: &mut [(f64, f64); 9]) {
    let cfg = CleanupConfig::default();
    let dpi = img.dpi_y;
    let (w, h) = img.gray.dimensions();
    let norm = timed(&mut acc[0], || {
        binarize::normalize_background(&img.gray, dpi)
    });
    let (method, mut binary) = timed(&mut acc[1], || {
        let m = binarize::choose_method(&norm, dpi);
        let b = match m {
            binarize::ThresholdMethod::Sauvola => binarize::sauvola(
                &norm,
                binarize::sauvola_window_for_dpi(dpi) | 1,
                cfg.sauvola_k,
            ),
            _ => binarize::apply_threshold(&norm, binarize::otsu_threshold(&norm)),
        };
        (m, b)
    });
    timed(&mut acc[2], || {
        if method == binarize::ThresholdMethod::Sauvola {
            let global = binarize::apply_threshold(&norm, binarize::otsu_threshold(&norm));
            denoise::denoise_with_edges(&mut binary, dpi, denoise::dark_edge_bands(&global, dpi))
        } else {
            denoise::denoise(&mut binary, dpi)
        }
    });
    let q = timed(&mut acc[3], || orient::lines_run_vertically(&binary, dpi)) as u8;
    let skew = timed(&mut acc[4], || {
        let turned = deskew::transform_gray(&binary, &PageTransform::new(w, h, q, 0.0));
        deskew::estimate_skew_deg(&turned, dpi, cfg.max_skew_deg).0
    });
    let t = PageTransform::new(w, h, q, skew);
    let straight: GrayImage = timed(&mut acc[5], || {
        binarize::apply_threshold(&deskew::transform_gray(&binary, &t), 127)
    });
    timed(&mut acc[6], || {
        let _ = orient::is_upside_down(&straight, q == 1);
        deskew::transform_gray(&norm, &t)
    });
    timed(&mut acc[7], || find_components(&straight));
    let page = clean(img, &cfg);
    timed(&mut acc[8], || analyze(&page, &LayoutConfig::default()));
}

fn main() {
    let n: u64 = std::env::args()
        .nth(1)
        .and_then(|s| s.parse().ok())
        .unwrap_or(20);
    let pool = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("one thread");
    pool.install(|| {
        let (mut clean_t, mut layout_t) = ((0.0, 0.0), (0.0, 0.0));
        let mut acc = [(0.0, 0.0); 9];
        let mut pixels = 0u64;
        for i in 0..n {
            let cfg = SynthConfig {
                fonts: FontSet::All,
                seed: 150,
                degrade: if i % 2 == 0 { 0.0 } else { 0.6 },
                ..SynthConfig::default()
            };
            let opts = PageOptions {
                dpi: Some(300.0),
                size_in: Some(A5_IN),
                ..PageOptions::default()
            };
            let p = make_page(&cfg, i, opts);
            pixels += p.image.width() as u64 * p.image.height() as u64;
            let img = PageImage::new(p.image, 300.0, 300.0);
            let page = timed(&mut clean_t, || clean(&img, &CleanupConfig::default()));
            timed(&mut layout_t, || analyze(&page, &LayoutConfig::default()));
            stages(&img, &mut acc);
        }
        let k = n.max(1) as f64;
        println!(
            "{n} A5 pages at 300 dpi ({:.2} Mpx each), one thread: analysis {:.0} ms wall / {:.0} ms CPU per page (clean-up {:.0} / {:.0}, layout {:.0} / {:.0})",
            pixels as f64 / k / 1e6,
            (clean_t.0 + layout_t.0) / k,
            (clean_t.1 + layout_t.1) / k,
            clean_t.0 / k,
            clean_t.1 / k,
            layout_t.0 / k,
            layout_t.1 / k,
        );
        println!("by stage (ms per page, wall / CPU):");
        for (name, (wall, cpu)) in STAGES.iter().zip(acc) {
            println!("  {name:32} {:7.1} / {:7.1}", wall / k, cpu / k);
        }
    });
}
