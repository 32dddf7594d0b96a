//! The fixed models the benchmark runs on.
//!
//! An invented test bench, not a physics case: a Gaussian peak on a falling
//! exponential continuum over [0, 100], fitted with the signal strength mu, a
//! background normalisation factor constrained to 10% and the exponential
//! slope floating. Only the binning changes between models, so the work per
//! bin can be compared; beside them, the same events in two channels of 100
//! bins with a factor shared between them.

use crate::model::Model;
use crate::scenario::{Scenario, ScenarioError};

/// The numbers of bins the benchmark compares.
pub const BIN_COUNTS: [usize; 3] = [20, 200, 2000];

/// Live days of every measured ensemble: 20,000 background and 200 signal
/// events, a median significance of about 4.
pub const LIVE_DAYS: f64 = 10.0;

/// The scenario text of the model with `bins` bins, its plan a grid of
/// `points` exposures from 1 to 10 days (10 days alone for one point).
pub fn scenario_text(bins: usize, points: usize) -> String {
    let bin_width = 100.0 / bins as f64;
    let first = if points > 1 { 1 } else { 10 };
    format!(
        "# Benchmark model of runcast (invented numbers, no physics case).\n\
         title: benchmark peak on a continuum, {bins} bins\n\
         observable: {{name: x, unit: a.u., range: [0.0, 100.0], bin_width: {bin_width}}}\n\
         signal: {{events_per_day: 20, shape: {{gaussian: {{mean: 50.0, sigma: 2.0}}}}}}\n\
         backgrounds:\n  - {{name: continuum, events_per_day: 2000, \
         shape: {{exponential: {{slope: -0.02}}}}, norm_uncertainty: 0.1, float_shape: true}}\n\
         plan: {{days: {{first: {first}, last: 10, points: {points}, spacing: log}}, toys: 1000, \
         seed: 20260401, targets: [3, 5]}}\n"
    )
}

/// The model with `bins` bins.
pub fn model(bins: usize) -> Result<Model, ScenarioError> {
    let scenario = Scenario::from_yaml(&scenario_text(bins, 2))?;
    Ok(Model::from_scenario(&scenario))
}

/// Bins of each channel of the two-channel model.
pub const BINS_PER_CHANNEL: usize = 100;

/// The two-channel model: the benchmark model's peak and continuum split
/// evenly between two channels of [`BINS_PER_CHANNEL`] bins (the same events
/// in all), each with its own 10% background factor and slope, and one 5%
/// factor shared by both backgrounds.
pub fn two_channel_model() -> Result<Model, ScenarioError> {
    let bin_width = 100.0 / BINS_PER_CHANNEL as f64;
    let channel = |name: &str| {
        format!(
            "  - name: {name}\n\
             \x20   observable: {{name: x, unit: a.u., range: [0.0, 100.0], bin_width: {bin_width}}}\n\
             \x20   signal: {{events_per_day: 10, shape: {{gaussian: {{mean: 50.0, sigma: 2.0}}}}}}\n\
             \x20   backgrounds:\n\
             \x20     - {{name: continuum, events_per_day: 1000, shape: {{exponential: {{slope: -0.02}}}}, \
             norm_uncertainty: 0.1, float_shape: true, shared: [calibration]}}\n"
        )
    };
    let text = format!(
        "title: benchmark peak in two channels\n\
         shared_uncertainties: {{calibration: 0.05}}\n\
         channels:\n{}{}\
         plan: {{days: {{first: 1, last: 10, points: 2, spacing: log}}, toys: 1000, \
         seed: 20260401, targets: [3, 5]}}\n",
        channel("first"),
        channel("second")
    );
    Ok(Model::from_scenario(&Scenario::from_yaml(&text)?))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_benchmark_model_builds_with_its_bins_and_three_parameters() {
        for bins in BIN_COUNTS {
            let model = model(bins).expect("built-in scenario is valid");
            let model_bins: usize = model.channels.iter().map(|c| c.edges.len() - 1).sum();
            assert_eq!(model_bins, bins);
            assert_eq!(model.parameters.len(), 3);
            assert_eq!(model.constraints.len(), 1);
        }
        let two = two_channel_model().expect("built-in scenario is valid");
        let edges: Vec<usize> = two.channels.iter().map(|c| c.edges.len() - 1).collect();
        assert_eq!(edges, [BINS_PER_CHANNEL; 2]);
        // mu, the shared factor, and per channel a background factor and a slope.
        assert_eq!(two.parameters.len(), 6);
        assert_eq!(two.constraints.len(), 3);
        for points in [1, 100] {
            let scenario = Scenario::from_yaml(&scenario_text(200, points)).unwrap();
            assert_eq!(scenario.plan.days.days().len(), points);
        }
    }
}
