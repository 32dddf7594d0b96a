//! The terminal summary: days to each target by each method, failed fits,
//! and a warning when systematic uncertainties cap the significance.

use super::{days_label, target_label};
use crate::projection::{DaysToTarget, Projection};

/// Failed fits above this fraction of the toys at one exposure point earn a
/// warning: the quantiles there exclude them and may be biased.
const FAILED_FRACTION_WARNING: f64 = 0.001;

const COLUMNS: [&str; 5] = [
    "target",
    "Asimov",
    "toy median",
    "50% of toys",
    "90% of toys",
];

/// A plain-text table of calendar days to each target, one row per target,
/// followed by failed-fit counts and warnings. Each cell is calendar days
/// rounded up ("142 d", "3.1 d"), "never" when the saturation limit of Z_A lies below the
/// target, "beyond <last grid day> d" when the target lies past the grid, and
/// "—" for toy columns of an Asimov-only run.
pub fn summary(projection: &Projection) -> String {
    let mut text = format!("{}\n{}\n\n", projection.title, run_line(projection));
    let last_day = projection.points.last().map_or(0.0, |point| point.days);
    let mut rows = vec![COLUMNS.map(str::to_string).to_vec()];
    rows.extend(projection.days_to_target.iter().map(|row| {
        let cell = |days, available| days_cell(days, available, row, last_day);
        let with_toys = projection.toys > 0;
        vec![
            target_label(row.target),
            cell(row.asimov_days, true),
            cell(row.median_days, with_toys),
            cell(row.p50_days, with_toys),
            cell(row.p90_days, with_toys),
        ]
    }));
    text.push_str("Calendar days to reach each target\n");
    text.push_str(&aligned(&rows));
    if projection.toys > 0 {
        text.push('\n');
        text.push_str(&failed_fits_lines(projection));
    }
    if let Some(line) = saturation_line(&projection.days_to_target) {
        text.push_str(&line);
    }
    text
}

fn run_line(projection: &Projection) -> String {
    let grid = match (projection.points.first(), projection.points.last()) {
        (Some(first), Some(last)) => {
            format!("; grid {} to {}", grid_day(first.days), grid_day(last.days))
        }
        _ => String::new(),
    };
    if projection.toys == 0 {
        format!("Asimov only (no pseudo-experiments){grid}")
    } else {
        format!(
            "{} pseudo-experiments per exposure point, seed {}{grid}",
            projection.toys, projection.seed
        )
    }
}

fn days_cell(days: Option<f64>, available: bool, row: &DaysToTarget, last_day: f64) -> String {
    match days {
        Some(days) => days_label(days),
        None if !available => "—".to_string(),
        None if row.never_reached() => "never".to_string(),
        None => format!("beyond {}", grid_day(last_day)),
    }
}

/// A day of the grid as given, to two decimals at most ("1 d", "1.26 d").
fn grid_day(days: f64) -> String {
    format!("{} d", (days * 100.0).round() / 100.0)
}

/// Left-aligned columns separated by three spaces (widths in characters, so
/// "σ" and "—" count as one).
pub(super) fn aligned(rows: &[Vec<String>]) -> String {
    let columns = rows.first().map_or(0, Vec::len);
    let widths: Vec<usize> = (0..columns)
        .map(|column| {
            rows.iter()
                .map(|row| row[column].chars().count())
                .max()
                .unwrap_or(0)
        })
        .collect();
    let mut text = String::new();
    for row in rows {
        let cells: Vec<String> = row
            .iter()
            .zip(&widths)
            .map(|(cell, &width)| format!("{cell:<width$}"))
            .collect();
        text.push_str(cells.join("   ").trim_end());
        text.push('\n');
    }
    text
}

