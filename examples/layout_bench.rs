//! Measures the page analysis on drawn pages with known lines: line detection F1, reading order,
//! region kinds, deskew error, orientation, and time per page.
//!
//! `cargo run --release --example layout_bench -- [pages] [out_dir]`: draws `pages` A5 pages at 300 dpi
//! (clean and damaged versions), analyses them on one thread, prints the figures, and writes debug
//! views of the first pages to `out_dir` when given.
//!
//! A found line matches a true line when their boxes overlap with IoU ≥ 0.7 and the found box holds
//! ≥ 98 % of the true line's ink pixels (dots and harakat included) — the criterion.

use std::time::Instant;

use image::GrayImage;
use mistara::cleanup::{clean, deskew, CleanPage, CleanupConfig};
use mistara::layout::drawn::{degrade, draw_page, DrawnPage, Lcg, PagePlan};
use mistara::layout::geometry::Rect;
use mistara::layout::{analyze, debug, LayoutConfig, PageLayout};
use mistara::page::PageImage;
use mistara::text::RegionKind;

#[derive(Default)]
struct Tally {
    found: usize,
    truth: usize,
    matched: usize,
    pages: usize,
    order_ok: usize,
    kind_total: usize,
    kind_ok: usize,
    furniture_total: usize,
    furniture_ok: usize,
    clean_ms: Vec<f64>,
    analyze_ms: Vec<f64>,
}

/// True lines seen on the straightened page: box and ink points.
fn truth_in_clean_frame(d: &DrawnPage, page: &CleanPage) -> Vec<(Rect, Vec<(f32, f32)>)> {
    let w = d.image.width();
    let mut pts: Vec<Vec<(f32, f32)>> = vec![Vec::new(); d.lines.len()];
    for (i, &l) in d.labels.iter().enumerate() {
        if l > 0 {
            let (x, y) = ((i as u32 % w) as f32 + 0.5, (i as u32 / w) as f32 + 0.5);
            pts[l as usize - 1].push(page.transform.from_original(x, y));
        }
    }
    pts.into_iter()
        .map(|p| {
            let mut r = Rect {
                x0: f32::MAX,
                y0: f32::MAX,
                x1: f32::MIN,
                y1: f32::MIN,
            };
            for &(x, y) in &p {
                r = Rect {
                    x0: r.x0.min(x - 0.5),
                    y0: r.y0.min(y - 0.5),
                    x1: r.x1.max(x + 0.5),
                    y1: r.y1.max(y + 0.5),
                };
            }
            (r, p)
        })
        .collect()
}

fn score_page(d: &DrawnPage, page: &CleanPage, layout: &PageLayout, t: &mut Tally) {
    let truth = truth_in_clean_frame(d, page);
    if std::env::var("LAYOUT_DEBUG").is_ok() {
        for (tb, p) in truth.iter().take(0) {
            eprintln!("truth {tb:?} {} px", p.len());
        }
    }
    let found: Vec<_> = layout.lines().collect();
    let mut taken = vec![false; truth.len()];
    let mut order = Vec::new();
    for f in &found {
        let b = f.clean_box;
        let best = truth
            .iter()
            .enumerate()
            .filter(|(i, _)| !taken[*i])
            .map(|(i, (tb, p))| {
                let inside = p
                    .iter()
                    .filter(|&&(x, y)| x >= b.x0 && x <= b.x1 && y >= b.y0 && y <= b.y1)
                    .count();
                (i, b.iou(tb), inside as f32 / p.len().max(1) as f32)
            })
            .filter(|&(_, iou, ink)| {
                if std::env::var("LAYOUT_DEBUG").is_ok() && iou > 0.3 && (iou < 0.7 || ink < 0.98) {
                    eprintln!("near miss: found {b:?} iou {iou:.2} ink {ink:.3}");
                }
                iou >= 0.7 && ink >= 0.98
            })
            .max_by(|a, b| a.1.total_cmp(&b.1));
        if best.is_none() && std::env::var("LAYOUT_DEBUG").is_ok() {
            eprintln!("unmatched found {:?} {:?}", f.kind, f.clean_box);
        }
        if let Some((i, _, _)) = best {
            taken[i] = true;
            order.push(i);
            let want = d.lines[i].kind;
            t.kind_total += 1;
            t.kind_ok += (want == f.kind) as usize;
            if matches!(
                want,
                RegionKind::Header | RegionKind::PageNumber | RegionKind::Footnote
            ) {
                t.furniture_total += 1;
                t.furniture_ok += (want == f.kind) as usize;
            }
        }
    }
    t.found += found.len();
    t.truth += truth.len();
    t.matched += order.len();
    t.pages += 1;
    let all = order.len() == truth.len() && order.windows(2).all(|w| w[0] < w[1]);
    t.order_ok += all as usize;
    if !all && std::env::var("LAYOUT_DEBUG").is_ok() {
        let kinds: Vec<String> = order
            .iter()
            .map(|&i| {
                format!("{i}{:?}", d.lines[i].kind)
                    .chars()
                    .take(5)
                    .collect()
            })
            .collect();
        let got: Vec<String> = found
            .iter()
            .map(|f| format!("{:?}", f.kind).chars().take(2).collect())
            .collect();
        eprintln!(
            "order wrong: {} of {} matched: {}\n  predicted kinds: {}",
            order.len(),
            truth.len(),
            kinds.join(" "),
            got.join(" ")
        );
    }
}

