//! Pseudo-data spectra: what the binned observable may look like after some
//! days of data-taking, next to what is expected.
//!
//! For each exposure one pseudo-dataset is drawn at nominal parameters
//! (mu = 1), with the expected background (mu = 0) and signal + background per
//! bin and a one-standard-deviation Poisson error bar on every count, and
//! fitted as an analysis of those data would be: the discovery fit gives the
//! fitted signal strength, the local significance sqrt(q0) and the expected
//! counts at the fitted parameters.

mod interval;

pub use interval::{EXACT_INTERVAL_BELOW, error_bar, garwood_interval, one_sigma_confidence};

use crate::ensemble::{Generator, toy_stream};
use crate::likelihood::{Dataset, DiscoveryTest, Likelihood};
use crate::model::{Constraint, Model, SIGNAL_STRENGTH, shape_from_spec};
use crate::scenario::Scenario;
use std::ops::Range;

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
    /// The fit of the pseudo-dataset; None when a fit failed.
    pub fit: Option<SpectrumFit>,
}

/// What the discovery fit reports for one pseudo-dataset.
#[derive(Debug, Clone, PartialEq)]
pub struct SpectrumFit {
    /// The fitted signal strength mu-hat (0 or more).
    pub signal_strength: f64,
    /// The local significance sqrt(q0) (Cowan et al., Eur. Phys. J. C 71
    /// (2011) 1554, eq. 12).
    pub local_z: f64,
    /// Expected counts per bin at the free fit's parameters.
    pub expected: Vec<f64>,
}

impl ExposureSpectrum {
    /// The largest expected count (signal + background) of any bin.
    pub fn largest_expected(&self) -> f64 {
        self.bins
            .iter()
            .map(|bin| bin.signal_plus_background)
            .fold(0.0, f64::max)
    }

    /// Total pseudo-data count.
    pub fn total_counts(&self) -> u64 {
        self.bins.iter().map(|bin| bin.counts).sum()
    }
}

/// Pseudo-data spectra of one scenario at one or more exposures.
#[derive(Debug, Clone, PartialEq)]
pub struct Spectrum {
    pub title: String,
    /// The scenario's channels, in order; their bins follow one another in
    /// every exposure's `bins`.
    pub channels: Vec<SpectrumChannel>,
    pub seed: u64,
    /// In the order the days were asked for.
    pub exposures: Vec<ExposureSpectrum>,
}

/// One channel's observable and where its bins lie in each exposure.
#[derive(Debug, Clone, PartialEq)]
pub struct SpectrumChannel {
    pub name: String,
    /// Name and unit of the observable.
    pub observable: String,
    pub unit: String,
    pub bin_width: f64,
    /// Its bins within [`ExposureSpectrum::bins`].
    pub bins: Range<usize>,
    /// The signal region the figure shows beside the full range, widened
    /// to whole bins: [`ZOOM_WIDTHS`] widths either side of the signal's
    /// peak, or the window asked for ([`Spectrum::zoomed_to`]); None when
    /// the signal has no peak and no window was asked for.
    pub window: Option<Range<f64>>,
}

/// Half-width of the default signal region, in widths of the signal's peak
/// (Gaussian sigma, Breit-Wigner half width) at its position: ±5 widths
/// hold all but 6e-7 of a Gaussian line.
pub const ZOOM_WIDTHS: f64 = 5.0;

impl SpectrumChannel {
    /// This channel's bins of `exposure`.
    pub fn bins_of<'e>(&self, exposure: &'e ExposureSpectrum) -> &'e [SpectrumBin] {
        &exposure.bins[self.bins.clone()]
    }
}

/// `window` widened to the edges of the bins it touches, within `edges`
/// (ascending); None when it holds no bin.
fn whole_bins(window: &Range<f64>, edges: &[f64]) -> Option<Range<f64>> {
    let low = edges.iter().rev().find(|&&edge| edge <= window.start)?;
    let high = edges.iter().find(|&&edge| edge >= window.end)?;
    (low < high).then_some(*low..*high)
}

/// The default signal region of `channel`: its signal's peak ± [`ZOOM_WIDTHS`]
/// widths, cut to the range and widened to whole bins of `edges`.
fn signal_region(channel: &crate::scenario::Channel, edges: &[f64]) -> Option<Range<f64>> {
    let range = channel.observable.range;
    let peak = shape_from_spec(&channel.signal.shape, range).peak()?;
    let half = ZOOM_WIDTHS * peak.width;
    let window = (peak.centre - half).max(range[0])..(peak.centre + half).min(range[1]);
    whole_bins(&window, edges)
}

