//! `plan`: the grid of days, the pseudo-experiments within the limits, the
//! targets and the confidence level.

use super::values::{Checked, require_finite, require_positive};
use crate::message::show;
use crate::scenario::limits::{
    MAX_GRID_POINTS, MAX_TARGET_SIGMA, MAX_TARGETS, MAX_TOYS_IN_TOTAL, MAX_TOYS_PER_POINT,
};
use crate::scenario::{DaysGrid, Plan, Scenario, ScenarioError, SpacedDays};
use crate::warning::Warning;

/// Ensembles a default `project` run draws at each point: discovery and limits.
const ENSEMBLES_PER_POINT: u64 = 2;

pub(super) fn validate_plan(plan: &Plan) -> Checked {
    validate_days_grid(&plan.days)?;
    validate_toys(plan)?;
    validate_targets(&plan.targets)?;
    if !(plan.cl > 0.5 && plan.cl < 1.0) {
        return Err(ScenarioError::invalid(
            "plan.cl",
            format!(
                "must be a confidence level strictly between 0.5 and 1 (e.g. 0.95), got {}",
                plan.cl
            ),
        ));
    }
    Ok(())
}

/// At least one pseudo-experiment per point, at most [`MAX_TOYS_PER_POINT`],
/// and at most [`MAX_TOYS_IN_TOTAL`] over the discovery and limit ensembles of
/// every point.
fn validate_toys(plan: &Plan) -> Checked {
    let field = "plan.toys";
    if plan.toys == 0 {
        return Err(ScenarioError::invalid(
            field,
            "must be at least 1 pseudo-experiment, got 0",
        ));
    }
    if plan.toys > MAX_TOYS_PER_POINT {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "must be at most {MAX_TOYS_PER_POINT} pseudo-experiments per point, got {}",
                plan.toys
            ),
        ));
    }
    let total = (plan.toys as u64)
        .saturating_mul(plan.days.points() as u64)
        .saturating_mul(ENSEMBLES_PER_POINT);
    if total > MAX_TOYS_IN_TOTAL {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "{} pseudo-experiments at each of {} points, for discovery and for limits, make {total}, more than the {MAX_TOYS_IN_TOTAL} allowed in one projection",
                plan.toys,
                plan.days.points()
            ),
        ));
    }
    Ok(())
}

/// One to [`MAX_TARGETS`] significances, each above 0 and at most [`MAX_TARGET_SIGMA`].
fn validate_targets(targets: &[f64]) -> Checked {
    if targets.is_empty() {
        return Err(ScenarioError::invalid(
            "plan.targets",
            "at least one target significance (in sigma) is needed, got an empty list",
        ));
    }
    if targets.len() > MAX_TARGETS {
        return Err(ScenarioError::invalid(
            "plan.targets",
            format!(
                "at most {MAX_TARGETS} target significances are allowed, got {}",
                targets.len()
            ),
        ));
    }
    for (index, &target) in targets.iter().enumerate() {
        let field = format!("plan.targets[{index}]");
        require_positive(&field, target)?;
        if target > MAX_TARGET_SIGMA {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "must be at most {} sigma, got {}",
                    show(MAX_TARGET_SIGMA),
                    show(target)
                ),
            ));
        }
    }
    Ok(())
}

/// Calendar days must be positive (zero days is no exposure, and log spacing
/// needs a positive start), increasing, and the grid must have distinct
/// points, at most [`MAX_GRID_POINTS`].
fn validate_days_grid(days: &DaysGrid) -> Checked {
    match days {
        DaysGrid::Spaced(grid) => validate_spaced_days(grid),
        DaysGrid::List(days) => validate_days_list(days),
    }
}

/// A list of one to [`MAX_GRID_POINTS`] days, each above 0 and after the one before.
fn validate_days_list(days: &[f64]) -> Checked {
    if days.is_empty() {
        return Err(ScenarioError::invalid(
            "plan.days",
            "must hold at least one calendar day, got []",
        ));
    }
    if days.len() > MAX_GRID_POINTS {
        return Err(ScenarioError::invalid(
            "plan.days",
            format!("must be at most {MAX_GRID_POINTS} days, got {}", days.len()),
        ));
    }
    for (index, &day) in days.iter().enumerate() {
        let field = format!("plan.days[{index}]");
        require_positive(&field, day)?;
        if index > 0 && day <= days[index - 1] {
            return Err(ScenarioError::invalid(
                &field,
                format!(
                    "must be after plan.days[{}] ({}), got {}",
                    index - 1,
                    show(days[index - 1]),
                    show(day)
                ),
            ));
        }
    }
    Ok(())
}

