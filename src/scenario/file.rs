//! The layout of a scenario file: one channel written at the top level, or a
//! `channels` list. Both read into the same [`Scenario`], so a single channel
//! and the same content as a one-entry list are one scenario. Beside a
//! `channels` list the top-level `signal` is a detector-level signal
//! (`detector_signal.rs`), turned here into one signal per channel; so is
//! the signal of one channel written at the top level with a `resolution`
//! beside it, which reads as that channel in a one-entry list.

use super::detector_signal::{ChannelResponseFile, ChannelSight, DetectorSignalFile};
use super::resolution::ResolutionFile;
use super::{
    Background, Channel, ChannelSyntax, Detector, Observable, Plan, Scenario, Schedule, Signal,
};
use crate::scenario::ScenarioError;
use serde::Deserialize;
use serde::de::DeserializeOwned;
use std::collections::BTreeMap;

/// A scenario file as written, before its channels are gathered; `S` is
/// the form of the top-level `signal`: a channel's [`Signal`] in a file of
/// one channel, a [`DetectorSignalFile`] beside a `channels` list.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct ScenarioFile<S> {
    title: String,
    #[serde(default)]
    observable: Option<Observable>,
    #[serde(default = "none")]
    signal: Option<S>,
    #[serde(default)]
    backgrounds: Option<Vec<Background>>,
    #[serde(default)]
    channels: Option<Vec<ChannelEntry>>,
    /// The resolution of one channel written at the top level.
    #[serde(default)]
    resolution: Option<ResolutionFile>,
    #[serde(default)]
    shared_uncertainties: BTreeMap<String, f64>,
    #[serde(default)]
    detector: Option<Detector>,
    #[serde(default)]
    schedule: Schedule,
    plan: Plan,
}

fn none<S>() -> Option<S> {
    None
}

/// One entry of a `channels` list as written: its own `signal`, or, with a
/// detector-level signal, how it sees that one.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct ChannelEntry {
    name: String,
    observable: Observable,
    #[serde(default)]
    detector: Option<Detector>,
    #[serde(default)]
    signal: Option<Signal>,
    #[serde(default)]
    signal_efficiency: Option<f64>,
    #[serde(default)]
    resolution: Option<ResolutionFile>,
    backgrounds: Vec<Background>,
}

/// Just whether the file has a `channels` list or a top-level
/// `resolution`, to choose the form of its top-level `signal` before
/// reading it.
#[derive(Deserialize)]
struct Layout {
    #[serde(default)]
    channels: Option<serde::de::IgnoredAny>,
    #[serde(default)]
    resolution: Option<serde::de::IgnoredAny>,
}

/// Reads scenario text into a [`Scenario`] (not yet validated): with a
/// `channels` list, or with a top-level `resolution`, the top-level
/// `signal` is read as a detector-level one.
pub(super) fn read(text: &str) -> Result<Scenario, ScenarioError> {
    let (listed, resolved) = serde_yaml::from_str::<Layout>(text)
        .map(|layout| (layout.channels.is_some(), layout.resolution.is_some()))
        .unwrap_or((false, false));
    if listed {
        parse::<DetectorSignalFile>(text)?.into_listed()
    } else if resolved {
        parse::<DetectorSignalFile>(text)?.into_single_resolved()
    } else {
        parse::<Signal>(text)?.into_single()
    }
}

fn parse<S: DeserializeOwned>(text: &str) -> Result<ScenarioFile<S>, ScenarioError> {
    serde_yaml::from_str(text).map_err(ScenarioError::from_yaml)
}

impl<S> ScenarioFile<S> {
    /// The one channel's observable, signal and backgrounds written at the
    /// top level, and the rest of the file; refuses a file with them
    /// incomplete, naming the key.
    fn single_channel(self) -> Result<(Observable, S, Vec<Background>, Parts), ScenarioError> {
        let parts = Parts {
            title: self.title,
            shared_uncertainties: self.shared_uncertainties,
            detector: self.detector,
            schedule: self.schedule,
            plan: self.plan,
        };
        match (self.observable, self.signal, self.backgrounds) {
            (Some(observable), Some(signal), Some(backgrounds)) => {
                Ok((observable, signal, backgrounds, parts))
            }
            (observable, signal, _) => {
                let key = if observable.is_none() {
                    "observable"
                } else if signal.is_none() {
                    "signal"
                } else {
                    "backgrounds"
                };
                Err(ScenarioError::invalid(
                    key,
                    "missing: write observable, signal and backgrounds at the top level for one channel, or a channels list",
                ))
            }
        }
    }
}

