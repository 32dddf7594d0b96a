//! The inputs of a scenario a user can act on, found in the typed
//! [`Scenario`], each named by its dotted path and set to a new value in a
//! copy that is validated again.

use crate::calendar::CalendarDate;
use crate::scenario::{
    ChannelSyntax, NormUncertainty, RateUnit, SIGNAL_YIELD_SHARED, Scenario, ScenarioError,
};
use crate::shapes::{ParameterValue, Placement};

/// Which way an input is better: a lower background, a higher signal, ...
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Better {
    Lower,
    Higher,
}

/// What an input is and where it sits in the scenario (channel, background,
/// period or break by index).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum InputKind {
    /// `signal.events_per_day`: the signal rate after efficiency.
    SignalRate {
        channel: usize,
    },
    /// The detector-level signal's rate as written (`signal.events_per_kg_day`,
    /// ...), seen by every channel through its mass and efficiency.
    DetectorSignalRate,
    /// A channel's `signal_efficiency` for a detector-level signal: a
    /// fraction, at most 1.
    SignalEfficiency {
        channel: usize,
    },
    /// A channel's `resolution` for a detector-level signal, as a factor on
    /// every width it gives (1 as written): the peak's width at the signal
    /// position and along the scan.
    ResolutionScale {
        channel: usize,
    },
    BackgroundRate {
        channel: usize,
        background: usize,
    },
    /// A background's Gaussian normalisation uncertainty, relative.
    NormUncertainty {
        channel: usize,
        background: usize,
    },
    /// A control region's ratio to the signal region's background: the
    /// larger, the better the background is measured.
    ControlRatio {
        channel: usize,
        background: usize,
    },
    SignalYieldUncertainty {
        channel: usize,
    },
    SharedUncertainty {
        index: usize,
    },
    /// The detector mass of a channel (`Some`) or the top-level one
    /// (`None`), which scales every rate written per kg·day.
    DetectorMass {
        channel: Option<usize>,
    },
    /// The signal peak's width parameter (a Gaussian's sigma: the resolution).
    SignalWidth {
        channel: usize,
        parameter: usize,
    },
    SignalPositionUncertainty {
        channel: usize,
    },
    SignalWidthUncertainty {
        channel: usize,
    },
    LiveFraction,
    /// The length of a period of reduced rate, in calendar days.
    ReducedPeriodDays {
        period: usize,
    },
    /// The length of a planned break, in whole calendar days (both ends counted).
    BreakDays {
        pause: usize,
    },
}

impl InputKind {
    /// The direction in which the input improves the plan.
    pub fn better(self) -> Better {
        match self {
            InputKind::SignalRate { .. }
            | InputKind::DetectorSignalRate
            | InputKind::SignalEfficiency { .. }
            | InputKind::ControlRatio { .. }
            | InputKind::DetectorMass { .. }
            | InputKind::LiveFraction => Better::Higher,
            _ => Better::Lower,
        }
    }

    /// True for an input counted in whole days (a break between dates).
    pub fn whole_days(self) -> bool {
        matches!(self, InputKind::BreakDays { .. })
    }
}

/// One input a user can act on: its dotted name, unit and nominal value.
#[derive(Debug, Clone, PartialEq)]
pub struct Input {
    /// The dotted path as the file writes it, e.g.
    /// `backgrounds.radon.events_per_day` or, in a `channels` list (of one
    /// channel or several), `channels.inner.signal.events_per_day`.
    pub name: String,
    pub unit: String,
    pub nominal: f64,
    pub kind: InputKind,
}

