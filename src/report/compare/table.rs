//! The terminal table of a comparison: one row per plan; per target the
//! calendar days by the Asimov dataset and by the toy median, then, when a
//! plan scans the signal position, the same days in global significance
//! (look-elsewhere effect included; "—" for a plan without a scan), then the
//! days to exclusion (with limits), each with the difference to the first
//! plan in days (toy median with pseudo-experiments, else Asimov; negative:
//! sooner).

use super::Comparison;
use crate::calendar::CalendarDate;
use crate::report::kit::dates::dated_days_label;
use crate::report::kit::format::{aligned, percent_label, target_label};
use crate::report::kit::vocabulary::{NOT_COMPUTED, not_within_grid};

/// The comparison table, with the shared targets and confidence level above it.
pub fn comparison_table(comparison: &Comparison) -> String {
    let first = comparison.first();
    let with_toys = comparison.with_toys();
    let mut header = vec!["plan".to_string()];
    let mut quantities: Vec<String> = first.targets.iter().map(|&t| target_label(t)).collect();
    if comparison.with_scan() {
        quantities.extend(
            first
                .targets
                .iter()
                .map(|&t| format!("global {}", target_label(t))),
        );
    }
    if let Some(cl) = first.cl {
        quantities.push(format!("excluded ({} CL)", percent_label(cl)));
    }
    for quantity in &quantities {
        header.push(format!("{quantity} Asimov"));
        if with_toys {
            header.push(format!("{quantity} toy median"));
        }
        header.push(format!("{quantity} vs first"));
    }
    let reference = days_of(comparison, 0);
    let mut rows = vec![header];
    for (index, plan) in comparison.plans.iter().enumerate() {
        let mut row = vec![plan.label.clone()];
        let start = plan.projection.start;
        let last_day = plan
            .projection
            .points
            .last()
            .map_or(0.0, |point| point.days);
        for (days, first) in days_of(comparison, index).into_iter().zip(&reference) {
            let Some((asimov, median)) = days else {
                let cells = if with_toys { 3 } else { 2 };
                row.extend(std::iter::repeat_n(NOT_COMPUTED.to_string(), cells));
                continue;
            };
            row.push(days_cell(asimov, last_day, start));
            if with_toys {
                row.push(days_cell(median, last_day, start));
            }
            row.push(match first {
                _ if index == 0 => REFERENCE.to_string(),
                None => NOT_COMPUTED.to_string(),
                Some((_, first_median)) if with_toys => difference_cell(median, *first_median),
                Some((first_asimov, _)) => difference_cell(asimov, *first_asimov),
            });
        }
        rows.push(row);
    }
    let run = if with_toys {
        format!("{} pseudo-experiments per point", first.toys)
    } else {
        "Asimov only".to_string()
    };
    format!(
        "Run plans compared ({run})\n\n{}{}",
        aligned(&rows),
        super::reach::reach_lines(comparison)
    )
}

/// Per quantity of the table (each target, each target in global
/// significance when a plan scans, exclusion with limits) the plan's Asimov
/// and toy median days; None where the plan does not compute it (global
/// days without a scan).
fn days_of(comparison: &Comparison, index: usize) -> Vec<Option<(Option<f64>, Option<f64>)>> {
    let projection = &comparison.plans[index].projection;
    let rows = &projection.days_to_target;
    let mut days: Vec<_> = rows
        .iter()
        .map(|row| Some((row.asimov_days, row.median_days)))
        .collect();
    if comparison.with_scan() {
        days.extend(rows.iter().map(|row| {
            row.global
                .as_ref()
                .map(|global| (global.global_asimov_days, global.global_median_days))
        }));
    }
    if projection.cl.is_some() {
        let exclusion = &projection.days_to_exclusion;
        days.push(Some((exclusion.asimov_days, exclusion.median_days)));
    }
    days
}

/// "58 d", with its date when the plan has a start ("58 d (2027-04-28)");
/// past the plan's grid, ending at `last_day`, "not within the grid (last point 365 d)".
fn days_cell(days: Option<f64>, last_day: f64, start: Option<CalendarDate>) -> String {
    days.map_or_else(
        || not_within_grid(&dated_days_label(last_day, start)),
        |days| dated_days_label(days, start),
    )
}

/// The first plan's cell of a "vs first" column.
const REFERENCE: &str = "reference";

/// A difference to the first plan where one of the two days is not within its grid.
const NO_DIFFERENCE: &str = "no difference (a day not within the grid)";

/// The difference in whole days, signed ("-45 d", "+12 d").
fn difference_cell(days: Option<f64>, first: Option<f64>) -> String {
    match (days, first) {
        (Some(days), Some(first)) => format!("{:+} d", (days - first).round()),
        _ => NO_DIFFERENCE.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::super::tests::two_plans;
    use super::*;

    #[test]
    fn one_row_per_plan_with_the_difference_to_the_first() {
        let comparison = two_plans(false);
        let table = comparison_table(&comparison);
        let lines: Vec<&str> = table.lines().collect();
        assert!(lines[0].contains("Asimov only"), "{table}");
        assert!(lines[2].starts_with("plan"), "{table}");
        assert!(lines[3].starts_with("Now"), "{table}");
        assert!(lines[4].starts_with("Upgrade"), "{table}");
        let first = comparison.plans[0].projection.days_to_target[0]
            .asimov_days
            .unwrap();
        let expected = format!("{:+} d", (first / 2.0 - first).round());
        assert!(lines[4].contains(&expected), "{expected} in {table}");
    }
}
