//! What every renderer may assume about a projection, checked once.
//!
//! JSON cannot hold NaN or infinities (serde_json would write them as null,
//! indistinguishable from "no value"), a log axis cannot show day 0, and the
//! CSV columns follow the order of `targets`. A projection breaking any of
//! these is refused with the path of the offending value.

use super::ReportError;
use crate::projection::Projection;

const FINITE: &str = "a finite number";

/// Checks the invariants the renderers rely on:
/// - at least one exposure point, with calendar days finite, above zero and increasing;
/// - every number finite (targets, counts, significances, probabilities, days, limits);
/// - every point carries one probability per target, in the order of `targets`.
pub(super) fn check_projection(projection: &Projection) -> Result<(), ReportError> {
    if projection.points.is_empty() {
        return Err(invalid(
            "points".to_string(),
            "empty".to_string(),
            "at least one exposure point",
        ));
    }
    for (index, &target) in projection.targets.iter().enumerate() {
        finite(format!("targets[{index}]"), target)?;
    }
    check_points(projection)?;
    for (index, row) in projection.days_to_target.iter().enumerate() {
        let field = |name: &str| format!("days_to_target[{index}].{name}");
        finite(field("target"), row.target)?;
        optional_finite(field("asimov_days"), row.asimov_days)?;
        optional_finite(field("median_days"), row.median_days)?;
        optional_finite(field("p50_days"), row.p50_days)?;
        optional_finite(field("p90_days"), row.p90_days)?;
        optional_finite(field("limit_z"), row.limit_z)?;
    }
    Ok(())
}

fn check_points(projection: &Projection) -> Result<(), ReportError> {
    let mut previous_days = 0.0;
    for (index, point) in projection.points.iter().enumerate() {
        let field = |name: &str| format!("points[{index}].{name}");
        finite(field("days"), point.days)?;
        if point.days <= previous_days {
            return Err(invalid(
                field("days"),
                point.days.to_string(),
                "calendar days above 0 and increasing from point to point",
            ));
        }
        previous_days = point.days;
        finite(field("live_days"), point.live_days)?;
        finite(field("signal"), point.signal)?;
        finite(field("background"), point.background)?;
        finite(field("z_asimov"), point.z_asimov)?;
        optional_finite(field("z_median"), point.z_median)?;
        if let Some(band) = point.z_band {
            for (quantile, &z) in band.iter().enumerate() {
                finite(format!("points[{index}].z_band[{quantile}]"), z)?;
            }
        }
        if point.probability.len() != projection.targets.len() {
            return Err(invalid(
                field("probability"),
                format!("{} entries", point.probability.len()),
                "one entry per target",
            ));
        }
        for (slot, (probability, &target)) in point
            .probability
            .iter()
            .zip(&projection.targets)
            .enumerate()
        {
            let field = |name: &str| format!("points[{index}].probability[{slot}].{name}");
            if probability.target != target {
                return Err(invalid(
                    field("target"),
                    probability.target.to_string(),
                    "the targets of the projection, in the same order",
                ));
            }
            optional_finite(field("toys"), probability.toys)?;
            finite(field("asimov"), probability.asimov)?;
        }
    }
    Ok(())
}

fn finite(field: String, value: f64) -> Result<(), ReportError> {
    if value.is_finite() {
        Ok(())
    } else {
        Err(invalid(field, value.to_string(), FINITE))
    }
}

fn optional_finite(field: String, value: Option<f64>) -> Result<(), ReportError> {
    value.map_or(Ok(()), |value| finite(field, value))
}

fn invalid(field: String, value: String, expected: &'static str) -> ReportError {
    ReportError::InvalidProjection {
        field,
        value,
        expected,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::example;

    fn message(projection: &Projection) -> String {
        check_projection(projection).unwrap_err().to_string()
    }

    #[test]
    fn the_examples_pass() {
        check_projection(&example::tiny()).unwrap();
        check_projection(&example::with_toys()).unwrap();
        check_projection(&example::asimov_only()).unwrap();
    }

    #[test]
    fn an_infinite_band_quantile_is_named() {
        let mut projection = example::tiny();
        projection.points[0].z_band = Some([0.1, 0.5, f64::INFINITY, 2.0]);
        assert_eq!(
            message(&projection),
            "cannot report the projection: points[0].z_band[2] is inf, expected a finite number"
        );
    }

    #[test]
    fn a_nan_day_to_target_is_named() {
        let mut projection = example::tiny();
        projection.days_to_target[1].limit_z = Some(f64::NAN);
        assert_eq!(
            message(&projection),
            "cannot report the projection: days_to_target[1].limit_z is NaN, expected a finite number"
        );
    }

    #[test]
    fn day_zero_cannot_go_on_a_log_axis() {
        let mut projection = example::tiny();
        projection.points[0].days = 0.0;
        assert_eq!(
            message(&projection),
            "cannot report the projection: points[0].days is 0, \
             expected calendar days above 0 and increasing from point to point"
        );
    }

    #[test]
    fn probabilities_must_follow_the_targets() {
        let mut projection = example::tiny();
        projection.points[1].probability.swap(0, 1);
        assert_eq!(
            message(&projection),
            "cannot report the projection: points[1].probability[0].target is 5, \
             expected the targets of the projection, in the same order"
        );
    }

    #[test]
    fn an_empty_projection_is_refused() {
        let mut projection = example::tiny();
        projection.points.clear();
        assert_eq!(
            message(&projection),
            "cannot report the projection: points is empty, expected at least one exposure point"
        );
    }
}
