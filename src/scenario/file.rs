//! The layout of a scenario file: one channel written at the top level, or a
//! `channels` list. Both read into the same [`Scenario`], so a single channel
//! and the same content as a one-entry list are one scenario.

use super::{
    Background, Channel, ChannelSyntax, Detector, Observable, Plan, Scenario, Schedule, Signal,
};
use crate::scenario::ScenarioError;
use serde::Deserialize;
use std::collections::BTreeMap;

/// A scenario file as written, before its channels are gathered.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct ScenarioFile {
    title: String,
    #[serde(default)]
    observable: Option<Observable>,
    #[serde(default)]
    signal: Option<Signal>,
    #[serde(default)]
    backgrounds: Option<Vec<Background>>,
    #[serde(default)]
    channels: Option<Vec<Channel>>,
    #[serde(default)]
    shared_uncertainties: BTreeMap<String, f64>,
    #[serde(default)]
    detector: Option<Detector>,
    #[serde(default)]
    schedule: Schedule,
    plan: Plan,
}

impl ScenarioFile {
    /// The scenario with its channel list: the `channels` list as written, or
    /// the one top-level channel, named after its observable. Refuses a file
    /// with both forms or with neither complete, naming the key.
    pub(super) fn into_scenario(self) -> Result<Scenario, ScenarioError> {
        let ScenarioFile {
            title,
            observable,
            signal,
            backgrounds,
            channels,
            shared_uncertainties,
            detector,
            schedule,
            plan,
        } = self;
        let (channels, channel_syntax) = match (channels, observable, signal, backgrounds) {
            (Some(channels), None, None, None) => (channels, ChannelSyntax::List),
            (Some(_), observable, signal, _) => {
                let key = if observable.is_some() {
                    "observable"
                } else if signal.is_some() {
                    "signal"
                } else {
                    "backgrounds"
                };
                return Err(ScenarioError::invalid(
                    key,
                    format!(
                        "a channels list replaces the top-level observable, signal and backgrounds; move {key} into a channel"
                    ),
                ));
            }
            (None, Some(observable), Some(signal), Some(backgrounds)) => (
                vec![Channel {
                    name: observable.name.clone(),
                    observable,
                    detector: None,
                    signal,
                    backgrounds,
                }],
                ChannelSyntax::Single,
            ),
            (None, observable, signal, _) => {
                let key = if observable.is_none() {
                    "observable"
                } else if signal.is_none() {
                    "signal"
                } else {
                    "backgrounds"
                };
                return Err(ScenarioError::invalid(
                    key,
                    "missing: write observable, signal and backgrounds at the top level for one channel, or a channels list",
                ));
            }
        };
        if channels.is_empty() {
            return Err(ScenarioError::invalid(
                "channels",
                "at least one channel is needed, got an empty list",
            ));
        }
        let detector = detector.map(|d| d.checked("")).transpose()?;
        let mut channels = channels;
        for (index, channel) in channels.iter_mut().enumerate() {
            channel.convert_rates(&channel_syntax.path(index), detector)?;
        }
        Ok(Scenario {
            title,
            channels,
            channel_syntax,
            shared_uncertainties,
            detector,
            schedule,
            plan,
            table_files: Vec::new(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::super::{ChannelSyntax, Scenario, ScenarioError};
    use crate::warning::Warning;

    const HEAD: &str = "title: Channels\n";
    const TAIL: &str = "\
plan:
  days: {first: 1, last: 100, points: 5, spacing: log}
  toys: 10
  seed: 1
  targets: [3]
";

    /// One channel's keys, at the top level (indent 0) or in a list entry.
    fn channel_keys(indent: &str, mean: f64, float_flat: bool) -> String {
        format!(
            "\
{indent}observable: {{name: energy, unit: keV, range: [0.0, 100.0], bin_width: 1.0}}
{indent}signal: {{events_per_day: 2.0, shape: {{gaussian: {{mean: {mean}, sigma: 1.5}}}}}}
{indent}backgrounds:
{indent}  - {{name: continuum, events_per_day: 40, shape: {{flat: {{}}}}, float_shape: {float_flat}}}
"
        )
    }

    fn single() -> String {
        format!("{HEAD}{}{TAIL}", channel_keys("", 50.0, false))
    }

    /// A `channels` list with one entry per (name, peak mean, floated flat shape).
    fn listed(channels: &[(&str, f64, bool)]) -> String {
        let entries: String = channels
            .iter()
            .map(|&(name, mean, float_flat)| {
                format!(
                    "  - name: {name}\n{}",
                    channel_keys("    ", mean, float_flat)
                )
            })
            .collect();
        format!("{HEAD}channels:\n{entries}{TAIL}")
    }

    fn invalid(text: &str) -> (String, String) {
        match Scenario::from_yaml(text) {
            Err(ScenarioError::Invalid { field, message }) => (field, message),
            other => panic!("expected an Invalid error, got {other:?}"),
        }
    }

    #[test]
    fn a_single_channel_is_a_one_entry_list() {
        let single = Scenario::from_yaml(&single()).unwrap();
        let listed = Scenario::from_yaml(&listed(&[("energy", 50.0, false)])).unwrap();
        assert_eq!(single.channel_syntax, ChannelSyntax::Single);
        assert_eq!(listed.channel_syntax, ChannelSyntax::List);
        assert_eq!(
            format!("{:?}", single.channels),
            format!("{:?}", listed.channels)
        );
    }

    #[test]
    fn errors_inside_a_listed_channel_name_its_index() {
        let text = listed(&[("central", 50.0, false), ("outer", 50.0, false)]);
        let at = text.rfind("events_per_day: 40").unwrap();
        let second_rate = format!("{}events_per_day: -4{}", &text[..at], &text[at + 18..]);
        let (field, message) = invalid(&second_rate);
        assert_eq!(
            field, "channels[1].backgrounds[0].events_per_day",
            "{message}"
        );
    }

    #[test]
    fn channel_names_are_required_and_unique() {
        let (field, message) = invalid(&listed(&[
            ("central", 50.0, false),
            ("central", 40.0, false),
        ]));
        assert_eq!(field, "channels[1].name");
        assert!(message.contains("channels[0].name"), "{message}");
        let (field, _) = invalid(&listed(&[("central", 50.0, false), ("' '", 40.0, false)]));
        assert_eq!(field, "channels[1].name");
    }

    #[test]
    fn a_file_needs_one_form_of_channels_complete() {
        let both = format!(
            "{HEAD}{}channels: []\n{TAIL}",
            channel_keys("", 50.0, false)
        );
        assert_eq!(invalid(&both).0, "observable");
        let empty = format!("{HEAD}channels: []\n{TAIL}");
        assert_eq!(invalid(&empty).0, "channels");
        let no_signal = single().replace(
            "signal: {events_per_day: 2.0, shape: {gaussian: {mean: 50, sigma: 1.5}}}\n",
            "",
        );
        assert_eq!(invalid(&no_signal).0, "signal");
    }

    #[test]
    fn warnings_in_a_listed_channel_name_its_index() {
        let scenario =
            Scenario::from_yaml(&listed(&[("central", 50.0, false), ("outer", 50.0, true)]))
                .unwrap();
        assert_eq!(
            scenario.warnings(),
            [Warning::InChannel {
                channel: 1,
                warning: Box::new(Warning::NothingToFloat { background: 0 })
            }]
        );
    }

    /// `listed` with the rates of the channel at `index` written per kg·day
    /// (the same numbers), and `detector`, if any, inside that entry.
    fn per_kg_day_in(text: &str, index: usize, detector: Option<&str>) -> String {
        let entry = text.match_indices("  - name: ").nth(index).unwrap().0;
        let next = text[entry + 1..]
            .find("  - name: ")
            .map_or(text.len(), |at| entry + 1 + at);
        let body = text[entry..next].replace("events_per_day", "events_per_kg_day");
        let body = match detector {
            Some(detector) => body.replacen('\n', &format!("\n    {detector}\n"), 1),
            None => body,
        };
        format!("{}{body}{}", &text[..entry], &text[next..])
    }

    /// A channel's own detector mass scales its rates per kg·day (rate × M,
    /// common practice) and is checked where it is written; a top-level mass
    /// serves the channels without their own.
    #[test]
    fn a_channel_detector_converts_its_own_rates() {
        let text = listed(&[("central", 50.0, false), ("outer", 40.0, false)]);
        let scenario =
            Scenario::from_yaml(&per_kg_day_in(&text, 1, Some("detector: {mass_kg: 2.5}")))
                .unwrap();
        assert_eq!(scenario.channels[0].signal.events_per_day, 2.0);
        assert_eq!(scenario.channels[1].signal.events_per_day, 2.0 * 2.5);
        assert_eq!(
            scenario.channels[1].backgrounds[0].events_per_day,
            40.0 * 2.5
        );
        let (field, _) = invalid(&per_kg_day_in(&text, 1, Some("detector: {mass_kg: -1}")));
        assert_eq!(field, "channels[1].detector.mass_kg");
        let shared = per_kg_day_in(&text, 0, None).replacen(
            HEAD,
            &format!("{HEAD}detector: {{mass_kg: 4}}\n"),
            1,
        );
        let scenario = Scenario::from_yaml(&shared).unwrap();
        assert_eq!(scenario.channels[0].signal.events_per_day, 2.0 * 4.0);
        assert_eq!(scenario.channels[1].signal.events_per_day, 2.0);
        let (field, _) = invalid(&shared.replacen("detector: {mass_kg: 4}\n", "", 1));
        assert_eq!(field, "channels[0].signal.events_per_kg_day");
    }
}
