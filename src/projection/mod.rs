//! Projection: the exposure scan, quantiles and days to each target.

mod crossing;
mod result;

pub use crossing::{bisect_log, first_crossing, quantile};
pub use result::{DaysToTarget, ExposurePoint, Projection, TargetProbability};

use crate::asymptotic::{AsimovSignificance, probability_to_reach};
use crate::ensemble::{EnsembleOutcome, EnsemblePlan, discovery_ensemble};
use crate::likelihood::{FitFailure, Likelihood};
use crate::model::Model;
use std::fmt;

/// The quantiles of the toy significance reported as bands: the medians of
/// ±2 sigma and ±1 sigma of a normal distribution (common practice).
pub const BAND_QUANTILES: [f64; 4] = [0.02275, 0.158655, 0.841345, 0.97725];

/// What to project.
#[derive(Debug, Clone)]
pub struct ProjectionSettings {
    pub title: String,
    /// Calendar days of the grid, increasing.
    pub days: Vec<f64>,
    /// Pseudo-experiments per point; 0 for an Asimov-only projection.
    pub toys: usize,
    pub seed: u64,
    pub targets: Vec<f64>,
}

/// An Asimov fit failed: the projection cannot be trusted at all.
#[derive(Debug, Clone, PartialEq)]
pub struct ProjectionError {
    pub live_days: f64,
    pub failure: FitFailure,
}

impl fmt::Display for ProjectionError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "the Asimov fit at {:.6} live days failed: {}",
            self.live_days, self.failure
        )
    }
}

impl std::error::Error for ProjectionError {}

/// Runs the projection: Asimov significance and (unless `toys` is 0) an
/// ensemble of pseudo-experiments at every grid day, then the days to each target.
pub fn project(
    model: &Model,
    settings: &ProjectionSettings,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<Projection, ProjectionError> {
    let likelihood = Likelihood::new(model);
    let mut asimov = AsimovSignificance::new(&likelihood);
    let (signal_rate, background_rate) = model.nominal_rates();
    let plan = EnsemblePlan {
        toys: settings.toys,
        seed: settings.seed,
        progress,
    };
    let mut points = Vec::with_capacity(settings.days.len());
    for (index, &days) in settings.days.iter().enumerate() {
        let live_days = model.live_time.live_days(days);
        let z_asimov = asimov_at(&mut asimov, live_days)?;
        let ensemble = (settings.toys > 0).then(|| {
            if live_days > 0.0 {
                discovery_ensemble(&likelihood, live_days, index, &plan)
            } else {
                progress(settings.toys as u64);
                EnsembleOutcome {
                    significances: vec![0.0; settings.toys],
                    failed_fits: 0,
                }
            }
        });
        points.push(exposure_point(
            days,
            live_days,
            (signal_rate * live_days, background_rate * live_days),
            z_asimov,
            ensemble,
            &settings.targets,
        ));
    }
    let last_live_days = points.last().map_or(1.0, |p| p.live_days).max(1e-9);
    let limit_z = asimov
        .limit(last_live_days)
        .map_err(|failure| ProjectionError {
            live_days: last_live_days * 1e5,
            failure,
        })?;
    let days_to_target = settings
        .targets
        .iter()
        .enumerate()
        .map(|(index, &target)| days_to_target(model, &mut asimov, &points, index, target, limit_z))
        .collect::<Result<_, _>>()?;
    Ok(Projection {
        title: settings.title.clone(),
        seed: settings.seed,
        toys: settings.toys,
        targets: settings.targets.clone(),
        points,
        days_to_target,
    })
}

fn asimov_at(asimov: &mut AsimovSignificance, live_days: f64) -> Result<f64, ProjectionError> {
    if live_days <= 0.0 {
        return Ok(0.0);
    }
    asimov
        .at_live_days(live_days)
        .map_err(|failure| ProjectionError { live_days, failure })
}

fn exposure_point(
    days: f64,
    live_days: f64,
    (signal, background): (f64, f64),
    z_asimov: f64,
    ensemble: Option<EnsembleOutcome>,
    targets: &[f64],
) -> ExposurePoint {
    let mut sorted = ensemble
        .as_ref()
        .map(|e| e.significances.clone())
        .filter(|z| !z.is_empty());
    if let Some(z) = sorted.as_mut() {
        z.sort_by(f64::total_cmp);
    }
    let probability = targets
        .iter()
        .map(|&target| TargetProbability {
            target,
            toys: sorted.as_ref().map(|z| fraction_at_or_above(z, target)),
            asimov: probability_to_reach(z_asimov, target),
        })
        .collect();
    ExposurePoint {
        days,
        live_days,
        signal,
        background,
        z_asimov,
        z_median: sorted.as_ref().map(|z| quantile(z, 0.5)),
        z_band: sorted
            .as_ref()
            .map(|z| BAND_QUANTILES.map(|p| quantile(z, p))),
        probability,
        failed_fits: ensemble.map_or(0, |e| e.failed_fits),
    }
}

/// Fraction of sorted significances at or above `target`.
fn fraction_at_or_above(sorted: &[f64], target: f64) -> f64 {
    let below = sorted.partition_point(|&z| z < target);
    (sorted.len() - below) as f64 / sorted.len() as f64
}

fn days_to_target(
    model: &Model,
    asimov: &mut AsimovSignificance,
    points: &[ExposurePoint],
    target_index: usize,
    target: f64,
    limit_z: Option<f64>,
) -> Result<DaysToTarget, ProjectionError> {
    let days: Vec<f64> = points.iter().map(|p| p.days).collect();
    let toy_series = |value: &dyn Fn(&ExposurePoint) -> Option<f64>| -> Option<Vec<f64>> {
        points.iter().map(value).collect()
    };
    let crossing = |series: Option<Vec<f64>>, level: f64| {
        series.and_then(|values| first_crossing(&days, &values, level))
    };
    let z_squared = toy_series(&|p| p.z_median.map(|z| z * z));
    let probability = toy_series(&|p| p.probability[target_index].toys);
    Ok(DaysToTarget {
        target,
        asimov_days: asimov_days_to_target(model, asimov, points, target)?,
        median_days: crossing(z_squared, target * target),
        p50_days: crossing(probability.clone(), 0.5),
        p90_days: crossing(probability, 0.9),
        limit_z,
    })
}

/// Calendar days where Z_A reaches `target`, root-found between the grid points
/// that bracket it (or below the first point); None beyond the grid.
fn asimov_days_to_target(
    model: &Model,
    asimov: &mut AsimovSignificance,
    points: &[ExposurePoint],
    target: f64,
) -> Result<Option<f64>, ProjectionError> {
    let Some(above) = points.iter().position(|p| p.z_asimov >= target) else {
        return Ok(None);
    };
    let high = points[above].days;
    let mut z_at_days = |days: f64| asimov_at(asimov, model.live_time.live_days(days));
    let low = if above > 0 {
        points[above - 1].days
    } else {
        let mut low = high / 2.0;
        while z_at_days(low)? >= target && low > high * 1e-12 {
            low /= 2.0;
        }
        low
    };
    bisect_log(low, high, target, z_at_days).map(Some)
}
