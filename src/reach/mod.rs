//! Reach over a position scan: at every scan position and requested exposure,
//! the expected upper limit on the signal rate and the signal rates the
//! median local and global significance need to reach each target.
//!
//! Everything runs through the one engine: the model of the scenario with
//! its signal peak moved to the position (`Scenario::with_signal_at`), the
//! asymptotic CLs limits of `limits::asymptotic_limits` (Cowan, Cranmer,
//! Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, eqs. 88-89), and the
//! Asimov discovery fit of `likelihood::DiscoveryTest` (sec. 5.1; eq. 97 for
//! one bin). Rates are in signal events per live day, the unit of
//! `signal.events_per_day`: a signal strength mu is the rate mu times that.
//! The global significance comes from the asymptotic mean number of
//! upcrossings of the exposure (`upcrossings`): the local target Z_local with
//! p_local + E N(Z_local) = p(target) (Gross and Vitells, Eur. Phys. J. C 70
//! (2010) 525).

use crate::ensemble::{EnsembleOutcome, EnsemblePlan};
use crate::likelihood::{DiscoveryTest, FitFailure, Likelihood};
use crate::limits::{asymptotic_limits, toy_limit_ensemble};
use crate::look_elsewhere::REFERENCE_LEVEL;
use crate::model::{Model, SIGNAL_STRENGTH};
use crate::numeric::{Crossing, solve_increasing};
use crate::projection::{BAND_QUANTILES, quantile};
use crate::scenario::{Scenario, SignalScan};
use crate::upcrossings::{ScanGeometry, UpcrossingError, scan_geometry_of};
use rayon::prelude::*;
use std::fmt;

/// What to compute.
#[derive(Debug, Clone, PartialEq)]
pub struct ReachSettings {
    /// Calendar days of each exposure, in the order given.
    pub days: Vec<f64>,
    /// Confidence level of the limits.
    pub cl: f64,
    /// Significance targets.
    pub targets: Vec<f64>,
    /// Background-only pseudo-experiments per position and exposure for the
    /// toy limits; 0 for none.
    pub toys: usize,
    pub seed: u64,
}

/// The reach of a scenario's scan.
#[derive(Debug, Clone, PartialEq)]
pub struct Reach {
    pub title: String,
    pub seed: u64,
    pub cl: f64,
    pub targets: Vec<f64>,
    /// The scenario's own signal rate and position, drawn for reference.
    pub signal_rate: f64,
    pub signal_position: f64,
    pub unit: String,
    pub exposures: Vec<ExposureReach>,
}

/// The reach at one exposure.
#[derive(Debug, Clone, PartialEq)]
pub struct ExposureReach {
    pub days: f64,
    pub live_days: f64,
    /// E N at the reference level from the Asimov geometry.
    pub mean_upcrossings_asimov: f64,
    /// The level of q0 at which `mean_upcrossings_asimov` is given.
    pub reference_level: f64,
    /// The local significance whose global significance is each target.
    pub global_local_targets: Vec<f64>,
    pub positions: Vec<PositionReach>,
}

/// The reach at one position and exposure; None where not computed or unbounded.
#[derive(Debug, Clone, PartialEq)]
pub struct PositionReach {
    pub position: f64,
    pub width: f64,
    /// Median expected CLs limit on the rate, and its band at -2, -1, +1, +2 sigma.
    pub limit_rate_asimov: Option<f64>,
    pub limit_rate_asimov_band: Option<[f64; 4]>,
    /// Median and band of the pseudo-experiment limits (with toys).
    pub limit_rate_median: Option<f64>,
    pub limit_rate_band: Option<[f64; 4]>,
    /// Pseudo-experiments whose limit fit failed.
    pub limit_failed_fits: usize,
    /// The rate where the median local significance reaches each target.
    pub discovery_rate_local: Vec<Option<f64>>,
    /// The rate where the median global significance reaches each target.
    pub discovery_rate_global: Vec<Option<f64>>,
}

