//! Scratch: write the binary of a damaged drawn page.
use mistara::cleanup::{clean, CleanupConfig};
use mistara::layout::drawn::{degrade, draw_page, Lcg, PagePlan};
use mistara::page::PageImage;
fn main() {
    let font = std::fs::read("tests/data/layout/DejaVuSans-Arabic-subset.ttf").unwrap();
    let s: u64 = std::env::args().nth(1).and_then(|a| a.parse().ok()).unwrap_or(0);
    let d = draw_page(&font, &PagePlan::random(s, 300.0)).unwrap();
    let mut r = Lcg(s + 5);
    let worn = degrade(&d, s, -3.0 + 6.0 * r.unit(), 300.0);
    let p = clean(&PageImage::new(worn.image.clone(), 300.0, 300.0), &CleanupConfig::default());
    eprintln!("method {:?} removed {:?} skew {}", p.method, p.removed, p.transform.skew_deg);
    p.binary.save("/tmp/worn_bin.png").unwrap();
    p.gray.save("/tmp/worn_gray.png").unwrap();
}
