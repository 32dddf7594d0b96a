//! Checks on a parsed scenario: every number finite and in its allowed range,
//! every name present and unique, every shape a proper density on the range.
//!
//! Each rejection names the field by its dotted path, the value found and what
//! is expected, so that the user can fix the file from the message alone.

use super::limits::{
    MAX_BINS, MAX_GRID_POINTS, MAX_TARGET_SIGMA, MAX_TARGETS, MAX_TEXT_CHARS, MAX_TOYS_IN_TOTAL,
    MAX_TOYS_PER_POINT,
};
use super::{
    Background, Channel, ChannelSyntax, DaysGrid, NormUncertainty, Observable, Plan, Scenario,
    ScenarioError, Schedule, ShapeSpec, Signal, SignalScan, SpacedDays,
};
use crate::calendar::CalendarDate;
use crate::message::{not_finite, not_positive, show, show_fraction, show_rounded};
use crate::shapes::{Placement, ShapeError};
use crate::warning::Warning;
use std::collections::BTreeMap;

/// Ensembles a default `project` run draws at each point: discovery and limits.
const ENSEMBLES_PER_POINT: u64 = 2;

/// Relative tolerance on `(high - low) / bin_width` being a whole number,
/// allowing for decimal bin widths such as 0.1 that binary floating point cannot hold.
const BIN_COUNT_TOLERANCE: f64 = 1e-9;

type Checked<T = ()> = Result<T, ScenarioError>;

/// The fitted range `[low, high]` of the observable, once checked.
#[derive(Debug, Clone, Copy)]
struct Range {
    low: f64,
    high: f64,
}

/// Rejects values that parse but make no physical sense, naming the first such field.
pub(super) fn validate(scenario: &Scenario) -> Checked {
    require_text("title", &scenario.title)?;
    validate_shared_uncertainties(scenario)?;
    validate_channel_names(scenario)?;
    for (index, channel) in scenario.channels.iter().enumerate() {
        validate_channel(
            channel,
            &scenario.shared_uncertainties,
            scenario.detector_signal.is_some(),
        )
        .map_err(|error| error.within(&channel_path(scenario, index)))?;
    }
    refuse_scan_in_several_channels(scenario)?;
    if let Some(Err(error)) = scenario.checked_signal_scan() {
        return Err(error);
    }
    validate_schedule(&scenario.schedule, &background_names(scenario))?;
    validate_plan(&scenario.plan)
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

/// The dotted path of channel `index`'s fields: none for a single channel
/// written at the top level, `channels[index].` in a list.
fn channel_path(scenario: &Scenario, index: usize) -> String {
    scenario.channel_syntax.path(index)
}

/// Each listed channel needs a name of its own.
fn validate_channel_names(scenario: &Scenario) -> Checked {
    if scenario.channel_syntax == ChannelSyntax::Single {
        return Ok(());
    }
    for (index, channel) in scenario.channels.iter().enumerate() {
        let field = format!("channels[{index}].name");
        require_text(&field, &channel.name)?;
        if let Some(first) = scenario.channels[..index]
            .iter()
            .position(|earlier| earlier.name.trim() == channel.name.trim())
        {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "each channel needs its own name, got {:?} again (as in channels[{first}].name)",
                    channel.name
                ),
            ));
        }
    }
    Ok(())
}

/// One channel's observable, signal and backgrounds, with paths inside the
/// channel; every `shared` name must be one of `declared`. A signal made
/// from a `detector_level` one may have rate 0 (a channel of efficiency 0).
fn validate_channel(
    channel: &Channel,
    declared: &BTreeMap<String, f64>,
    detector_level: bool,
) -> Checked {
    let range = validate_observable(&channel.observable)?;
    validate_signal(&channel.signal, range, detector_level)?;
    validate_backgrounds(&channel.backgrounds, range)?;
    refuse_free_background_in_one_bin(channel)?;
    validate_shared_names("signal.shared", &channel.signal.shared, declared)?;
    for (index, background) in channel.backgrounds.iter().enumerate() {
        let field = format!("backgrounds[{index}].shared");
        validate_shared_names(&field, &background.shared, declared)?;
    }
    Ok(())
}

/// Each shared uncertainty has a name and a relative width; one that a
/// signal names is bounded as a signal yield uncertainty is.
fn validate_shared_uncertainties(scenario: &Scenario) -> Checked {
    for (name, &width) in &scenario.shared_uncertainties {
        let field = format!("shared_uncertainties.{name}");
        require_plain_text(&field, name)?;
        require_relative_uncertainty(&field, width)?;
        let on_a_signal = scenario
            .channels
            .iter()
            .any(|channel| channel.signal.shared.contains(name));
        if on_a_signal {
            refuse_wide_signal_yield_uncertainty(&field, width)?;
        }
    }
    Ok(())
}

/// A yield's `shared` list: declared names, each at most once.
fn validate_shared_names(
    field: &str,
    names: &[String],
    declared: &BTreeMap<String, f64>,
) -> Checked {
    for (index, name) in names.iter().enumerate() {
        let entry = format!("{field}[{index}]");
        if !declared.contains_key(name) {
            let known: Vec<&str> = declared.keys().map(String::as_str).collect();
            let known = if known.is_empty() {
                "none is declared in shared_uncertainties".to_string()
            } else {
                format!("declared in shared_uncertainties: {}", known.join(", "))
            };
            return Err(ScenarioError::invalid(
                entry,
                format!("unknown shared uncertainty {name:?}; {known}"),
            ));
        }
        if names[..index].contains(name) {
            return Err(ScenarioError::invalid(
                entry,
                format!("{name:?} is named twice; each shared factor multiplies a yield once"),
            ));
        }
    }
    Ok(())
}

/// Remarks about a valid scenario that are probably, but not surely, mistakes.
pub(super) fn warnings(scenario: &Scenario) -> Vec<Warning> {
    let mut remarks = Vec::new();
    for (index, channel) in scenario.channels.iter().enumerate() {
        let in_channel = flat_shapes_floated(&channel.backgrounds, channel.observable.range);
        remarks.extend(in_channel.map(|warning| match scenario.channel_syntax {
            ChannelSyntax::Single => warning,
            ChannelSyntax::List => Warning::InChannel {
                channel: index,
                warning: Box::new(warning),
            },
        }));
    }
    remarks.extend(unused_shared_uncertainties(scenario));
    remarks.extend(width_at_to_away_from_from(scenario));
    remarks.extend(first_day_without_exposure(scenario));
    remarks
}

/// `scan.width_at_to` beside a signal position other than `scan.from`:
/// the linear width starts from the signal's own width at `from`.
fn width_at_to_away_from_from(scenario: &Scenario) -> Option<Warning> {
    let signal = scenario.signal();
    let scan = signal.scan.as_ref()?;
    scan.width_at_to?;
    let placement = Placement {
        range: scenario.observable().range,
        floated: false,
    };
    let position = signal.shape.build(placement).ok()?.peak()?.centre;
    (position != scan.from).then_some(Warning::WidthAtToAwayFromFrom {
        position,
        from: scan.from,
    })
}