/// Total failed fits, and a warning naming the worst exposure point when any
/// point loses more than 0.1% of its toys.
fn failed_fits_lines(projection: &Projection) -> String {
    let toys = projection.toys;
    let total_toys = toys * projection.points.len();
    let total_failed: usize = projection
        .points
        .iter()
        .map(|point| point.failed_fits)
        .sum();
    let mut text = format!(
        "Failed fits: {total_failed} of {total_toys} pseudo-experiments ({}), excluded from the quantiles.\n",
        percent(total_failed, total_toys)
    );
    let fraction = |failed: usize| failed as f64 / toys as f64;
    let flagged: Vec<_> = projection
        .points
        .iter()
        .filter(|point| fraction(point.failed_fits) > FAILED_FRACTION_WARNING)
        .collect();
    // `max_by_key` keeps the last of equals; reversed, that is the earliest day.
    let worst = flagged.iter().rev().max_by_key(|point| point.failed_fits);
    if let Some(worst) = worst {
        text.push_str(&format!(
            "warning: more than 0.1% of fits failed at {} of {} exposure points \
             (worst: {} of {toys} at {}, {}); the quantiles there may be biased.\n",
            flagged.len(),
            projection.points.len(),
            worst.failed_fits,
            days_label(worst.days),
            percent(worst.failed_fits, toys)
        ));
    }
    text
}

fn percent(part: usize, whole: usize) -> String {
    if whole == 0 {
        return "0%".to_string();
    }
    let value = 100.0 * part as f64 / whole as f64;
    if part > 0 && value < 0.01 {
        "<0.01%".to_string()
    } else {
        format!("{value:.2}%")
    }
}

/// One line when systematic uncertainties make Z_A saturate, naming the
/// targets that are therefore never reached.
fn saturation_line(rows: &[DaysToTarget]) -> Option<String> {
    let limit = rows.iter().find_map(|row| row.limit_z)?;
    let never: Vec<String> = rows
        .iter()
        .filter(|row| row.never_reached())
        .map(|row| target_label(row.target))
        .collect();
    let consequence = if never.is_empty() {
        "longer runs gain less and less".to_string()
    } else {
        format!("never reached: {}", never.join(", "))
    };
    Some(format!(
        "warning: systematic uncertainties make Z_A saturate at {limit:.2}σ however long the run; {consequence}.\n"
    ))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::example;

    #[test]
    fn table_of_the_tiny_example() {
        let text = summary(&example::tiny());
        let expected = "\
Invented counting search
200 pseudo-experiments per exposure point, seed 7; grid 10 d to 100 d

Calendar days to reach each target
target   Asimov   toy median   50% of toys   90% of toys
3σ       42 d     44 d         45 d          98 d
5σ       never    never        never         never

Failed fits: 2 of 400 pseudo-experiments (0.50%), excluded from the quantiles.
warning: more than 0.1% of fits failed at 1 of 2 exposure points (worst: 2 of 200 at 100 d, 1.00%); the quantiles there may be biased.
warning: systematic uncertainties make Z_A saturate at 4.50σ however long the run; never reached: 5σ.
";
        assert_eq!(text, expected);
    }

    #[test]
    fn a_target_past_the_grid_is_beyond_the_last_day() {
        let mut projection = example::tiny();
        projection.days_to_target[1].limit_z = None;
        projection.days_to_target[0].limit_z = None;
        let text = summary(&projection);
        assert!(
            text.contains("5σ       beyond 100 d   beyond 100 d   beyond 100 d   beyond 100 d\n")
        );
        assert!(!text.contains("saturate"));
    }

    #[test]
    fn asimov_only_leaves_toy_columns_empty() {
        let text = summary(&example::asimov_only());
        assert!(text.contains("Asimov only (no pseudo-experiments); grid 1 d to 1000 d\n"));
        assert!(
            text.contains("5σ       never    —            —             —\n"),
            "{text}"
        );
        assert!(!text.contains("Failed fits"));
        assert!(text.contains("saturate at 4.00σ however long the run; never reached: 5σ.\n"));
    }

    #[test]
    fn few_failures_give_no_warning() {
        let mut projection = example::tiny();
        projection.toys = 5000;
        let text = summary(&projection);
        assert!(text.contains("Failed fits: 2 of 10000 pseudo-experiments (0.02%)"));
        assert!(!text.contains("more than 0.1%"));
    }
}
