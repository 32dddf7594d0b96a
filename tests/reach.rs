//! `runcast reach` against closed forms: the median CLs limit and the
//! discovery rate of a scanned peak over a known background, and the reach at
//! the scenario's own position against the projection's limit and Z_A.

use runcast::asymptotic::AsimovSignificance;
use runcast::likelihood::Likelihood;
use runcast::limits::asymptotic_limits;
use runcast::model::Model;
use runcast::reach::{Reach, ReachSettings, reach};
use runcast::scenario::Scenario;
use statrs::distribution::{ContinuousCDF, Normal};

/// A Gaussian line of sigma 1.5 scanned over [20, 80] of [0, 100] (2-unit
/// bins) on a known flat background: no nuisance parameter.
const KNOWN: &str = "\
title: reach test (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 2.0}
signal:
  events_per_day: 3.0
  shape: {gaussian: {mean: 50.0, sigma: 1.5}}
  scan: {from: 20.0, to: 80.0, step: 15.0}
backgrounds:
  - {name: continuum, events_per_day: 200, shape: {flat: {}}}
plan:
  days: {first: 1, last: 100, points: 3, spacing: log}
  toys: 10
  seed: 5
  targets: [3, 5]
";

fn reach_of(text: &str, days: &[f64]) -> (Scenario, Reach) {
    let scenario = Scenario::from_yaml(text).unwrap();
    let settings = ReachSettings {
        days: days.to_vec(),
        cl: 0.95,
        targets: vec![3.0, 5.0],
        toys: 0,
        seed: 5,
    };
    let reach = reach(&scenario, &settings, &|_| {}).unwrap();
    (scenario, reach)
}

/// Expected signal and background counts per bin (every channel's bins one
/// after the other) for a signal rate `rate` (in the reach's unit) with the
/// peak at `position`, after `live_days`: the scenario's own counts at
/// signal strength 1, scaled by `rate` over the scenario's rate.
fn counts(
    reach: &Reach,
    scenario: &Scenario,
    position: f64,
    rate: f64,
    live_days: f64,
) -> (Vec<f64>, Vec<f64>) {
    let scan = scenario.signal_scan().unwrap();
    let model = Model::from_scenario(&scenario.with_signal_at(&scan, position));
    let likelihood = Likelihood::new(&model);
    let mut work = likelihood.workspace();
    let mut theta = model.nominal_parameters();
    theta[0] = 0.0;
    let background = likelihood
        .asimov_dataset(&theta, live_days, &mut work)
        .counts;
    theta[0] = 1.0;
    let total = likelihood
        .asimov_dataset(&theta, live_days, &mut work)
        .counts;
    let scale = rate / reach.signal_rate;
    let signal = total
        .iter()
        .zip(&background)
        .map(|(t, b)| (t - b) * scale)
        .collect();
    (signal, background)
}

/// The root of an increasing function on (0, infinity) by bisection in log x.
fn root(level: f64, f: impl Fn(f64) -> f64) -> f64 {
    let (mut low, mut high): (f64, f64) = (1e-6, 1e6);
    for _ in 0..200 {
        let middle = (low * high).sqrt();
        if f(middle) < level {
            low = middle;
        } else {
            high = middle;
        }
    }
    (low * high).sqrt()
}

/// Known background: the median expected CLs limit s solves
/// 2 sum_j [s_j - b_j ln(1 + s_j / b_j)] = (Phi^-1(1 - alpha/2))² (q_mu,A of
/// the background-only Asimov dataset at the median, Cowan, Cranmer, Gross,
/// Vitells, Eur. Phys. J. C 71 (2011) 1554, eqs. 88-89), and the discovery
/// rate solves sum_j 2[(s_j + b_j) ln(1 + s_j/b_j) - s_j] = Z² (eq. 97 summed
/// over bins). Both to 1e-6 relative at every position and exposure.
#[test]
fn known_background_reach_matches_closed_forms() {
    let (scenario, reach) = reach_of(KNOWN, &[10.0, 100.0]);
    check_closed_forms(&scenario, &reach);
}