impl ScenarioFile<Signal> {
    /// The one top-level channel, named after its observable.
    fn into_single(self) -> Result<Scenario, ScenarioError> {
        let (observable, signal, backgrounds, parts) = self.single_channel()?;
        let channel = Channel {
            name: observable.name.clone(),
            observable,
            detector: None,
            signal,
            backgrounds,
        };
        finish(parts, vec![channel], ChannelSyntax::Single, None)
    }
}

impl ScenarioFile<DetectorSignalFile> {
    /// The one top-level channel, named after its observable, whose signal
    /// takes its width from the top-level `resolution`: the same channel
    /// as in a one-entry `channels` list with that resolution.
    fn into_single_resolved(mut self) -> Result<Scenario, ScenarioError> {
        let resolution = self.resolution.take();
        let (observable, signal, backgrounds, mut parts) = self.single_channel()?;
        let detector = parts.detector.map(|d| d.checked("")).transpose()?;
        let sight = ChannelSight {
            path: ChannelSyntax::Single.path(0),
            observable: &observable,
            detector,
            response: ChannelResponseFile {
                signal_efficiency: None,
                resolution,
            },
        };
        let (signals, detector_signal) =
            signal.into_channel_signals(&[sight], &mut parts.shared_uncertainties)?;
        let channel = Channel {
            name: observable.name.clone(),
            observable,
            detector: None,
            signal: signals.into_iter().next().expect("one signal per channel"),
            backgrounds,
        };
        finish(
            parts,
            vec![channel],
            ChannelSyntax::Single,
            Some(detector_signal),
        )
    }

    /// The `channels` list as written, each with its own signal or with the
    /// detector-level one seen through its mass, efficiency and resolution.
    /// Refuses the top-level observable or backgrounds beside the list, a
    /// mix of the two forms of signal, and a channel with none, naming the key.
    fn into_listed(self) -> Result<Scenario, ScenarioError> {
        for (key, given) in [
            ("observable", self.observable.is_some()),
            ("backgrounds", self.backgrounds.is_some()),
        ] {
            if given {
                return Err(ScenarioError::invalid(
                    key,
                    format!(
                        "a channels list replaces the top-level observable and backgrounds; move {key} into a channel"
                    ),
                ));
            }
        }
        if self.resolution.is_some() {
            return Err(ScenarioError::invalid(
                "resolution",
                "a top-level resolution is the width of the one channel written at the top level; with a channels list give each channel its own resolution",
            ));
        }
        let entries = self.channels.unwrap_or_default();
        if entries.is_empty() {
            return Err(ScenarioError::invalid(
                "channels",
                "at least one channel is needed, got an empty list",
            ));
        }
        let detector = self.detector.map(|d| d.checked("")).transpose()?;
        let mut shared_uncertainties = self.shared_uncertainties;
        let syntax = ChannelSyntax::List;
        let (channels, detector_signal) = match self.signal {
            None => {
                let channels = entries
                    .into_iter()
                    .enumerate()
                    .map(|(index, entry)| entry.with_own_signal(&syntax.path(index)))
                    .collect::<Result<Vec<_>, _>>()?;
                (channels, None)
            }
            Some(detector_level) => {
                let sights = entries
                    .iter()
                    .enumerate()
                    .map(|(index, entry)| entry.sight(&syntax.path(index), detector))
                    .collect::<Result<Vec<_>, _>>()?;
                let (signals, detector_signal) =
                    detector_level.into_channel_signals(&sights, &mut shared_uncertainties)?;
                let channels = entries
                    .into_iter()
                    .zip(signals)
                    .map(|(entry, signal)| Channel {
                        name: entry.name,
                        observable: entry.observable,
                        detector: entry.detector,
                        signal,
                        backgrounds: entry.backgrounds,
                    })
                    .collect();
                (channels, Some(detector_signal))
            }
        };
        finish(
            Parts {
                title: self.title,
                shared_uncertainties,
                detector,
                schedule: self.schedule,
                plan: self.plan,
            },
            channels,
            syntax,
            detector_signal,
        )
    }
}

