//! The scenario the tests of every section edit line by line.

use crate::scenario::{Scenario, ScenarioError};

/// A valid scenario with two backgrounds, edited line by line by the tests below.
pub(super) const BASE: &str = "\
title: Test scenario
observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.5}
signal:
  events_per_day: 2.0
  shape: {gaussian: {mean: 50.0, sigma: 1.5}}
  yield_uncertainty: 0.1
backgrounds:
  - name: continuum
    events_per_day: 40
    shape: {exponential: {slope: -0.02}}
    norm_uncertainty: 0.05
  - name: sloped
    events_per_day: 10
    shape: {polynomial: {coefficients: [1.0, 0.01]}}
    norm_uncertainty: free
    float_shape: true
schedule:
  live_fraction: 0.8
  periods: [{days: 20, rate_scale: 0.5}]
plan:
  days: {first: 1, last: 365, points: 24, spacing: log}
  toys: 100
  seed: 7
  targets: [3, 5]
";

/// `BASE` with one exact piece of text replaced.
pub(super) fn with(from: &str, to: &str) -> String {
    assert!(BASE.contains(from), "test text {from:?} not in BASE");
    BASE.replacen(from, to, 1)
}

/// The field named by the `Invalid` error that `text` must produce, and its message.
pub(super) fn rejection(text: &str) -> (String, String) {
    match Scenario::from_yaml(text) {
        Err(ScenarioError::Invalid { field, message }) => (field, message),
        other => panic!("expected an Invalid error, got {other:?}"),
    }
}

pub(super) fn rejected_field(text: &str) -> String {
    rejection(text).0
}

pub(super) fn accepted(text: &str) -> Scenario {
    Scenario::from_yaml(text).unwrap_or_else(|error| panic!("rejected: {error}"))
}
