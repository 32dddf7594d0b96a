//! Checks on a parsed scenario: every number finite and in its allowed range,
//! every name present and unique, every shape a proper density on the range.
//!
//! Each rejection names the field by its dotted path, the value found and what
//! is expected, so that the user can fix the file from the message alone.
//! One file per section of the scenario file, checked in the file's order;
//! `values.rs` holds the checks on one value that every section uses.

mod backgrounds;
mod channels;
mod observable;
mod plan;
mod scan;
mod schedule;
mod shape;
mod shared_uncertainties;
mod signal;
#[cfg(test)]
mod test_scenario;
pub(super) mod values;

use crate::scenario::{ChannelSyntax, Scenario};
use crate::warning::Warning;
use channels::{channel_path, validate_channel, validate_channel_names};
use values::{Checked, require_text};

/// Rejects values that parse but make no physical sense, naming the first such field.
pub(super) fn validate(scenario: &Scenario) -> Checked {
    require_text("title", &scenario.title)?;
    shared_uncertainties::validate_shared_uncertainties(scenario)?;
    validate_channel_names(scenario)?;
    for (index, channel) in scenario.channels.iter().enumerate() {
        validate_channel(
            channel,
            &scenario.shared_uncertainties,
            scenario.detector_signal.is_some(),
        )
        .map_err(|error| error.within(&channel_path(scenario, index)))?;
    }
    scan::validate_scan(scenario)?;
    schedule::validate_schedule(&scenario.schedule, &schedule::background_names(scenario))?;
    plan::validate_plan(&scenario.plan)
}

/// Remarks about a valid scenario that are probably, but not surely, mistakes.
pub(super) fn warnings(scenario: &Scenario) -> Vec<Warning> {
    let mut remarks = Vec::new();
    for (index, channel) in scenario.channels.iter().enumerate() {
        let in_channel =
            backgrounds::flat_shapes_floated(&channel.backgrounds, channel.observable.range);
        remarks.extend(in_channel.map(|warning| match scenario.channel_syntax {
            ChannelSyntax::Single => warning,
            ChannelSyntax::List => Warning::InChannel {
                channel: index,
                warning: Box::new(warning),
            },
        }));
    }
    remarks.extend(shared_uncertainties::unused_shared_uncertainties(scenario));
    remarks.extend(scan::width_at_to_away_from_from(scenario));
    remarks.extend(plan::first_day_without_exposure(scenario));
    remarks
}

#[cfg(test)]
mod tests {
    use super::test_scenario::{BASE, accepted, rejected_field, rejection, with};
    use crate::scenario::{Scenario, ScenarioError};

    #[test]
    fn base_scenario_is_valid_without_warnings() {
        let scenario = accepted(BASE);
        assert!(scenario.warnings().is_empty(), "{:?}", scenario.warnings());
    }

    #[test]
    fn nan_and_infinity_are_rejected_wherever_they_appear() {
        let cases = [
            (
                "events_per_day: 2.0",
                "events_per_day: .nan",
                "signal.events_per_day",
            ),
            ("sigma: 1.5", "sigma: .inf", "signal.shape.gaussian.sigma"),
            ("mean: 50.0", "mean: .nan", "signal.shape.gaussian.mean"),
            (
                "range: [0.0, 100.0]",
                "range: [-.inf, 100.0]",
                "observable.range",
            ),
            ("bin_width: 0.5", "bin_width: .inf", "observable.bin_width"),
            (
                "slope: -0.02",
                "slope: .nan",
                "backgrounds[0].shape.exponential.slope",
            ),
            (
                "coefficients: [1.0, 0.01]",
                "coefficients: [1.0, .inf]",
                "backgrounds[1].shape.polynomial.coefficients[1]",
            ),
            (
                "yield_uncertainty: 0.1",
                "yield_uncertainty: .nan",
                "signal.yield_uncertainty",
            ),
            (
                "norm_uncertainty: 0.05",
                "norm_uncertainty: .inf",
                "backgrounds[0].norm_uncertainty",
            ),
            (
                "live_fraction: 0.8",
                "live_fraction: .nan",
                "schedule.live_fraction",
            ),
            ("days: 20,", "days: .inf,", "schedule.periods[0].days"),
            (
                "rate_scale: 0.5",
                "rate_scale: .nan",
                "schedule.periods[0].rate_scale",
            ),
            ("first: 1,", "first: .nan,", "plan.days.first"),
            ("last: 365,", "last: .inf,", "plan.days.last"),
            ("targets: [3, 5]", "targets: [3, .nan]", "plan.targets[1]"),
        ];
        for (from, to, field) in cases {
            assert_eq!(rejected_field(&with(from, to)), field, "{to}");
        }
    }

    #[test]
    fn non_positive_rates_are_rejected_with_the_value() {
        let (field, message) = rejection(&with("events_per_day: 10", "events_per_day: -3"));
        assert_eq!(field, "backgrounds[1].events_per_day");
        assert_eq!(message, "must be a positive finite number, got -3");
        let zero_signal = with("events_per_day: 2.0", "events_per_day: 0");
        assert_eq!(rejected_field(&zero_signal), "signal.events_per_day");
    }

    #[test]
    fn unknown_and_missing_keys_are_parse_errors_with_a_line() {
        let unknown = with("    float_shape: true", "    float_shapes: true");
        match Scenario::from_yaml(&unknown) {
            Err(error @ ScenarioError::Parse { line: Some(16), .. }) => {
                let shown = error.to_string();
                assert!(shown.starts_with("line 16, column "), "{shown}");
                assert!(shown.contains("unknown field `float_shapes`"), "{shown}");
            }
            other => panic!("expected a parse error on line 16, got {other:?}"),
        }
        let missing = with("  toys: 100\n", "");
        match Scenario::from_yaml(&missing) {
            Err(error @ ScenarioError::Parse { line: Some(_), .. }) => {
                assert!(
                    error.to_string().contains("missing field `toys`"),
                    "{error}"
                );
            }
            other => panic!("expected a parse error with a line, got {other:?}"),
        }
    }
}
