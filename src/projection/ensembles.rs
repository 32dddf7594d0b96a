//! The pseudo-experiments of one grid point: what the point asks for, and
//! what comes back, whether run here, run as a shard, or merged from shards.

use super::ProjectionError;
use super::shard::ShardSpec;
use crate::ensemble::{
    EnsembleOutcome, EnsemblePlan, background_only_q0_ensemble, discovery_ensemble,
};
use crate::likelihood::Likelihood;
use crate::limits::toy_limit_ensemble;

/// The ensembles one grid point with live time needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PointRequest {
    /// Grid index, which keys the random streams.
    pub index: usize,
    pub live_days: f64,
    /// Discovery pseudo-experiments (mu = 1); 0 for none.
    pub discovery_toys: usize,
    /// Background-only pseudo-experiments for expected limits, when they run.
    pub limits: Option<LimitRequest>,
    /// Background-only pseudo-experiments calibrating the Asimov q0, when asked.
    pub calibration: Option<CalibrationRequest>,
}

/// Limit pseudo-experiments at one point: how many, at which CLs level, with
/// the Asimov sigma_A of the asymptotic CLs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LimitRequest {
    pub toys: usize,
    pub alpha: f64,
    pub sigma: f64,
}

/// Calibration pseudo-experiments at one point and the Asimov q0 they count against.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CalibrationRequest {
    pub toys: usize,
    pub q0_asimov: f64,
}

/// The outcomes of a point's ensembles (of a whole ensemble or of a shard's part).
///
/// Discovery significances and limits are kept toy by toy, since quantiles
/// need every value; the calibration is kept as exact counts, since its
/// p-value needs only how many toys reached the Asimov q0.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PointToys {
    pub discovery: Option<EnsembleOutcome>,
    pub limits: Option<EnsembleOutcome>,
    pub calibration: Option<CalibrationCount>,
}

/// Background-only pseudo-experiments counted against the Asimov q0.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct CalibrationCount {
    /// Pseudo-experiments whose fits converged.
    pub converged: usize,
    /// Converged pseudo-experiments with q0 >= the Asimov q0.
    pub exceeding: usize,
    pub failed_fits: usize,
}

impl CalibrationCount {
    /// Counts the converged q0 values at or above `q0_asimov`.
    pub fn of(outcome: &EnsembleOutcome, q0_asimov: f64) -> CalibrationCount {
        CalibrationCount {
            converged: outcome.values.len(),
            exceeding: outcome.values.iter().filter(|&&q0| q0 >= q0_asimov).count(),
            failed_fits: outcome.failed_fits,
        }
    }

    /// Pseudo-experiments counted, converged or not.
    pub fn toys(&self) -> usize {
        self.converged + self.failed_fits
    }
}

impl PointToys {
    /// Appends the outcomes of the next part of the same ensembles (toy
    /// indices following those already held), so that parts appended in
    /// order hold the whole ensembles' values in toy order.
    pub fn append(&mut self, next: PointToys) {
        append_outcome(&mut self.discovery, next.discovery);
        append_outcome(&mut self.limits, next.limits);
        self.calibration = match (self.calibration, next.calibration) {
            (Some(held), Some(next)) => Some(CalibrationCount {
                converged: held.converged + next.converged,
                exceeding: held.exceeding + next.exceeding,
                failed_fits: held.failed_fits + next.failed_fits,
            }),
            (held, next) => held.or(next),
        };
    }
}

fn append_outcome(held: &mut Option<EnsembleOutcome>, next: Option<EnsembleOutcome>) {
    match (held.as_mut(), next) {
        (Some(held), Some(next)) => {
            held.values.extend(next.values);
            held.failed_fits += next.failed_fits;
        }
        (None, next) => *held = next,
        (Some(_), None) => {}
    }
}

/// Where a projection's pseudo-experiments come from: run in this process
/// ([`RunToys`]), or read from the shards of a sharded run.
pub trait ToySource {
    type Error: From<ProjectionError>;

    /// The outcomes of the ensembles `request` asks for.
    fn toys(
        &mut self,
        likelihood: &Likelihood,
        request: &PointRequest,
    ) -> Result<PointToys, Self::Error>;

    /// An ensemble of `toys` pseudo-experiments that is not run (no live time,
    /// or no bounded limit to test), for progress reporting.
    fn skip(&mut self, toys: usize);
}

/// Runs a shard's part of each ensemble (the whole ensemble for
/// [`ShardSpec::WHOLE`]) in this process, reporting progress.
pub struct RunToys<'a> {
    pub seed: u64,
    pub shard: ShardSpec,
    pub progress: &'a (dyn Fn(u64) + Sync),
}

impl RunToys<'_> {
    fn plan(&self, toys: usize) -> EnsemblePlan<'_> {
        EnsemblePlan {
            toys: self.shard.toys(toys),
            seed: self.seed,
            progress: self.progress,
        }
    }
}

impl ToySource for RunToys<'_> {
    type Error = ProjectionError;

    fn toys(
        &mut self,
        likelihood: &Likelihood,
        request: &PointRequest,
    ) -> Result<PointToys, ProjectionError> {
        let (index, live_days) = (request.index, request.live_days);
        let discovery = (request.discovery_toys > 0).then(|| {
            discovery_ensemble(
                likelihood,
                live_days,
                index,
                &self.plan(request.discovery_toys),
            )
        });
        let limits = request.limits.map(|limits| {
            toy_limit_ensemble(
                likelihood,
                live_days,
                index,
                &self.plan(limits.toys),
                limits.alpha,
                limits.sigma,
            )
        });
        let calibration = request.calibration.map(|calibration| {
            let plan = self.plan(calibration.toys);
            let outcome = background_only_q0_ensemble(likelihood, live_days, index, &plan);
            CalibrationCount::of(&outcome, calibration.q0_asimov)
        });
        Ok(PointToys {
            discovery,
            limits,
            calibration,
        })
    }

    fn skip(&mut self, toys: usize) {
        (self.progress)(self.shard.toys(toys).len() as u64);
    }
}
