//! The pseudo-experiments of one grid point: what the point asks for, and
//! what comes back, whether run here, run as a shard, or merged from shards.

use super::ProjectionError;
use super::shard::ShardSpec;
use crate::ensemble::{
    EnsembleOutcome, EnsemblePlan, ScanToy, background_only_q0_ensemble, discovery_ensemble,
    look_elsewhere_ensemble,
};
use crate::likelihood::Likelihood;
use crate::limits::toy_limit_ensemble;
use crate::scenario::SignalScan;

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
    /// Background-only pseudo-experiments scanned over the signal positions,
    /// with a scan and look-elsewhere toys.
    pub look_elsewhere: Option<LookElsewhereRequest>,
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

/// Look-elsewhere pseudo-experiments at one point: how many, the level
/// whose upcrossings they count, and the Asimov q0 their largest q0 is
/// compared with.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LookElsewhereRequest {
    pub toys: usize,
    pub reference_level: f64,
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
    pub look_elsewhere: Option<LookElsewhereCount>,
}

/// Background-only scans counted: exact sums, so shards add up to the
/// unsharded counts and no scan is kept.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct LookElsewhereCount {
    /// Scans whose fits all converged.
    pub converged: usize,
    /// Sum over converged scans of their upcrossings of the reference level.
    pub upcrossings: u64,
    /// Sum of the squares of the upcrossings, for their standard error.
    pub upcrossings_squared: u64,
    /// Converged scans whose largest q0 is at or above the Asimov q0.
    pub exceeding: usize,
    pub failed_fits: usize,
}

impl LookElsewhereCount {
    /// Counts the converged scans of `outcome` against `q0_asimov`.
    pub fn of(outcome: &EnsembleOutcome<ScanToy>, q0_asimov: f64) -> LookElsewhereCount {
        let upcrossings = outcome.values.iter().map(|toy| u64::from(toy.upcrossings));
        LookElsewhereCount {
            converged: outcome.values.len(),
            upcrossings: upcrossings.clone().sum(),
            upcrossings_squared: upcrossings.map(|n| n * n).sum(),
            exceeding: outcome
                .values
                .iter()
                .filter(|toy| toy.max_q0 >= q0_asimov)
                .count(),
            failed_fits: outcome.failed_fits,
        }
    }

    /// The counts of both parts; Err names the first that would overflow.
    fn add(self, next: LookElsewhereCount) -> Result<LookElsewhereCount, &'static str> {
        Ok(LookElsewhereCount {
            converged: self
                .converged
                .checked_add(next.converged)
                .ok_or("look_elsewhere.converged")?,
            upcrossings: self
                .upcrossings
                .checked_add(next.upcrossings)
                .ok_or("look_elsewhere.upcrossings")?,
            upcrossings_squared: self
                .upcrossings_squared
                .checked_add(next.upcrossings_squared)
                .ok_or("look_elsewhere.upcrossings_squared")?,
            exceeding: self
                .exceeding
                .checked_add(next.exceeding)
                .ok_or("look_elsewhere.exceeding")?,
            failed_fits: self
                .failed_fits
                .checked_add(next.failed_fits)
                .ok_or("look_elsewhere.failed_fits")?,
        })
    }
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

    /// The counts of both parts; Err names the first that would overflow.
    fn add(self, next: CalibrationCount) -> Result<CalibrationCount, &'static str> {
        Ok(CalibrationCount {
            converged: self
                .converged
                .checked_add(next.converged)
                .ok_or("calibration.converged")?,
            exceeding: self
                .exceeding
                .checked_add(next.exceeding)
                .ok_or("calibration.exceeding")?,
            failed_fits: self
                .failed_fits
                .checked_add(next.failed_fits)
                .ok_or("calibration.failed_fits")?,
        })
    }
}

impl PointToys {
    /// Appends the outcomes of the next part of the same ensembles (toy
    /// indices following those already held), so that parts appended in
    /// order hold the whole ensembles' values in toy order. The counts are
    /// added without wrapping: Err names the first that would overflow
    /// (only parts whose counts were not checked against their totals can).
    pub fn append(&mut self, next: PointToys) -> Result<(), &'static str> {
        append_outcome(&mut self.discovery, next.discovery, "discovery.failed_fits")?;
        append_outcome(&mut self.limits, next.limits, "limits.failed_fits")?;
        self.calibration = match (self.calibration, next.calibration) {
            (Some(held), Some(next)) => Some(held.add(next)?),
            (held, next) => held.or(next),
        };
        self.look_elsewhere = match (self.look_elsewhere, next.look_elsewhere) {
            (Some(held), Some(next)) => Some(held.add(next)?),
            (held, next) => held.or(next),
        };
        Ok(())
    }
}

fn append_outcome(
    held: &mut Option<EnsembleOutcome>,
    next: Option<EnsembleOutcome>,
    failed_field: &'static str,
) -> Result<(), &'static str> {
    match (held.as_mut(), next) {
        (Some(held), Some(next)) => {
            held.failed_fits = held
                .failed_fits
                .checked_add(next.failed_fits)
                .ok_or(failed_field)?;
            held.values.extend(next.values);
        }
        (None, next) => *held = next,
        (Some(_), None) => {}
    }
    Ok(())
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
    /// The scan the look-elsewhere pseudo-experiments fit, when there is one.
    pub scan: Option<&'a SignalScan>,
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
        let look_elsewhere = request
            .look_elsewhere
            .zip(self.scan)
            .map(|(request, scan)| {
                let plan = self.plan(request.toys);
                let outcome = look_elsewhere_ensemble(
                    likelihood,
                    scan,
                    live_days,
                    index,
                    &plan,
                    request.reference_level,
                );
                LookElsewhereCount::of(&outcome, request.q0_asimov)
            });
        Ok(PointToys {
            discovery,
            limits,
            calibration,
            look_elsewhere,
        })
    }

    fn skip(&mut self, toys: usize) {
        (self.progress)(self.shard.toys(toys).len() as u64);
    }
}