/// An asymptotic fit or the scan geometry failed: the reach cannot be trusted.
#[derive(Debug, Clone, PartialEq)]
pub enum ReachError {
    /// The scenario has no `signal.scan`.
    NoScan,
    Fit {
        position: f64,
        live_days: f64,
        what: &'static str,
        failure: FitFailure,
    },
    Geometry {
        live_days: f64,
        failure: UpcrossingError,
    },
}

impl fmt::Display for ReachError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ReachError::NoScan => write!(
                f,
                "signal.scan: missing; reach needs the positions to scan, e.g. scan: {{from: 10.0, to: 90.0}}"
            ),
            ReachError::Fit {
                position,
                live_days,
                what,
                failure,
            } => write!(
                f,
                "the {what} at position {position} after {live_days} live days failed: {failure}"
            ),
            ReachError::Geometry { live_days, failure } => write!(
                f,
                "the look-elsewhere geometry after {live_days} live days: {failure}"
            ),
        }
    }
}

impl std::error::Error for ReachError {}

/// The reach of `scenario` over its scan. `progress` is called with the
/// number of positions (times exposures) just finished and, with toys, of
/// pseudo-experiments.
pub fn reach(
    scenario: &Scenario,
    settings: &ReachSettings,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<Reach, ReachError> {
    let scan = scenario.signal_scan().ok_or(ReachError::NoScan)?;
    let model = Model::from_scenario(scenario);
    let live_time = &model.live_time;
    let exposures = settings
        .days
        .iter()
        .enumerate()
        .map(|(index, &days)| {
            let live_days = live_time.live_days(days);
            let geometry = geometry_at(&model, &scan, live_days)?;
            let global_local_targets: Vec<f64> = settings
                .targets
                .iter()
                .map(|&target| geometry.local_significance_for(target))
                .collect();
            let positions = scan
                .positions()
                .collect::<Vec<f64>>()
                .par_iter()
                .map(|&position| {
                    let width = scan.width_at(position);
                    let moved =
                        Model::from_scenario(&scenario.with_signal_at(&scan, position, width));
                    let runner = PositionRunner {
                        likelihood: Likelihood::new(&moved),
                        settings,
                        live_days,
                        exposure_index: index,
                        rate: scenario.signal().events_per_day,
                    };
                    let result = runner.reach(position, width, &global_local_targets, progress);
                    progress(1);
                    result
                })
                .collect::<Result<Vec<_>, _>>()?;
            Ok(ExposureReach {
                days,
                live_days,
                mean_upcrossings_asimov: geometry.reference_upcrossings(),
                reference_level: REFERENCE_LEVEL,
                global_local_targets,
                positions,
            })
        })
        .collect::<Result<Vec<_>, _>>()?;
    Ok(Reach {
        title: scenario.title.clone(),
        seed: settings.seed,
        cl: settings.cl,
        targets: settings.targets.clone(),
        signal_rate: scenario.signal().events_per_day,
        signal_position: scan_centre(scenario),
        unit: scenario.observable().unit.clone(),
        exposures,
    })
}

/// The scenario's own signal position (its peak's centre).
fn scan_centre(scenario: &Scenario) -> f64 {
    let shape =
        crate::model::shape_from_spec(&scenario.signal().shape, scenario.observable().range);
    shape.peak().map_or(f64::NAN, |peak| peak.centre)
}

/// The Asimov geometry of the scan after `live_days`.
pub fn geometry_at(
    model: &Model,
    scan: &SignalScan,
    live_days: f64,
) -> Result<ScanGeometry, ReachError> {
    scan_geometry_of(&Likelihood::new(model), scan, live_days)
        .map_err(|failure| ReachError::Geometry { live_days, failure })
}

/// Everything at one position and exposure.
struct PositionRunner<'m, 's> {
    likelihood: Likelihood<'m>,
    settings: &'s ReachSettings,
    live_days: f64,
    exposure_index: usize,
    /// The scenario's signal rate: mu = 1.
    rate: f64,
}

impl PositionRunner<'_, '_> {
    fn reach(
        &self,
        position: f64,
        width: f64,
        global_local_targets: &[f64],
        progress: &(dyn Fn(u64) + Sync),
    ) -> Result<PositionReach, ReachError> {
        let failed = |what| {
            move |failure| ReachError::Fit {
                position,
                live_days: self.live_days,
                what,
                failure,
            }
        };
        let alpha = 1.0 - self.settings.cl;
        let limits = asymptotic_limits(&self.likelihood, self.live_days, alpha)
            .map_err(failed("asymptotic limit"))?;
        let as_rate = |mu: f64| mu.is_finite().then_some(mu * self.rate);
        let mut discovery = DiscoveryTest::new(&self.likelihood);
        let mut rate_for = |z: f64| {
            self.discovery_strength(&mut discovery, z)
                .map(|mu| mu.map(|mu| mu * self.rate))
                .map_err(failed("Asimov discovery fit"))
        };
        let discovery_rate_local = self
            .settings
            .targets
            .iter()
            .map(|&z| rate_for(z))
            .collect::<Result<Vec<_>, _>>()?;
        let discovery_rate_global = global_local_targets
            .iter()
            .map(|&z| rate_for(z))
            .collect::<Result<Vec<_>, _>>()?;
        let (limit_rate_median, limit_rate_band, limit_failed_fits) =
            match (self.settings.toys, limits.median.is_finite()) {
                (0, _) | (_, false) => (None, None, 0),
                (toys, true) => {
                    let plan = EnsemblePlan {
                        toys: 0..toys,
                        seed: self.settings.seed,
                        progress,
                    };
                    let outcome = toy_limit_ensemble(
                        &self.likelihood,
                        self.live_days,
                        self.exposure_index,
                        &plan,
                        alpha,
                        limits.sigma,
                    );
                    toy_limit_summary(&outcome, self.rate)
                }
            };
        Ok(PositionReach {
            position,
            width,
            limit_rate_asimov: as_rate(limits.median),
            limit_rate_asimov_band: bounded(limits.band.map(|mu| mu * self.rate)),
            limit_rate_median,
            limit_rate_band,
            limit_failed_fits,
            discovery_rate_local,
            discovery_rate_global,
        })
    }

    /// The signal strength whose Asimov dataset gives Z_A = `z`, or None when
    /// none does.
    fn discovery_strength(
        &self,
        test: &mut DiscoveryTest,
        z: f64,
    ) -> Result<Option<f64>, FitFailure> {
        let model = self.likelihood.model();
        let mut theta = model.nominal_parameters();
        // From z sqrt(b)/s where that is below the nominal signal: the fits of
        // a huge signal at mu = 1, far from the answer, need not converge.
        let guess = (z * model.counting_sigma(self.live_days)).min(1.0);
        let crossing = solve_increasing(guess, z, |mu| {
            theta[SIGNAL_STRENGTH] = mu;
            let data =
                self.likelihood
                    .asimov_dataset(&theta, self.live_days, test.fitter().workspace());
            Ok(test.fit(self.live_days, &data)?.q0.sqrt())
        })?;
        Ok(match crossing {
            Crossing::At(mu) => Some(mu),
            Crossing::OutOfReach => None,
            Crossing::AtOrigin | Crossing::NoRoot => return Err(FitFailure::NoCrossing),
        })
    }
}

/// Median and band (`BAND_QUANTILES`) of the toy limits as rates, and the
/// failed fits; as in `projection`, an unbounded median or band edge is
/// reported as absent.
fn toy_limit_summary(
    outcome: &EnsembleOutcome,
    rate: f64,
) -> (Option<f64>, Option<[f64; 4]>, usize) {
    let mut limits = outcome.values.clone();
    limits.sort_by(f64::total_cmp);
    if limits.is_empty() {
        return (None, None, outcome.failed_fits);
    }
    let median = quantile(&limits, 0.5) * rate;
    let band = BAND_QUANTILES.map(|p| quantile(&limits, p) * rate);
    (
        median.is_finite().then_some(median),
        bounded(band),
        outcome.failed_fits,
    )
}

/// The band, when all its edges are bounded.
fn bounded(band: [f64; 4]) -> Option<[f64; 4]> {
    band.iter().all(|edge| edge.is_finite()).then_some(band)
}