/// Declared shared uncertainties that no signal or background names.
fn unused_shared_uncertainties(scenario: &Scenario) -> impl Iterator<Item = Warning> + '_ {
    let used = |name: &String| {
        scenario.channels.iter().any(|channel| {
            channel.signal.shared.contains(name)
                || channel.backgrounds.iter().any(|b| b.shared.contains(name))
        })
    };
    scenario
        .shared_uncertainties
        .keys()
        .filter(move |name| !used(name))
        .map(|name| Warning::UnusedSharedUncertainty { name: name.clone() })
}

/// A peaked signal ([`Shape::peak`](crate::shapes::Shape::peak)) whose
/// maximum lies outside the range: only a tail would be fitted, and the days
/// to a target would describe a search for something else than the peak.
fn refuse_signal_peak_outside_range(shape: &ShapeSpec, range: Range) -> Checked {
    let fixed = Placement {
        range: [range.low, range.high],
        floated: false,
    };
    let Some(peak) = shape.build(fixed).ok().and_then(|shape| shape.peak()) else {
        return Ok(());
    };
    if (range.low..=range.high).contains(&peak.centre) {
        return Ok(());
    }
    Err(ScenarioError::invalid(
        format!("signal.shape.{}", peak.centre_key),
        format!(
            "the signal peak must lie inside observable.range [{}, {}], got {}; only its tail would be fitted",
            show(range.low),
            show(range.high),
            show(peak.centre)
        ),
    ))
}

/// `float_shape: true` on a shape with no parameters (flat, or a polynomial
/// of one term, whose only coefficient cancels in the normalisation).
fn flat_shapes_floated(
    backgrounds: &[Background],
    range: [f64; 2],
) -> impl Iterator<Item = Warning> + '_ {
    let floated = Placement {
        range,
        floated: true,
    };
    let has_no_parameters = move |shape: &ShapeSpec| {
        shape
            .build(floated)
            .is_ok_and(|shape| shape.parameter_names().is_empty())
    };
    backgrounds
        .iter()
        .enumerate()
        .filter(move |(_, background)| {
            background.float_shape && has_no_parameters(&background.shape)
        })
        .map(|(background, _)| Warning::NothingToFloat { background })
}

/// A days grid starting inside the leading schedule periods with `rate_scale` 0,
/// where no data are recorded and the projection can show nothing.
fn first_day_without_exposure(scenario: &Scenario) -> Option<Warning> {
    let days_without_data: f64 = scenario
        .schedule
        .periods
        .iter()
        .take_while(|period| period.rate_scale == 0.0)
        .filter_map(|period| period.days)
        .sum();
    let first_day = scenario.plan.days.first();
    (first_day <= days_without_data).then_some(Warning::FirstDayWithoutData {
        first_day,
        days_without_data,
    })
}

fn validate_observable(observable: &Observable) -> Checked<Range> {
    require_text("observable.name", &observable.name)?;
    require_plain_text("observable.unit", &observable.unit)?;
    let [low, high] = observable.range;
    if !low.is_finite() || !high.is_finite() {
        return Err(ScenarioError::invalid(
            "observable.range",
            format!(
                "must be two finite numbers [low, high], got [{}, {}]",
                show(low),
                show(high)
            ),
        ));
    }
    if low >= high {
        return Err(ScenarioError::invalid(
            "observable.range",
            format!(
                "the low edge must be below the high edge, got [{}, {}]",
                show(low),
                show(high)
            ),
        ));
    }
    let range = Range { low, high };
    validate_bin_width(observable.bin_width, range)?;
    Ok(range)
}

/// The bins must tile the range exactly: `(high - low) / bin_width` a whole number.
fn validate_bin_width(bin_width: f64, range: Range) -> Checked {
    let field = "observable.bin_width";
    require_positive(field, bin_width)?;
    let span = range.high - range.low;
    let bins = span / bin_width;
    if bins > MAX_BINS as f64 {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "gives {} bins on a range of width {}, more than the {MAX_BINS} allowed; got {}",
                show_rounded(bins),
                show_rounded(span),
                show(bin_width)
            ),
        ));
    }
    if bins.round() < 1.0 || (bins - bins.round()).abs() > BIN_COUNT_TOLERANCE * bins {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "must divide the range [{}, {}] (width {}) into a whole number of bins, got {} ({} bins)",
                show(range.low),
                show(range.high),
                show_rounded(span),
                show(bin_width),
                show_fraction(bins)
            ),
        ));
    }
    Ok(())
}

fn validate_signal(signal: &Signal, range: Range, detector_level: bool) -> Checked {
    if !(detector_level && signal.events_per_day == 0.0) {
        require_positive("signal.events_per_day", signal.events_per_day)?;
    }
    validate_shape("signal", &signal.shape, range, false)?;
    refuse_signal_peak_outside_range(&signal.shape, range)?;
    if let Some(scan) = &signal.scan
        && !detector_level
    {
        SignalScan::new(scan, &signal.shape, [range.low, range.high])?;
    }
    if let Some(relative) = signal.yield_uncertainty {
        require_relative_uncertainty("signal.yield_uncertainty", relative)?;
        refuse_wide_signal_yield_uncertainty("signal.yield_uncertainty", relative)?;
    }
    validate_shape_uncertainties(signal, range)
}

/// Widest relative width uncertainty: its auxiliary measurement, drawn from
/// N(w, δ w), falls at or below zero width in Φ(−1/δ) of the
/// pseudo-experiments, 1.35e-3 at δ = 1/3 (PDG statistics review).
const MAX_WIDTH_UNCERTAINTY: f64 = 1.0 / 3.0;

/// Auxiliary measurements of the position fall within this many standard
/// deviations of the peak in all but 0.27% of pseudo-experiments (Φ(−3) on
/// each side; PDG statistics review); that far the range must reach.
const POSITION_REACH_SIGMAS: f64 = 3.0;

/// A position known no better than the peak is wide is a search over
/// positions: the fitted position then moves between separate minima of the
/// likelihood (each a fluctuation the peak could sit on), the fits stop
/// converging, and the look-elsewhere effect dominates; `signal.scan` is
/// made for that. So the uncertainty may be at most the width (a Gaussian's
/// sigma, half a Breit-Wigner's full width).
fn refuse_position_uncertainty_beyond_width(signal: &Signal, range: Range, value: f64) -> Checked {
    let fixed = Placement {
        range: [range.low, range.high],
        floated: false,
    };
    let Some(peak) = signal
        .shape
        .build(fixed)
        .ok()
        .and_then(|shape| shape.peak())
    else {
        return Ok(());
    };
    if value > peak.width {
        return Err(ScenarioError::invalid(
            "signal.position_uncertainty",
            format!(
                "must be at most the peak's width {} (a Gaussian's sigma, half a Breit-Wigner's width): a position known worse than that is a search over positions, for signal.scan; got {}",
                show(peak.width),
                show(value)
            ),
        ));
    }
    Ok(())
}

