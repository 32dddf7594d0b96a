//! Ensemble: seeded pseudo-experiments at one exposure, fitted in parallel.
//!
//! Every pseudo-experiment draws its own counts from its own random stream,
//! derived from (seed, exposure index, toy index) alone, so results do not
//! depend on the number of threads or on the order in which toys run.

mod poisson;

use crate::likelihood::{Dataset, DiscoveryTest, Likelihood};
use crate::model::Constraint;
use poisson::PoissonCounts;
use rand_distr::{Distribution, Normal};
use rand_pcg::Pcg64;
use rayon::prelude::*;

/// The random stream of one pseudo-experiment.
///
/// The 128-bit state and stream selector come from SplitMix64 (Steele, Lea,
/// Flood, OOPSLA 2014) applied to the seed and the two indices, so that
/// neighbouring toys and exposures get unrelated PCG streams (O'Neill, PCG
/// technical report HMC-CS-2014-0905).
pub fn toy_stream(seed: u64, exposure_index: usize, toy_index: usize) -> Pcg64 {
    let seed_mix = splitmix64(seed);
    let exposure_mix = splitmix64(seed_mix ^ exposure_index as u64);
    let toy_mix = splitmix64(exposure_mix ^ splitmix64(toy_index as u64));
    let state = (u128::from(seed_mix) << 64) | u128::from(toy_mix);
    let stream = (u128::from(exposure_index as u64) << 64) | toy_index as u128;
    Pcg64::new(state, stream)
}

fn splitmix64(value: u64) -> u64 {
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
    /// Poisson distribution of each bin's count.
    bins: Vec<PoissonCounts>,
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
            bins,
            global_observables,
        }
    }

    /// An empty dataset of the right size, to be filled by [`Generator::draw`].
    pub fn empty_dataset(&self) -> Dataset {
        Dataset {
            counts: vec![0.0; self.bins.len()],
            global_observables: vec![0.0; self.global_observables.len()],
        }
    }

    /// Fills `data` with one pseudo-experiment drawn from `rng`.
    pub fn draw(&self, rng: &mut Pcg64, data: &mut Dataset) {
        for (count, poisson) in data.counts.iter_mut().zip(&self.bins) {
            *count = poisson.sample(rng);
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

/// Significances of an ensemble at one exposure, with the fits that failed.
#[derive(Debug, Clone, PartialEq)]
pub struct EnsembleOutcome {
    /// Z = sqrt(q0) of each pseudo-experiment whose fits converged, in toy order.
    pub significances: Vec<f64>,
    /// Pseudo-experiments whose fits failed after all retries.
    pub failed_fits: usize,
}

/// How many pseudo-experiments, from which seed, with what progress callback.
pub struct EnsemblePlan<'a> {
    pub toys: usize,
    pub seed: u64,
    /// Called with the number of pseudo-experiments just finished.
    pub progress: &'a (dyn Fn(u64) + Sync),
}

/// Pseudo-experiments per unit of parallel work (and per progress report).
const CHUNK: usize = 256;

/// Runs `plan.toys` pseudo-experiments generated at nominal parameters (mu = 1)
/// after `live_days`, each fitted twice for q0; `exposure_index` selects the streams.
pub fn discovery_ensemble(
    likelihood: &Likelihood,
    live_days: f64,
    exposure_index: usize,
    plan: &EnsemblePlan,
) -> EnsembleOutcome {
    let nominal = likelihood.model().nominal_parameters();
    q0_ensemble(likelihood, &nominal, live_days, exposure_index, plan)
}

/// Runs `plan.toys` pseudo-experiments generated at `generating` parameters
/// (mu = 0 for a background-only ensemble) after `live_days`, each fitted twice
/// for q0; `exposure_index` selects the streams.
///
/// Each worker thread keeps one fitter and one dataset for all its toys, and
/// the significances are written straight into their place in one vector
/// (a failed toy as NaN until the failures are counted and removed), so the
/// memory is that of the results alone, eight bytes a toy.
pub fn q0_ensemble(
    likelihood: &Likelihood,
    generating: &[f64],
    live_days: f64,
    exposure_index: usize,
    plan: &EnsemblePlan,
) -> EnsembleOutcome {
    let generator = Generator::new(likelihood, generating, live_days);
    let mut significances = vec![f64::NAN; plan.toys];
    significances
        .par_chunks_mut(CHUNK)
        .enumerate()
        .for_each_init(
            || (DiscoveryTest::new(likelihood), generator.empty_dataset()),
            |(test, data), (chunk, results)| {
                for (offset, z) in results.iter_mut().enumerate() {
                    let toy = chunk * CHUNK + offset;
                    let mut rng = toy_stream(plan.seed, exposure_index, toy);
                    generator.draw(&mut rng, data);
                    if let Ok(fit) = test.fit(live_days, data) {
                        *z = fit.q0.sqrt();
                    }
                }
                (plan.progress)(results.len() as u64);
            },
        );
    let converged = significances.iter().filter(|z| !z.is_nan()).count();
    significances.retain(|z| !z.is_nan());
    EnsembleOutcome {
        significances,
        failed_fits: plan.toys - converged,
    }
}
