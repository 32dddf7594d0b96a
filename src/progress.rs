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

/// Counts `done` more steps on `bar`. Past its total the total grows with
/// them, so the bar never reads more than 100%: the ensembles of the points
/// that solve for days are placed as the days are found, and no total made
/// before the run can count them.
pub fn advance(bar: &ProgressBar, done: u64) {
    bar.inc(done);
    if let Some(length) = bar.length() {
        let position = bar.position();
        if position > length {
            bar.set_length(position);
        }
    }
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

#[cfg(test)]
mod tests {
    use super::*;

    /// Steps beyond the total (the day-solving points' ensembles) raise the
    /// total with them: the bar reads 13/13, never 13/10.
    #[test]
    fn the_total_grows_with_steps_past_it() {
        let bar = ProgressBar::with_draw_target(Some(10), ProgressDrawTarget::hidden());
        advance(&bar, 8);
        assert_eq!((bar.position(), bar.length()), (8, Some(10)));
        advance(&bar, 5);
        assert_eq!((bar.position(), bar.length()), (13, Some(13)));
    }
}
