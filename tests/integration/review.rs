//! `mistara ocr --review DIR`: the proofreading view, loaded in a real browser (headless Chromium,
//! Debian package `chromium`): the counts it shows, navigation to a flagged word, a screenshot
//! with boxes drawn.

use std::path::{Path, PathBuf};
use std::process::Command;

use mistara::output::report::is_flagged;
use mistara::pipeline::Transcript;

use crate::util::{mistara, run, test_page, write_inputs};

/// Word confidences for a page: every word sure (0.97) except the listed (word index, confidence).
fn set_confidences(text: &mut mistara::text::PageText, low: &[(usize, f32)]) {
    for (i, w) in text.lines.iter_mut().flat_map(|l| &mut l.words).enumerate() {
        w.confidence = low.iter().find(|(k, _)| *k == i).map_or(0.97, |(_, c)| *c);
    }
}

struct Review {
    _dir: tempfile::TempDir,
    out: PathBuf,
    transcript: Transcript,
}

/// Three pages; 2 + 0 + 3 words below 0.5, all others at 0.97, so the flagged count is the same
/// for any threshold between 0.5 and 0.97.
fn make_review() -> Review {
    let dir = tempfile::tempdir().unwrap();
    let mut pages = vec![
        test_page(&[
            "سجل المقتنيات في مكتبة وادي الريحان العامة",
            "وصلت إلى المكتبة كتب قديمة",
        ]),
        test_page(&["القضية رقم 2024/117 أمام المحكمة"]),
        test_page(&[
            "دفتر الإعارة للقارئ الأمين",
            "مجلد مخطوط من الطبعة الأولى",
            "نسخة مصدقة من قرار الهيئة",
        ]),
    ];
    set_confidences(&mut pages[0].text, &[(2, 0.41), (9, 0.12)]);
    set_confidences(&mut pages[1].text, &[]);
    set_confidences(&mut pages[2].text, &[(0, 0.3), (7, 0.45), (13, 0.05)]);
    let (pngs, tpath) = write_inputs(dir.path(), &pages);
    let out = dir.path().join("review");
    let res = run(mistara()
        .arg("ocr")
        .args(&pngs)
        .arg("-o")
        .arg(dir.path().join("register.pdf"))
        .arg("--layer-from")
        .arg(&tpath)
        .arg("--review")
        .arg(&out)
        .arg("--quiet"));
    assert!(
        res.status.success(),
        "{}",
        String::from_utf8_lossy(&res.stderr)
    );
    let transcript = Transcript::load(&tpath).unwrap();
    Review {
        _dir: dir,
        out,
        transcript,
    }
}

/// (page, word index on the page) of every flagged word, in page order.
fn flagged(t: &Transcript) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    for (p, page) in t.pages.iter().enumerate() {
        for (i, w) in page.lines.iter().flat_map(|l| &l.words).enumerate() {
            if is_flagged(w) {
                out.push((p + 1, i));
            }
        }
    }
    out
}

#[test]
fn review_folder_is_self_contained() {
    let r = make_review();
    let html = std::fs::read_to_string(r.out.join("index.html")).unwrap();
    // Opens from disk: no address outside the folder, no outside style, script or font.
    for banned in ["http://", "https://", "<link", "@import", "url(", "src=\"/"] {
        assert!(!html.contains(banned), "index.html contains {banned}");
    }
    assert_eq!(html.matches("src=\"pages/").count(), 3);
    for n in 1..=3 {
        let img = image::open(r.out.join(format!("pages/p{n:04}.jpg"))).unwrap();
        // Test pages are 1240 × 1754 px; the view scales them to 1,200 px tall.
        assert_eq!((img.width(), img.height()), (848, 1200));
    }
    // No temporary folder left behind.
    let left: Vec<_> = std::fs::read_dir(&r.out)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(left.len(), 2, "{left:?}");
    assert!(html.contains("must verify") || html.contains("Verify against the page image"));
    assert!(html.contains("dir=\"rtl\""));
}

#[test]
fn failed_run_leaves_no_review() {
    let dir = tempfile::tempdir().unwrap();
    let (pngs, _) = write_inputs(dir.path(), &[test_page(&["سجل المقتنيات"])]);
    let bad = dir.path().join("bad.json");
    std::fs::write(&bad, "{\"pages\": 3}").unwrap();
    let out = dir.path().join("review");
    let res = run(mistara()
        .arg("ocr")
        .args(&pngs)
        .arg("-o")
        .arg(dir.path().join("x.pdf"))
        .arg("--layer-from")
        .arg(&bad)
        .arg("--review")
        .arg(&out));
    assert_eq!(res.status.code(), Some(1));
    assert!(!out.join("index.html").exists());
    assert!(!out.join("pages").exists());
}