/// Every input of `scenario` a user can act on, in scenario order: per
/// channel the signal rate, its uncertainties and width, each background's
/// rate, normalisation uncertainty and control ratio, the detector mass;
/// then the shared uncertainties, the live fraction, the reduced-rate
/// periods and the breaks. Uncertainties that are absent (or 0) are not
/// inputs: there is nothing to improve.
///
/// A detector-level signal's inputs are those its file has: first its rate
/// as written (`signal.events_per_kg_day`, ...) and its
/// `signal.yield_uncertainty`, each acting on every channel; then per
/// channel, in place of the channel's signal rate and width made from
/// them, the `signal_efficiency` (of a listed channel that sees the signal)
/// and the `resolution` as a factor on its widths.
pub fn inputs(scenario: &Scenario) -> Vec<Input> {
    let mut found = Vec::new();
    let mut add = |name: String, unit: &str, nominal: f64, kind: InputKind| {
        found.push(Input {
            name,
            unit: unit.to_string(),
            nominal,
            kind,
        })
    };
    let detector_signal = scenario.detector_signal.as_ref();
    let shared_yield = shared_signal_yield(scenario);
    if let Some(detector_signal) = detector_signal {
        add(
            format!("signal.{}", detector_signal.unit.key()),
            &detector_signal.unit_label(),
            detector_signal.rate,
            InputKind::DetectorSignalRate,
        );
        if let Some((index, width)) = shared_yield {
            let kind = InputKind::SharedUncertainty { index };
            add(SIGNAL_YIELD_SHARED.into(), "relative", width, kind);
        }
    }
    let listed = scenario.channel_syntax == ChannelSyntax::List;
    for (channel, written) in scenario.channels.iter().enumerate() {
        let prefix = if listed {
            format!("channels.{}.", written.name)
        } else {
            String::new()
        };
        let signal = &written.signal;
        match detector_signal {
            None => {
                let (key, unit, nominal) = rate_as_written(
                    signal.rate_unit,
                    signal.written_rate_value(),
                    signal.events_per_day,
                );
                let kind = InputKind::SignalRate { channel };
                add(format!("{prefix}signal.{key}"), &unit, nominal, kind);
            }
            Some(detector_signal) => {
                let efficiency = detector_signal.channels[channel].efficiency;
                if listed && efficiency > 0.0 {
                    let kind = InputKind::SignalEfficiency { channel };
                    add(
                        format!("{prefix}signal_efficiency"),
                        "fraction",
                        efficiency,
                        kind,
                    );
                }
                let kind = InputKind::ResolutionScale { channel };
                add(format!("{prefix}resolution"), "× nominal", 1.0, kind);
            }
        }
        if let Some(width) = positive(signal.yield_uncertainty) {
            let kind = InputKind::SignalYieldUncertainty { channel };
            add(
                format!("{prefix}signal.yield_uncertainty"),
                "relative",
                width,
                kind,
            );
        }
        if detector_signal.is_none()
            && let Some((parameter, key, name, value)) = signal_width(scenario, channel)
        {
            let kind = InputKind::SignalWidth { channel, parameter };
            let unit = &written.observable.unit;
            add(
                format!("{prefix}signal.shape.{key}.{name}"),
                unit,
                value,
                kind,
            );
        }
        if let Some(width) = positive(signal.position_uncertainty) {
            let kind = InputKind::SignalPositionUncertainty { channel };
            let unit = &written.observable.unit;
            add(
                format!("{prefix}signal.position_uncertainty"),
                unit,
                width,
                kind,
            );
        }
        if let Some(width) = positive(signal.width_uncertainty) {
            let kind = InputKind::SignalWidthUncertainty { channel };
            add(
                format!("{prefix}signal.width_uncertainty"),
                "relative",
                width,
                kind,
            );
        }
        for (background, written) in written.backgrounds.iter().enumerate() {
            let path = format!("{prefix}backgrounds.{}", written.name);
            let (key, unit, nominal) = rate_as_written(
                written.rate_unit,
                written.written_rate_value(),
                written.events_per_day,
            );
            let kind = InputKind::BackgroundRate {
                channel,
                background,
            };
            add(format!("{path}.{key}"), &unit, nominal, kind);
            if let Some(NormUncertainty::Relative(width)) = written.norm_uncertainty
                && width > 0.0
            {
                let kind = InputKind::NormUncertainty {
                    channel,
                    background,
                };
                add(format!("{path}.norm_uncertainty"), "relative", width, kind);
            }
            if let Some(control) = written.control {
                let kind = InputKind::ControlRatio {
                    channel,
                    background,
                };
                add(
                    format!("{path}.control.ratio"),
                    "ratio",
                    control.ratio,
                    kind,
                );
            }
        }
        if let Some(detector) = written.detector
            && rates_per_kg_day(scenario, channel)
        {
            let kind = InputKind::DetectorMass {
                channel: Some(channel),
            };
            add(
                format!("{prefix}detector.mass_kg"),
                "kg",
                detector.mass_kg,
                kind,
            );
        }
    }
    if let Some(detector) = scenario.detector
        && (0..scenario.channels.len()).any(|channel| {
            scenario.channels[channel].detector.is_none() && rates_per_kg_day(scenario, channel)
        })
    {
        let kind = InputKind::DetectorMass { channel: None };
        add("detector.mass_kg".into(), "kg", detector.mass_kg, kind);
    }
    for (index, (name, width)) in scenario.shared_uncertainties.iter().enumerate() {
        if *width > 0.0 && shared_yield.is_none_or(|(shared, _)| shared != index) {
            let kind = InputKind::SharedUncertainty { index };
            add(
                format!("shared_uncertainties.{name}"),
                "relative",
                *width,
                kind,
            );
        }
    }
    let schedule = &scenario.schedule;
    add(
        "schedule.live_fraction".into(),
        "fraction",
        schedule.live_fraction,
        InputKind::LiveFraction,
    );
    for (period, written) in schedule.periods.iter().enumerate() {
        if let Some(days) = written.days
            && written.rate_scale < 1.0
            && days > 0.0
        {
            let kind = InputKind::ReducedPeriodDays { period };
            add(
                format!("schedule.periods[{period}].days"),
                "calendar days",
                days,
                kind,
            );
        }
    }
    for (pause, (from, to)) in schedule.break_dates().into_iter().enumerate() {
        let days = (to.days_since(from) + 1) as f64;
        let kind = InputKind::BreakDays { pause };
        add(
            format!("schedule.breaks[{pause}].days"),
            "calendar days",
            days,
            kind,
        );
    }
    found
}

