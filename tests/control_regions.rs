//! Backgrounds measured in control regions, against published closed forms.

mod common;

use common::on_off;
use runcast::asymptotic::AsimovSignificance;
use runcast::likelihood::{Dataset, DiscoveryTest, Likelihood};
use runcast::limits::asymptotic_limits;
use runcast::model::Model;
use runcast::reach::{ReachSettings, reach};
use runcast::scenario::{ControlRegion, Scenario};

/// Median discovery significance with a background uncertainty sigma_b from an
/// auxiliary Poisson measurement with tau = b / sigma_b^2 (Cowan, Cranmer, Gross,
/// Vitells, EPJC 71 (2011) 1554; G. Cowan, "Discovery sensitivity for a counting
/// experiment with background uncertainty", 2012).
fn cowan_with_uncertainty(s: f64, b: f64, sigma: f64) -> f64 {
    let v = sigma * sigma;
    let first = (s + b) * ((s + b) * (b + v) / (b * b + (s + b) * v)).ln();
    let second = (b * b / v) * (1.0 + v * s / (b * (b + v))).ln();
    (2.0 * (first - second)).sqrt()
}

#[test]
fn control_region_reproduces_median_significance_with_background_uncertainty() {
    // Published: s=10, b=100, sigma_b=10 -> 0.690196; s=20, b=50, sigma_b=5 -> 2.133224.
    for (s, b, sigma, published) in [(10.0, 100.0, 10.0, 0.690196), (20.0, 50.0, 5.0, 2.133224)] {
        let tau = b / (sigma * sigma);
        let model = on_off(s, b, tau);
        let likelihood = Likelihood::new(&model);
        let z = AsimovSignificance::new(&likelihood)
            .at_live_days(1.0)
            .unwrap();
        let closed_form = cowan_with_uncertainty(s, b, sigma);
        assert!(
            (closed_form - published).abs() < 1e-6,
            "closed form {closed_form}"
        );
        assert!(
            (z - closed_form).abs() < 1e-6 * closed_form,
            "s={s}, b={b}: Z_A = {z}, closed form {closed_form}"
        );
    }
}

#[test]
fn on_off_counting_reproduces_li_and_ma_eq_17() {
    // N_on = 120, N_off = 400, alpha = 0.2 gives 3.750628 (Li and Ma, ApJ 272 (1983) 317, eq. 17).
    let (on, off, alpha) = (120.0, 400.0, 0.2);
    let model = on_off(10.0, 80.0, 1.0 / alpha);
    let likelihood = Likelihood::new(&model);
    let data = Dataset {
        counts: vec![on],
        global_observables: vec![off],
    };
    let z = DiscoveryTest::new(&likelihood)
        .fit(1.0, &data)
        .unwrap()
        .q0
        .sqrt();
    let li_ma = {
        let n = on + off;
        let term_on = on * ((1.0 + alpha) / alpha * on / n).ln();
        let term_off = off * ((1.0 + alpha) * off / n).ln();
        (2.0 * (term_on + term_off)).sqrt()
    };
    assert!((li_ma - 3.750628).abs() < 1e-6, "eq. 17 gives {li_ma}");
    assert!((z - 3.750628).abs() < 1e-6 * 3.750628, "Z = {z}");
    // A second published pair: N_on = 100 gives 1.951081.
    let data = Dataset {
        counts: vec![100.0],
        global_observables: vec![off],
    };
    let z = DiscoveryTest::new(&likelihood)
        .fit(1.0, &data)
        .unwrap()
        .q0
        .sqrt();
    assert!((z - 1.951081).abs() < 1e-6 * 1.951081, "Z = {z}");
}

/// A line searched in one window over a flat continuum whose level is
/// uncertain; `BACKGROUND` is replaced by the continuum's written form.
const SEARCH: &str = "\
title: control-region equivalence (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 5.0}
signal:
  events_per_day: 2.0
  shape: {gaussian: {mean: 50.0, sigma: 3.0}}
  scan: {from: 20.0, to: 80.0, step: 3.0}
backgrounds:
  - {name: continuum, events_per_day: 40, shape: {flat: {}}, BACKGROUND}
plan: {days: [10], toys: 10, seed: 1, targets: [3, 5]}
";

/// The same search with a detector-level signal over two channels: the
/// window, and one bin of efficiency 0 counting `120` background events per
/// day (three times the window's), both continua written with `SHARED`.
const CHANNELS: &str = "\
title: control-region equivalence (invented numbers)
SHARED_UNCERTAINTIES
signal:
  events_per_day: 2.0
  shape: {gaussian: {mean: 50.0}}
  scan: {from: 20.0, to: 80.0, step: 3.0}