/// Headless Chromium, or `None` (test skipped) when it is absent and not required.
fn chromium() -> Option<PathBuf> {
    let found = ["chromium", "chromium-browser"].iter().find_map(|name| {
        std::env::var_os("PATH").and_then(|paths| {
            std::env::split_paths(&paths)
                .map(|d| d.join(name))
                .find(|p| p.is_file())
        })
    });
    if found.is_none() {
        assert!(
            std::env::var_os("MISTARA_REQUIRE_BROWSER").is_none(),
            "MISTARA_REQUIRE_BROWSER is set but chromium is not installed (Debian package chromium)"
        );
        eprintln!("skipped: chromium not found (install Debian's chromium, or run tests/run.sh)");
    }
    found
}

/// Run headless Chromium on the view at `#flag=N`, with `mode` (`--dump-dom` or `--screenshot=…`).
fn browse(browser: &Path, index: &Path, flag: usize, mode: &str, profile: &Path) -> String {
    let url = format!("file://{}#flag={flag}", index.display());
    let out = run(Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--no-first-run",
            "--hide-scrollbars",
            "--force-device-scale-factor=1",
            "--force-color-profile=srgb",
            "--window-size=1400,1000",
            "--virtual-time-budget=3000",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .arg(mode)
        .arg(url));
    assert!(
        out.status.success(),
        "chromium failed: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// Value of attribute `name` on the first `<tag` in `dom`.
fn attr(dom: &str, tag: &str, name: &str) -> Option<String> {
    let start = dom.find(&format!("<{tag}"))?;
    let open = &dom[start..start + dom[start..].find('>')?];
    let at = open.find(&format!(" {name}=\""))? + name.len() + 3;
    Some(open[at..at + open[at..].find('"')?].to_string())
}

/// Text inside the element with this id.
fn text_of(dom: &str, id: &str) -> String {
    let at = dom.find(&format!("id=\"{id}\"")).unwrap();
    let from = at + dom[at..].find('>').unwrap() + 1;
    dom[from..from + dom[from..].find('<').unwrap()].to_string()
}

#[test]
fn browser_shows_counts_and_goes_to_flagged_words() {
    let Some(browser) = chromium() else { return };
    let r = make_review();
    let flags = flagged(&r.transcript);
    assert_eq!(flags.len(), 5); // the five words set below 0.5
    let index = r.out.join("index.html");
    let profile = tempfile::tempdir().unwrap();
    // The last flagged word is on page 3, far below the first screen.
    let dom = browse(&browser, &index, flags.len(), "--dump-dom", profile.path());
    assert_eq!(
        attr(&dom, "body", "data-ready").as_deref(),
        Some("1"),
        "script did not run"
    );
    assert_eq!(
        text_of(&dom, "n-pages"),
        r.transcript.pages.len().to_string()
    );
    assert_eq!(text_of(&dom, "n-flags"), flags.len().to_string());
    // The marks themselves: one box and one text word per flagged word.
    assert_eq!(dom.matches("class=\"box flag").count(), flags.len());
    assert_eq!(dom.matches("class=\"w flag").count(), flags.len());
    let (page, word) = flags[flags.len() - 1];
    let key = format!("{page}-{word}");
    assert_eq!(attr(&dom, "body", "data-selected"), Some(key.clone()));
    assert_eq!(
        attr(&dom, "body", "data-flag"),
        Some(flags.len().to_string())
    );
    assert_eq!(attr(&dom, "body", "data-box-in-view").as_deref(), Some("1"));
    let scroll: f64 = attr(&dom, "body", "data-scroll-y")
        .unwrap()
        .parse()
        .unwrap();
    assert!(scroll > 1000.0, "page 3 needs scrolling, got {scroll}");
    assert!(
        dom.contains(&format!("class=\"box flag sel\" id=\"b{key}\"")),
        "box not selected"
    );
    assert!(text_of(&dom, "where").contains("page 3"));
}

#[test]
fn browser_screenshot_draws_boxes() {
    let Some(browser) = chromium() else { return };
    let r = make_review();
    let profile = tempfile::tempdir().unwrap();
    let shot = profile.path().join("shot.png");
    let index = r.out.join("index.html");
    browse(
        &browser,
        &index,
        1,
        &format!("--screenshot={}", shot.display()),
        profile.path(),
    );
    let img = image::open(&shot).unwrap().to_rgb8();
    assert_eq!(img.dimensions(), (1400, 1000));
    let near = |p: &image::Rgb<u8>, c: [u8; 3]| {
        p.0.iter()
            .zip(c)
            .all(|(a, b)| (*a as i32 - b as i32).abs() <= 8)
    };
    // Flag border rgb(200,24,110) and selection outline rgb(23,71,201) (review.css).
    let flag_px = img.pixels().filter(|p| near(p, [200, 24, 110])).count();
    let sel_px = img.pixels().filter(|p| near(p, [23, 71, 201])).count();
    assert!(flag_px > 100, "flag boxes drawn: {flag_px} px");
    assert!(sel_px > 100, "selected box drawn: {sel_px} px");
}
