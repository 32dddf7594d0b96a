//! Ensemble: seeded pseudo-experiments at one exposure, fitted in parallel.
//!
//! Every pseudo-experiment draws its own counts from its own random stream,
//! derived from (seed, stream index, toy index) alone, where the stream index
//! names the ensemble family and the grid point; results therefore do not
//! depend on the number of threads or on the order in which toys run.

mod poisson;
mod scan;

pub use scan::{PositionScan, ScanPlacements, ScanToy, UpcrossingCount, look_elsewhere_ensemble};

use crate::likelihood::{Dataset, DiscoveryTest, Likelihood};
use crate::model::Constraint;
use poisson::PoissonCounts;
use rand_distr::{Distribution, Normal};
use rand_pcg::Pcg64;
use rayon::prelude::*;
use std::ops::Range;

/// The random stream of one pseudo-experiment.
///
/// The 128-bit state and stream selector come from SplitMix64 (Steele, Lea,
/// Flood, OOPSLA 2014) applied to the seed and the two indices, so that
/// neighbouring toys and ensembles get unrelated PCG streams (O'Neill, PCG
/// technical report HMC-CS-2014-0905).
pub fn toy_stream(seed: u64, stream_index: u64, toy_index: usize) -> Pcg64 {
    let seed_mix = splitmix64(seed);
    let stream_mix = splitmix64(seed_mix ^ stream_index);
    let toy_mix = splitmix64(stream_mix ^ splitmix64(toy_index as u64));
    let state = (u128::from(seed_mix) << 64) | u128::from(toy_mix);
    let stream = (u128::from(stream_index) << 64) | toy_index as u128;
    Pcg64::new(state, stream)
}

/// The splitmix64 mixing function (Steele, Lea and Flood, OOPSLA 2014):
/// nearby inputs give unrelated outputs.
pub fn splitmix64(value: u64) -> u64 {
    let mut z = value.wrapping_add(0x9E37_79B9_7F4A_7C15);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^ (z >> 31)
}

/// How the global observable of one constraint is drawn.
#[derive(Debug, Clone)]
enum GlobalObservable {
    /// A Gaussian auxiliary measurement.
    Gaussian(Normal<f64>),
    /// A control-region count.
    Count(PoissonCounts),
}

/// Draws pseudo-datasets from the model at fixed generating parameters.
#[derive(Debug, Clone)]
pub struct Generator {
    /// Counts kept as observed in the leading bins ([`Generator::keeping`]); empty otherwise.
    kept_counts: Vec<f64>,
    /// Poisson distribution of each bin's count after the kept ones.
    bins: Vec<PoissonCounts>,
    /// Global observables kept as observed; None to draw them.
    kept_global_observables: Option<Vec<f64>>,
    /// Distribution of each constraint's global observable.
    global_observables: Vec<GlobalObservable>,
}

impl Generator {
    /// A generator for the model at `theta` after `live_days`: counts are
    /// Poisson with the expected mean per bin, each Gaussian global observable is
    /// drawn from N(theta_p, width) and each control-region count from its Poisson
    /// distribution (Cowan et al., Eur. Phys. J. C 71 (2011) 1554, sec. 2).
    pub fn new(likelihood: &Likelihood, theta: &[f64], live_days: f64) -> Generator {
        let mut work = likelihood.workspace();
        likelihood.expected_counts(theta, live_days, &mut work);
        let bins = work
            .expected
            .iter()
            .map(|&mean| PoissonCounts::new(mean))
            .collect();
        let global_observables = likelihood
            .model()
            .constraints
            .iter()
            .map(|constraint| match *constraint {
                Constraint::Gaussian { parameter, width } => GlobalObservable::Gaussian(
                    Normal::new(theta[parameter], width)
                        .expect("constraint widths are validated positive and finite"),
                ),
                Constraint::ControlRegion { parameter, .. } => {
                    GlobalObservable::Count(PoissonCounts::new(
                        constraint.expected_global_observable(theta[parameter], live_days),
                    ))
                }
            })
            .collect();
        Generator {
            kept_counts: Vec::new(),
            bins,
            kept_global_observables: None,
            global_observables,
        }
    }

