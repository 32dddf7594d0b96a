//! Projection: the exposure scan, quantiles, days to each target and to exclusion; shards of its pseudo-experiments, merged exactly.

mod crossing;
mod days;
mod ensembles;
mod point;
mod refine;
mod result;
mod shard;
mod warnings;

pub use crossing::{first_crossing, quantile};
pub use ensembles::{
    CalibrationCount, CalibrationRequest, LimitRequest, LookElsewhereCount, LookElsewhereRequest,
    PointRequest, PointToys, RunToys, ToySource,
};
pub use point::BAND_QUANTILES;
pub use refine::{ABSOLUTE_PRECISION, MIN_CONVERGED_FRACTION, Origin, RELATIVE_PRECISION};
pub use result::{
    AtDay, Calibration, ChannelPoint, DaysToExclusion, DaysToTarget, EventLimits, ExposurePoint,
    GlobalDays, GlobalSignificance, LookElsewhere, Projection, RateStretch, ScanSummary,
    TargetProbability, WithheldDay,
};
pub(crate) use shard::{Decoder, Encoder, write_shard_file};
pub use shard::{
    DescribeInputs, PROJECT_COMMAND, ShardError, ShardRun, ShardSet, ShardSpec, merge_shard_set,
    merge_shards, run_shard,
};

use crate::asymptotic::AsimovSignificance;
use crate::likelihood::{FitFailure, Likelihood};
use crate::model::Model;
use crate::provenance::{Provenance, ScenarioFile};
use crate::scenario::{SignalScan, Spacing};
use point::{ChannelAlone, PointParts};
use refine::DaySolver;
use serde_json::{Map, Value, json};
use std::fmt;

/// What to project.
#[derive(Debug, Clone, PartialEq)]
pub struct ProjectionSettings {
    pub title: String,
    /// Calendar days of the grid, increasing.
    pub days: Vec<f64>,
    /// Spacing of the figures' day axis (`DaysGrid::axis_spacing`).
    pub day_spacing: Spacing,
    /// The detector mass in kg when every channel names the same one: the
    /// `--at` limits are then also given per kg·day.
    pub detector_mass_kg: Option<f64>,
    /// Calendar days asked for with `--at`, increasing, none repeated: each
    /// a point of its own (its own pseudo-experiments), never interpolated.
    pub at_days: Vec<f64>,
    /// Pseudo-experiments per point and hypothesis; 0 for an Asimov-only projection.
    pub toys: usize,
    pub seed: u64,
    pub targets: Vec<f64>,
    /// Confidence level of expected limits; None to skip exclusion.
    pub cl: Option<f64>,
    /// Background-only pseudo-experiments per point calibrating q0; 0 for none.
    pub calibration_toys: usize,
    /// The scan of the signal position (`signal.scan`), for the look-elsewhere effect.
    pub scan: Option<SignalScan>,
    /// Background-only pseudo-experiments per point fitted at every scan
    /// position; 0 for none (always 0 without a scan).
    pub look_elsewhere_toys: usize,
}

impl ProjectionSettings {
    /// Pseudo-experiments run at each grid point and `--at` day.
    pub fn toys_per_point(&self) -> usize {
        self.toys * (1 + usize::from(self.cl.is_some()))
            + self.calibration_toys
            + self.look_elsewhere_toys
    }

    /// What made a projection of `scenario` with these settings: its seed,
    /// pseudo-experiments per point (0 for Asimov only), calibration toys,
    /// the confidence level of the limits (null without limits), the `--at`
    /// days and, with a position scan, the background-only scan toys per
    /// point. The grid and the targets are the scenario's, which its SHA-256
    /// pins.
    pub fn provenance(&self, scenario: ScenarioFile) -> Provenance {
        Provenance::new(vec![scenario], self.provenance_options())
    }

    /// The options of the projection that change its numbers.
    pub fn provenance_options(&self) -> Map<String, Value> {
        let mut options = Map::new();
        options.insert("seed".into(), json!(self.seed));
        options.insert("toys".into(), json!(self.toys));
        options.insert("calibration_toys".into(), json!(self.calibration_toys));
        options.insert("cl".into(), json!(self.cl));
        options.insert("at_days".into(), json!(self.at_days));
        if self.scan.is_some() {
            options.insert(
                "look_elsewhere_toys".into(),
                json!(self.look_elsewhere_toys),
            );
        }
        options
    }

    /// Every pseudo-experiment the projection will run, for progress reporting.
    pub fn total_toys(&self) -> u64 {
        self.total_toys_in(ShardSpec::WHOLE)
    }

