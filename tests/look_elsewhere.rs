//! The look-elsewhere effect against its published forms: upcrossings of the
//! background-only q0(position) against Rice's formula, the direct toy
//! global p-value against the estimate of Gross and Vitells, and a scan of
//! one position giving the local answer.

mod common;

use runcast::asymptotic::p_value;
use runcast::ensemble::{
    EnsemblePlan, Family, Generator, PositionScan, ScanPlacements, ScanToy,
    background_only_q0_ensemble, look_elsewhere_ensemble, run_ensemble,
};
use runcast::likelihood::Likelihood;
use runcast::look_elsewhere::{REFERENCE_LEVEL, global_p_value, global_significance};
use runcast::model::Model;
use runcast::scenario::{Scenario, SignalScan};
use std::f64::consts::PI;
use std::sync::OnceLock;

/// Gaussian signal of sigma 1 over a flat, exactly known background of
/// 10,000 events per 0.25-wide bin (large counts: q0(position) is then a
/// Gaussian process), scanned over [20, 80] in steps of sigma/10, at least
/// 20 sigma from either edge of [0, 100].
const RICE_SCENARIO: &str = "\
title: flat background scanned for a Gaussian line
observable: {name: x, unit: a.u., range: [0.0, 100.0], bin_width: 0.25}
signal:
  events_per_day: 100
  shape: {gaussian: {mean: 50.0, sigma: 1.0}}
  scan: {from: 20.0, to: 80.0, step: 0.1}
backgrounds:
  - {name: flat, events_per_day: 4000000, shape: {flat: {}}}
plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3, 5]}
";

const SIGMA: f64 = 1.0;
const SCANNED_LENGTH: f64 = 60.0;
const LIVE_DAYS: f64 = 1.0;
const SCANS: usize = 400;
const SEED: u64 = 20_261_202;

fn scenario() -> Scenario {
    Scenario::from_yaml(RICE_SCENARIO).expect("valid test scenario")
}

/// The background-only scans of the Rice scenario, run once for the tests
/// that read them.
fn scans() -> &'static [ScanToy] {
    static SCANS_RUN: OnceLock<Vec<ScanToy>> = OnceLock::new();
    SCANS_RUN.get_or_init(|| {
        let scenario = scenario();
        let model = Model::from_scenario(&scenario);
        let likelihood = Likelihood::new(&model);
        let scan = scenario.signal_scan().expect("the scenario scans");
        let plan = EnsemblePlan {
            toys: 0..SCANS,
            seed: SEED,
            progress: &|_| {},
        };
        let outcome =
            look_elsewhere_ensemble(&likelihood, &scan, LIVE_DAYS, 0, &plan, REFERENCE_LEVEL);
        assert_eq!(outcome.failed_fits, 0, "every scan converges");
        outcome.values
    })
}

fn mean_and_error(values: &[f64]) -> (f64, f64) {
    let n = values.len() as f64;
    let mean = values.iter().sum::<f64>() / n;
    let variance = values.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0);
    (mean, (variance / n).sqrt())
}

/// Rice (Bell Syst. Tech. J. 23 (1944) 282): a stationary Gaussian process
/// with correlation rho crosses level c upwards (L / 2 pi) sqrt(-rho''(0))
/// exp(-c^2/2) times over a length L. For a Gaussian template of width sigma
/// on a flat background rho(d) = exp(-d^2 / (4 sigma^2)), so -rho''(0) =
/// 1/(2 sigma^2), and q0 = Z^2 crosses u0 = c^2 upwards
/// N(u0) = L / (2 pi sigma sqrt 2) exp(-u0/2) times (Gross and Vitells, Eur.
/// Phys. J. C 70 (2010) 525, sec. 3). Here 60/(2 pi sqrt 2) e^-0.5 = 4.10.
/// The step of sigma/10 and the bins of sigma/4 change it by well under a
/// percent; the tolerance is three standard errors of the toy mean.
#[test]
fn upcrossings_follow_rice_formula() {
    let rice = SCANNED_LENGTH / (2.0 * PI * SIGMA * 2f64.sqrt()) * (-REFERENCE_LEVEL / 2.0).exp();
    let counts: Vec<f64> = scans().iter().map(|s| f64::from(s.upcrossings)).collect();
    let (mean, error) = mean_and_error(&counts);
    assert!(
        (mean - rice).abs() < 3.0 * error,
        "N(u0) = {mean} ± {error} from {SCANS} scans, Rice {rice}"
    );
}