fn validate_spaced_days(days: &SpacedDays) -> Checked {
    require_positive("plan.days.first", days.first)?;
    require_finite("plan.days.last", days.last)?;
    if days.last < days.first {
        return Err(ScenarioError::invalid(
            "plan.days.last",
            format!(
                "must not be before plan.days.first ({}), got {}",
                show(days.first),
                show(days.last)
            ),
        ));
    }
    match days.points {
        0 => Err(ScenarioError::invalid(
            "plan.days.points",
            "must be at least 1, got 0",
        )),
        1 if days.last != days.first => Err(ScenarioError::invalid(
            "plan.days.points",
            format!(
                "must be at least 2 when plan.days.last ({}) differs from plan.days.first ({}), got 1",
                show(days.last),
                show(days.first)
            ),
        )),
        points if points > MAX_GRID_POINTS => Err(ScenarioError::invalid(
            "plan.days.points",
            format!("must be at most {MAX_GRID_POINTS} points, got {points}"),
        )),
        points if points > 1 && days.last == days.first => Err(ScenarioError::invalid(
            "plan.days.last",
            format!(
                "must be after plan.days.first when plan.days.points is {points}, got {} for both",
                show(days.first)
            ),
        )),
        _ => Ok(()),
    }
}

/// A days grid starting inside the leading schedule periods with `rate_scale` 0,
/// where no data are recorded and the projection can show nothing.
pub(super) fn first_day_without_exposure(scenario: &Scenario) -> Option<Warning> {
    let days_without_data: f64 = scenario
        .schedule
        .periods
        .iter()
        .take_while(|period| period.rate_scale == 0.0)
        .filter_map(|period| period.days)
        .sum();
    let first_day = scenario.plan.days.first();
    (first_day <= days_without_data).then_some(Warning::FirstDayWithoutData {
        first_day,
        days_without_data,
    })
}

#[cfg(test)]
mod tests {
    use super::super::test_scenario::{accepted, rejected_field, with};
    use crate::scenario::Scenario;
    use crate::warning::Warning;

    #[test]
    fn zero_toys_are_rejected() {
        assert_eq!(rejected_field(&with("toys: 100", "toys: 0")), "plan.toys");
    }

    #[test]
    fn days_grid_must_be_positive_increasing_and_consistent() {
        let cases = [
            (
                "first: 1, last: 365, points: 24",
                "first: 0, last: 365, points: 24",
                "plan.days.first",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: -1, last: 365, points: 24",
                "plan.days.first",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: 10, last: 5, points: 24",
                "plan.days.last",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: 1, last: 365, points: 0",
                "plan.days.points",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: 1, last: 365, points: 1",
                "plan.days.points",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: 9, last: 9, points: 24",
                "plan.days.last",
            ),
        ];
        for (from, to, field) in cases {
            assert_eq!(rejected_field(&with(from, to)), field, "{to}");
        }
        let linear_from_zero = with("first: 1,", "first: 0,").replace("log", "linear");
        assert_eq!(rejected_field(&linear_from_zero), "plan.days.first");
        let single_day = accepted(&with(
            "first: 1, last: 365, points: 24",
            "first: 30, last: 30, points: 1",
        ));
        assert_eq!(single_day.plan.days.days(), vec![30.0]);
    }

    #[test]
    fn days_may_be_a_list_of_increasing_calendar_days() {
        const GRID: &str = "{first: 1, last: 365, points: 24, spacing: log}";
        let list = accepted(&with(GRID, "[30, 91, 182.5, 365]"));
        assert_eq!(list.plan.days.days(), vec![30.0, 91.0, 182.5, 365.0]);
        assert_eq!(list.plan.days.last_field(), "plan.days[3]");
        for (to, field) in [
            ("[]", "plan.days"),
            ("[0, 30]", "plan.days[0]"),
            ("[30, 91, 91]", "plan.days[2]"),
            ("[30, 20]", "plan.days[1]"),
            ("[30, .inf]", "plan.days[1]"),
        ] {
            assert_eq!(rejected_field(&with(GRID, to)), field, "{to}");
        }
        // Another form: both accepted forms are shown, not a type name.
        let error = Scenario::from_yaml(&with(GRID, "30"))
            .unwrap_err()
            .to_string();
        assert!(
            error.contains("plan.days")
                && error.contains("[30, 91, 182, 365]")
                && error.contains("{first, last, points, spacing}")
                && !error.contains("DaysGrid"),
            "{error}"
        );
    }

    #[test]
    fn targets_must_be_present_and_positive() {
        assert_eq!(
            rejected_field(&with("targets: [3, 5]", "targets: []")),
            "plan.targets"
        );
        assert_eq!(
            rejected_field(&with("targets: [3, 5]", "targets: [3, 0]")),
            "plan.targets[1]"
        );
    }

    #[test]
    fn grid_starting_before_any_data_is_a_warning() {
        let text = with(
            "periods: [{days: 20, rate_scale: 0.5}]",
            "periods: [{days: 10, rate_scale: 0}, {days: 20, rate_scale: 0.5}]",
        );
        let warnings = accepted(&text).warnings();
        assert_eq!(warnings.len(), 1, "{warnings:?}");
        assert_eq!(
            warnings[0],
            Warning::FirstDayWithoutData {
                first_day: 1.0,
                days_without_data: 10.0
            }
        );
        let later_start = text.replace("first: 1,", "first: 11,");
        assert!(accepted(&later_start).warnings().is_empty());
    }
}
