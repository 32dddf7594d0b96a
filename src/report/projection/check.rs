//! What every renderer may assume about a projection, checked once.
//!
//! JSON cannot hold NaN or infinities (serde_json would write them as null,
//! indistinguishable from "no value"), a log axis cannot show day 0, and the
//! CSV columns follow the order of `targets`. A projection breaking any of
//! these is refused with the path of the offending value.

use crate::projection::{Calibration, ExposurePoint, GlobalSignificance, Projection};
use crate::report::ReportError;

const FINITE: &str = "a finite number";
/// Limits go on a logarithmic axis, and a CLs upper limit is always above 0.
const LIMIT: &str = "a finite upper limit on the signal strength above 0";

/// Checks the invariants the renderers rely on:
/// - at least one exposure point, with calendar days finite, above zero and
///   increasing, and so for the `--at` days;
/// - every number finite (targets, counts, significances, probabilities, days,
///   calibrations), the confidence level between 0 and 1;
/// - every expected limit on μ finite and above zero (absent limits are fine);
/// - every point carries one probability per target, in the order of `targets`;
/// - every point lists the same channels as the first.
pub(in crate::report) fn check_projection(projection: &Projection) -> Result<(), ReportError> {
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
    let channel_names: Vec<String> = projection.points[0]
        .channels
        .iter()
        .map(|channel| channel.name.clone())
        .collect();
    check_points(
        "points",
        projection.points.iter(),
        &projection.targets,
        &channel_names,
    )?;
    check_points(
        "at",
        projection.at.iter().map(|at| &at.point),
        &projection.targets,
        &channel_names,
    )?;
    for (index, row) in projection.days_to_target.iter().enumerate() {
        let field = |name: &str| format!("days_to_target[{index}].{name}");
        finite(field("target"), row.target)?;
        optional_finite(field("asimov_days"), row.asimov_days)?;
        optional_finite(field("median_days"), row.median_days)?;
        optional_finite(field("p50_days"), row.p50_days)?;
        optional_finite(field("p90_days"), row.p90_days)?;
        optional_finite(field("saturation_z"), row.saturation_z)?;
        if let Some(global) = &row.global {
            optional_finite(field("global_asimov_days"), global.global_asimov_days)?;
            optional_finite(field("global_median_days"), global.global_median_days)?;
        }
    }
    if let Some(cl) = projection.cl
        && !(cl > 0.0 && cl < 1.0)
    {
        return Err(invalid(
            "cl".to_string(),
            cl.to_string(),
            "a confidence level between 0 and 1",
        ));
    }
    let exclusion = &projection.days_to_exclusion;
    let field = |name: &str| format!("days_to_exclusion.{name}");
    optional_finite(field("asimov_days"), exclusion.asimov_days)?;
    optional_finite(field("median_days"), exclusion.median_days)
}

/// `point`, at dotted path `at`, lists the channels `names` (those of the
/// first grid point, after which the CSV names its columns), in order, each
/// with finite numbers.
fn check_channels(at: &str, point: &ExposurePoint, names: &[String]) -> Result<(), ReportError> {
    if !point.channels.iter().map(|c| &c.name).eq(names.iter()) {
        return Err(invalid(
            format!("{at}.channels"),
            format!("{} channels", point.channels.len()),
            "the channels of points[0], in its order",
        ));
    }
    for (position, channel) in point.channels.iter().enumerate() {
        let field = |name: &str| format!("{at}.channels[{position}].{name}");
        finite(field("signal"), channel.signal)?;
        finite(field("background"), channel.background)?;
        finite(field("z_asimov"), channel.z_asimov)?;
    }
    Ok(())
}