/// `signal.position_uncertainty` and `signal.width_uncertainty`: finite, not
/// negative (0 as absent), only for a peak with a position and a width and
/// without a scan (which tests every position itself); the position
/// uncertainty at most the peak's width, and the position must
/// stay inside the range within [`POSITION_REACH_SIGMAS`] of its
/// uncertainty, since the signal is normalised on the range and would keep
/// its whole yield beyond it; the width uncertainty at most
/// [`MAX_WIDTH_UNCERTAINTY`].
fn validate_shape_uncertainties(signal: &Signal, range: Range) -> Checked {
    let fields = [
        ("signal.position_uncertainty", signal.position_uncertainty),
        ("signal.width_uncertainty", signal.width_uncertainty),
    ];
    for (field, value) in fields {
        let Some(value) = value else { continue };
        if !(value.is_finite() && value >= 0.0) {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "must be a non-negative finite number (0 = known exactly), got {}",
                    show(value)
                ),
            ));
        }
        if value == 0.0 {
            continue;
        }
        let fixed = Placement {
            range: [range.low, range.high],
            floated: false,
        };
        let movable = signal
            .shape
            .build(fixed)
            .ok()
            .and_then(|shape| shape.movable_peak());
        let Some(position) = movable.map(|peak| peak.position) else {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "applies to gaussian and breit_wigner signals (a peak with a position and a width); this signal's shape is {}",
                    signal.shape.kind.key
                ),
            ));
        };
        if signal.scan.is_some() {
            return Err(ScenarioError::invalid(
                field,
                "signal.scan tests every position with a fixed shape; remove the scan or this uncertainty",
            ));
        }
        if field == "signal.width_uncertainty" && value > MAX_WIDTH_UNCERTAINTY {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "above 1/3 more than 0.13% of the auxiliary measurements of the width fall at or below zero; use at most 0.333, got {}",
                    show(value)
                ),
            ));
        }
        if field == "signal.position_uncertainty" {
            refuse_position_uncertainty_beyond_width(signal, range, value)?;
            let centre = signal.shape.values[position].number();
            let reach = POSITION_REACH_SIGMAS * value;
            if centre - reach < range.low || centre + reach > range.high {
                return Err(ScenarioError::invalid(
                    field,
                    format!(
                        "the position {} ± 3 × {} leaves the range [{}, {}]; the signal is normalised on the range, so a shifted peak would keep its whole yield there: use at most {}",
                        show(centre),
                        show(value),
                        show(range.low),
                        show(range.high),
                        show_rounded(
                            (centre - range.low).min(range.high - centre) / POSITION_REACH_SIGMAS
                        )
                    ),
                ));
            }
        }
    }
    Ok(())
}

/// The auxiliary measurement of the signal yield factor is drawn from
/// N(1, δ²); it falls below zero in Φ(−1/δ) of the pseudo-experiments, where
/// the fit holds the factor at 0 and q0 = 0 whatever the data. Above δ = 1/3
/// that is more than Φ(−3) = 1.35e-3 of them (PDG statistics review), enough
/// to bias the toy quantiles, so such a width is refused.
fn refuse_wide_signal_yield_uncertainty(field: &str, relative: f64) -> Checked {
    if relative > 1.0 / 3.0 {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "a Gaussian yield uncertainty above 1/3 puts more than 0.13% of the auxiliary \
                 measurements below zero, where the yield factor is unphysical; use at most 0.333, got {}",
                show(relative)
            ),
        ));
    }
    Ok(())
}

fn validate_backgrounds(backgrounds: &[Background], range: Range) -> Checked {
    if backgrounds.is_empty() {
        return Err(ScenarioError::invalid(
            "backgrounds",
            "at least one background is needed, got an empty list",
        ));
    }
    for (index, background) in backgrounds.iter().enumerate() {
        let field = |key: &str| format!("backgrounds[{index}].{key}");
        require_text(&field("name"), &background.name)?;
        if let Some(first) = backgrounds[..index]
            .iter()
            .position(|earlier| earlier.name.trim() == background.name.trim())
        {
            return Err(ScenarioError::invalid(
                field("name"),
                format!(
                    "each background needs its own name, got {:?} again (as in backgrounds[{first}].name)",
                    background.name
                ),
            ));
        }
        require_positive(&field("events_per_day"), background.events_per_day)?;
        validate_shape(
            &format!("backgrounds[{index}]"),
            &background.shape,
            range,
            background.float_shape,
        )?;
        if let Some(NormUncertainty::Relative(relative)) = background.norm_uncertainty {
            require_relative_uncertainty(&field("norm_uncertainty"), relative)?;
        }
        if let Some(control) = background.control {
            if background.norm_uncertainty.is_some() {
                return Err(ScenarioError::invalid(
                    field("control"),
                    "a control region measures the normalisation itself; remove norm_uncertainty or control",
                ));
            }
            require_positive(&field("control.ratio"), control.ratio)?;
        }
    }
    refuse_indistinguishable_backgrounds(backgrounds)
}

/// Two backgrounds with free normalisations and the same shape: only the sum
/// of their yields enters the likelihood, so the fit cannot tell them apart
/// (a flat direction of -ln L, no unique minimum).
fn refuse_indistinguishable_backgrounds(backgrounds: &[Background]) -> Checked {
    let free = |background: &Background| {
        background.control.is_none() && background.norm_uncertainty == Some(NormUncertainty::Free)
    };
    for (index, background) in backgrounds.iter().enumerate() {
        let twin = backgrounds[..index].iter().position(|earlier| {
            free(earlier) && free(background) && earlier.shape == background.shape
        });
        if let Some(first) = twin {
            return Err(ScenarioError::invalid(
                format!("backgrounds[{index}].norm_uncertainty"),
                format!(
                    "backgrounds[{first}] and backgrounds[{index}] have the same shape and both normalisations free, so no fit can tell them apart; merge them into one background or constrain one normalisation"
                ),
            ));
        }
    }
    Ok(())
}

/// A single counting window (one bin) has one count: a background whose
/// normalisation is free can take any excess over the rest, so the signal
/// strength is not determined and there is no sensitivity at any exposure
/// (its profile likelihood is flat in mu; common practice).
fn refuse_free_background_in_one_bin(channel: &Channel) -> Checked {
    let [low, high] = channel.observable.range;
    if ((high - low) / channel.observable.bin_width).round() != 1.0 {
        return Ok(());
    }
    let free = channel
        .backgrounds
        .iter()
        .position(|b| b.norm_uncertainty == Some(NormUncertainty::Free));
    match free {
        Some(index) => Err(ScenarioError::invalid(
            format!("backgrounds[{index}].norm_uncertainty"),
            "a single counting window (one bin) whose background is free has no sensitivity: the fit takes any excess as background; give a relative uncertainty or a control region, or more bins, got free",
        )),
        None => Ok(()),
    }
}