/// Longest file stem of a spectrum named after its days; longer stems fall
/// back to a count and a hash (see [`Spectrum::file_stem`]).
pub const MAX_FILE_STEM_BYTES: usize = 64;

impl Spectrum {
    /// `spectrum-3d-30d` for exposures at 3 and 30 calendar days, in the order
    /// given; when that is longer than [`MAX_FILE_STEM_BYTES`] (many or long
    /// day values), `spectrum-<count>-exposures-<hash>` with the 64-bit FNV-1a
    /// hash of the days' bit patterns in hexadecimal, so the same days always
    /// give the same name.
    pub fn file_stem(&self) -> String {
        let stem = self
            .exposures
            .iter()
            .fold("spectrum".to_string(), |stem, exposure| {
                format!("{stem}-{}d", exposure.days)
            });
        if stem.len() <= MAX_FILE_STEM_BYTES {
            return stem;
        }
        let bytes = self
            .exposures
            .iter()
            .flat_map(|exposure| exposure.days.to_bits().to_le_bytes());
        format!(
            "spectrum-{}-exposures-{:016x}",
            self.exposures.len(),
            fnv1a(bytes)
        )
    }
}

impl Spectrum {
    /// The spectra with every channel's signal region set to `window`
    /// (in the observable's unit, inside every channel's range: the
    /// command line checks it), widened to whole bins.
    pub fn zoomed_to(mut self, window: &Range<f64>) -> Spectrum {
        let Some(exposure) = self.exposures.first() else {
            return self;
        };
        for channel in &mut self.channels {
            let bins = channel.bins_of(exposure);
            let edges: Vec<f64> = bins
                .iter()
                .map(|bin| bin.low)
                .chain(bins.last().map(|bin| bin.high))
                .collect();
            channel.window = whole_bins(window, &edges);
        }
        self
    }
}

/// The 64-bit FNV-1a hash (Fowler, Noll and Vo; offset basis and prime as published).
fn fnv1a(bytes: impl Iterator<Item = u8>) -> u64 {
    bytes.fold(0xcbf2_9ce4_8422_2325, |hash, byte| {
        (hash ^ u64::from(byte)).wrapping_mul(0x0000_0100_0000_01b3)
    })
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
    let mut first_bin = 0;
    let channels = scenario
        .channels
        .iter()
        .zip(&model.channels)
        .map(|(channel, modelled)| {
            let bins = first_bin..first_bin + modelled.edges.len() - 1;
            first_bin = bins.end;
            SpectrumChannel {
                name: channel.name.clone(),
                observable: channel.observable.name.clone(),
                unit: channel.observable.unit.clone(),
                bin_width: channel.observable.bin_width,
                bins,
                window: signal_region(channel, &modelled.edges),
            }
        })
        .collect();
    Spectrum {
        title: scenario.title.clone(),
        channels,
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
    let fit = fit_pseudo_data(likelihood, live_days, &data);
    let bin_edges = model
        .channels
        .iter()
        .flat_map(|channel| channel.edges.windows(2));
    let bins = bin_edges
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
        fit,
    }
}

/// The discovery fit of one pseudo-dataset, with the expected counts of
/// every bin (all channels, in order) at the free fit; None when a fit fails.
fn fit_pseudo_data(likelihood: &Likelihood, live_days: f64, data: &Dataset) -> Option<SpectrumFit> {
    let mut test = DiscoveryTest::new(likelihood);
    let fit = test.fit(live_days, data).ok()?;
    let fitted = expected(likelihood, test.free_parameters(), live_days);
    Some(SpectrumFit {
        signal_strength: fit.fitted_mu,
        local_z: fit.q0.sqrt(),
        expected: fitted,
    })
}

