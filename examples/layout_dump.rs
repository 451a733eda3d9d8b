//! Scratch: plans of drawn pages.
use mistara::layout::drawn::PagePlan;
fn main() {
    for s in 0..10 {
        let p = PagePlan::random(s, 300.0);
        println!("{s} cols {} leading {:.2} pt {} foot {} notes {}", p.columns, p.leading, p.body_pt, p.footnotes, p.margin_notes);
    }
}