/// The fraction of scans whose largest q0 reaches q agrees with
/// p_local(q) + N(u0) exp(-(q - u0)/2) (Gross and Vitells 2010; Davies,
/// Biometrika 74 (1987) 33) where both are measurable: at the levels q
/// where the estimate is 0.2 and 0.03. Tolerance: three standard errors of
/// the difference, the binomial error of the fraction and the error of
/// N(u0) carried through the formula.
#[test]
fn direct_global_p_agrees_with_gross_vitells() {
    let scans = scans();
    let counts: Vec<f64> = scans.iter().map(|s| f64::from(s.upcrossings)).collect();
    let (upcrossings, upcrossings_error) = mean_and_error(&counts);
    for estimate in [0.2, 0.03] {
        let q = level_with_global_p(estimate, upcrossings);
        let predicted = global_p_value(q, REFERENCE_LEVEL, upcrossings);
        let direct = scans.iter().filter(|s| s.max_q0 >= q).count() as f64 / SCANS as f64;
        let binomial = (predicted * (1.0 - predicted) / SCANS as f64).sqrt();
        let from_upcrossings = upcrossings_error * (-(q - REFERENCE_LEVEL) / 2.0).exp();
        let error = binomial.hypot(from_upcrossings);
        assert!(
            (direct - predicted).abs() < 3.0 * error,
            "q = {q}: direct {direct}, Gross-Vitells {predicted} ± {error}"
        );
    }
}

/// The q at which the Gross-Vitells estimate equals `p` (bisection; the
/// estimate falls with q).
fn level_with_global_p(p: f64, upcrossings: f64) -> f64 {
    let (mut low, mut high) = (REFERENCE_LEVEL, 100.0);
    for _ in 0..200 {
        let middle = 0.5 * (low + high);
        if global_p_value(middle, REFERENCE_LEVEL, upcrossings) > p {
            low = middle;
        } else {
            high = middle;
        }
    }
    0.5 * (low + high)
}

/// A scan of one position, at the signal's own mean, is the local search:
/// on the same pseudo-experiments it gives the q0 of the local
/// background-only ensemble toy by toy, no upcrossing, and so p_global =
/// p_local (Gross and Vitells 2010: the correction vanishes with N = 0).
#[test]
fn a_single_position_gives_the_local_answer() {
    let scenario = Scenario::from_yaml(&RICE_SCENARIO.replace("bin_width: 0.25", "bin_width: 1.0"))
        .expect("valid test scenario");
    let model = Model::from_scenario(&scenario);
    let likelihood = Likelihood::new(&model);
    let scan: SignalScan = scenario.signal_scan().unwrap().single_position(50.0);
    assert_eq!(scan.len(), 1);
    let plan = EnsemblePlan {
        toys: 0..200,
        seed: SEED,
        progress: &|_| {},
    };
    let local = background_only_q0_ensemble(&likelihood, LIVE_DAYS, 3, &plan);
    let mut background_only = model.nominal_parameters();
    background_only[0] = 0.0;
    let generator = Generator::new(&likelihood, &background_only, LIVE_DAYS);
    let placements = ScanPlacements::new(&likelihood, &scan);
    let scanned = run_ensemble(
        &generator,
        Family::Calibration.stream_index(3),
        &plan,
        || PositionScan::new(&likelihood, &placements),
        |positions, data| {
            let mut q0 = Vec::new();
            positions.scan(LIVE_DAYS, data, |q| q0.push(q)).ok()?;
            Some(q0[0])
        },
    );
    assert_eq!(local.failed_fits + scanned.failed_fits, 0);
    for (local, scanned) in local.values.iter().zip(&scanned.values) {
        assert!((local - scanned).abs() < 1e-6, "{local} vs {scanned}");
    }
    let single = look_elsewhere_ensemble(&likelihood, &scan, LIVE_DAYS, 3, &plan, REFERENCE_LEVEL);
    assert!(single.values.iter().all(|toy| toy.upcrossings == 0));
    for z in [1.0, 3.0, 5.0] {
        assert_eq!(global_p_value(z * z, REFERENCE_LEVEL, 0.0), p_value(z));
        assert!((global_significance(z, REFERENCE_LEVEL, 0.0) - z).abs() < 1e-9);
    }
}