/// The closed forms of `known_background_reach_matches_closed_forms` at
/// every position and exposure of `reach`, summed over every channel's bins.
fn check_closed_forms(scenario: &Scenario, reach: &Reach) {
    let level = Normal::standard().inverse_cdf(1.0 - 0.05 / 2.0);
    for exposure in &reach.exposures {
        for point in &exposure.positions {
            let (shape, background) =
                counts(reach, scenario, point.position, 1.0, exposure.live_days);
            let q_limit = |rate: f64| {
                2.0 * shape
                    .iter()
                    .zip(&background)
                    .map(|(s, b)| rate * s - b * (rate * s / b).ln_1p())
                    .sum::<f64>()
            };
            let q_discovery = |rate: f64| {
                2.0 * shape
                    .iter()
                    .zip(&background)
                    .map(|(s, b)| (rate * s + b) * (rate * s / b).ln_1p() - rate * s)
                    .sum::<f64>()
            };
            let expected = root(level * level, q_limit);
            let computed = point.limit_rate_asimov.unwrap();
            assert!(
                (computed / expected - 1.0).abs() < 1e-6,
                "limit at {}: {computed} vs {expected}",
                point.position
            );
            for (target, rate) in [3.0, 5.0].iter().zip(&point.discovery_rate_local) {
                let expected = root(target * target, q_discovery);
                let computed = rate.unwrap();
                assert!(
                    (computed / expected - 1.0).abs() < 1e-6,
                    "Z = {target} at {}: {computed} vs {expected}",
                    point.position
                );
            }
        }
    }
}

/// Two volumes of a detector (4 kg and 10 kg, efficiencies 0.9 and 0.6,
/// resolutions growing with energy, different known flat backgrounds) see
/// one signal rate per kg·day at a position scanned over [20, 80].
const TWO_VOLUMES: &str = "\
title: two-volume reach test (invented numbers)
signal:
  events_per_kg_day: 0.3
  shape: {gaussian: {mean: 50.0}}
  scan: {from: 20.0, to: 80.0, step: 15.0}
channels:
  - name: inner
    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 2.0}
    detector: {mass_kg: 4}
    signal_efficiency: 0.9
    resolution: {points: [[20.0, 1.0], [80.0, 2.5]]}
    backgrounds:
      - {name: inner continuum, events_per_kg_day: 50, shape: {flat: {}}}
  - name: outer
    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 2.0}
    detector: {mass_kg: 10}
    signal_efficiency: 0.6
    resolution: {stochastic: 0.3, constant: 0.01, noise: 0.5}
    backgrounds:
      - {name: outer continuum, events_per_kg_day: 120, shape: {flat: {}}}
plan:
  days: {first: 1, last: 100, points: 3, spacing: log}
  toys: 10
  seed: 5
  targets: [3, 5]
";

/// Known backgrounds, no uncertainties, unequal masses and efficiencies:
/// the combined rates per kg·day solve the closed forms of Cowan et al.
/// 2011 (eqs. 88-89 and 97) summed over both channels' bins, with
/// s = rate × mass × efficiency × live days × bin fraction; 1e-6 relative.
/// Each channel alone needs more rate than both together.
#[test]
fn two_volumes_reach_matches_closed_forms() {
    let (scenario, reach) = reach_of(TWO_VOLUMES, &[10.0, 100.0]);
    assert_eq!(reach.rate_unit, "events per kg·day");
    assert_eq!(reach.signal_rate, 0.3);
    assert_eq!(scenario.channels[0].signal.events_per_day, 0.3 * 4.0 * 0.9);
    assert_eq!(scenario.channels[1].signal.events_per_day, 0.3 * 10.0 * 0.6);
    check_closed_forms(&scenario, &reach);
    for point in &reach.exposures[0].positions {
        assert_eq!(point.channels.len(), 2);
        for channel in &point.channels {
            assert!(channel.limit_rate_asimov.unwrap() > point.limit_rate_asimov.unwrap());
        }
    }
}