impl ChannelEntry {
    /// The channel with its own signal; what only a detector-level signal
    /// uses (efficiency, resolution) refused by name.
    fn with_own_signal(self, path: &str) -> Result<Channel, ScenarioError> {
        for (key, given) in [
            ("signal_efficiency", self.signal_efficiency.is_some()),
            ("resolution", self.resolution.is_some()),
        ] {
            if given {
                return Err(ScenarioError::invalid(
                    format!("{path}{key}"),
                    "applies to a detector-level signal: write the signal once at the top level, beside channels, or remove this key",
                ));
            }
        }
        let Some(signal) = self.signal else {
            return Err(ScenarioError::invalid(
                format!("{path}signal"),
                "missing: give each channel its signal, or one detector-level signal at the top level beside channels",
            ));
        };
        Ok(Channel {
            name: self.name,
            observable: self.observable,
            detector: self.detector,
            signal,
            backgrounds: self.backgrounds,
        })
    }

    /// How this channel sees a detector-level signal; its own `signal`
    /// refused, since the two forms do not mix.
    fn sight(
        &self,
        path: &str,
        shared: Option<Detector>,
    ) -> Result<ChannelSight<'_>, ScenarioError> {
        if self.signal.is_some() {
            return Err(ScenarioError::invalid(
                format!("{path}signal"),
                "the file has a detector-level signal at the top level: a channel then gives signal_efficiency, resolution and detector, not its own signal; use one form",
            ));
        }
        let detector = match self.detector {
            Some(own) => Some(own.checked(path)?),
            None => shared,
        };
        Ok(ChannelSight {
            path: path.to_string(),
            observable: &self.observable,
            detector,
            response: ChannelResponseFile {
                signal_efficiency: self.signal_efficiency,
                resolution: self.resolution.clone(),
            },
        })
    }
}

/// The parts of a scenario that do not depend on how its channels are written.
struct Parts {
    title: String,
    shared_uncertainties: BTreeMap<String, f64>,
    detector: Option<Detector>,
    schedule: Schedule,
    plan: Plan,
}

/// The scenario of `channels`, their rates turned into events per live day.
fn finish(
    parts: Parts,
    mut channels: Vec<Channel>,
    channel_syntax: ChannelSyntax,
    detector_signal: Option<super::DetectorSignal>,
) -> Result<Scenario, ScenarioError> {
    let detector = parts.detector.map(|d| d.checked("")).transpose()?;
    for (index, channel) in channels.iter_mut().enumerate() {
        channel.convert_rates(
            &channel_syntax.path(index),
            detector,
            detector_signal.is_none(),
        )?;
    }
    Ok(Scenario {
        title: parts.title,
        channels,
        channel_syntax,
        shared_uncertainties: parts.shared_uncertainties,
        detector,
        detector_signal,
        schedule: parts.schedule,
        plan: parts.plan,
        table_files: Vec::new(),
    })
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

    /// Two volumes seeing one rate per kg·day: each channel's signal is
    /// rate × mass × efficiency per live day (common practice), a Gaussian
    /// at the position with its resolution there as the width; the yield
    /// uncertainty one factor shared by both.
    const DETECTOR_LEVEL: &str = "\
title: Detector level
signal:
  events_per_kg_day: 0.5
  shape: {gaussian: {mean: 40.0}}
  yield_uncertainty: 0.1
channels:
  - name: inner
    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 1.0}
    detector: {mass_kg: 4}
    signal_efficiency: 0.5
    resolution: {points: [[0.0, 1.0], [100.0, 3.0]]}
    backgrounds:
      - {name: flat, events_per_day: 40, shape: {flat: {}}}
  - name: outer
    observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 1.0}
    detector: {mass_kg: 10}
    resolution: {stochastic: 0.5, constant: 0.0, noise: 3.0}
    backgrounds:
      - {name: flat, events_per_day: 40, shape: {flat: {}}}
plan:
  days: {first: 1, last: 100, points: 5, spacing: log}
  toys: 10
  seed: 1
  targets: [3]