/// Two identical channels seeing one detector-level line whose resolution
/// grows linearly from s0 = 1 at 20 to s1 = 3 at 80, over flat, exactly
/// known backgrounds with large counts (2,500 events per 0.25-wide bin).
const GROWING_TWO_CHANNELS: &str = "\
title: two channels, growing resolution (invented numbers)
signal:
  events_per_day: 100
  shape: {gaussian: {mean: 50.0}}
  scan: {from: 20.0, to: 80.0, step: 0.2}
channels:
  - name: a
    observable: {name: x, unit: a.u., range: [0.0, 100.0], bin_width: 0.25}
    resolution: {points: [[20.0, 1.0], [80.0, 3.0]]}
    backgrounds:
      - {name: flat, events_per_day: 1000000, shape: {flat: {}}}
  - name: b
    observable: {name: x, unit: a.u., range: [0.0, 100.0], bin_width: 0.25}
    resolution: {points: [[20.0, 1.0], [80.0, 3.0]]}
    backgrounds:
      - {name: flat, events_per_day: 1000000, shape: {flat: {}}}
plan: {days: [1], toys: 1, seed: 1, targets: [3]}
";

/// Background-only scans fitting both channels jointly at every position:
/// the mean upcrossings of q0 = u0 = 1 within three standard errors of
/// exp(-u0/2)/(2π√2) · L ln(s1/s0)/(s1 − s0) = 2.53 for L = 60, s0 = 1,
/// s1 = 3 (Rice 1944 with the local rate 1/(σ(x)√2) integrated over the
/// scan, as used by Gross and Vitells 2010; the channels share the
/// correlation, so the combined count is that of one).
#[test]
fn two_channels_with_a_growing_resolution_follow_rice_in_toys() {
    let scenario = Scenario::from_yaml(GROWING_TWO_CHANNELS).expect("valid test scenario");
    let model = Model::from_scenario(&scenario);
    let likelihood = Likelihood::new(&model);
    let scan = scenario.signal_scan().expect("the scenario scans");
    let toys = 300;
    let plan = EnsemblePlan {
        toys: 0..toys,
        seed: SEED,
        progress: &|_| {},
    };
    let outcome = look_elsewhere_ensemble(&likelihood, &scan, LIVE_DAYS, 0, &plan, REFERENCE_LEVEL);
    assert_eq!(outcome.failed_fits, 0, "every scan converges");
    let counts: Vec<f64> = outcome
        .values
        .iter()
        .map(|s| f64::from(s.upcrossings))
        .collect();
    let (mean, error) = mean_and_error(&counts);
    let (length, s0, s1) = (60.0_f64, 1.0_f64, 3.0_f64);
    let rice = (-REFERENCE_LEVEL / 2.0).exp() / (2.0 * PI * 2f64.sqrt()) * length * (s1 / s0).ln()
        / (s1 - s0);
    assert!(
        (mean - rice).abs() < 3.0 * error,
        "N(u0) = {mean} ± {error} from {toys} scans, Rice {rice}"
    );
}
