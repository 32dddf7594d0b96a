//! Reach over a position scan: at every scan position and requested exposure,
//! the expected upper limit on the signal rate and the signal rates the
//! median local and global significance need to reach each target.
//!
//! Everything runs through the one engine: the model of the scenario with
//! its signal peak moved to the position (`Scenario::with_signal_at`), the
//! asymptotic CLs limits of `limits::asymptotic_limits` (Cowan, Cranmer,
//! Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, eqs. 88-89), and the
//! Asimov discovery fit of `likelihood::DiscoveryTest` (sec. 5.1; eq. 97 for
//! one bin). Rates are in the signal's own unit: events per live day of
//! `signal.events_per_day`, or, with a detector-level signal, the unit it
//! is written in (events per kg·day for `events_per_kg_day`); a signal
//! strength mu is the rate mu times the scenario's. With several channels
//! every position also gives each channel alone (`Model::channel_alone`),
//! so a plan sees what each contributes.
//! The global significance comes from the asymptotic mean number of
//! upcrossings of the exposure (`upcrossings`): the local target Z_local with
//! p_local + E N(Z_local) = p(target) (Gross and Vitells, Eur. Phys. J. C 70
//! (2010) 525).

use crate::ensemble::{EnsembleOutcome, EnsemblePlan};
use crate::likelihood::{AsimovDiscovery, FitFailure, Likelihood};
use crate::limits::{asymptotic_limits, asymptotic_median_limit, toy_limit_ensemble};
use crate::look_elsewhere::REFERENCE_LEVEL;
use crate::message::show_rounded;
use crate::model::Model;
use crate::numeric::Crossing;
use crate::projection::{BAND_QUANTILES, quantile};
use crate::scenario::Scenario;
use crate::upcrossings::{GeometryTable, ScanGeometry, UpcrossingError};
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
    /// The unit of every rate, e.g. "events per kg·day".
    pub rate_unit: String,
    /// The observable's unit.
    pub unit: String,
    /// The channels' names, in order; one name for a single channel.
    pub channel_names: Vec<String>,
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
    /// With several channels, each channel alone (empty for one channel).
    pub channels: Vec<ChannelReach>,
}

