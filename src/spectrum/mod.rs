//! Pseudo-data spectra: what the binned observable may look like after some
//! days of data-taking, next to what is expected.
//!
//! For each exposure one pseudo-dataset is drawn at nominal parameters
//! (mu = 1), with the expected background (mu = 0) and signal + background per
//! bin and a one-standard-deviation Poisson error bar on every count.

mod interval;

pub use interval::{EXACT_INTERVAL_BELOW, error_bar, garwood_interval, one_sigma_confidence};

use crate::ensemble::{Generator, toy_stream};
use crate::likelihood::Likelihood;
use crate::model::{Model, SIGNAL_STRENGTH};
use crate::scenario::Scenario;

/// Exposure index of the random streams of pseudo-data spectra, apart from the
/// indices 0, 1, 2, ... of the projection grid. The toy index is the bit
/// pattern of the calendar days, so the spectrum at a given day depends on the
/// seed and that day alone, not on the other days asked for with it.
pub const SPECTRUM_STREAM: u64 = u64::MAX;

/// One bin of a pseudo-data spectrum.
#[derive(Debug, Clone, PartialEq)]
pub struct SpectrumBin {
    pub low: f64,
    pub high: f64,
    /// Pseudo-data count.
    pub counts: u64,
    /// Expected background count (mu = 0, other parameters nominal).
    pub background: f64,
    /// Expected signal + background count (mu = 1, other parameters nominal).
    pub signal_plus_background: f64,
    /// Error bar below and above `counts`, from [`error_bar`].
    pub error_low: f64,
    pub error_high: f64,
}

impl SpectrumBin {
    /// (n - b) / sqrt(b), the excess over the expected background in units of
    /// its Poisson standard deviation; None where no background is expected.
    pub fn pull(&self) -> Option<f64> {
        (self.background > 0.0)
            .then(|| (self.counts as f64 - self.background) / self.background.sqrt())
    }

    /// (s + b - b) / sqrt(b), the expected pull of the signal.
    pub fn expected_pull(&self) -> Option<f64> {
        (self.background > 0.0)
            .then(|| (self.signal_plus_background - self.background) / self.background.sqrt())
    }
}

/// The pseudo-data spectrum at one exposure.
#[derive(Debug, Clone, PartialEq)]
pub struct ExposureSpectrum {
    /// Calendar days since the start of data-taking.
    pub days: f64,
    /// Live days accumulated by then (schedule applied).
    pub live_days: f64,
    pub bins: Vec<SpectrumBin>,
}

impl ExposureSpectrum {
    /// Total pseudo-data count.
    pub fn total_counts(&self) -> u64 {
        self.bins.iter().map(|bin| bin.counts).sum()
    }
}

/// Pseudo-data spectra of one scenario at one or more exposures.
#[derive(Debug, Clone, PartialEq)]
pub struct Spectrum {
    pub title: String,
    /// Name and unit of the observable.
    pub observable: String,
    pub unit: String,
    pub bin_width: f64,
    pub seed: u64,
    /// In the order the days were asked for.
    pub exposures: Vec<ExposureSpectrum>,
}

/// Draws one pseudo-dataset of `scenario` at each of `days` (calendar days)
/// from the streams of `seed`; the same seed and day always give the same
/// counts (see [`SPECTRUM_STREAM`]).
pub fn pseudo_data_spectrum(scenario: &Scenario, days: &[f64], seed: u64) -> Spectrum {
    let model = Model::from_scenario(scenario);
    let likelihood = Likelihood::new(&model);
    let exposures = days
        .iter()
        .map(|&days| exposure_spectrum(&likelihood, days, seed))
        .collect();
    Spectrum {
        title: scenario.title.clone(),
        observable: scenario.observable.name.clone(),
        unit: scenario.observable.unit.clone(),
        bin_width: scenario.observable.bin_width,
        seed,
        exposures,
    }
}