/// Checks one shape with its kind's constructor; `owner` is the dotted path
/// of the signal or background holding it. A wrong value is named by its path
/// inside `shape` (or by the file it was read from), a shape that cannot
/// float by `float_shape`.
fn validate_shape(owner: &str, shape: &ShapeSpec, range: Range, floated: bool) -> Checked {
    let placement = Placement {
        range: [range.low, range.high],
        floated,
    };
    match shape.build(placement) {
        Ok(_) => Ok(()),
        Err(ShapeError::Value { field, message }) => match &shape.file {
            Some(file) => Err(ScenarioError::invalid(
                format!("{owner}.shape.{}.file", shape.kind.key),
                format!("{file}: {message}"),
            )),
            None => Err(ScenarioError::invalid(
                format!("{owner}.shape.{field}"),
                message,
            )),
        },
        Err(ShapeError::CannotFloat { message }) => Err(ScenarioError::invalid(
            format!("{owner}.float_shape"),
            message,
        )),
    }
}

/// The names of the backgrounds of every channel, in order, each once.
fn background_names(scenario: &Scenario) -> Vec<&str> {
    let mut names: Vec<&str> = Vec::new();
    for background in scenario.channels.iter().flat_map(|c| &c.backgrounds) {
        if !names.contains(&background.name.as_str()) {
            names.push(&background.name);
        }
    }
    names
}

/// The schedule; `background_scale` may name any background of any channel
/// (`backgrounds`), and scales every background of that name.
fn validate_schedule(schedule: &Schedule, backgrounds: &[&str]) -> Checked {
    let live_fraction = schedule.live_fraction;
    if !(live_fraction > 0.0 && live_fraction <= 1.0) {
        return Err(ScenarioError::invalid(
            "schedule.live_fraction",
            format!("must be a fraction in (0, 1], got {}", show(live_fraction)),
        ));
    }
    let last = schedule.periods.len().saturating_sub(1);
    for (index, period) in schedule.periods.iter().enumerate() {
        let field = |key: &str| format!("schedule.periods[{index}].{key}");
        match period.days {
            Some(days) => require_positive(&field("days"), days)?,
            None if index != last => {
                return Err(ScenarioError::invalid(
                    field("days"),
                    "is required on every period but the last (a last period without days lasts to the end of the run)",
                ));
            }
            None if period.rate_scale == 0.0 => {
                return Err(ScenarioError::invalid(
                    field("rate_scale"),
                    "a last period without days lasts to the end of the run and must take data; give it days or a rate_scale above 0, got 0",
                ));
            }
            None => {}
        }
        require_factor(&field("rate_scale"), period.rate_scale)?;
        require_factor(&field("signal_scale"), period.signal_scale)?;
        for (name, &factor) in &period.background_scale {
            let key = field(&format!("background_scale.{name}"));
            if !backgrounds.contains(&name.as_str()) {
                return Err(ScenarioError::invalid(
                    key,
                    format!(
                        "no background is named `{name}`; the backgrounds are {}",
                        backgrounds.join(", ")
                    ),
                ));
            }
            require_factor(&key, factor)?;
        }
    }
    validate_dates(schedule)
}

/// A rate factor of a period: finite and not negative.
fn require_factor(field: &str, factor: f64) -> Checked {
    if factor.is_finite() && factor >= 0.0 {
        return Ok(());
    }
    Err(ScenarioError::invalid(
        field,
        format!("must be a non-negative finite number, got {}", show(factor)),
    ))
}

/// An ISO 8601 calendar date that exists, or an error naming `field`.
fn require_date(field: &str, text: &str) -> Checked<CalendarDate> {
    CalendarDate::parse(text).ok_or_else(|| {
        ScenarioError::invalid(
            field,
            format!("`{text}` is not a calendar date; expected an ISO 8601 date YYYY-MM-DD that exists, such as 2027-03-01"),
        )
    })
}

/// `schedule.start` is a date; breaks need it, end no earlier than they
/// begin, begin no earlier than the start, and do not overlap one another.
fn validate_dates(schedule: &Schedule) -> Checked {
    let start = match &schedule.start {
        Some(text) => Some(require_date("schedule.start", text)?),
        None => None,
    };
    if schedule.breaks.is_empty() {
        return Ok(());
    }
    let Some(start) = start else {
        return Err(ScenarioError::invalid(
            "schedule.breaks",
            "breaks are dates and need schedule.start, the date of day 0",
        ));
    };
    let mut breaks = Vec::with_capacity(schedule.breaks.len());
    for (index, pause) in schedule.breaks.iter().enumerate() {
        let from = require_date(&format!("schedule.breaks[{index}].from"), &pause.from)?;
        let to = require_date(&format!("schedule.breaks[{index}].to"), &pause.to)?;
        if from < start {
            return Err(ScenarioError::invalid(
                format!("schedule.breaks[{index}].from"),
                format!("the break begins on {from}, before schedule.start {start}"),
            ));
        }
        if to < from {
            return Err(ScenarioError::invalid(
                format!("schedule.breaks[{index}].to"),
                format!("the break ends on {to}, before it begins on {from}"),
            ));
        }
        breaks.push((index, from, to));
    }
    breaks.sort_by_key(|&(_, from, _)| from);
    for pair in breaks.windows(2) {
        let [
            (earlier, earlier_from, earlier_to),
            (later, later_from, later_to),
        ] = pair
        else {
            continue;
        };
        if later_from <= earlier_to {
            return Err(ScenarioError::invalid(
                format!("schedule.breaks[{later}]"),
                format!(
                    "the break {later_from} to {later_to} overlaps schedule.breaks[{earlier}] ({earlier_from} to {earlier_to}); merge them into one"
                ),
            ));
        }
    }
    Ok(())
}

fn validate_plan(plan: &Plan) -> Checked {
    validate_days_grid(&plan.days)?;
    validate_toys(plan)?;
    validate_targets(&plan.targets)?;
    if !(plan.cl > 0.5 && plan.cl < 1.0) {
        return Err(ScenarioError::invalid(
            "plan.cl",
            format!(
                "must be a confidence level strictly between 0.5 and 1 (e.g. 0.95), got {}",
                plan.cl
            ),
        ));
    }
    Ok(())
}

/// At least one pseudo-experiment per point, at most [`MAX_TOYS_PER_POINT`],
/// and at most [`MAX_TOYS_IN_TOTAL`] over the discovery and limit ensembles of
/// every point.
fn validate_toys(plan: &Plan) -> Checked {
    let field = "plan.toys";
    if plan.toys == 0 {
        return Err(ScenarioError::invalid(
            field,
            "must be at least 1 pseudo-experiment, got 0",
        ));
    }
    if plan.toys > MAX_TOYS_PER_POINT {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "must be at most {MAX_TOYS_PER_POINT} pseudo-experiments per point, got {}",
                plan.toys
            ),
        ));
    }
    let total = (plan.toys as u64)
        .saturating_mul(plan.days.points() as u64)
        .saturating_mul(ENSEMBLES_PER_POINT);
    if total > MAX_TOYS_IN_TOTAL {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "{} pseudo-experiments at each of {} points, for discovery and for limits, make {total}, more than the {MAX_TOYS_IN_TOTAL} allowed in one projection",
                plan.toys,
                plan.days.points()
            ),
        ));
    }
    Ok(())
}