/// The largest mean a pseudo-dataset at nominal parameters (mu = 1) draws
/// from after `live_days`: the expected count of any bin, or of any control
/// region.
pub fn largest_expected_count(model: &Model, live_days: f64) -> f64 {
    let likelihood = Likelihood::new(model);
    let nominal = model.nominal_parameters();
    let control_counts = model
        .constraints
        .iter()
        .filter(|constraint| matches!(constraint, Constraint::ControlRegion { .. }))
        .map(|constraint| {
            constraint.expected_global_observable(nominal[constraint.parameter()], live_days)
        });
    expected(&likelihood, &nominal, live_days)
        .into_iter()
        .chain(control_counts)
        .fold(0.0, f64::max)
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

    /// One counting bin with a known background: the fit of n counts has the
    /// closed forms mu-hat = (n - b)/s and q0 = 2 (n ln(n/b) - (n - b)) for
    /// n > b (Cowan et al., EPJC 71 (2011) 1554, eqs. 12 and 97 with the data
    /// n in place of s + b), and fits the count exactly. The fits converge to
    /// far better than 1e-6.
    #[test]
    fn each_pseudo_dataset_is_fitted_as_an_analysis_would() {
        let counting = Scenario::from_yaml(
            "title: one bin\n\
             observable: {name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}\n\
             signal: {events_per_day: 20.0, shape: {flat: {}}}\n\
             backgrounds:\n  - {name: flat, events_per_day: 100.0, shape: {flat: {}}}\n\
             plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3]}\n",
        )
        .unwrap();
        for days in [3.0, 30.0] {
            let spectrum = pseudo_data_spectrum(&counting, &[days], 11);
            let exposure = &spectrum.exposures[0];
            let n = exposure.bins[0].counts as f64;
            let (s, b) = (20.0 * days, 100.0 * days);
            assert!(n > b, "the test needs an excess: {n} counts over {b}");
            let fit = exposure.fit.as_ref().expect("the fit converges");
            let mu = (n - b) / s;
            let z = (2.0 * (n * (n / b).ln() - (n - b))).sqrt();
            assert!(
                (fit.signal_strength - mu).abs() < 1e-6 * mu,
                "{} vs {mu}",
                fit.signal_strength
            );
            assert!((fit.local_z - z).abs() < 1e-6 * z, "{} vs {z}", fit.local_z);
            assert!(
                (fit.expected[0] - n).abs() < 1e-6 * n,
                "{:?} vs {n}",
                fit.expected
            );
        }
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

    /// The signal region: the peak at 10 ± 5 sigma of 1 on bins of 1 is 5
    /// to 15; a chosen 5.3 to 7.2 is widened to the bins it touches, 5 to 8.
    #[test]
    fn the_signal_region_covers_whole_bins_around_the_peak() {
        let spectrum = pseudo_data_spectrum(&scenario(), &[10.0], 3);
        assert_eq!(spectrum.channels[0].window, Some(5.0..15.0));
        let chosen = spectrum.zoomed_to(&(5.3..7.2));
        assert_eq!(chosen.channels[0].window, Some(5.0..8.0));
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

    /// The largest mean drawn: a flat 40 per live day over 20 bins gives 10
    /// per bin after 5 live days, and the two bins beside the peak hold
    /// Phi(1) - Phi(0) = 0.341345 of the 25 signal events each (standard
    /// normal table); a control region of ratio 3 expects 3 x 200 = 600.
    #[test]
    fn largest_expected_count_covers_bins_and_control_regions() {
        let model = Model::from_scenario(&scenario());
        let largest = largest_expected_count(&model, 5.0);
        assert!(
            (largest - (10.0 + 25.0 * 0.341345)).abs() < 1e-5,
            "{largest}"
        );
        let text = "title: on off\n\
             observable: {name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}\n\
             signal: {events_per_day: 1.0, shape: {flat: {}}}\n\
             backgrounds:\n  - {name: flat, events_per_day: 40.0, shape: {flat: {}}, control: {ratio: 3.0}}\n\
             plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3]}\n";
        let on_off = Model::from_scenario(&Scenario::from_yaml(text).unwrap());
        assert_eq!(largest_expected_count(&on_off, 5.0), 600.0);
    }

    /// Test vectors of the 64-bit FNV-1a hash, from its published reference
    /// table (Fowler, Noll and Vo): "" and "a".
    #[test]
    fn fnv1a_matches_the_published_test_vectors() {
        assert_eq!(fnv1a("".bytes()), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a("a".bytes()), 0xaf63_dc4c_8601_ec8c);
    }

    #[test]
    fn file_stems_name_the_days_or_fall_back_to_a_short_hash() {
        let short = pseudo_data_spectrum(&scenario(), &[3.0, 30.0], 1);
        assert_eq!(short.file_stem(), "spectrum-3d-30d");
        let days = [
            10.125, 20.125, 30.125, 40.125, 50.125, 60.125, 70.125, 80.125,
        ];
        let long = pseudo_data_spectrum(&scenario(), &days, 1);
        let stem = long.file_stem();
        assert!(stem.starts_with("spectrum-8-exposures-"), "{stem}");
        assert!(stem.len() <= MAX_FILE_STEM_BYTES, "{stem}");
        let mut swapped = days;
        swapped.swap(0, 1);
        let reordered = pseudo_data_spectrum(&scenario(), &swapped, 1);
        assert_ne!(
            reordered.file_stem(),
            stem,
            "the order of the days is part of the name"
        );
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