/// A rate input as its file writes it: the key, the unit in words and the
/// written value ("events_per_kg_day", "events per kg·day", 2); events per
/// live day where the program made the rate.
fn rate_as_written(
    unit: RateUnit,
    written: Option<f64>,
    per_day: f64,
) -> (&'static str, String, f64) {
    match written {
        Some(value) => (unit.key(), format!("events {}", unit.label()), value),
        None => (
            RateUnit::PerDay.key(),
            "events per live day".into(),
            per_day,
        ),
    }
}

fn positive(value: Option<f64>) -> Option<f64> {
    value.filter(|&value| value > 0.0)
}

/// The index and width of the shared uncertainty a detector-level
/// `signal.yield_uncertainty` of several channels becomes
/// ([`SIGNAL_YIELD_SHARED`]), when it is above 0.
fn shared_signal_yield(scenario: &Scenario) -> Option<(usize, f64)> {
    scenario.detector_signal.as_ref()?;
    scenario
        .shared_uncertainties
        .iter()
        .enumerate()
        .find(|(_, (name, width))| name.as_str() == SIGNAL_YIELD_SHARED && **width > 0.0)
        .map(|(index, (_, width))| (index, *width))
}

/// True when some rate of channel `channel` is written per kg·day, so its
/// detector mass scales it.
fn rates_per_kg_day(scenario: &Scenario, channel: usize) -> bool {
    let channel = &scenario.channels[channel];
    channel.signal.rate_unit == RateUnit::PerKgDay
        || channel
            .backgrounds
            .iter()
            .any(|background| background.rate_unit == RateUnit::PerKgDay)
}

/// The signal's peak width of channel `channel`: the parameter's index, the
/// shape's key, the parameter's name and its value (`Shape::movable_peak`);
/// None for a shape without a peak.
fn signal_width(scenario: &Scenario, channel: usize) -> Option<(usize, &'static str, String, f64)> {
    let channel = &scenario.channels[channel];
    let spec = &channel.signal.shape;
    let placement = Placement {
        range: channel.observable.range,
        floated: false,
    };
    let shape = spec.build(placement).ok()?;
    let parameter = shape.movable_peak()?.width;
    let ParameterValue::Number(value) = spec.values[parameter] else {
        return None;
    };
    let name = shape.parameter_names().swap_remove(parameter);
    Some((parameter, spec.kind.key, name, value))
}

