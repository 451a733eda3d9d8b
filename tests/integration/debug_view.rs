//! `mistara ocr --debug-dir`: one picture of the page analysis per page read.

use image::{Rgb, RgbImage};
use mistara::synth::page::PageOptions;
use mistara::synth::png_bytes;
use mistara::synth::truth::{make_page, truth_json, SynthPage};
use mistara::synth::SynthConfig;
use mistara::text::RegionKind;

use crate::util::{mistara, run};

/// Colours of the debug view (src/layout/debug.rs): main text, footnotes, baselines.
const BODY: Rgb<u8> = Rgb([30, 80, 220]);
const FOOTNOTE: Rgb<u8> = Rgb([230, 130, 0]);
const BASELINE: Rgb<u8> = Rgb([230, 0, 0]);

fn pages() -> Vec<SynthPage> {
    let cfg = SynthConfig {
        seed: 77,
        ..SynthConfig::default()
    };
    (0..2)
        .map(|i| {
            make_page(
                &cfg,
                i,
                PageOptions {
                    dpi: Some(150.0),
                    columns: Some(1),
                    footnote: Some(i == 1),
                    ..PageOptions::default()
                },
            )
        })
        .collect()
}

fn count(img: &RgbImage, c: Rgb<u8>) -> usize {
    img.pixels().filter(|&&p| p == c).count()
}

#[test]
fn debug_dir_gets_one_picture_per_page_with_lines_and_baselines() {
    let dir = tempfile::tempdir().unwrap();
    let pages = pages();
    let mut inputs = Vec::new();
    for (i, p) in pages.iter().enumerate() {
        let path = dir.path().join(format!("scan-{i}.png"));
        std::fs::write(&path, png_bytes(&p.image, p.truth.dpi)).unwrap();
        inputs.push(path);
    }
    let truths: Vec<String> = pages.iter().map(|p| truth_json(&p.truth)).collect();
    let transcript = dir.path().join("truth.json");
    std::fs::write(&transcript, format!("{{\"pages\":[{}]}}", truths.join(","))).unwrap();
    let views = dir.path().join("views");
    let out = run(mistara()
        .arg("ocr")
        .args(&inputs)
        .arg("-o")
        .arg(dir.path().join("out.pdf"))
        .arg("--layer-from")
        .arg(&transcript)
        .arg("--debug-dir")
        .arg(&views)
        .arg("--quiet"));
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let mut names: Vec<String> = std::fs::read_dir(&views)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names, ["page-0001.png", "page-0002.png"]);
    for (i, p) in pages.iter().enumerate() {
        let view = image::open(views.join(&names[i])).unwrap().to_rgb8();
        // Undamaged pages are not turned or skewed, so the view has the scan's size.
        assert_eq!(view.dimensions(), p.image.dimensions(), "page {}", i + 1);
        assert!(
            count(&view, BODY) > 1000,
            "page {}: no main-text frames",
            i + 1
        );
        // Every true main-text line has a baseline drawn inside its box.
        for l in p
            .truth
            .lines
            .iter()
            .filter(|l| l.region == RegionKind::Body)
        {
            let b = l.bbox;
            let hit = (b.y0 as u32..b.y1 as u32)
                .any(|y| (b.x0 as u32..b.x1 as u32).any(|x| *view.get_pixel(x, y) == BASELINE));
            assert!(hit, "page {}: no baseline in {:?}", i + 1, b);
        }
    }
    let footnote_px = |i: usize| {
        count(
            &image::open(views.join(&names[i])).unwrap().to_rgb8(),
            FOOTNOTE,
        )
    };
    assert_eq!(footnote_px(0), 0, "page 1 has no footnote");
    assert!(footnote_px(1) > 100, "page 2's footnote is not drawn");
}