/// One channel alone at a position and exposure: its median expected limit
/// and the rates where its local median significance reaches each target.
#[derive(Debug, Clone, PartialEq)]
pub struct ChannelReach {
    pub width: f64,
    pub limit_rate_asimov: Option<f64>,
    pub discovery_rate_local: Vec<Option<f64>>,
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
                "the {what} at position {} after {} live days failed: {failure}",
                show_rounded(*position),
                show_rounded(*live_days)
            ),
            ReachError::Geometry { live_days, failure } => write!(
                f,
                "the look-elsewhere geometry after {} live days: {failure}",
                show_rounded(*live_days)
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
    let (rate, rate_unit) = signal_rate(scenario);
    let live_time = &model.live_time;
    // The geometry of every exposure first (from one table), then every
    // position with all exposures, so that each position's models are
    // built once and no thread waits at the end of an exposure.
    let likelihood = Likelihood::new(&model);
    let table = GeometryTable::of_scan(&likelihood, &scan);
    let geometries = settings
        .days
        .iter()
        .map(|&days| {
            let live_days = live_time.live_days(days);
            let geometry = geometry_at(&table, live_days)?;
            let global_local_targets: Vec<f64> = settings
                .targets
                .iter()
                .map(|&target| geometry.local_significance_for(target))
                .collect();
            Ok((live_days, geometry, global_local_targets))
        })
        .collect::<Result<Vec<_>, ReachError>>()?;
    let by_position = scan
        .positions()
        .collect::<Vec<f64>>()
        .par_iter()
        .map(|&position| {
            let moved = Model::from_scenario(&scenario.with_signal_at(&scan, position));
            let likelihood = Likelihood::new(&moved);
            let several = moved.channels.len() > 1;
            let alone: Vec<Option<Model>> = (0..moved.channels.len())
                .map(|channel| {
                    let blind = scenario.channels[channel].signal.events_per_day == 0.0;
                    (several && !blind).then(|| moved.channel_alone(channel))
                })
                .collect();
            let alone_likelihoods: Vec<Option<Likelihood>> = alone
                .iter()
                .map(|model| model.as_ref().map(Likelihood::new))
                .collect();
            geometries
                .iter()
                .enumerate()
                .map(|(index, (live_days, _, global_local_targets))| {
                    let runner = PositionRunner {
                        likelihood: &likelihood,
                        settings,
                        live_days: *live_days,
                        exposure_index: index,
                        rate,
                    };
                    let mut result = runner.reach(
                        position,
                        scan.width_at(0, position),
                        global_local_targets,
                        progress,
                    )?;
                    if several {
                        result.channels = alone_likelihoods
                            .iter()
                            .enumerate()
                            .map(|(channel, alone)| {
                                let width = scan.width_at(channel, position);
                                let Some(alone) = alone else {
                                    return Ok(ChannelReach::blind(width, settings.targets.len()));
                                };
                                let runner = PositionRunner {
                                    likelihood: alone,
                                    ..runner
                                };
                                runner.channel_alone(position, width)
                            })
                            .collect::<Result<_, _>>()?;
                    }
                    progress(1);
                    Ok(result)
                })
                .collect::<Result<Vec<_>, ReachError>>()
        })
        .collect::<Result<Vec<_>, _>>()?;
    let mut positions: Vec<Vec<PositionReach>> = geometries
        .iter()
        .map(|_| Vec::with_capacity(by_position.len()))
        .collect();
    for exposures in by_position {
        for (exposure, result) in positions.iter_mut().zip(exposures) {
            exposure.push(result);
        }
    }
    let exposures = settings
        .days
        .iter()
        .zip(geometries)
        .zip(positions)
        .map(
            |((&days, (live_days, geometry, global_local_targets)), positions)| ExposureReach {
                days,
                live_days,
                mean_upcrossings_asimov: geometry.reference_upcrossings(),
                reference_level: REFERENCE_LEVEL,
                global_local_targets,
                positions,
            },
        )
        .collect();
    Ok(Reach {
        title: scenario.title.clone(),
        seed: settings.seed,
        cl: settings.cl,
        targets: settings.targets.clone(),
        signal_rate: rate,
        signal_position: scan_centre(scenario),
        rate_unit,
        unit: scenario.observable().unit.clone(),
        channel_names: scenario
            .channels
            .iter()
            .map(|channel| channel.name.clone())
            .collect(),
        exposures,
    })
}

impl ChannelReach {
    /// A channel that does not see the signal (efficiency 0): no limit, no rate.
    fn blind(width: f64, targets: usize) -> ChannelReach {
        ChannelReach {
            width,
            limit_rate_asimov: None,
            discovery_rate_local: vec![None; targets],
        }
    }
}

/// The scenario's signal rate (signal strength 1) and its unit: the
/// detector-level rate as written, or the first channel's events per live day.
fn signal_rate(scenario: &Scenario) -> (f64, String) {
    match &scenario.detector_signal {
        Some(signal) => (signal.rate, signal.unit_label()),
        None => (
            scenario.signal().events_per_day,
            "events per live day".to_string(),
        ),
    }
}

/// The unit of every rate of the reach of `scenario` ([`Reach::rate_unit`]),
/// known before anything is fitted: plans compared by their reach must share it.
pub fn rate_unit(scenario: &Scenario) -> String {
    signal_rate(scenario).1
}

/// The scenario's own signal position (its peak's centre).
fn scan_centre(scenario: &Scenario) -> f64 {
    let shape =
        crate::model::shape_from_spec(&scenario.signal().shape, scenario.observable().range);
    shape.peak().map_or(f64::NAN, |peak| peak.centre)
}

/// The Asimov geometry of the scan after `live_days`, from its `table`.
fn geometry_at(table: &GeometryTable, live_days: f64) -> Result<ScanGeometry, ReachError> {
    table
        .at(live_days)
        .map_err(|failure| ReachError::Geometry { live_days, failure })
}

/// Everything at one position and exposure.
#[derive(Clone, Copy)]
struct PositionRunner<'l, 'm, 's> {
    likelihood: &'l Likelihood<'m>,
    settings: &'s ReachSettings,
    live_days: f64,
    exposure_index: usize,
    /// The scenario's signal rate: mu = 1.
    rate: f64,
}