impl Input {
    /// The events per live day of a rate input set to `value` in its
    /// written unit, from the nominal `per_day`: the conversion is linear
    /// (per week / 7, per year / 365.25, per kg·day × mass), so the ratio
    /// to the nominal carries over; where the conversion is 1 (a rate per
    /// live day) it is `value` itself, unrounded.
    fn per_live_day(&self, per_day: f64, value: f64) -> f64 {
        if per_day == self.nominal {
            value
        } else {
            per_day * (value / self.nominal)
        }
    }

    /// A copy of `scenario` with this input set to `value`, validated as a
    /// scenario file is; the error names the field a bad value breaks.
    pub fn set(&self, scenario: &Scenario, value: f64) -> Result<Scenario, ScenarioError> {
        let mut changed = scenario.clone();
        let ratio = value / self.nominal;
        match self.kind {
            InputKind::SignalRate { channel } => {
                let signal = &mut changed.channels[channel].signal;
                signal.events_per_day = self.per_live_day(signal.events_per_day, value);
            }
            InputKind::DetectorSignalRate => {
                if !(value.is_finite() && value > 0.0) {
                    return Err(invalid(&self.name, value, "a finite rate above 0"));
                }
                if let Some(detector_signal) = &mut changed.detector_signal {
                    detector_signal.rate = value;
                }
                remake_channel_signal_rates(&mut changed);
            }
            InputKind::SignalEfficiency { channel } => {
                if !(value.is_finite() && (0.0..=1.0).contains(&value)) {
                    return Err(invalid(&self.name, value, "a fraction from 0 to 1"));
                }
                if let Some(detector_signal) = &mut changed.detector_signal {
                    let response = &mut detector_signal.channels[channel];
                    response.rate_factor *= ratio;
                    response.efficiency = value;
                    if detector_signal
                        .channels
                        .iter()
                        .all(|response| response.efficiency == 0.0)
                    {
                        return Err(invalid(
                            &self.name,
                            value,
                            "above 0 when every other channel has signal_efficiency 0",
                        ));
                    }
                }
                remake_channel_signal_rates(&mut changed);
            }
            InputKind::ResolutionScale { channel } => {
                if !(value.is_finite() && value > 0.0) {
                    return Err(invalid(&self.name, value, "a finite factor above 0"));
                }
                if let Some(detector_signal) = &mut changed.detector_signal
                    && let Some((parameter, ..)) = signal_width(scenario, channel)
                {
                    let response = &mut detector_signal.channels[channel];
                    response.resolution = response.resolution.scaled(value);
                    let width = response.resolution.sigma_at(detector_signal.position);
                    changed.channels[channel].signal.shape.values[parameter] =
                        ParameterValue::Number(width);
                }
            }
            InputKind::BackgroundRate {
                channel,
                background,
            } => {
                let background = &mut changed.channels[channel].backgrounds[background];
                background.events_per_day = self.per_live_day(background.events_per_day, value);
            }
            InputKind::NormUncertainty {
                channel,
                background,
            } => {
                changed.channels[channel].backgrounds[background].norm_uncertainty =
                    Some(NormUncertainty::Relative(value));
            }
            InputKind::ControlRatio {
                channel,
                background,
            } => {
                if let Some(control) =
                    &mut changed.channels[channel].backgrounds[background].control
                {
                    control.ratio = value;
                }
            }
            InputKind::SignalYieldUncertainty { channel } => {
                changed.channels[channel].signal.yield_uncertainty = Some(value);
            }
            InputKind::SharedUncertainty { index } => {
                if let Some(width) = changed.shared_uncertainties.values_mut().nth(index) {
                    *width = value;
                }
            }
            InputKind::DetectorMass { channel } => {
                if !(value.is_finite() && value > 0.0) {
                    return Err(invalid(&self.name, value, "a finite mass above 0"));
                }
                let scaled: Vec<usize> = match channel {
                    Some(channel) => {
                        if let Some(detector) = &mut changed.channels[channel].detector {
                            detector.mass_kg = value;
                        }
                        vec![channel]
                    }
                    None => {
                        if let Some(detector) = &mut changed.detector {
                            detector.mass_kg = value;
                        }
                        (0..changed.channels.len())
                            .filter(|&index| changed.channels[index].detector.is_none())
                            .collect()
                    }
                };
                for index in scaled {
                    scale_rates_per_kg_day(&mut changed, index, ratio);
                }
            }
            InputKind::SignalWidth { channel, parameter } => {
                changed.channels[channel].signal.shape.values[parameter] =
                    ParameterValue::Number(value);
            }
            InputKind::SignalPositionUncertainty { channel } => {
                changed.channels[channel].signal.position_uncertainty = Some(value);
            }
            InputKind::SignalWidthUncertainty { channel } => {
                changed.channels[channel].signal.width_uncertainty = Some(value);
            }
            InputKind::LiveFraction => changed.schedule.live_fraction = value,
            InputKind::ReducedPeriodDays { period } => {
                changed.schedule.periods[period].days = Some(value);
            }
            InputKind::BreakDays { pause } => set_break_days(&mut changed, pause, value, self)?,
        }
        changed.validate()?;
        Ok(changed)
    }
}

