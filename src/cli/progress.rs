//! Progress bars on stderr — the only user of indicatif. Hidden when stderr is not a terminal.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// A bar counting `total` items of `what`.
pub fn bar(total: usize, what: &str) -> ProgressBar {
    let bar = ProgressBar::with_draw_target(Some(total as u64), ProgressDrawTarget::stderr());
    let style = ProgressStyle::with_template("{msg} {bar:40} {pos}/{len} ({per_sec}, {eta} left)")
        .unwrap_or_else(|_| ProgressStyle::default_bar());
    bar.set_style(style);
    bar.set_message(what.to_string());
    bar
}
