//! The asymptotic mean number of upcrossings (Asimov geometry) against
//! background-only scan pseudo-experiments.

use runcast::ensemble::{EnsemblePlan, look_elsewhere_ensemble};
use runcast::likelihood::Likelihood;
use runcast::look_elsewhere::{REFERENCE_LEVEL, mean_upcrossings};
use runcast::model::Model;
use runcast::scenario::Scenario;
use runcast::upcrossings::GeometryTable;

/// A falling continuum with a free normalisation and a floated slope, a
/// Gaussian line whose width grows from 1 to 2 along the scan, many counts
/// per bin, and a scan step of a tenth of the narrowest width.
const FLOATED: &str = "\
title: upcrossing toys (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 60.0], bin_width: 0.5}
signal:
  events_per_day: 1.0
  shape: {gaussian: {mean: 30.0, sigma: 1.0}}
  scan: {from: 10.0, to: 50.0, step: 0.1, width_at_to: 2.0}
backgrounds:
  - {name: continuum, events_per_day: 20000, shape: {exponential: {slope: -0.03}}, norm_uncertainty: free, float_shape: true}
plan:
  days: {first: 1, last: 10, points: 2, spacing: log}
  toys: 10
  seed: 11
  targets: [3, 5]
";

/// In the large-sample limit q0(position) is the square of a Gaussian
/// process whose mean upcrossings follow the Rice formula (Rice, Bell Syst.
/// Tech. J. 23 (1944) 282; Cramér and Leadbetter 1967 for the
/// non-stationary case; Gross and Vitells, Eur. Phys. J. C 70 (2010) 525).
/// The toys' mean count of upcrossings of q0 = 1 agrees with the asymptotic
/// E N within 3 of its standard errors plus 3% (the grid's step of a tenth
/// of a width misses a little and counts are large but finite).
#[test]
fn asymptotic_upcrossings_agree_with_scan_toys() {
    let scenario = Scenario::from_yaml(FLOATED).unwrap();
    let scan = scenario.signal_scan().unwrap();
    let model = Model::from_scenario(&scenario);
    let live_days = 10.0;
    let likelihood = Likelihood::new(&model);
    let asymptotic = GeometryTable::of_scan(&likelihood, &scan)
        .at(live_days)
        .unwrap()
        .reference_upcrossings();
    let plan = EnsemblePlan {
        toys: 0..300,
        seed: 11,
        progress: &|_| {},
    };
    let outcome = look_elsewhere_ensemble(&likelihood, &scan, live_days, 0, &plan, REFERENCE_LEVEL);
    assert_eq!(outcome.failed_fits, 0);
    let counts: Vec<u64> = outcome
        .values
        .iter()
        .map(|t| u64::from(t.upcrossings))
        .collect();
    let sum: u64 = counts.iter().sum();
    let squares: u64 = counts.iter().map(|c| c * c).sum();
    let (mean, error) = mean_upcrossings(sum, squares, counts.len());
    let error = error.unwrap();
    assert!(
        (mean - asymptotic).abs() < 3.0 * error + 0.03 * asymptotic,
        "toys {mean} ± {error} vs asymptotic {asymptotic}"
    );
}