channels:
  - name: search
    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 5.0}
    resolution: {points: [[0.0, 3.0]]}
    backgrounds:
      - {name: continuum, events_per_day: 40, shape: {flat: {}}, SEARCH_BACKGROUND}
  - name: control
    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 100.0}
    signal_efficiency: 0
    resolution: {points: [[0.0, 3.0]]}
    backgrounds:
      - {name: control continuum, events_per_day: 120, shape: {flat: {}}, CONTROL_BACKGROUND}
plan: {days: [10], toys: 10, seed: 1, targets: [3, 5]}
";

/// Z_A after each of `live_days`, then the median expected 95% CL limit
/// with its band, then per scan position the reach after the last of them
/// (limit and local and global discovery rates), then its mean upcrossings:
/// every number the two forms must share.
fn results(scenario: &Scenario, live_days: &[f64]) -> Vec<f64> {
    let model = Model::from_scenario(scenario);
    let likelihood = Likelihood::new(&model);
    let mut significance = AsimovSignificance::new(&likelihood);
    let mut numbers: Vec<f64> = live_days
        .iter()
        .map(|&days| significance.at_live_days(days).unwrap())
        .collect();
    for &days in live_days {
        let limits = asymptotic_limits(&likelihood, days, 0.05).unwrap();
        numbers.push(limits.median);
        numbers.extend(limits.band);
    }
    let settings = ReachSettings {
        days: vec![live_days[live_days.len() - 1]],
        cl: 0.95,
        targets: vec![3.0, 5.0],
        toys: 0,
        seed: 1,
    };
    let reach = reach(scenario, &settings, &|_| {}).unwrap();
    let exposure = &reach.exposures[0];
    for point in &exposure.positions {
        numbers.push(point.limit_rate_asimov.unwrap());
        numbers.extend(point.discovery_rate_local.iter().map(|rate| rate.unwrap()));
        numbers.extend(point.discovery_rate_global.iter().map(|rate| rate.unwrap()));
    }
    numbers.push(exposure.mean_upcrossings_asimov);
    numbers
}

fn assert_same(a: &[f64], b: &[f64]) {
    assert_eq!(a.len(), b.len());
    for (index, (a, b)) in a.iter().zip(b).enumerate() {
        assert!(
            (a / b - 1.0).abs() < 1e-9,
            "number {index}: {a} against {b}"
        );
    }
}

/// A channel that sees no signal (signal efficiency 0) and counts a
/// background whose level it shares with the search is an auxiliary
/// measurement of that level: one bin of expectation k × 120 × t beside the
/// window's k × 40 × t, with k ~ N(1, 0.2), is the likelihood of a control
/// region of ratio 3 (a Poisson count of 3 × 40 × t × k) on the window's
/// continuum with its norm_uncertainty 0.2 kept (the on/off problem of Li
/// and Ma, ApJ 272 (1983) 317, eq. 17's likelihood, with the Gaussian
/// constraint of Cowan et al., EPJC 71 (2011) 1554, sec. 4). A scenario file
/// gives a background one of the two; `binning` adds a sideband count to a
/// stated uncertainty in the same way, and so does this test, in code. The
/// two forms give the same Z_A, limits and reach to 1e-9. With nothing
/// shared the blind channel is an independent likelihood factor and changes
/// nothing.
#[test]
fn a_blind_channel_sharing_an_uncertainty_is_a_control_region() {
    let live_days = [3.0, 30.0, 300.0];
    let search =
        |background: &str| Scenario::from_yaml(&SEARCH.replace("BACKGROUND", background)).unwrap();
    let mut measured = search("norm_uncertainty: 0.2");
    measured.channel_mut().backgrounds[0].control = Some(ControlRegion { ratio: 3.0 });
    let control_region = results(&measured, &live_days);
    let channels = |shared: &str, search: &str, control: &str| {
        let text = CHANNELS
            .replace("SHARED_UNCERTAINTIES\n", shared)
            .replace("SEARCH_BACKGROUND", search)
            .replace("CONTROL_BACKGROUND", control);
        Scenario::from_yaml(&text).unwrap()
    };
    let shared = results(
        &channels(
            "shared_uncertainties: {level: 0.2}\n",
            "shared: [level]",
            "shared: [level]",
        ),
        &live_days,
    );
    assert_same(&shared, &control_region);

    let alone = results(&search("norm_uncertainty: 0.2"), &live_days);
    let unshared = results(
        &channels("", "norm_uncertainty: 0.2", "norm_uncertainty: 0.2"),
        &live_days,
    );
    assert_same(&unshared, &alone);
    // The control measurement matters: the two pairs differ.
    assert!((control_region[0] / alone[0] - 1.0).abs() > 1e-3);
}