/// One to [`MAX_TARGETS`] significances, each above 0 and at most [`MAX_TARGET_SIGMA`].
fn validate_targets(targets: &[f64]) -> Checked {
    if targets.is_empty() {
        return Err(ScenarioError::invalid(
            "plan.targets",
            "at least one target significance (in sigma) is needed, got an empty list",
        ));
    }
    if targets.len() > MAX_TARGETS {
        return Err(ScenarioError::invalid(
            "plan.targets",
            format!(
                "at most {MAX_TARGETS} target significances are allowed, got {}",
                targets.len()
            ),
        ));
    }
    for (index, &target) in targets.iter().enumerate() {
        let field = format!("plan.targets[{index}]");
        require_positive(&field, target)?;
        if target > MAX_TARGET_SIGMA {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "must be at most {} sigma, got {}",
                    show(MAX_TARGET_SIGMA),
                    show(target)
                ),
            ));
        }
    }
    Ok(())
}

/// Calendar days must be positive (zero days is no exposure, and log spacing
/// needs a positive start), increasing, and the grid must have distinct
/// points, at most [`MAX_GRID_POINTS`].
fn validate_days_grid(days: &DaysGrid) -> Checked {
    match days {
        DaysGrid::Spaced(grid) => validate_spaced_days(grid),
        DaysGrid::List(days) => validate_days_list(days),
    }
}

/// A list of one to [`MAX_GRID_POINTS`] days, each above 0 and after the one before.
fn validate_days_list(days: &[f64]) -> Checked {
    if days.is_empty() {
        return Err(ScenarioError::invalid(
            "plan.days",
            "must hold at least one calendar day, got []",
        ));
    }
    if days.len() > MAX_GRID_POINTS {
        return Err(ScenarioError::invalid(
            "plan.days",
            format!("must be at most {MAX_GRID_POINTS} days, got {}", days.len()),
        ));
    }
    for (index, &day) in days.iter().enumerate() {
        let field = format!("plan.days[{index}]");
        require_positive(&field, day)?;
        if index > 0 && day <= days[index - 1] {
            return Err(ScenarioError::invalid(
                &field,
                format!(
                    "must be after plan.days[{}] ({}), got {}",
                    index - 1,
                    show(days[index - 1]),
                    show(day)
                ),
            ));
        }
    }
    Ok(())
}

fn validate_spaced_days(days: &SpacedDays) -> Checked {
    require_positive("plan.days.first", days.first)?;
    require_finite("plan.days.last", days.last)?;
    if days.last < days.first {
        return Err(ScenarioError::invalid(
            "plan.days.last",
            format!(
                "must not be before plan.days.first ({}), got {}",
                show(days.first),
                show(days.last)
            ),
        ));
    }
    match days.points {
        0 => Err(ScenarioError::invalid(
            "plan.days.points",
            "must be at least 1, got 0",
        )),
        1 if days.last != days.first => Err(ScenarioError::invalid(
            "plan.days.points",
            format!(
                "must be at least 2 when plan.days.last ({}) differs from plan.days.first ({}), got 1",
                show(days.last),
                show(days.first)
            ),
        )),
        points if points > MAX_GRID_POINTS => Err(ScenarioError::invalid(
            "plan.days.points",
            format!("must be at most {MAX_GRID_POINTS} points, got {points}"),
        )),
        points if points > 1 && days.last == days.first => Err(ScenarioError::invalid(
            "plan.days.last",
            format!(
                "must be after plan.days.first when plan.days.points is {points}, got {} for both",
                show(days.first)
            ),
        )),
        _ => Ok(()),
    }
}

/// Text that is not blank, see [`require_plain_text`].
fn require_text(field: &str, text: &str) -> Checked {
    if text.trim().is_empty() {
        return Err(ScenarioError::invalid(
            field,
            format!("must not be empty, got {text:?}"),
        ));
    }
    require_plain_text(field, text)
}

/// Text of at most [`MAX_TEXT_CHARS`] characters without control characters
/// (line breaks, tabs, escapes), which go into titles, labels and file contents.
fn require_plain_text(field: &str, text: &str) -> Checked {
    let length = text.chars().count();
    if length > MAX_TEXT_CHARS {
        return Err(ScenarioError::invalid(
            field,
            format!("must be at most {MAX_TEXT_CHARS} characters long, got {length}"),
        ));
    }
    if let Some(control) = text.chars().find(|c| c.is_control()) {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "must not contain control characters, got {:?} in {text:?}",
                control
            ),
        ));
    }
    Ok(())
}

pub(super) fn require_finite(field: &str, value: f64) -> Checked {
    match not_finite(value) {
        Some(message) => Err(ScenarioError::invalid(field, message)),
        None => Ok(()),
    }
}

pub(super) fn require_positive(field: &str, value: f64) -> Checked {
    match not_positive(value) {
        Some(message) => Err(ScenarioError::invalid(field, message)),
        None => Ok(()),
    }
}

