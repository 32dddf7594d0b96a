//! Days to each target and to exclusion, from the grid and by root finding.

use super::crossing::first_crossing;
use super::point::PointParts;
use super::refine::{DaySolver, ToyDay, ToyQuantity};
use super::{
    DaysToExclusion, DaysToTarget, ExposurePoint, GlobalDays, GlobalSignificance, ProjectionError,
    ToySource, WithheldDay,
};
use crate::asymptotic::{AsimovSignificance, significance};
use crate::likelihood::{FitFailure, Likelihood};
use crate::limits::asymptotic_median_limit;
use crate::model::{LiveTime, Model};
use crate::numeric::{bisect_log, regula_falsi};

/// Days to each target: Z_A root-found, and the days where the toy median
/// reaches it and where 50% and 90% of the pseudo-experiments do (their
/// fractions turned into significances, see
/// [`fraction_as_significance_squared`]), each solved by `solver` with extra
/// ensembles inside the grid interval that brackets it. With a scan
/// (`with_scan`), also the days where the global significances of Z_A
/// (root-found, N(u0) from the Asimov geometry at each exposure) and of the
/// toy median (solved as the other toy days) reach the target.
pub(super) fn days_to_targets<T: ToySource<Error = ProjectionError>>(
    model: &Model,
    asimov: &mut AsimovSignificance,
    solver: &mut DaySolver<'_, '_, '_, '_, T>,
    points: &[ExposurePoint],
    targets: &[f64],
    with_scan: bool,
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
    let toys = solver.toys();
    let discovery_converged = |p: &ExposurePoint| (toys.saturating_sub(p.failed_fits), toys);
    let discovery = PointParts {
        discovery: true,
        ..PointParts::NONE
    };
    let mut rows = Vec::with_capacity(targets.len());
    for (index, &target) in targets.iter().enumerate() {
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
        let median_squared = |p: &ExposurePoint| p.z_median.map(|z| z * z);
        let fraction_squared = |p: &ExposurePoint| {
            let (converged, _) = discovery_converged(p);
            p.probability[index]
                .toys
                .map(|fraction| fraction_as_significance_squared(fraction, target, converged))
        };
        let reached_by = |fraction: f64| {
            let z = target + significance(1.0 - fraction);
            z * z
        };
        let mut withheld = Vec::new();
        let mut solve =
            |name: &'static str, level: f64, value: &dyn Fn(&ExposurePoint) -> Option<f64>| {
                let quantity = ToyQuantity {
                    parts: discovery,
                    level,
                    value,
                    converged: &discovery_converged,
                };
                solver
                    .solve(asimov, points, &quantity)
                    .map(|day| day_or_withheld(name, day, &mut withheld))
            };
        let median_days = solve("median_days", target * target, &median_squared)?;
        let p50_days = solve("p50_days", reached_by(0.5), &fraction_squared)?;
        let p90_days = solve("p90_days", reached_by(0.9), &fraction_squared)?;
        let global = if with_scan {
            Some(global_days(
                model,
                asimov,
                solver,
                points,
                target,
                &mut withheld,
            )?)
        } else {
            None
        };
        rows.push(DaysToTarget {
            target,
            asimov_days,
            median_days,
            p50_days,
            p90_days,
            saturation_z,
            global,
            withheld,
        });
    }
    Ok(rows)
}

/// The days where the global significance of Z_A and of the toy median
/// reach `target`. The Asimov one is root-found with N(u0) from the Asimov
/// geometry at each exposure; where that geometry is degenerate at some
/// point, N(u0) comes from the background-only scans of the grid points and
/// the day is interpolated between them (Z^2 linear in live days). The toy
/// median one is solved with extra points, each with its own discovery
/// pseudo-experiments and background-only scans.
fn global_days<T: ToySource<Error = ProjectionError>>(
    model: &Model,
    asimov: &mut AsimovSignificance,
    solver: &mut DaySolver<'_, '_, '_, '_, T>,
    points: &[ExposurePoint],
    target: f64,
    withheld: &mut Vec<WithheldDay>,
) -> Result<GlobalDays, ProjectionError> {
    let level = target * target;
    let geometry_everywhere = points.iter().filter(|p| p.live_days > 0.0).all(|p| {
        p.global
            .as_ref()
            .and_then(|g| g.look_elsewhere.as_ref())
            .is_some_and(|l| l.mean_upcrossings_asimov.is_some())
    });
    let z_global_asimov = |p: &ExposurePoint| {
        p.global
            .as_ref()
            .and_then(|g| g.z_global_asimov)
            .map_or(0.0, |z| z * z)
    };
    let global_asimov_days = if geometry_everywhere {
        let days: Vec<f64> = points.iter().map(|p| p.days).collect();
        let values: Vec<f64> = points.iter().map(z_global_asimov).collect();
        let global_only = PointParts {
            global: true,
            ..PointParts::NONE
        };
        refine_crossing(&days, &values, level, |day| {
            solver.point(asimov, day, global_only).map(z_global_asimov)
        })?
    } else {
        let series = global_series(points, |g| g.z_global_asimov);
        series.and_then(|values| toy_crossing(&model.live_time, points, &values, level))
    };
    let toys = solver.toys();
    let converged = |p: &ExposurePoint| {
        let discovery = (toys.saturating_sub(p.failed_fits), toys);
        let scans = p
            .global
            .as_ref()
            .and_then(|g| g.look_elsewhere.as_ref())
            .map_or(discovery, |l| (l.toys, l.toys + l.failed_fits));
        worse_converged(discovery, scans)
    };
    let value = |p: &ExposurePoint| {
        if p.live_days <= 0.0 {
            return Some(0.0);
        }
        p.global
            .as_ref()
            .and_then(|g| g.z_global_median)
            .map(|z| z * z)
    };
    let quantity = ToyQuantity {
        parts: PointParts {
            discovery: true,
            look_elsewhere: true,
            global: true,
            ..PointParts::NONE
        },
        level,
        value: &value,
        converged: &converged,
    };
    let day = solver.solve(asimov, points, &quantity)?;
    Ok(GlobalDays {
        global_asimov_days,
        global_median_days: day_or_withheld("global_median_days", day, withheld),
    })
}

