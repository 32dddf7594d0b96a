//! `compare.csv`: one row per plan and target (`days_to_target`), then, when
//! a plan scans the signal position, one per plan and target in global
//! significance (`global_days_to_target`: the look-elsewhere effect
//! included; empty for a plan without a scan), then one per plan for the
//! exclusion of the nominal signal: calendar days by the Asimov dataset and
//! by the toy median, and their difference to the first plan (negative:
//! sooner). Numbers are lossless; an empty cell is a value not reached
//! within the grid (or not computed). When any plan's schedule has a start,
//! `asimov_date, median_date` follow (ISO 8601; empty for a plan without one).

use super::{COMPARE_CSV, Comparison};
use crate::report::ReportError;
use crate::report::kit::dates::date_cell;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::{number, optional};

const HEADER: [&str; 8] = [
    "plan",
    "file",
    "quantity",
    "target",
    "asimov_days",
    "median_days",
    "asimov_days_minus_first",
    "median_days_minus_first",
];

/// Appended when any plan has a start date.
const DATE_COLUMNS: [&str; 2] = ["asimov_date", "median_date"];

/// Days of one quantity for one plan: Asimov and toy median.
type Days = (Option<f64>, Option<f64>);

pub(super) fn render(comparison: &Comparison) -> Result<Vec<u8>, ReportError> {
    let mut rows = Vec::new();
    let first = comparison.first();
    let with_dates = comparison
        .plans
        .iter()
        .any(|plan| plan.projection.start.is_some());
    for (slot, reference) in first.days_to_target.iter().enumerate() {
        let reference = (reference.asimov_days, reference.median_days);
        for plan in &comparison.plans {
            // Targets are the same for every plan (checked before rendering).
            let row = &plan.projection.days_to_target[slot];
            let days = (row.asimov_days, row.median_days);
            let target = number(row.target);
            rows.push(cells(
                plan,
                "days_to_target",
                target,
                days,
                reference,
                with_dates,
            ));
        }
    }
    if comparison.with_scan() {
        let global = |plan: &super::ComparedPlan, slot: usize| -> Days {
            plan.projection.days_to_target[slot]
                .global
                .as_ref()
                .map_or((None, None), |global| {
                    (global.global_asimov_days, global.global_median_days)
                })
        };
        for (slot, row) in first.days_to_target.iter().enumerate() {
            let reference = global(&comparison.plans[0], slot);
            for plan in &comparison.plans {
                rows.push(cells(
                    plan,
                    "global_days_to_target",
                    number(row.target),
                    global(plan, slot),
                    reference,
                    with_dates,
                ));
            }
        }
    }
    if first.cl.is_some() {
        let exclusion = &first.days_to_exclusion;
        let reference = (exclusion.asimov_days, exclusion.median_days);
        for plan in &comparison.plans {
            let exclusion = &plan.projection.days_to_exclusion;
            let days = (exclusion.asimov_days, exclusion.median_days);
            rows.push(cells(
                plan,
                "days_to_exclusion",
                String::new(),
                days,
                reference,
                with_dates,
            ));
        }
    }
    let dates = if with_dates {
        DATE_COLUMNS.as_slice()
    } else {
        &[]
    };
    csv_bytes(COMPARE_CSV, HEADER.iter().chain(dates), rows)
}

fn cells(
    plan: &super::ComparedPlan,
    quantity: &str,
    target: String,
    (asimov, median): Days,
    (first_asimov, first_median): Days,
    with_dates: bool,
) -> Vec<String> {
    let minus = |days: Option<f64>, first: Option<f64>| {
        optional(days.zip(first).map(|(days, first)| days - first))
    };
    let mut row = vec![
        plan.label.clone(),
        plan.file.clone(),
        quantity.to_string(),
        target,
        optional(asimov),
        optional(median),
        minus(asimov, first_asimov),
        minus(median, first_median),
    ];
    if with_dates {
        for days in [asimov, median] {
            row.push(
                plan.projection
                    .start
                    .map_or_else(String::new, |start| date_cell(days, start)),
            );
        }
    }
    row
}

#[cfg(test)]
mod tests {
    use super::super::tests::two_plans;
    use super::*;

    #[test]
    fn differences_are_to_the_first_plan() {
        let comparison = two_plans(true);
        let text = String::from_utf8(render(&comparison).unwrap()).unwrap();
        let rows: Vec<Vec<&str>> = text.lines().map(|line| line.split(',').collect()).collect();
        assert_eq!(rows[0], HEADER);
        let first = &comparison.plans[0].projection.days_to_target[0];
        let asimov = first.asimov_days.unwrap();
        assert_eq!(
            rows[1][..4],
            ["Now", "now.yaml", "days_to_target", &number(first.target)]
        );
        assert_eq!(rows[1][6], "0");
        assert_eq!(rows[2][..2], ["Upgrade", "upgrade.yaml"]);
        assert_eq!(rows[2][6], number(asimov / 2.0 - asimov));
        let targets = comparison.plans[0].projection.targets.len();
        assert_eq!(rows.len(), 1 + 2 * targets + 2, "targets, then exclusion");
        assert_eq!(rows[rows.len() - 1][2], "days_to_exclusion");
    }
}