fn run_page(d: &DrawnPage, t: &mut Tally, seed: u64) -> (CleanPage, PageLayout) {
    let img = PageImage::new(d.image.clone(), 300.0, 300.0);
    if std::env::var("LAYOUT_DEBUG").is_ok() {
        eprintln!("page {seed}");
    }
    let t0 = Instant::now();
    let page = clean(&img, &CleanupConfig::default());
    let t1 = Instant::now();
    let layout = analyze(&page, &LayoutConfig::default());
    let t2 = Instant::now();
    t.clean_ms.push((t1 - t0).as_secs_f64() * 1e3);
    t.analyze_ms.push((t2 - t1).as_secs_f64() * 1e3);
    score_page(d, &page, &layout, t);
    (page, layout)
}

fn report(name: &str, t: &Tally) {
    let f1 = 2.0 * t.matched as f64 / (t.found + t.truth).max(1) as f64;
    let med = |v: &[f64]| {
        let mut v = v.to_vec();
        v.sort_by(|a, b| a.total_cmp(b));
        v.get(v.len() / 2).copied().unwrap_or(0.0)
    };
    println!(
        "{name}: pages {} lines true {} found {} matched {} F1 {:.4} | order right {}/{} ({:.1} %) | kinds {:.1} % | header/number/footnote {:.1} % ({}) | ms/page clean {:.0} analyze {:.0}",
        t.pages,
        t.truth,
        t.found,
        t.matched,
        f1,
        t.order_ok,
        t.pages,
        100.0 * t.order_ok as f64 / t.pages.max(1) as f64,
        100.0 * t.kind_ok as f64 / t.kind_total.max(1) as f64,
        100.0 * t.furniture_ok as f64 / t.furniture_total.max(1) as f64,
        t.furniture_total,
        med(&t.clean_ms),
        med(&t.analyze_ms)
    );
}

fn skew_and_orientation(font: &[u8], n: u64) {
    let mut errs = Vec::new();
    let mut orient_ok = 0;
    let mut orient_n = 0;
    for s in 0..n {
        let d = draw_page(font, &PagePlan::random(1000 + s, 300.0)).expect("font");
        let mut r = Lcg(s + 77);
        let a = -10.0 + 20.0 * r.unit();
        let (w, h) = d.image.dimensions();
        let turned = deskew::transform_gray(&d.image, &deskew::PageTransform::new(w, h, 0, -a));
        let page = clean(
            &PageImage::new(turned, 300.0, 300.0),
            &CleanupConfig::default(),
        );
        errs.push((page.transform.skew_deg - a).abs());
        let k = 1 + (s % 3) as u8;
        let mut img: GrayImage = d.image.clone();
        for _ in 0..k {
            img = image::imageops::rotate90(&img);
        }
        let page = clean(
            &PageImage::new(img, 300.0, 300.0),
            &CleanupConfig::default(),
        );
        orient_n += 1;
        orient_ok += (page.transform.quarter_turns == (4 - k) % 4) as usize;
    }
    errs.sort_by(|a, b| a.total_cmp(b));
    println!(
        "deskew: {} pages in [-10°, 10°]: median error {:.3}°, max {:.3}° | orientation 90/180/270 right {}/{}",
        errs.len(),
        errs[errs.len() / 2],
        errs.last().unwrap(),
        orient_ok,
        orient_n
    );
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let n: u64 = args.get(1).and_then(|s| s.parse().ok()).unwrap_or(20);
    let out = args.get(2).map(std::path::PathBuf::from);
    let font = std::fs::read("tests/data/layout/DejaVuSans-Arabic-subset.ttf")
        .expect("run from the repository root");
    let (mut clean_t, mut worn_t) = (Tally::default(), Tally::default());
    for s in 0..n {
        let d = draw_page(&font, &PagePlan::random(s, 300.0)).expect("font");
        let (page, layout) = run_page(&d, &mut clean_t, s);
        let mut r = Lcg(s + 5);
        let worn = degrade(&d, s, -3.0 + 6.0 * r.unit(), 300.0);
        let (wpage, wlayout) = run_page(&worn, &mut worn_t, s);
        if let (Some(dir), true) = (
            &out,
            std::env::var("LAYOUT_PAGES")
                .map_or(s < 6, |v| v.split(',').any(|p| p == s.to_string())),
        ) {
            std::fs::create_dir_all(dir).expect("out dir");
            debug::write_png(&page, &layout, &dir.join(format!("clean_{s:03}.png")))
                .expect("write");
            debug::write_png(&wpage, &wlayout, &dir.join(format!("worn_{s:03}.png")))
                .expect("write");
            worn.image
                .save(dir.join(format!("worn_{s:03}_input.png")))
                .expect("write");
        }
    }
    report("clean pages", &clean_t);
    report("damaged pages", &worn_t);
    skew_and_orientation(&font, (n / 2).max(10));
}