/// Of two (converged, run) counts, the one with the smaller converged fraction.
fn worse_converged(first: (usize, usize), second: (usize, usize)) -> (usize, usize) {
    // converged1 / run1 <= converged2 / run2, without division.
    if (first.0 as u128) * (second.1 as u128) <= (second.0 as u128) * (first.1 as u128) {
        first
    } else {
        second
    }
}

/// The number of a solved toy day; none for a day not within the grid or
/// unavailable, and none with a note in `withheld` when too few fits converged.
fn day_or_withheld(
    name: &'static str,
    day: ToyDay,
    withheld: &mut Vec<WithheldDay>,
) -> Option<f64> {
    match day {
        ToyDay::Day(days) => Some(days),
        ToyDay::NotWithinGrid | ToyDay::Unavailable => None,
        ToyDay::Withheld { converged, toys } => {
            withheld.push(WithheldDay {
                day: name,
                converged,
                toys,
            });
            None
        }
    }
}

/// Days until the median expected limit on mu falls to 1: asymptotically
/// root-found, and from the toy medians solved with extra ensembles of limit
/// pseudo-experiments inside the bracketing grid interval, the median's
/// 1/limit^2 interpolated linearly in live days in the final bracket (exact
/// when statistics dominate, as the limit then falls as 1/sqrt(exposure);
/// common practice). A point without a limit (no live time, or nothing
/// excluded at any mu) counts as 1/limit^2 = 0.
pub(super) fn days_to_exclusion<T: ToySource<Error = ProjectionError>>(
    likelihood: &Likelihood,
    asimov: &mut AsimovSignificance,
    solver: &mut DaySolver<'_, '_, '_, '_, T>,
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
        let median = asymptotic_median_limit(likelihood, live_days, alpha).map_err(
            |failure: FitFailure| ProjectionError {
                live_days,
                what: "background-only Asimov fit for expected limits",
                failure,
            },
        )?;
        Ok(1.0 / (median * median))
    })?;
    let mut withheld = Vec::new();
    let with_toys = points.iter().any(|p| p.limit_median.is_some());
    let median_days = if with_toys {
        let toys = solver.toys();
        let value = |p: &ExposurePoint| Some(inverse_squared(p.limit_median));
        let converged = |p: &ExposurePoint| (toys.saturating_sub(p.limit_failed_fits), toys);
        let quantity = ToyQuantity {
            parts: PointParts {
                limits: true,
                ..PointParts::NONE
            },
            level: 1.0,
            value: &value,
            converged: &converged,
        };
        let day = solver.solve(asimov, points, &quantity)?;
        day_or_withheld("median_days", day, &mut withheld)
    } else {
        None
    };
    Ok(DaysToExclusion {
        asimov_days,
        median_days,
        withheld,
    })
}

/// The first calendar day where a quantity sampled at the grid points
/// reaches `level`, interpolated linearly in live days from 0 at no live time
/// (points without live time are that origin) and mapped back through the
/// schedule, so a crossing never falls where no live time accrues.
fn toy_crossing(
    live_time: &LiveTime,
    points: &[ExposurePoint],
    values: &[f64],
    level: f64,
) -> Option<f64> {
    let (live_days, values): (Vec<f64>, Vec<f64>) = points
        .iter()
        .zip(values)
        .filter(|(p, _)| p.live_days > 0.0)
        .map(|(p, &value)| (p.live_days, value))
        .unzip();
    first_crossing(&live_days, &values, level).map(|live| live_time.calendar_days(live))
}