/// Each channel's signal rate made again from a detector-level one: the
/// rate as written times the channel's events per live day per unit of it
/// (mass × efficiency), as reading the file makes it.
fn remake_channel_signal_rates(scenario: &mut Scenario) {
    if let Some(detector_signal) = &scenario.detector_signal {
        for (channel, response) in scenario.channels.iter_mut().zip(&detector_signal.channels) {
            channel.signal.events_per_day = detector_signal.rate * response.rate_factor;
        }
    }
}

/// Every rate of channel `channel` written per kg·day multiplied by `ratio`
/// (the new mass over the old): expected events = rate × mass × live days;
/// so is what the channel sees of a detector-level rate per kg·day.
fn scale_rates_per_kg_day(scenario: &mut Scenario, channel: usize, ratio: f64) {
    if let Some(detector_signal) = &mut scenario.detector_signal
        && detector_signal.unit == RateUnit::PerKgDay
    {
        detector_signal.channels[channel].rate_factor *= ratio;
    }
    let channel = &mut scenario.channels[channel];
    if channel.signal.rate_unit == RateUnit::PerKgDay {
        channel.signal.events_per_day *= ratio;
    }
    for background in &mut channel.backgrounds {
        if background.rate_unit == RateUnit::PerKgDay {
            background.events_per_day *= ratio;
        }
    }
}

/// Break `pause` kept from its first date and lasting `days` whole days
/// (both ends counted); 0 days removes it.
fn set_break_days(
    scenario: &mut Scenario,
    pause: usize,
    days: f64,
    input: &Input,
) -> Result<(), ScenarioError> {
    if !(days >= 0.0 && days.fract() == 0.0 && days < 1e6) {
        return Err(invalid(
            &input.name,
            days,
            "a whole number of days, 0 or more",
        ));
    }
    if days == 0.0 {
        scenario.schedule.breaks.remove(pause);
        return Ok(());
    }
    let written = &mut scenario.schedule.breaks[pause];
    let to = CalendarDate::parse(&written.from).and_then(|from| from.after(days - 1.0));
    match to {
        Some(to) => {
            written.to = to.to_string();
            Ok(())
        }
        None => Err(invalid(
            &input.name,
            days,
            "a break that ends inside the calendar",
        )),
    }
}