fn require_relative_uncertainty(field: &str, relative: f64) -> Checked {
    if !(relative.is_finite() && relative > 0.0) {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "must be a positive relative uncertainty such as 0.05, got {}",
                show(relative)
            ),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::super::Scenario;
    use crate::scenario::ScenarioError;
    use crate::warning::Warning;

    /// A valid scenario with two backgrounds, edited line by line by the tests below.
    const BASE: &str = "\
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
    fn with(from: &str, to: &str) -> String {
        assert!(BASE.contains(from), "test text {from:?} not in BASE");
        BASE.replacen(from, to, 1)
    }

    /// The field named by the `Invalid` error that `text` must produce, and its message.
    fn rejection(text: &str) -> (String, String) {
        match Scenario::from_yaml(text) {
            Err(ScenarioError::Invalid { field, message }) => (field, message),
            other => panic!("expected an Invalid error, got {other:?}"),
        }
    }

    fn rejected_field(text: &str) -> String {
        rejection(text).0
    }

    fn accepted(text: &str) -> Scenario {
        Scenario::from_yaml(text).unwrap_or_else(|error| panic!("rejected: {error}"))
    }

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
    fn widths_of_peaks_must_be_positive() {
        assert_eq!(
            rejected_field(&with("sigma: 1.5", "sigma: 0")),
            "signal.shape.gaussian.sigma"
        );
        let breit_wigner = with(
            "{gaussian: {mean: 50.0, sigma: 1.5}}",
            "{breit_wigner: {mean: 50.0, width: -2}}",
        );
        assert_eq!(
            rejected_field(&breit_wigner),
            "signal.shape.breit_wigner.width"
        );
    }

    #[test]
    fn range_must_increase() {
        for range in ["[100.0, 0.0]", "[5.0, 5.0]"] {
            let text = with("[0.0, 100.0]", range);
            assert_eq!(rejected_field(&text), "observable.range", "{range}");
        }
    }

    #[test]
    fn bin_width_must_be_positive_and_divide_the_range() {
        for width in ["0", "-0.5", "0.3", "150", "1e-6"] {
            let text = with("bin_width: 0.5", &format!("bin_width: {width}"));
            assert_eq!(rejected_field(&text), "observable.bin_width", "{width}");
        }
        let (_, message) = rejection(&with("bin_width: 0.5", "bin_width: 0.3"));
        assert!(
            message.contains("whole number of bins, got 0.3"),
            "{message}"
        );
    }

    #[test]
    fn decimal_bin_widths_that_divide_the_range_are_accepted() {
        // 0.6 / 0.2 is 2.9999999999999996 in binary floating point.
        let text = with(
            "range: [0.0, 100.0], bin_width: 0.5",
            "range: [0.1, 0.7], bin_width: 0.2",
        )
        .replace("mean: 50.0", "mean: 0.4")
        .replace("sigma: 1.5", "sigma: 0.05");
        let text = text.replace("coefficients: [1.0, 0.01]", "coefficients: [1.0]");
        accepted(&text);
        // One bin: a counting window, whose backgrounds cannot be free.
        accepted(&with("bin_width: 0.5", "bin_width: 100").replacen(
            "norm_uncertainty: free",
            "norm_uncertainty: 0.2",
            1,
        ));
    }

    #[test]
    fn live_fraction_must_lie_in_the_unit_interval() {
        for fraction in ["0", "-0.2", "1.5"] {
            let text = with("live_fraction: 0.8", &format!("live_fraction: {fraction}"));
            assert_eq!(
                rejected_field(&text),
                "schedule.live_fraction",
                "{fraction}"
            );
        }
        accepted(&with("live_fraction: 0.8", "live_fraction: 1"));
    }

    #[test]
    fn periods_need_positive_days_and_non_negative_scale() {
        let zero_days = with("days: 20,", "days: 0,");
        assert_eq!(rejected_field(&zero_days), "schedule.periods[0].days");
        let negative_scale = with("rate_scale: 0.5", "rate_scale: -0.1");
        assert_eq!(
            rejected_field(&negative_scale),
            "schedule.periods[0].rate_scale"
        );
        accepted(&with("rate_scale: 0.5", "rate_scale: 0"));
    }

    #[test]
    fn period_factors_name_a_background_and_stay_non_negative() {
        let periods = |text: &str| with("periods: [{days: 20, rate_scale: 0.5}]", text);
        let halved = accepted(&periods(
            "periods: [{days: 20, rate_scale: 0.5}, {days: 100}, {background_scale: {continuum: 0.5}, signal_scale: 0.9}]",
        ));
        assert_eq!(
            halved.schedule.periods[2].background_factor("continuum"),
            0.5
        );
        assert_eq!(halved.schedule.periods[2].background_factor("sloped"), 1.0);
        let (field, message) = rejection(&periods(
            "periods: [{days: 20, background_scale: {shielding: 0.5}}]",
        ));
        assert_eq!(field, "schedule.periods[0].background_scale.shielding");
        assert!(message.contains("continuum, sloped"), "{message}");
        assert_eq!(
            rejected_field(&periods("periods: [{days: 20, signal_scale: -1}]")),
            "schedule.periods[0].signal_scale"
        );
        assert_eq!(
            rejected_field(&periods(
                "periods: [{days: 20, background_scale: {sloped: .nan}}]"
            )),
            "schedule.periods[0].background_scale.sloped"
        );
    }

    #[test]
    fn only_the_last_period_may_last_to_the_end_of_the_run() {
        let periods = |text: &str| with("periods: [{days: 20, rate_scale: 0.5}]", text);
        assert_eq!(
            rejected_field(&periods("periods: [{rate_scale: 0.5}, {days: 10}]")),
            "schedule.periods[0].days"
        );
        assert_eq!(
            rejected_field(&periods("periods: [{days: 10}, {rate_scale: 0}]")),
            "schedule.periods[1].rate_scale"
        );
        accepted(&periods("periods: [{days: 10}, {rate_scale: 0.5}]"));
    }

    /// `BASE` with `schedule.start` and the given `breaks` list.
    fn with_dates(start: &str, breaks: &str) -> String {
        with(
            "  periods: [{days: 20, rate_scale: 0.5}]\n",
            &format!(
                "  periods: [{{days: 20, rate_scale: 0.5}}]\n  start: {start}\n  breaks: {breaks}\n"
            ),
        )
    }

    #[test]
    fn dates_and_breaks_are_accepted_when_consistent() {
        let scenario = accepted(&with_dates(
            "2027-03-01",
            "[{from: 2027-07-20, to: 2027-08-31}, {from: 2028-02-29, to: 2028-02-29}]",
        ));
        assert_eq!(scenario.schedule.breaks.len(), 2);
        assert_eq!(
            scenario.schedule.start_date().unwrap().to_string(),
            "2027-03-01"
        );
    }

    #[test]
    fn invalid_dates_are_rejected_naming_their_field() {
        // 2027 is not a leap year (Gregorian calendar): 29 February does not exist.
        for (start, breaks, field) in [
            ("2027-02-29", "[]", "schedule.start"),
            ("2027-3-1", "[]", "schedule.start"),
            (
                "2027-03-01",
                "[{from: 2027-07-32, to: 2027-08-31}]",
                "schedule.breaks[0].from",
            ),
            (
                "2027-03-01",
                "[{from: 2027-07-20, to: end}]",
                "schedule.breaks[0].to",
            ),
        ] {
            let (rejected, message) = rejection(&with_dates(start, breaks));
            assert_eq!(rejected, field);
            assert!(message.contains("not a calendar date"), "{message}");
        }
    }

    #[test]
    fn breaks_need_start_order_and_no_overlap() {
        let without_start = with(
            "  periods: [{days: 20, rate_scale: 0.5}]\n",
            "  periods: [{days: 20, rate_scale: 0.5}]\n  breaks: [{from: 2027-07-20, to: 2027-08-31}]\n",
        );
        assert_eq!(rejected_field(&without_start), "schedule.breaks");
        let before_start = with_dates("2027-03-01", "[{from: 2027-02-20, to: 2027-03-31}]");
        assert_eq!(rejected_field(&before_start), "schedule.breaks[0].from");
        let reversed = with_dates("2027-03-01", "[{from: 2027-08-31, to: 2027-07-20}]");
        assert_eq!(rejected_field(&reversed), "schedule.breaks[0].to");
        let overlapping = with_dates(
            "2027-03-01",
            "[{from: 2027-09-01, to: 2027-09-10}, {from: 2027-07-20, to: 2027-09-01}]",
        );
        let (field, message) = rejection(&overlapping);
        assert_eq!(field, "schedule.breaks[0]");
        assert!(message.contains("schedule.breaks[1]"), "{message}");
        // Breaks on consecutive days touch but do not overlap.
        accepted(&with_dates(
            "2027-03-01",
            "[{from: 2027-07-20, to: 2027-07-31}, {from: 2027-08-01, to: 2027-08-02}]",
        ));
    }

    #[test]
    fn zero_toys_are_rejected() {
        assert_eq!(rejected_field(&with("toys: 100", "toys: 0")), "plan.toys");
    }

    #[test]
    fn days_grid_must_be_positive_increasing_and_consistent() {
        let cases = [
            (
                "first: 1, last: 365, points: 24",
                "first: 0, last: 365, points: 24",
                "plan.days.first",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: -1, last: 365, points: 24",
                "plan.days.first",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: 10, last: 5, points: 24",
                "plan.days.last",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: 1, last: 365, points: 0",
                "plan.days.points",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: 1, last: 365, points: 1",
                "plan.days.points",
            ),
            (
                "first: 1, last: 365, points: 24",
                "first: 9, last: 9, points: 24",
                "plan.days.last",
            ),
        ];
        for (from, to, field) in cases {
            assert_eq!(rejected_field(&with(from, to)), field, "{to}");
        }
        let linear_from_zero = with("first: 1,", "first: 0,").replace("log", "linear");
        assert_eq!(rejected_field(&linear_from_zero), "plan.days.first");
        let single_day = accepted(&with(
            "first: 1, last: 365, points: 24",
            "first: 30, last: 30, points: 1",
        ));
        assert_eq!(single_day.plan.days.days(), vec![30.0]);
    }

    #[test]
    fn days_may_be_a_list_of_increasing_calendar_days() {
        const GRID: &str = "{first: 1, last: 365, points: 24, spacing: log}";
        let list = accepted(&with(GRID, "[30, 91, 182.5, 365]"));
        assert_eq!(list.plan.days.days(), vec![30.0, 91.0, 182.5, 365.0]);
        assert_eq!(list.plan.days.last_field(), "plan.days[3]");
        for (to, field) in [
            ("[]", "plan.days"),
            ("[0, 30]", "plan.days[0]"),
            ("[30, 91, 91]", "plan.days[2]"),
            ("[30, 20]", "plan.days[1]"),
            ("[30, .inf]", "plan.days[1]"),
        ] {
            assert_eq!(rejected_field(&with(GRID, to)), field, "{to}");
        }
        // Another form: both accepted forms are shown, not a type name.
        let error = Scenario::from_yaml(&with(GRID, "30"))
            .unwrap_err()
            .to_string();
        assert!(
            error.contains("plan.days")
                && error.contains("[30, 91, 182, 365]")
                && error.contains("{first, last, points, spacing}")
                && !error.contains("DaysGrid"),
            "{error}"
        );
    }

    #[test]
    fn targets_must_be_present_and_positive() {
        assert_eq!(
            rejected_field(&with("targets: [3, 5]", "targets: []")),
            "plan.targets"
        );
        assert_eq!(
            rejected_field(&with("targets: [3, 5]", "targets: [3, 0]")),
            "plan.targets[1]"
        );
    }

    #[test]
    fn relative_uncertainties_must_be_positive() {
        let cases = [
            (
                "yield_uncertainty: 0.1",
                "yield_uncertainty: 0",
                "signal.yield_uncertainty",
            ),
            (
                "yield_uncertainty: 0.1",
                "yield_uncertainty: -0.1",
                "signal.yield_uncertainty",
            ),
            (
                "norm_uncertainty: 0.05",
                "norm_uncertainty: 0",
                "backgrounds[0].norm_uncertainty",
            ),
            (
                "norm_uncertainty: free",
                "norm_uncertainty: -1",
                "backgrounds[1].norm_uncertainty",
            ),
        ];
        for (from, to, field) in cases {
            assert_eq!(rejected_field(&with(from, to)), field, "{to}");
        }
    }

    #[test]
    fn polynomial_needs_coefficients() {
        let text = with("coefficients: [1.0, 0.01]", "coefficients: []");
        assert_eq!(
            rejected_field(&text),
            "backgrounds[1].shape.polynomial.coefficients"
        );
    }

    #[test]
    fn polynomial_negative_inside_the_range_is_rejected() {
        // 1 - 0.02 x crosses zero at x = 50, inside the range [0, 100].
        let text = with("coefficients: [1.0, 0.01]", "coefficients: [1.0, -0.02]");
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].shape.polynomial.coefficients");
        assert!(message.contains("must not be negative"), "{message}");
        assert!(message.contains("but is -1 at x = 100"), "{message}");
        // (x - 30)(x - 40) = 1200 - 70 x + x^2 is positive at both edges, negative
        // only between 30 and 40: caught by evaluating inside the range.
        let dip = with("coefficients: [1.0, 0.01]", "coefficients: [1200, -70, 1]");
        assert_eq!(
            rejected_field(&dip),
            "backgrounds[1].shape.polynomial.coefficients"
        );
    }

    #[test]
    fn polynomial_zero_everywhere_is_rejected() {
        let text = with("coefficients: [1.0, 0.01]", "coefficients: [0, 0]");
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].shape.polynomial.coefficients");
        assert!(message.contains("zero everywhere"), "{message}");
    }

    #[test]
    fn polynomial_touching_zero_is_accepted_unless_floated() {
        // (x - 50)^2 = 2500 - 100 x + x^2 vanishes at x = 50 and is positive
        // elsewhere: a valid density, but one without non-negative Bernstein
        // coefficients at any degree (Lorentz, Bernstein Polynomials, 1953,
        // ch. 1.1), so it cannot float.
        let touching = with("coefficients: [1.0, 0.01]", "coefficients: [2500, -100, 1]");
        accepted(&touching.replace("float_shape: true", "float_shape: false"));
        let (field, message) = rejection(&touching);
        assert_eq!(field, "backgrounds[1].float_shape");
        assert!(
            message.contains("touches or nearly touches zero"),
            "{message}"
        );
    }

    /// x^2 - 5e-4 x + 5.25e-8 is negative between its roots 1.5e-4 and
    /// 3.5e-4 (closed form), between the points of any coarse grid on [0, 1].
    #[test]
    fn polynomial_with_a_narrow_dip_is_rejected() {
        let text = with(
            "range: [0.0, 100.0], bin_width: 0.5",
            "range: [0.0, 1.0], bin_width: 0.0001",
        )
        .replace("mean: 50.0", "mean: 0.5")
        .replace("sigma: 1.5", "sigma: 0.01")
        .replace(
            "coefficients: [1.0, 0.01]",
            "coefficients: [5.25e-8, -5e-4, 1]",
        );
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].shape.polynomial.coefficients");
        assert!(message.contains("at x = 0.00025"), "{message}");
    }

    #[test]
    fn two_free_backgrounds_with_one_shape_are_refused() {
        let text = with(
            "shape: {exponential: {slope: -0.02}}\n    norm_uncertainty: 0.05",
            "shape: {polynomial: {coefficients: [1.0, 0.01]}}\n    norm_uncertainty: free",
        );
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].norm_uncertainty");
        assert!(
            message.contains("backgrounds[0] and backgrounds[1]"),
            "{message}"
        );
        // A constraint on either normalisation tells them apart.
        accepted(&text.replacen("norm_uncertainty: free", "norm_uncertainty: 0.1", 1));
    }

    #[test]
    fn polynomial_degree_is_limited() {
        let terms = vec!["1"; 22].join(", ");
        let text = with(
            "coefficients: [1.0, 0.01]",
            &format!("coefficients: [{terms}]"),
        );
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].shape.polynomial.coefficients");
        assert!(message.contains("at most 21 coefficients"), "{message}");
    }

    #[test]
    fn backgrounds_must_exist_with_distinct_names() {
        let start = BASE.find("backgrounds:").unwrap();
        let end = BASE.find("schedule:").unwrap();
        let none = format!("{}backgrounds: []\n{}", &BASE[..start], &BASE[end..]);
        assert_eq!(rejected_field(&none), "backgrounds");
        let blank = with("name: sloped", "name: \"  \"");
        assert_eq!(rejected_field(&blank), "backgrounds[1].name");
        let twin = with("name: sloped", "name: continuum");
        let (field, message) = rejection(&twin);
        assert_eq!(field, "backgrounds[1].name");
        assert!(message.contains("backgrounds[0].name"), "{message}");
    }

    /// `BASE` with `shared_uncertainties` declared and `shared` lists on the
    /// signal and the first background.
    fn with_shared(declared: &str, on_signal: &str, on_background: &str) -> String {
        let text = with(
            "title: Test scenario\n",
            &format!("title: Test scenario\nshared_uncertainties: {declared}\n"),
        );
        text.replacen(
            "  yield_uncertainty: 0.1\n",
            &format!("  yield_uncertainty: 0.1\n  shared: {on_signal}\n"),
            1,
        )
        .replacen(
            "    norm_uncertainty: 0.05\n",
            &format!("    norm_uncertainty: 0.05\n    shared: {on_background}\n"),
            1,
        )
    }

    #[test]
    fn shared_uncertainties_must_be_declared_once_and_valid() {
        let valid = with_shared("{efficiency: 0.1, scale: 0.03}", "[efficiency]", "[scale]");
        assert!(accepted(&valid).warnings().is_empty());
        let (field, message) = rejection(&with_shared("{scale: 0.03}", "[]", "[scale, energy]"));
        assert_eq!(field, "backgrounds[0].shared[1]");
        assert!(
            message.contains("\"energy\"") && message.contains("scale"),
            "{message}"
        );
        let (field, message) = rejection(&with_shared("{}", "[efficiency]", "[]"));
        assert_eq!(field, "signal.shared[0]");
        assert!(message.contains("none is declared"), "{message}");
        let twice = with_shared("{scale: 0.03}", "[]", "[scale, scale]");
        assert_eq!(rejected_field(&twice), "backgrounds[0].shared[1]");
        let negative = with_shared("{scale: -0.03}", "[]", "[scale]");
        assert_eq!(rejected_field(&negative), "shared_uncertainties.scale");
        // Above 1/3 only on a signal (see refuse_wide_signal_yield_uncertainty).
        let wide = with_shared("{scale: 0.5}", "[scale]", "[]");
        assert_eq!(rejected_field(&wide), "shared_uncertainties.scale");
        accepted(&with_shared("{scale: 0.5}", "[]", "[scale]"));
    }

    #[test]
    fn an_unused_shared_uncertainty_is_a_warning() {
        let text = with_shared("{scale: 0.03, spare: 0.2}", "[]", "[scale]");
        assert_eq!(
            accepted(&text).warnings(),
            [Warning::UnusedSharedUncertainty {
                name: "spare".into()
            }]
        );
    }

    #[test]
    fn title_must_not_be_empty() {
        assert_eq!(
            rejected_field(&with("title: Test scenario", "title: \"\"")),
            "title"
        );
    }

    #[test]
    fn peak_outside_the_range_is_an_error_naming_the_centre() {
        let text = with("mean: 50.0", "mean: 120.0");
        assert_eq!(rejected_field(&text), "signal.shape.gaussian.mean");
        let error = Scenario::from_yaml(&text).unwrap_err().to_string();
        assert!(
            error.contains("inside observable.range [0, 100], got 120"),
            "{error}"
        );
        // On the edge the peak is inside, and nothing is said.
        assert!(
            accepted(&with("mean: 50.0", "mean: 100.0"))
                .warnings()
                .is_empty()
        );
    }

    #[test]
    fn floating_a_flat_shape_is_a_warning() {
        let text = with("{polynomial: {coefficients: [1.0, 0.01]}}", "{flat: {}}");
        let warnings = accepted(&text).warnings();
        assert_eq!(warnings.len(), 1, "{warnings:?}");
        assert_eq!(warnings[0], Warning::NothingToFloat { background: 1 });
    }

    #[test]
    fn grid_starting_before_any_data_is_a_warning() {
        let text = with(
            "periods: [{days: 20, rate_scale: 0.5}]",
            "periods: [{days: 10, rate_scale: 0}, {days: 20, rate_scale: 0.5}]",
        );
        let warnings = accepted(&text).warnings();
        assert_eq!(warnings.len(), 1, "{warnings:?}");
        assert_eq!(
            warnings[0],
            Warning::FirstDayWithoutData {
                first_day: 1.0,
                days_without_data: 10.0
            }
        );
        let later_start = text.replace("first: 1,", "first: 11,");
        assert!(accepted(&later_start).warnings().is_empty());
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

    #[test]
    fn norm_uncertainty_accepts_a_number_or_free_only() {
        let loose = with("norm_uncertainty: free", "norm_uncertainty: loose");
        match Scenario::from_yaml(&loose) {
            Err(error @ ScenarioError::Parse { line: Some(15), .. }) => {
                let shown = error.to_string();
                assert!(
                    shown.contains("expected a relative uncertainty such as 0.05, or `free`"),
                    "{shown}"
                );
                assert!(shown.contains("loose"), "{shown}");
            }
            other => panic!("expected a parse error on line 15, got {other:?}"),
        }
        let scenario = accepted(BASE);
        use crate::scenario::NormUncertainty;
        assert_eq!(
            scenario.backgrounds()[0].norm_uncertainty,
            Some(NormUncertainty::Relative(0.05))
        );
        assert_eq!(
            scenario.backgrounds()[1].norm_uncertainty,
            Some(NormUncertainty::Free)
        );
        let integer = accepted(&with("norm_uncertainty: 0.05", "norm_uncertainty: 1"));
        assert_eq!(
            integer.backgrounds()[0].norm_uncertainty,
            Some(NormUncertainty::Relative(1.0))
        );
    }

    #[test]
    fn a_free_background_in_one_bin_is_refused() {
        // One bin of width 100: the free background (backgrounds[1]) can absorb
        // any excess, so mu is undetermined (common practice).
        let one_bin = with("bin_width: 0.5", "bin_width: 100.0");
        let (field, message) = rejection(&one_bin);
        assert_eq!(field, "backgrounds[1].norm_uncertainty");
        assert!(message.contains("no sensitivity"), "{message}");
        // With a relative uncertainty it is a valid counting window.
        accepted(&one_bin.replacen("norm_uncertainty: free", "norm_uncertainty: 0.2", 1));
    }
}