/// The fraction of `converged` pseudo-experiments reaching `target` as the
/// squared median significance that gives it, when the significance is
/// normal with unit width: P(Z >= target) = Phi(Z_A - target), so
/// Z_A^2 = (target + Phi^-1(P))^2, floored at 0 (Cowan, Cranmer, Gross,
/// Vitells, EPJC 71 (2011) 1554, sec. 5.1). Z_A^2 grows linearly in live days
/// where statistics dominate, so fractions interpolate well in this form; at
/// the grid points it holds the toy fraction exactly. A fraction of 0 or 1 is
/// taken 1/(2N) from the edge (a continuity correction; common practice).
fn fraction_as_significance_squared(fraction: f64, target: f64, converged: usize) -> f64 {
    let edge = 0.5 / converged.max(1) as f64;
    let z = target + significance(1.0 - fraction.clamp(edge, 1.0 - edge));
    z.max(0.0).powi(2)
}

/// The square of a global significance over the grid (0 before any live
/// time); None when a point with live time lacks it.
fn global_series(
    points: &[ExposurePoint],
    significance: impl Fn(&GlobalSignificance) -> Option<f64>,
) -> Option<Vec<f64>> {
    toy_series(points, |p| {
        if p.live_days <= 0.0 {
            return Some(0.0);
        }
        p.global.as_ref().and_then(&significance).map(|z| z * z)
    })
}

/// A per-point toy quantity over the grid; None when any point lacks it.
fn toy_series(
    points: &[ExposurePoint],
    value: impl Fn(&ExposurePoint) -> Option<f64>,
) -> Option<Vec<f64>> {
    points.iter().map(value).collect()
}

/// The relative precision of the days root-found from asymptotic answers,
/// one fit (and a look-elsewhere geometry) per evaluation: far below
/// anything reported, and still ten times the fits' own precision on Z_A
/// (about 1e-10), which a tighter bracket would only chase.
const ASIMOV_DAY_PRECISION: f64 = 1e-9;

/// The calendar day where an increasing quantity (sampled as `values` at grid
/// `days`) reaches `level`, root-found with `value_at` between the grid points
/// that bracket it, or below the first point (halving below it while the
/// quantity is already above); None beyond the grid. By regula falsi
/// ([`regula_falsi`] to [`ASIMOV_DAY_PRECISION`]: a handful of evaluations
/// where bisection takes two dozen), or by bisection in log(days) ([`bisect_log`]) where regula falsi
/// finds no root.
fn refine_crossing<E>(
    days: &[f64],
    values: &[f64],
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<Option<f64>, E> {
    let Some(above) = values.iter().position(|&v| v >= level) else {
        return Ok(None);
    };
    let high = (days[above], values[above]);
    let low = if above > 0 {
        (days[above - 1], values[above - 1])
    } else {
        let mut low = high.0 / 2.0;
        let mut value = value_at(low)?;
        while value >= level && low > high.0 * 1e-12 {
            low /= 2.0;
            value = value_at(low)?;
        }
        (low, value)
    };
    match regula_falsi(low, high, level, ASIMOV_DAY_PRECISION, &mut value_at)? {
        Some(day) => Ok(Some(day)),
        None => bisect_log(low.0, high.0, level, value_at).map(Some),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::asymptotic::probability_to_reach;

    #[test]
    fn a_normal_fraction_gives_back_its_significance() {
        // P(Z >= t) = Phi(Z_A - t) for Z ~ N(Z_A, 1) (Cowan et al., EPJC 71
        // (2011) 1554, sec. 5.1): the fraction stands for Z_A^2 again.
        for (z_asimov, target) in [(2.0, 3.0), (3.0, 3.0), (4.5, 3.0), (6.0, 5.0)] {
            let fraction = probability_to_reach(z_asimov, target);
            let squared = fraction_as_significance_squared(fraction, target, 1000);
            assert!(
                (squared - z_asimov * z_asimov).abs() < 1e-9,
                "{z_asimov}: {squared}"
            );
        }
    }

    #[test]
    fn fractions_of_none_and_all_stay_finite() {
        // 1/(2N) from the edges: Phi^-1(1/2000) = -3.2905 (standard normal table).
        let none = fraction_as_significance_squared(0.0, 5.0, 1000);
        assert!((none - (5.0_f64 - 3.2905).powi(2)).abs() < 1e-3, "{none}");
        assert_eq!(fraction_as_significance_squared(0.0, 3.0, 1000), 0.0);
        let all = fraction_as_significance_squared(1.0, 3.0, 1000);
        assert!((all - (3.0_f64 + 3.2905).powi(2)).abs() < 1e-3, "{all}");
    }
}