impl PositionRunner<'_, '_, '_> {
    /// The error of a failed `what` at `position` and this exposure.
    fn fit_failed(&self, position: f64, what: &'static str) -> impl Fn(FitFailure) -> ReachError {
        let live_days = self.live_days;
        move |failure| ReachError::Fit {
            position,
            live_days,
            what,
            failure,
        }
    }

    fn reach(
        &self,
        position: f64,
        width: f64,
        global_local_targets: &[f64],
        progress: &(dyn Fn(u64) + Sync),
    ) -> Result<PositionReach, ReachError> {
        let failed = |what| self.fit_failed(position, what);
        let alpha = 1.0 - self.settings.cl;
        let limits = asymptotic_limits(self.likelihood, self.live_days, alpha)
            .map_err(failed("asymptotic limit"))?;
        let as_rate = |mu: f64| mu.is_finite().then_some(mu * self.rate);
        let mut discovery = DiscoveryRates::new(self);
        let discovery_rate_local = discovery
            .rates(&self.settings.targets)
            .map_err(failed("Asimov discovery fit"))?;
        let discovery_rate_global = discovery
            .rates(global_local_targets)
            .map_err(failed("Asimov discovery fit"))?;
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
                        self.likelihood,
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
            channels: Vec::new(),
        })
    }

    /// One channel alone (this runner's likelihood is its model): the median
    /// Asimov limit and local discovery rates.
    fn channel_alone(&self, position: f64, width: f64) -> Result<ChannelReach, ReachError> {
        let failed = |what| self.fit_failed(position, what);
        let limit =
            asymptotic_median_limit(self.likelihood, self.live_days, 1.0 - self.settings.cl)
                .map_err(failed("asymptotic limit of one channel"))?;
        let discovery_rate_local = DiscoveryRates::new(self)
            .rates(&self.settings.targets)
            .map_err(failed("Asimov discovery fit of one channel"))?;
        Ok(ChannelReach {
            width,
            limit_rate_asimov: limit.is_finite().then_some(limit * self.rate),
            discovery_rate_local,
        })
    }
}

/// The rates where the Asimov significance at one position and exposure
/// reaches each of a series of levels, one Newton search each
/// ([`AsimovDiscovery::strength_for`]). The first search starts from
/// z sqrt(b)/s where that is below the nominal signal (the fits of a huge
/// signal at mu = 1, far from the answer, need not converge); each later
/// one from the last root scaled by the ratio of the levels, as Z_A is
/// nearly proportional to the signal.
struct DiscoveryRates<'l, 'm> {
    discovery: AsimovDiscovery<'l, 'm>,
    live_days: f64,
    /// The scenario's signal rate: mu = 1.
    rate: f64,
    counting_sigma: f64,
    /// The last (level, signal strength) found.
    last: Option<(f64, f64)>,
}

impl<'l, 'm> DiscoveryRates<'l, 'm> {
    fn new(runner: &PositionRunner<'l, 'm, '_>) -> DiscoveryRates<'l, 'm> {
        let likelihood = runner.likelihood;
        DiscoveryRates {
            discovery: AsimovDiscovery::new(likelihood),
            live_days: runner.live_days,
            rate: runner.rate,
            counting_sigma: likelihood.model().counting_sigma(runner.live_days),
            last: None,
        }
    }

    /// The rate for each of `levels`; None where no signal reaches it.
    fn rates(&mut self, levels: &[f64]) -> Result<Vec<Option<f64>>, FitFailure> {
        levels
            .iter()
            .map(|&z| Ok(self.strength_for(z)?.map(|mu| mu * self.rate)))
            .collect()
    }

    fn strength_for(&mut self, z: f64) -> Result<Option<f64>, FitFailure> {
        let guess = match self.last {
            Some((level, mu)) => mu * z / level,
            None => (z * self.counting_sigma).min(1.0),
        };
        match self.discovery.strength_for(self.live_days, z, guess)? {
            Crossing::At(mu) => {
                self.last = Some((z, mu));
                Ok(Some(mu))
            }
            Crossing::OutOfReach => Ok(None),
            Crossing::AtOrigin | Crossing::NoRoot => Err(FitFailure::NoCrossing),
        }
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