";

    #[test]
    fn a_detector_level_signal_becomes_one_signal_per_channel() {
        let scenario = Scenario::from_yaml(DETECTOR_LEVEL).unwrap();
        let [inner, outer] = [&scenario.channels[0].signal, &scenario.channels[1].signal];
        assert_eq!(inner.events_per_day, 0.5 * 4.0 * 0.5);
        assert_eq!(outer.events_per_day, 0.5 * 10.0);
        assert_eq!(inner.shape.values[1].number(), 1.8);
        assert_eq!(
            outer.shape.values[1].number(),
            (0.25 * 40.0 + 9.0f64).sqrt()
        );
        assert_eq!(inner.shared, [super::super::SIGNAL_YIELD_SHARED]);
        assert_eq!(
            scenario.shared_uncertainties[super::super::SIGNAL_YIELD_SHARED],
            0.1
        );
        let detector_signal = scenario.detector_signal.unwrap();
        assert_eq!(detector_signal.rate, 0.5);
        assert_eq!(detector_signal.channels[0].rate_factor, 2.0);
    }

    #[test]
    fn detector_level_errors_name_their_field() {
        for (from, to, field) in [
            (
                "    signal_efficiency: 0.5\n",
                "    signal_efficiency: 1.5\n",
                "channels[0].signal_efficiency",
            ),
            (
                "    resolution: {points: [[0.0, 1.0], [100.0, 3.0]]}\n",
                "",
                "channels[0].resolution",
            ),
            (
                "[[0.0, 1.0], [100.0, 3.0]]",
                "[[100.0, 1.0], [0.0, 3.0]]",
                "channels[0].resolution.points[1][0]",
            ),
            (
                "[[0.0, 1.0], [100.0, 3.0]]",
                "[[0.0, -1.0]]",
                "channels[0].resolution.points[0][1]",
            ),
            (
                "{mean: 40.0}",
                "{mean: 40.0, sigma: 2}",
                "signal.shape.gaussian.sigma",
            ),
            (
                "  yield_uncertainty: 0.1\n",
                "  yield_uncertainty: 0.1\n  scan: {from: 10, to: 90, width_at_to: 2}\n",
                "signal.scan.width_at_to",
            ),
            (
                "{mean: 40.0}",
                "{mean: 140.0}",
                "signal.shape.gaussian.mean",
            ),
            (
                "    detector: {mass_kg: 10}\n",
                "",
                "channels[1].detector.mass_kg",
            ),
            (
                "    signal_efficiency: 0.5\n",
                "    signal: {events_per_day: 1, shape: {gaussian: {mean: 40.0, sigma: 1.0}}}\n",
                "channels[0].signal",
            ),
            (
                "noise: 3.0}",
                "noise: 0.0}\n    signal_efficiency: 0.5",
                "channels",
            ),
        ] {
            assert!(DETECTOR_LEVEL.contains(from), "{from}");
            let text = DETECTOR_LEVEL.replacen(from, to, 1);
            let text = if field == "channels" {
                text.replacen("signal_efficiency: 0.5", "signal_efficiency: 0", 2)
            } else {
                text
            };
            assert_eq!(invalid(&text).0, field, "{to}");
        }
    }

    /// One channel at the top level whose signal width follows the position
    /// through a top-level `resolution`, and the same channel with that
    /// resolution in a one-entry `channels` list.
    const TOP_LEVEL_RESOLUTION: &str = "\
title: Top-level resolution
observable: {name: energy, unit: keV, range: [0.0, 500.0], bin_width: 2.0}
signal:
  events_per_day: 1.5
  shape: {gaussian: {mean: 100.0}}
  scan: {from: 100.0, to: 400.0, step: 10.0}
  yield_uncertainty: 0.1
resolution: {stochastic: 0.1, constant: 0.015, noise: 3.0}
backgrounds:
  - {name: continuum, events_per_day: 50.0, shape: {flat: {}}}
plan:
  days: {first: 1, last: 100, points: 5, spacing: log}
  toys: 10
  seed: 1
  targets: [3]