fn exposure_spectrum(likelihood: &Likelihood, days: f64, seed: u64) -> ExposureSpectrum {
    let model = likelihood.model();
    let live_days = model.live_time.live_days(days);
    let nominal = model.nominal_parameters();
    let mut background_only = nominal.clone();
    background_only[SIGNAL_STRENGTH] = 0.0;

    let generator = Generator::new(likelihood, &nominal, live_days);
    let mut data = generator.empty_dataset();
    let mut rng = toy_stream(seed, SPECTRUM_STREAM, days.to_bits() as usize);
    generator.draw(&mut rng, &mut data);

    let signal_plus_background = expected(likelihood, &nominal, live_days);
    let background = expected(likelihood, &background_only, live_days);
    let edges = &model.channels[0].edges;
    let bins = edges
        .windows(2)
        .zip(&data.counts)
        .zip(background.iter().zip(&signal_plus_background))
        .map(
            |((edge, &counts), (&background, &signal_plus_background))| {
                // Poisson draws are whole numbers held in an f64.
                let counts = counts as u64;
                let (error_low, error_high) = error_bar(counts);
                SpectrumBin {
                    low: edge[0],
                    high: edge[1],
                    counts,
                    background,
                    signal_plus_background,
                    error_low,
                    error_high,
                }
            },
        )
        .collect();
    ExposureSpectrum {
        days,
        live_days,
        bins,
    }
}

/// Expected counts per bin at `theta` after `live_days`.
fn expected(likelihood: &Likelihood, theta: &[f64], live_days: f64) -> Vec<f64> {
    let mut work = likelihood.workspace();
    likelihood.expected_counts(theta, live_days, &mut work);
    work.expected
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scenario() -> Scenario {
        Scenario::from_yaml(
            "title: test peak\n\
             observable: {name: x, unit: a.u., range: [0.0, 20.0], bin_width: 1.0}\n\
             signal: {events_per_day: 5.0, shape: {gaussian: {mean: 10.0, sigma: 1.0}}}\n\
             backgrounds:\n  - {name: flat, events_per_day: 40.0, shape: {flat: {}}}\n\
             schedule: {live_fraction: 0.5}\n\
             plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3]}\n",
        )
        .unwrap()
    }

    /// Expected counts: rate x live days x bin fraction; a flat background of 40
    /// per live day over 20 bins at live fraction 0.5 gives 10 per bin after 10 days.
    #[test]
    fn expectations_follow_rates_live_time_and_shapes() {
        let spectrum = pseudo_data_spectrum(&scenario(), &[10.0], 3);
        let exposure = &spectrum.exposures[0];
        assert_eq!(exposure.live_days, 5.0);
        assert_eq!(exposure.bins.len(), 20);
        for bin in &exposure.bins {
            assert!((bin.background - 10.0).abs() < 1e-12);
            assert!(bin.signal_plus_background >= bin.background);
        }
        let signal: f64 = exposure
            .bins
            .iter()
            .map(|bin| bin.signal_plus_background - bin.background)
            .sum();
        assert!((signal - 25.0).abs() < 1e-9, "{signal}");
    }

    /// A day's spectrum depends on the seed and that day only.
    #[test]
    fn same_seed_and_day_give_the_same_counts() {
        let alone = pseudo_data_spectrum(&scenario(), &[10.0], 3);
        let with_others = pseudo_data_spectrum(&scenario(), &[2.0, 10.0], 3);
        assert_eq!(alone.exposures[0], with_others.exposures[1]);
        let other_seed = pseudo_data_spectrum(&scenario(), &[10.0], 4);
        assert_ne!(alone.exposures[0].bins, other_seed.exposures[0].bins);
    }

    #[test]
    fn pull_is_excess_over_root_background() {
        let bin = SpectrumBin {
            low: 0.0,
            high: 1.0,
            counts: 16,
            background: 9.0,
            signal_plus_background: 12.0,
            error_low: 4.0,
            error_high: 4.0,
        };
        assert_eq!(bin.pull(), Some(7.0 / 3.0));
        assert_eq!(bin.expected_pull(), Some(1.0));
    }
}