/// A third channel with efficiency 0 and no uncertainty shared with the
/// others sees no signal and constrains nothing the others use, so the
/// combined reach is the same (independent likelihoods multiply; Cowan et
/// al. 2011).
#[test]
fn a_blind_channel_without_shared_uncertainty_changes_nothing() {
    let blind = TWO_VOLUMES.replace(
        "plan:",
        "  - name: veto\n    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 2.0}\n    \
         detector: {mass_kg: 3}\n    signal_efficiency: 0\n    resolution: {points: [[0.0, 2.0]]}\n    \
         backgrounds:\n      - {name: veto continuum, events_per_kg_day: 80, shape: {flat: {}}}\nplan:",
    );
    let (_, with_blind) = reach_of(&blind, &[30.0]);
    let (_, without) = reach_of(TWO_VOLUMES, &[30.0]);
    for (a, b) in with_blind.exposures[0]
        .positions
        .iter()
        .zip(&without.exposures[0].positions)
    {
        let (a_limit, b_limit) = (a.limit_rate_asimov.unwrap(), b.limit_rate_asimov.unwrap());
        assert!(
            (a_limit / b_limit - 1.0).abs() < 1e-9,
            "{a_limit} vs {b_limit}"
        );
        let (a_rate, b_rate) = (
            a.discovery_rate_local[1].unwrap(),
            b.discovery_rate_local[1].unwrap(),
        );
        assert!((a_rate / b_rate - 1.0).abs() < 1e-9, "{a_rate} vs {b_rate}");
        assert_eq!(a.channels[2].limit_rate_asimov, None);
    }
}

/// Two identical channels whose resolution grows linearly from s0 = 1 at
/// `from` = 20 to s1 = 3 at `to` = 80 over flat, known backgrounds with
/// large counts: the asymptotic mean upcrossings of q0 = u0 = 1 is
/// exp(-u0/2)/(2π√2) · L ln(s1/s0)/(s1 − s0) (Rice 1944, as used by Gross
/// and Vitells 2010, integrating the local rate 1/(σ√2) over the scan; the
/// channels share the correlation, so the combined scan has the count of
/// one); within 2%.
#[test]
fn two_channels_with_a_growing_resolution_follow_rice() {
    let channel = |name: &str| {
        format!(
            "  - name: {name}\n    observable: {{name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.1}}\n    \
             detector: {{mass_kg: 1}}\n    resolution: {{points: [[20.0, 1.0], [80.0, 3.0]]}}\n    \
             backgrounds:\n      - {{name: flat, events_per_kg_day: 1000000, shape: {{flat: {{}}}}}}\n"
        )
    };
    let text = format!(
        "title: Rice test (invented numbers)\nsignal:\n  events_per_kg_day: 50\n  shape: {{gaussian: {{mean: 50.0}}}}\n  \
         scan: {{from: 20.0, to: 80.0, step: 1.0}}\nchannels:\n{}{}plan:\n  days: [30]\n  toys: 10\n  seed: 1\n  targets: [3]\n",
        channel("a"),
        channel("b")
    );
    let (_, reach) = reach_of(&text, &[30.0]);
    let (length, s0, s1, u0): (f64, f64, f64, f64) = (60.0, 1.0, 3.0, 1.0);
    let expected =
        (-u0 / 2.0).exp() / (2.0 * std::f64::consts::PI * 2f64.sqrt()) * length * (s1 / s0).ln()
            / (s1 - s0);
    let computed = reach.exposures[0].mean_upcrossings_asimov;
    assert!(
        (computed / expected - 1.0).abs() < 0.02,
        "{computed} vs {expected}"
    );
}

