//! The progress bar over all pseudo-experiments, on stderr.

use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};

/// A progress bar over `total` pseudo-experiments, hidden when `quiet` or when
/// stderr is not a terminal.
pub fn toy_progress(total: u64, quiet: bool) -> ProgressBar {
    progress("pseudo-experiments", total, quiet)
}

/// A progress bar over `total` changed plans of `runcast levers`, hidden
/// like [`toy_progress`].
pub fn plan_progress(total: u64, quiet: bool) -> ProgressBar {
    progress("changed plans", total, quiet)
}

fn progress(what: &str, total: u64, quiet: bool) -> ProgressBar {
    if quiet || total == 0 {
        return ProgressBar::hidden();
    }
    let bar = ProgressBar::with_draw_target(Some(total), ProgressDrawTarget::stderr());
    if let Ok(style) = ProgressStyle::with_template(&format!(
        "{what} {{bar:40}} {{pos}}/{{len}} [{{elapsed}} < {{eta}}]"
    )) {
        bar.set_style(style);
    }
    bar
}