fn invalid(field: &str, value: f64, expected: &str) -> ScenarioError {
    ScenarioError::Invalid {
        field: field.to_string(),
        message: format!("must be {expected}, got {}", crate::message::show(value)),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::Path;

    fn demo(name: &str) -> Scenario {
        let path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("scenarios")
            .join(name);
        Scenario::load(&path).unwrap()
    }

    fn names(scenario: &Scenario) -> Vec<String> {
        inputs(scenario)
            .into_iter()
            .map(|input| input.name)
            .collect()
    }

    #[test]
    fn a_scenario_of_several_channels_names_inputs_by_channel() {
        let names = names(&demo("two_channel_detector.yaml"));
        for expected in [
            "channels.inner.signal.events_per_day",
            "channels.inner.signal.shape.gaussian.sigma",
            "channels.inner.backgrounds.inner continuum.norm_uncertainty",
            "channels.outer.backgrounds.outer continuum (simulated).events_per_day",
            "shared_uncertainties.exposure_scale",
            "schedule.live_fraction",
        ] {
            assert!(
                names.iter().any(|name| name == expected),
                "{expected} in {names:?}"
            );
        }
        assert_eq!(names.len(), 10, "{names:?}");
    }

    #[test]
    fn a_detector_level_signal_has_the_inputs_its_file_has() {
        let names = names(&demo("two_volume_line.yaml"));
        for expected in [
            "signal.events_per_kg_day",
            "signal.yield_uncertainty",
            "channels.inner.signal_efficiency",
            "channels.inner.resolution",
            "channels.outer.detector.mass_kg",
        ] {
            assert!(
                names.iter().any(|name| name == expected),
                "{expected} in {names:?}"
            );
        }
        for made_from_them in ["signal.events_per_day", "signal.shape.gaussian.sigma"] {
            assert!(
                !names.iter().any(|name| name.ends_with(made_from_them)),
                "{made_from_them} in {names:?}"
            );
        }
    }

    /// A `channels` list of one entry names its inputs as the file writes
    /// them, under `channels.<name>.`, as a list of several does.
    #[test]
    fn a_list_of_one_channel_names_inputs_by_channel() {
        let text = std::fs::read_to_string(
            Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios/two_volume_line.yaml"),
        )
        .unwrap();
        let outer = text.find("  - name: outer").unwrap();
        let schedule = text.find("schedule:").unwrap();
        let one = format!("{}{}", &text[..outer], &text[schedule..]);
        let names = names(&Scenario::from_yaml(&one).unwrap());
        for expected in [
            "channels.inner.resolution",
            "channels.inner.signal_efficiency",
            "channels.inner.backgrounds.inner continuum.events_per_kg_day",
            "channels.inner.detector.mass_kg",
        ] {
            assert!(
                names.iter().any(|name| name == expected),
                "{expected} in {names:?}"
            );
        }
    }

    #[test]
    fn a_lever_changes_only_its_input_and_is_validated() {
        let scenario = demo("counting_window.yaml");
        let found = inputs(&scenario);
        let background = found
            .iter()
            .find(|input| matches!(input.kind, InputKind::BackgroundRate { .. }))
            .unwrap();
        let changed = background.set(&scenario, 2.5).unwrap();
        assert_eq!(changed.backgrounds()[0].events_per_day, 2.5);
        assert_eq!(
            changed.signal().events_per_day,
            scenario.signal().events_per_day
        );
        let refused = background.set(&scenario, -1.0).unwrap_err().to_string();
        assert!(
            refused.contains("backgrounds[0].events_per_day"),
            "{refused}"
        );
    }

    #[test]
    fn a_break_keeps_its_first_date_and_changes_its_last() {
        let mut scenario = demo("counting_window.yaml");
        scenario.schedule.start = Some("2027-01-01".into());
        scenario.schedule.breaks = vec![crate::scenario::Break {
            from: "2027-02-27".into(),
            to: "2027-03-02".into(),
        }];
        let pause = inputs(&scenario)
            .into_iter()
            .find(|input| input.kind.whole_days())
            .unwrap();
        // 27 and 28 February and 1 and 2 March 2027: four days, both ends counted.
        assert_eq!(pause.nominal, 4.0);
        let longer = pause.set(&scenario, 5.0).unwrap();
        assert_eq!(longer.schedule.breaks[0].to, "2027-03-03");
        assert!(
            pause
                .set(&scenario, 0.0)
                .unwrap()
                .schedule
                .breaks
                .is_empty()
        );
        assert!(pause.set(&scenario, 2.5).is_err());
    }

    #[test]
    fn improvement_runs_the_way_each_input_is_better() {
        assert_eq!(
            InputKind::SignalRate { channel: 0 }.better(),
            Better::Higher
        );
        assert_eq!(InputKind::LiveFraction.better(), Better::Higher);
        let lower = InputKind::BackgroundRate {
            channel: 0,
            background: 0,
        };
        assert_eq!(lower.better(), Better::Lower);
        assert_eq!(InputKind::BreakDays { pause: 0 }.better(), Better::Lower);
    }
}