    /// The same generator with the data already taken kept as observed: the
    /// leading bins hold `observed.counts` (the first block of
    /// [`Model::taken_and_to_come`](crate::model::Model::taken_and_to_come))
    /// and the global observables `observed.global_observables` (the
    /// auxiliary measurements are made once), so only the bins after them
    /// are drawn. A conditional ensemble (conditional power in sequential
    /// monitoring: Proschan, Lan and Wittes, Statistical Monitoring of
    /// Clinical Trials, Springer 2006, ch. 3).
    pub fn keeping(mut self, observed: &Dataset) -> Generator {
        let kept = observed.counts.len().min(self.bins.len());
        self.bins.drain(..kept);
        self.kept_counts = observed.counts[..kept].to_vec();
        self.kept_global_observables = Some(observed.global_observables.clone());
        self
    }

    /// An empty dataset of the right size, to be filled by [`Generator::draw`].
    pub fn empty_dataset(&self) -> Dataset {
        Dataset {
            counts: vec![0.0; self.kept_counts.len() + self.bins.len()],
            global_observables: vec![0.0; self.global_observables.len()],
        }
    }

    /// Fills `data` with one pseudo-experiment drawn from `rng` (the bins
    /// first, then the global observables; nothing is drawn for what is kept).
    pub fn draw(&self, rng: &mut Pcg64, data: &mut Dataset) {
        let (kept, drawn) = data.counts.split_at_mut(self.kept_counts.len());
        kept.copy_from_slice(&self.kept_counts);
        for (count, poisson) in drawn.iter_mut().zip(&self.bins) {
            *count = poisson.sample(rng);
        }
        if let Some(kept) = &self.kept_global_observables {
            data.global_observables.copy_from_slice(kept);
            return;
        }
        for (value, distribution) in data
            .global_observables
            .iter_mut()
            .zip(&self.global_observables)
        {
            *value = match distribution {
                GlobalObservable::Gaussian(normal) => normal.sample(rng),
                GlobalObservable::Count(poisson) => poisson.sample(rng),
            };
        }
    }
}

/// The values measured on an ensemble at one exposure, with the fits that failed.
#[derive(Debug, Clone, PartialEq)]
pub struct EnsembleOutcome<T = f64> {
    /// The measured value (a significance, an upper limit, a q0, a scan's
    /// summary) of each pseudo-experiment whose fits converged, in toy order.
    pub values: Vec<T>,
    /// Pseudo-experiments whose fits failed after all retries.
    pub failed_fits: usize,
}

/// Which pseudo-experiments, from which seed, with what progress callback.
pub struct EnsemblePlan<'a> {
    /// Indices of the pseudo-experiments to run: `0..toys` for a whole
    /// ensemble, a part of it for a shard (`projection::ShardSpec`).
    pub toys: Range<usize>,
    pub seed: u64,
    /// Called with the number of pseudo-experiments just finished.
    pub progress: &'a (dyn Fn(u64) + Sync),
}

/// The families of pseudo-experiments at one exposure; each draws from its own
/// random streams, so adding one family never changes another's numbers.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Family {
    /// Generated at mu = 1, for the discovery significance.
    Discovery,
    /// Generated at mu = 0, for expected upper limits.
    Exclusion,
    /// Generated at mu = 0, for the calibration of q0.
    Calibration,
    /// Generated at mu = 0 and fitted at every scanned signal position, for
    /// the look-elsewhere effect.
    LookElsewhere,
    /// A re-plan's future data under its signal hypothesis, for the significance.
    ReplanSignalDiscovery,
    /// A re-plan's future data under its signal hypothesis, for limits.
    ReplanSignalExclusion,
    /// A re-plan's future data without signal, for the significance.
    ReplanBackgroundDiscovery,
    /// A re-plan's future data without signal, for limits.
    ReplanBackgroundExclusion,
    /// Datasets like those taken, drawn at their fit, for its goodness of fit.
    GoodnessOfFit,
    /// Datasets like those taken at a tested mu, for their toy CLs limit.
    ObservedLimitSignal,
    /// Datasets like those taken without signal, for their toy CLs limit.
    ObservedLimitBackground,
}

impl Family {
    /// The stream index of this family's toys at grid point `exposure_index`.
    pub fn stream_index(self, exposure_index: usize) -> u64 {
        let family = match self {
            Family::Discovery => 0,
            Family::Exclusion => 1,
            Family::Calibration => 2,
            Family::LookElsewhere => 3,
            Family::ReplanSignalDiscovery => 4,
            Family::ReplanSignalExclusion => 5,
            Family::ReplanBackgroundDiscovery => 6,
            Family::ReplanBackgroundExclusion => 7,
            Family::GoodnessOfFit => 8,
            Family::ObservedLimitSignal => 9,
            Family::ObservedLimitBackground => 10,
        };
        (family << 32) | exposure_index as u64
    }
}