/// At the scenario's own position (50, a scan position) and exposure, the
/// reach limit is the projection's Asimov limit times the rate, and the
/// local discovery rate gives the projection's Z_A = target when it is the
/// scenario's rate (same engine, so agreement to the root finder's 1e-7).
/// A floated slope and a constrained normalisation make it a real fit.
#[test]
fn own_position_agrees_with_the_projection() {
    let text = KNOWN.replace(
        "shape: {flat: {}}}",
        "shape: {exponential: {slope: -0.01}}, norm_uncertainty: 0.05, float_shape: true}",
    );
    let (scenario, reach) = reach_of(&text, &[30.0]);
    let exposure = &reach.exposures[0];
    let own = exposure
        .positions
        .iter()
        .find(|point| point.position == 50.0)
        .unwrap();
    let model = Model::from_scenario(&scenario);
    let likelihood = Likelihood::new(&model);
    let limit = asymptotic_limits(&likelihood, exposure.live_days, 0.05).unwrap();
    let expected = limit.median * scenario.signal().events_per_day;
    let computed = own.limit_rate_asimov.unwrap();
    assert!(
        (computed / expected - 1.0).abs() < 1e-9,
        "{computed} vs {expected}"
    );
    let mut at_rate = scenario.clone();
    at_rate.channel_mut().signal.events_per_day = own.discovery_rate_local[0].unwrap();
    let model = Model::from_scenario(&at_rate);
    let likelihood = Likelihood::new(&model);
    let z = AsimovSignificance::new(&likelihood)
        .at_live_days(exposure.live_days)
        .unwrap();
    assert!((z - 3.0).abs() < 1e-5, "Z_A = {z}");
}

/// The global discovery rate needs more signal than the local one, and the
/// local significance it stands for gives the target after the asymptotic
/// look-elsewhere correction (Gross and Vitells, Eur. Phys. J. C 70 (2010) 525).
#[test]
fn global_reach_needs_more_signal() {
    let (_, reach) = reach_of(KNOWN, &[30.0]);
    let exposure = &reach.exposures[0];
    assert!(exposure.mean_upcrossings_asimov > 0.0);
    for point in &exposure.positions {
        for (local, global) in point
            .discovery_rate_local
            .iter()
            .zip(&point.discovery_rate_global)
        {
            assert!(global.unwrap() > local.unwrap());
        }
    }
}

/// Two volumes at the scenario's own position (50, a scan position): the
/// reach limit per kg·day is the projection's Asimov limit on mu times the
/// rate, and the projection's Z_A of the model at the local 3σ discovery
/// rate is 3 (the same joint likelihood; Cowan et al. 2011, eqs. 88-89, 97).
#[test]
fn two_volumes_at_the_own_position_agree_with_the_projection() {
    let (scenario, reach) = reach_of(TWO_VOLUMES, &[30.0]);
    let exposure = &reach.exposures[0];
    let own = exposure
        .positions
        .iter()
        .find(|point| point.position == 50.0)
        .unwrap();
    let model = Model::from_scenario(&scenario);
    let likelihood = Likelihood::new(&model);
    let limit = asymptotic_limits(&likelihood, exposure.live_days, 0.05).unwrap();
    let expected = limit.median * reach.signal_rate;
    let computed = own.limit_rate_asimov.unwrap();
    assert!(
        (computed / expected - 1.0).abs() < 1e-9,
        "{computed} vs {expected}"
    );
    let scale = own.discovery_rate_local[0].unwrap() / reach.signal_rate;
    let mut at_rate = scenario.clone();
    for channel in &mut at_rate.channels {
        channel.signal.events_per_day *= scale;
    }
    let model = Model::from_scenario(&at_rate);
    let z = AsimovSignificance::new(&Likelihood::new(&model))
        .at_live_days(exposure.live_days)
        .unwrap();
    assert!((z - 3.0).abs() < 1e-5, "Z_A = {z}");
}