    /// The pseudo-experiments shard `shard` of the projection will run.
    pub fn total_toys_in(&self, shard: ShardSpec) -> u64 {
        let toys = shard.toys(self.toys).len();
        let calibration_toys = shard.toys(self.calibration_toys).len();
        let look_elsewhere_toys = shard.toys(self.look_elsewhere_toys).len();
        let per_point =
            toys * (1 + usize::from(self.cl.is_some())) + calibration_toys + look_elsewhere_toys;
        (per_point * (self.days.len() + self.at_days.len())) as u64
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
    let mut source = RunToys {
        seed: settings.seed,
        shard: ShardSpec::WHOLE,
        scan: settings.scan.as_ref(),
        progress,
    };
    project_from(model, settings, &mut source, progress)
}

/// The projection with the grid's pseudo-experiments from `source`: run here
/// ([`project`]) or merged from shards ([`merge_shards`]), the same code
/// from there on. The few ensembles that solve the toy days always run in
/// this process (whole, from the run's seed), reporting to `progress`.
pub fn project_from<S: ToySource>(
    model: &Model,
    settings: &ProjectionSettings,
    source: &mut S,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<Projection, S::Error> {
    let solving = RunToys {
        seed: settings.seed,
        shard: ShardSpec::WHOLE,
        scan: settings.scan.as_ref(),
        progress,
    };
    project_with(model, settings, source, solving, Origin::NoLiveTime)
}

/// The projection with the grid's pseudo-experiments from `source` and
/// those of the points that solve the toy days from `solving` (whole
/// ensembles), each solved day lying after `origin`: the one path of
/// [`project_from`] and of a re-plan's conditional projections.
pub fn project_with<S: ToySource, T: ToySource<Error = ProjectionError>>(
    model: &Model,
    settings: &ProjectionSettings,
    source: &mut S,
    solving: T,
    origin: Origin,
) -> Result<Projection, S::Error> {
    let likelihood = Likelihood::new(model);
    let mut asimov = AsimovSignificance::new(&likelihood);
    let channel_models = channels_alone(model);
    let channel_likelihoods: Vec<Likelihood> = channel_models.iter().map(Likelihood::new).collect();
    let mut channels: Vec<ChannelAlone> =
        channel_likelihoods.iter().map(ChannelAlone::new).collect();
    let runner = point::PointRunner::new(&likelihood, settings);
    let (points, at_points) = points(&runner, &mut asimov, &mut channels, settings, source)?;
    let mut solver = DaySolver::new(&runner, solving, origin);
    let days_to_target = days::days_to_targets(
        model,
        &mut asimov,
        &mut solver,
        &points,
        &settings.targets,
        settings.scan.is_some(),
    )?;
    let days_to_exclusion = match settings.cl {
        Some(cl) => {
            days::days_to_exclusion(&likelihood, &mut asimov, &mut solver, &points, 1.0 - cl)?
        }
        None => DaysToExclusion::default(),
    };
    let solving_points = solver.points_with_toys();
    Ok(Projection {
        title: settings.title.clone(),
        start: model.live_time.start(),
        day_spacing: settings.day_spacing,
        rate_stretches: RateStretch::of(&model.live_time),
        seed: settings.seed,
        toys: settings.toys,
        targets: settings.targets.clone(),
        cl: settings.cl,
        calibration_toys: settings.calibration_toys,
        at: at_points
            .into_iter()
            .map(|point| AtDay::new(point, model.nominal_rates().0, settings.detector_mass_kg))
            .collect(),
        scan: settings
            .scan
            .as_ref()
            .map(|scan| ScanSummary::of(scan, settings)),
        points,
        days_to_target,
        days_to_exclusion,
        solving_points,
    })
}

/// The model of each channel alone when there are several; none for one.
fn channels_alone(model: &Model) -> Vec<Model> {
    match model.channels.len() {
        1 => Vec::new(),
        channels => (0..channels)
            .map(|index| model.channel_alone(index))
            .collect(),
    }
}

/// The first exposure index of the `--at` days: the point at `--at` day j
/// (in increasing order) keys its random streams with `AT_EXPOSURE_INDEX + j`,
/// far above any grid index ([`MAX_GRID_POINTS`](crate::scenario::limits::MAX_GRID_POINTS)),
/// so asking for a day changes no number of the grid, and the grid changes
/// no number of that day.
pub const AT_EXPOSURE_INDEX: usize = 1 << 31;

/// The pseudo-experiments of every grid point and `--at` day of `settings`
/// on `model`, from `source`, in the order of [`points`]: what a shard runs
/// and records (the days solved run only where the shards are merged).
pub(crate) fn grid_toys<S: ToySource>(
    model: &Model,
    settings: &ProjectionSettings,
    source: &mut S,
) -> Result<(), S::Error> {
    let likelihood = Likelihood::new(model);
    let mut asimov = AsimovSignificance::new(&likelihood);
    let runner = point::PointRunner::new(&likelihood, settings);
    points(&runner, &mut asimov, &mut [], settings, source)?;
    Ok(())
}

/// The exposure point at every grid day, in grid order, then at every
/// `--at` day, in increasing order: the order in which pseudo-experiments
/// run, are written to shards and are merged.
fn points<S: ToySource>(
    runner: &point::PointRunner,
    asimov: &mut AsimovSignificance,
    channels: &mut [ChannelAlone],
    settings: &ProjectionSettings,
    source: &mut S,
) -> Result<(Vec<ExposurePoint>, Vec<ExposurePoint>), S::Error> {
    let mut run = |first_index: usize, days: &[f64]| {
        days.iter()
            .enumerate()
            .map(|(index, &days)| {
                let index = first_index + index;
                runner.point(asimov, channels, index, days, PointParts::ALL, source)
            })
            .collect::<Result<Vec<_>, _>>()
    };
    let grid = run(0, &settings.days)?;
    let at = run(AT_EXPOSURE_INDEX, &settings.at_days)?;
    Ok((grid, at))
}
