//! Days to each target and to exclusion, from the grid and by root finding.

use super::crossing::first_crossing;
use super::{DaysToExclusion, DaysToTarget, ExposurePoint, ProjectionError};
use crate::asymptotic::AsimovSignificance;
use crate::likelihood::{FitFailure, Likelihood};
use crate::limits::asymptotic_limits;
use crate::model::Model;
use crate::numeric::bisect_log;

/// Days to each target: Z_A root-found, the toy median with Z^2 linear in days,
/// and the days where 50% and 90% of the pseudo-experiments reach the target.
pub(super) fn days_to_targets(
    model: &Model,
    asimov: &mut AsimovSignificance,
    points: &[ExposurePoint],
    targets: &[f64],
) -> Result<Vec<DaysToTarget>, ProjectionError> {
    let last_live_days = points.last().map_or(1.0, |p| p.live_days).max(1e-9);
    let saturation_z = asimov
        .limit(last_live_days)
        .map_err(|failure| ProjectionError {
            live_days: last_live_days,
            what: "saturation check (Asimov fits at 10^3 and 10^5 times the exposure)",
            failure,
        })?;
    let days: Vec<f64> = points.iter().map(|p| p.days).collect();
    let z_asimov: Vec<f64> = points.iter().map(|p| p.z_asimov).collect();
    targets
        .iter()
        .enumerate()
        .map(|(index, &target)| {
            let asimov_days = refine_crossing(&days, &z_asimov, target, |day| {
                let live_days = model.live_time.live_days(day);
                if live_days <= 0.0 {
                    return Ok(0.0);
                }
                asimov
                    .at_live_days(live_days)
                    .map_err(|failure| ProjectionError {
                        live_days,
                        what: "Asimov discovery fit",
                        failure,
                    })
            })?;
            let z_squared = toy_series(points, |p| p.z_median.map(|z| z * z));
            let probability = toy_series(points, |p| p.probability[index].toys);
            let crossing = |series: &Option<Vec<f64>>, level| {
                series
                    .as_ref()
                    .and_then(|values| first_crossing(&days, values, level))
            };
            Ok(DaysToTarget {
                target,
                asimov_days,
                median_days: crossing(&z_squared, target * target),
                p50_days: crossing(&probability, 0.5),
                p90_days: crossing(&probability, 0.9),
                saturation_z,
            })
        })
        .collect()
}

/// Days until the median expected limit on mu falls to 1: asymptotically
/// root-found, and from the toy medians with 1/limit^2 linear in days (exact
/// when statistics dominate, as the limit then falls as 1/sqrt(exposure);
/// common practice).
pub(super) fn days_to_exclusion(
    likelihood: &Likelihood,
    points: &[ExposurePoint],
    alpha: f64,
) -> Result<DaysToExclusion, ProjectionError> {
    let days: Vec<f64> = points.iter().map(|p| p.days).collect();
    let inverse_squared = |limit: Option<f64>| limit.map_or(0.0, |l| 1.0 / (l * l));
    let asimov_sensitivity: Vec<f64> = points
        .iter()
        .map(|p| inverse_squared(p.limit_asimov))
        .collect();
    let live_time = &likelihood.model().live_time;
    let asimov_days = refine_crossing(&days, &asimov_sensitivity, 1.0, |day| {
        let live_days = live_time.live_days(day);
        if live_days <= 0.0 {
            return Ok(0.0);
        }
        let limits =
            asymptotic_limits(likelihood, live_days, alpha).map_err(|failure: FitFailure| {
                ProjectionError {
                    live_days,
                    what: "background-only Asimov fit for expected limits",
                    failure,
                }
            })?;
        Ok(1.0 / (limits.median * limits.median))
    })?;
    let toy_sensitivity = toy_series(points, |p| p.limit_median.map(|l| 1.0 / (l * l)));
    Ok(DaysToExclusion {
        asimov_days,
        median_days: toy_sensitivity.and_then(|values| first_crossing(&days, &values, 1.0)),
    })
}

/// A per-point toy quantity over the grid; None when any point lacks it.
fn toy_series(
    points: &[ExposurePoint],
    value: impl Fn(&ExposurePoint) -> Option<f64>,
) -> Option<Vec<f64>> {
    points.iter().map(value).collect()
}

/// The calendar day where an increasing quantity (sampled as `values` at grid
/// `days`) reaches `level`, root-found with `value_at` between the grid points
/// that bracket it, or below the first point; None beyond the grid.
fn refine_crossing<E>(
    days: &[f64],
    values: &[f64],
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<Option<f64>, E> {
    let Some(above) = values.iter().position(|&v| v >= level) else {
        return Ok(None);
    };
    let high = days[above];
    let low = if above > 0 {
        days[above - 1]
    } else {
        let mut low = high / 2.0;
        while value_at(low)? >= level && low > high * 1e-12 {
            low /= 2.0;
        }
        low
    };
    bisect_log(low, high, level, value_at).map(Some)
}
