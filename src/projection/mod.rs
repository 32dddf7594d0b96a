//! Projection: the exposure scan, quantiles, days to each target and to exclusion.

mod crossing;
mod days;
mod point;
mod result;

pub use crossing::{first_crossing, quantile};
pub use result::{
    Calibration, DaysToExclusion, DaysToTarget, ExposurePoint, Projection, TargetProbability,
};

use crate::asymptotic::AsimovSignificance;
use crate::likelihood::{FitFailure, Likelihood};
use crate::model::Model;
use std::fmt;

/// What to project.
#[derive(Debug, Clone)]
pub struct ProjectionSettings {
    pub title: String,
    /// Calendar days of the grid, increasing.
    pub days: Vec<f64>,
    /// Pseudo-experiments per point and hypothesis; 0 for an Asimov-only projection.
    pub toys: usize,
    pub seed: u64,
    pub targets: Vec<f64>,
    /// Confidence level of expected limits; None to skip exclusion.
    pub cl: Option<f64>,
    /// Background-only pseudo-experiments per point calibrating q0; 0 for none.
    pub calibration_toys: usize,
}

impl ProjectionSettings {
    /// Pseudo-experiments run at each grid point.
    pub fn toys_per_point(&self) -> usize {
        self.toys * (1 + usize::from(self.cl.is_some())) + self.calibration_toys
    }

    /// Every pseudo-experiment the projection will run, for progress reporting.
    pub fn total_toys(&self) -> u64 {
        (self.toys_per_point() * self.days.len()) as u64
    }
}

/// An asymptotic fit failed: the projection cannot be trusted at all.
#[derive(Debug, Clone, PartialEq)]
pub struct ProjectionError {
    pub live_days: f64,
    /// Which fit failed.
    pub what: &'static str,
    pub failure: FitFailure,
}

impl fmt::Display for ProjectionError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "the {} at {:.6} live days failed: {}",
            self.what, self.live_days, self.failure
        )
    }
}

impl std::error::Error for ProjectionError {}

/// Runs the projection: at every grid day the Asimov significance and, unless
/// `toys` is 0, an ensemble of pseudo-experiments; with `cl`, expected limits
/// both ways; with `calibration_toys`, the toy p-value of the Asimov q0. Then
/// the days to each target and to exclusion.
pub fn project(
    model: &Model,
    settings: &ProjectionSettings,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<Projection, ProjectionError> {
    let likelihood = Likelihood::new(model);
    let mut asimov = AsimovSignificance::new(&likelihood);
    let runner = point::PointRunner::new(&likelihood, settings, progress);
    let points = settings
        .days
        .iter()
        .enumerate()
        .map(|(index, &days)| runner.point(&mut asimov, index, days))
        .collect::<Result<Vec<_>, _>>()?;
    let days_to_target = days::days_to_targets(
        model,
        &mut asimov,
        &points,
        &settings.targets,
        settings.toys,
    )?;
    let days_to_exclusion = match settings.cl {
        Some(cl) => days::days_to_exclusion(&likelihood, &points, 1.0 - cl)?,
        None => DaysToExclusion::default(),
    };
    Ok(Projection {
        title: settings.title.clone(),
        start: model.live_time.start(),
        seed: settings.seed,
        toys: settings.toys,
        targets: settings.targets.clone(),
        cl: settings.cl,
        calibration_toys: settings.calibration_toys,
        points,
        days_to_target,
        days_to_exclusion,
    })
}
