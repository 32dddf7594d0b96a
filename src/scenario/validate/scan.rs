//! `signal.scan` across the channels: one scan moves one signal, so several
//! channels scan a detector-level signal only; the scan itself is checked
//! where it is built (`scenario/scan.rs`).

use super::channels::channel_path;
use super::shape::held_shape;
use super::values::Checked;
use crate::scenario::{Scenario, ScenarioError};
use crate::warning::Warning;

/// The scan of the signal position, when there is one: in one channel, or
/// for a detector-level signal in all of them.
pub(super) fn validate_scan(scenario: &Scenario) -> Checked {
    refuse_scan_in_several_channels(scenario)?;
    if let Some(Err(error)) = scenario.checked_signal_scan() {
        return Err(error);
    }
    Ok(())
}

/// A scan of several channels moves one physical signal in all of them:
/// that is a detector-level signal; per-channel signals, each its own, have
/// no common position to scan, so a scan there is refused at the first
/// channel declaring one.
fn refuse_scan_in_several_channels(scenario: &Scenario) -> Checked {
    if scenario.channels.len() < 2 || scenario.detector_signal.is_some() {
        return Ok(());
    }
    match scenario
        .channels
        .iter()
        .position(|channel| channel.signal.scan.is_some())
    {
        Some(index) => Err(ScenarioError::invalid(
            format!("{}signal.scan", channel_path(scenario, index)),
            format!(
                "a scan of several channels ({}) moves one signal in all of them: write the signal once at the top level, beside channels, with each channel's resolution and signal_efficiency",
                scenario.channels.len()
            ),
        )),
        None => Ok(()),
    }
}

/// `scan.width_at_to` beside a signal position other than `scan.from`:
/// the linear width starts from the signal's own width at `from`.
pub(super) fn width_at_to_away_from_from(scenario: &Scenario) -> Option<Warning> {
    let signal = scenario.signal();
    let scan = signal.scan.as_ref()?;
    scan.width_at_to?;
    let position = held_shape(&signal.shape, scenario.observable().range)?
        .peak()?
        .centre;
    (position != scan.from).then_some(Warning::WidthAtToAwayFromFrom {
        position,
        from: scan.from,
    })
}

#[cfg(test)]
mod tests {
    use super::super::test_scenario::with;
    use crate::scenario::{Scenario, ScenarioError};
    use crate::warning::Warning;

    /// Two channels, the second with a scan: refused at its path.
    #[test]
    fn a_scan_in_a_scenario_of_several_channels_is_refused() {
        let channel = |name: &str, scan: &str| {
            format!(
                "  - name: {name}\n    observable: {{name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.5}}\n    \
                 signal:\n      events_per_day: 2.0\n      shape: {{gaussian: {{mean: 50.0, sigma: 1.5}}}}\n{scan}    \
                 backgrounds:\n      - {{name: flat, events_per_day: 40, shape: {{flat: {{}}}}}}\n"
            )
        };
        let text = format!(
            "title: Two channels\nchannels:\n{}{}plan:\n  days: {{first: 1, last: 100, points: 4, spacing: log}}\n  \
             toys: 10\n  seed: 1\n  targets: [3]\n",
            channel("a", ""),
            channel("b", "      scan: {from: 10.0, to: 90.0, step: 0.5}\n")
        );
        match Scenario::from_yaml(&text) {
            Err(ScenarioError::Invalid { field, .. }) => {
                assert_eq!(field, "channels[1].signal.scan")
            }
            other => panic!("expected an Invalid error, got {other:?}"),
        }
    }

    /// `width_at_to` starts from the signal's own width at `from`: with the
    /// signal at 50, not at `from` = 10, `check` warns; at `from`, or
    /// without `width_at_to`, it does not.
    #[test]
    fn width_at_to_away_from_from_is_a_warning() {
        let text = with(
            "  yield_uncertainty: 0.1\n",
            "  yield_uncertainty: 0.1\n  scan: {from: 10.0, to: 90.0, step: 0.5, width_at_to: 3.5}\n",
        );
        assert_eq!(
            Scenario::from_yaml(&text).unwrap().warnings(),
            [Warning::WidthAtToAwayFromFrom {
                position: 50.0,
                from: 10.0
            }]
        );
        let at_from = text.replacen("mean: 50.0", "mean: 10.0", 1);
        assert!(Scenario::from_yaml(&at_from).unwrap().warnings().is_empty());
        let without = text.replacen(", width_at_to: 3.5", "", 1);
        assert!(Scenario::from_yaml(&without).unwrap().warnings().is_empty());
    }
}