";

    /// `TOP_LEVEL_RESOLUTION` with its channel in a one-entry list.
    fn resolution_listed() -> String {
        let observable =
            "observable: {name: energy, unit: keV, range: [0.0, 500.0], bin_width: 2.0}\n";
        let resolution = "resolution: {stochastic: 0.1, constant: 0.015, noise: 3.0}\n";
        let backgrounds =
            "backgrounds:\n  - {name: continuum, events_per_day: 50.0, shape: {flat: {}}}\n";
        let entry = format!(
            "channels:\n  - name: energy\n    {observable}    {resolution}    backgrounds:\n      - {{name: continuum, events_per_day: 50.0, shape: {{flat: {{}}}}}}\n"
        );
        TOP_LEVEL_RESOLUTION
            .replacen(observable, "", 1)
            .replacen(resolution, "", 1)
            .replacen(backgrounds, &entry, 1)
    }

    #[test]
    fn a_top_level_resolution_is_a_one_entry_list_with_it() {
        let top = Scenario::from_yaml(TOP_LEVEL_RESOLUTION).unwrap();
        let listed = Scenario::from_yaml(&resolution_listed()).unwrap();
        assert_eq!(top.channel_syntax, ChannelSyntax::Single);
        assert_eq!(listed.channel_syntax, ChannelSyntax::List);
        assert_eq!(
            format!("{:?}", top.channels),
            format!("{:?}", listed.channels)
        );
        assert_eq!(top.detector_signal, listed.detector_signal);
        assert!(top.warnings().is_empty(), "{:?}", top.warnings());
    }

    /// sigma(x) = sqrt(a² x + b² x² + c²) (PDG, Review of Particle Physics,
    /// "Calorimetry") with a = 0.1, b = 0.015, c = 3, by hand: at x = 100,
    /// 1 + 2.25 + 9 = 12.25, sigma = 3.5; at x = 400, 4 + 36 + 9 = 49,
    /// sigma = 7. The signal at 100 has width 3.5, and the scan gives 7 at 400.
    #[test]
    fn a_top_level_resolution_gives_the_width_at_each_position() {
        let scenario = Scenario::from_yaml(TOP_LEVEL_RESOLUTION).unwrap();
        let sigma = scenario.signal().shape.values[1].number();
        assert!((sigma - 3.5).abs() < 1e-12, "{sigma}");
        let scan = scenario.signal_scan().unwrap();
        assert!((scan.width_at(0, 100.0) - 3.5).abs() < 1e-12);
        assert!((scan.width_at(0, 400.0) - 7.0).abs() < 1e-12);
    }

    #[test]
    fn top_level_resolution_errors_name_their_field() {
        let (field, message) = invalid(&TOP_LEVEL_RESOLUTION.replacen(
            "{mean: 100.0}",
            "{mean: 100.0, sigma: 2.0}",
            1,
        ));
        assert_eq!(field, "signal.shape.gaussian.sigma");
        assert!(
            message.contains("by sigma and by the top-level resolution"),
            "{message}"
        );
        let (field, message) = invalid(&TOP_LEVEL_RESOLUTION.replacen(
            "step: 10.0}",
            "step: 10.0, width_at_to: 6.0}",
            1,
        ));
        assert_eq!(field, "signal.scan.width_at_to");
        assert!(message.contains("top-level resolution"), "{message}");
        let (field, _) = invalid(&TOP_LEVEL_RESOLUTION.replacen(
            "{stochastic: 0.1, constant: 0.015, noise: 3.0}",
            "{points: [[400.0, 7.0], [100.0, 3.5]]}",
            1,
        ));
        assert_eq!(field, "resolution.points[1][0]");
        let (field, _) = invalid(&TOP_LEVEL_RESOLUTION.replacen("noise: 3.0", "noise: -3.0", 1));
        assert_eq!(field, "resolution.noise");
        let stochastic_only = TOP_LEVEL_RESOLUTION
            .replacen("constant: 0.015, noise: 3.0", "constant: 0.0", 1)
            .replacen("from: 100.0", "from: 0.0", 1);
        assert_eq!(invalid(&stochastic_only).0, "resolution");
        let beside_channels = resolution_listed().replacen(
            "channels:\n",
            "resolution: {points: [[0.0, 2.0]]}\nchannels:\n",
            1,
        );
        assert_eq!(invalid(&beside_channels).0, "resolution");
    }
}
