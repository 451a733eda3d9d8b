//! The only user of indicatif: a page progress bar, hidden when stderr is not a terminal or with `--quiet`.

use std::io::IsTerminal;

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// A bar counting `unit`s (pages, lines) with rate and ETA.
pub fn bar(total: u64, unit: &str, quiet: bool) -> ProgressBar {
    let bar = ProgressBar::new(total);
    if quiet || !std::io::stderr().is_terminal() {
        bar.set_draw_target(ProgressDrawTarget::hidden());
    }
    let template = format!("{{bar:30}} {{pos}}/{{len}} {unit} · {{per_sec}} · ETA {{eta}}");
    if let Ok(style) = ProgressStyle::with_template(&template) {
        bar.set_style(style);
    }
    bar
}