/// What one pseudo-experiment measures, with a value that marks a failed fit
/// while the ensemble is filled in place.
pub trait ToyValue: Copy + Send + Sync {
    /// The placeholder of a pseudo-experiment whose fits failed.
    const FAILED: Self;

    fn is_failed(&self) -> bool;
}

impl ToyValue for f64 {
    const FAILED: f64 = f64::NAN;

    fn is_failed(&self) -> bool {
        self.is_nan()
    }
}

/// Pseudo-experiments per unit of parallel work (and per progress report).
const CHUNK: usize = 256;

/// Runs the pseudo-experiments `plan.toys` drawn by `generator`, in parallel
/// chunks, each from its own stream (`stream_index`, toy index), and applies `measure`
/// (with per-thread state made by `state`) to each; None counts as a failed fit.
///
/// Each worker keeps one state and one dataset for all its toys, and the values
/// are written straight into their place in one vector (a failed toy as
/// [`ToyValue::FAILED`] until the failures are counted and removed), so the
/// memory is that of the results alone, eight bytes a toy for a number.
pub fn run_ensemble<S, T: ToyValue>(
    generator: &Generator,
    stream_index: u64,
    plan: &EnsemblePlan,
    state: impl Fn() -> S + Sync + Send,
    measure: impl Fn(&mut S, &Dataset) -> Option<T> + Sync + Send,
) -> EnsembleOutcome<T> {
    let first_toy = plan.toys.start;
    let mut values = vec![T::FAILED; plan.toys.len()];
    values.par_chunks_mut(CHUNK).enumerate().for_each_init(
        || (state(), generator.empty_dataset()),
        |(state, data), (chunk, results)| {
            for (offset, value) in results.iter_mut().enumerate() {
                let mut rng =
                    toy_stream(plan.seed, stream_index, first_toy + chunk * CHUNK + offset);
                generator.draw(&mut rng, data);
                *value = measure(state, data).unwrap_or(T::FAILED);
            }
            (plan.progress)(results.len() as u64);
        },
    );
    values.retain(|value| !value.is_failed());
    EnsembleOutcome {
        failed_fits: plan.toys.len() - values.len(),
        values,
    }
}

/// Significances Z = sqrt(q0) of the pseudo-experiments `plan.toys` generated at
/// nominal parameters (mu = 1) after `live_days`.
pub fn discovery_ensemble(
    likelihood: &Likelihood,
    live_days: f64,
    exposure_index: usize,
    plan: &EnsemblePlan,
) -> EnsembleOutcome {
    let nominal = likelihood.model().nominal_parameters();
    let generator = Generator::new(likelihood, &nominal, live_days);
    significance_ensemble(
        likelihood,
        &generator,
        live_days,
        Family::Discovery.stream_index(exposure_index),
        plan,
    )
}

/// Significances Z = sqrt(q0) of the pseudo-experiments `plan.toys` that
/// `generator` draws after `live_days` from the streams `stream_index`.
pub fn significance_ensemble(
    likelihood: &Likelihood,
    generator: &Generator,
    live_days: f64,
    stream_index: u64,
    plan: &EnsemblePlan,
) -> EnsembleOutcome {
    run_ensemble(
        generator,
        stream_index,
        plan,
        || DiscoveryTest::new(likelihood),
        |test, data| test.fit(live_days, data).ok().map(|fit| fit.q0.sqrt()),
    )
}

/// q0 of the pseudo-experiments `plan.toys` generated under the background-only
/// hypothesis (mu = 0, nuisance parameters nominal) after `live_days`, for the
/// calibration of discovery p-values.
pub fn background_only_q0_ensemble(
    likelihood: &Likelihood,
    live_days: f64,
    exposure_index: usize,
    plan: &EnsemblePlan,
) -> EnsembleOutcome {
    let mut background_only = likelihood.model().nominal_parameters();
    background_only[crate::model::SIGNAL_STRENGTH] = 0.0;
    let generator = Generator::new(likelihood, &background_only, live_days);
    run_ensemble(
        &generator,
        Family::Calibration.stream_index(exposure_index),
        plan,
        || DiscoveryTest::new(likelihood),
        |test, data| test.fit(live_days, data).ok().map(|fit| fit.q0),
    )
}