/// The points of the list `list` (`points`, the grid, or `at`, the `--at` days).
fn check_points<'a>(
    list: &str,
    points: impl Iterator<Item = &'a ExposurePoint>,
    targets: &[f64],
    channel_names: &[String],
) -> Result<(), ReportError> {
    let mut previous_days = 0.0;
    for (index, point) in points.enumerate() {
        let field = |name: &str| format!("{list}[{index}].{name}");
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
        check_channels(&format!("{list}[{index}]"), point, channel_names)?;
        for (quantile, &z) in point.z_asimov_band.iter().enumerate() {
            finite(field(&format!("z_asimov_band[{quantile}]")), z)?;
        }
        optional_finite(field("z_median"), point.z_median)?;
        if let Some(band) = point.z_band {
            for (quantile, &z) in band.iter().enumerate() {
                finite(field(&format!("z_band[{quantile}]")), z)?;
            }
        }
        if point.probability.len() != targets.len() {
            return Err(invalid(
                field("probability"),
                format!("{} entries", point.probability.len()),
                "one entry per target",
            ));
        }
        for (slot, (probability, &target)) in point.probability.iter().zip(targets).enumerate() {
            let field = |name: &str| format!("{list}[{index}].probability[{slot}].{name}");
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
        check_limits(&field, point)?;
        if let Some(calibration) = &point.calibration {
            check_calibration(&field, calibration)?;
        }
        if let Some(global) = &point.global {
            check_global(index, global)?;
        }
    }
    Ok(())
}

/// The limits of a point whose fields `field` names.
fn check_limits(field: &dyn Fn(&str) -> String, point: &ExposurePoint) -> Result<(), ReportError> {
    optional_limit(field("limit_median"), point.limit_median)?;
    optional_limit(field("limit_asimov"), point.limit_asimov)?;
    for (name, band) in [
        ("limit_band", point.limit_band),
        ("limit_asimov_band", point.limit_asimov_band),
    ] {
        for (quantile, &mu) in band.iter().flatten().enumerate() {
            optional_limit(field(&format!("{name}[{quantile}]")), Some(mu))?;
        }
    }
    Ok(())
}

/// The calibration of a point whose fields `point_field` names.
fn check_calibration(
    point_field: &dyn Fn(&str) -> String,
    calibration: &Calibration,
) -> Result<(), ReportError> {
    let field = |name: &str| point_field(&format!("calibration.{name}"));
    finite(field("q0_asimov"), calibration.q0_asimov)?;
    finite(field("p_asymptotic"), calibration.p_asymptotic)?;
    finite(field("z_asymptotic"), calibration.z_asymptotic)?;
    optional_finite(field("p_toys"), calibration.p_toys)?;
    optional_finite(field("z_toys"), calibration.z_toys)?;
    optional_finite(field("tail_reach_z"), calibration.tail_reach_z)
}

fn check_global(index: usize, global: &GlobalSignificance) -> Result<(), ReportError> {
    let field = |name: &str| format!("points[{index}].{name}");
    optional_finite(field("z_global_asimov"), global.z_global_asimov)?;
    optional_finite(field("z_global_median"), global.z_global_median)?;
    if let Some(measured) = &global.look_elsewhere {
        let field = |name: &str| format!("points[{index}].look_elsewhere.{name}");
        finite(field("reference_level"), measured.reference_level)?;
        optional_finite(field("mean_upcrossings"), measured.mean_upcrossings)?;
        optional_finite(
            field("mean_upcrossings_error"),
            measured.mean_upcrossings_error,
        )?;
        optional_finite(field("direct_global_p"), measured.direct_global_p)?;
        optional_finite(field("trials_factor"), measured.trials_factor)?;
        optional_finite(
            field("mean_upcrossings_asimov"),
            measured.mean_upcrossings_asimov,
        )?;
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

fn optional_limit(field: String, limit: Option<f64>) -> Result<(), ReportError> {
    match limit {
        Some(mu) if !(mu.is_finite() && mu > 0.0) => Err(invalid(field, mu.to_string(), LIMIT)),
        _ => Ok(()),
    }
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
    use crate::report::projection::example;

    fn message(projection: &Projection) -> String {
        check_projection(projection).unwrap_err().to_string()
    }

    #[test]
    fn the_examples_pass() {
        check_projection(&example::tiny()).unwrap();
        check_projection(&example::with_toys()).unwrap();
        check_projection(&example::asimov_only()).unwrap();
        check_projection(&example::with_limits()).unwrap();
        check_projection(&example::asimov_only_with_limits()).unwrap();
    }

    #[test]
    fn an_infinite_limit_is_named() {
        let mut projection = example::with_limits();
        projection.points[4].limit_median = Some(f64::INFINITY);
        assert_eq!(
            message(&projection),
            "cannot report the projection: points[4].limit_median is inf, \
             expected a finite upper limit on the signal strength above 0"
        );
        let mut projection = example::with_limits();
        projection.points[2].limit_asimov_band = Some([0.5, 0.7, f64::NAN, 1.9]);
        assert_eq!(
            message(&projection),
            "cannot report the projection: points[2].limit_asimov_band[2] is NaN, \
             expected a finite upper limit on the signal strength above 0"
        );
    }

    #[test]
    fn a_limit_of_zero_cannot_go_on_a_log_axis() {
        let mut projection = example::with_limits();
        projection.points[0].limit_band = Some([0.0, 0.7, 1.2, 1.9]);
        assert_eq!(
            message(&projection),
            "cannot report the projection: points[0].limit_band[0] is 0, \
             expected a finite upper limit on the signal strength above 0"
        );
    }

    #[test]
    fn absent_limits_are_fine() {
        let mut projection = example::with_limits();
        let first = &mut projection.points[0];
        first.limit_median = None;
        first.limit_band = None;
        first.limit_asimov = None;
        first.limit_asimov_band = None;
        check_projection(&projection).unwrap();
    }

    #[test]
    fn infinite_calibration_and_exclusion_values_are_named() {
        let mut projection = example::with_limits();
        projection.points[5].calibration.as_mut().unwrap().z_toys = Some(f64::INFINITY);
        assert_eq!(
            message(&projection),
            "cannot report the projection: points[5].calibration.z_toys is inf, \
             expected a finite number"
        );
        let mut projection = example::with_limits();
        projection.days_to_exclusion.median_days = Some(f64::NEG_INFINITY);
        assert_eq!(
            message(&projection),
            "cannot report the projection: days_to_exclusion.median_days is -inf, \
             expected a finite number"
        );
    }

    #[test]
    fn a_confidence_level_outside_zero_to_one_is_refused() {
        let mut projection = example::with_limits();
        projection.cl = Some(95.0);
        assert_eq!(
            message(&projection),
            "cannot report the projection: cl is 95, expected a confidence level between 0 and 1"
        );
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
        projection.days_to_target[1].saturation_z = Some(f64::NAN);
        assert_eq!(
            message(&projection),
            "cannot report the projection: days_to_target[1].saturation_z is NaN, expected a finite number"
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
