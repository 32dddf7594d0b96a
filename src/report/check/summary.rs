//! The text of `runcast check`: a valid scenario's rates, S/B at the peak,
//! and the asymptotic days to each target and to exclusion.

use super::timeline::timeline;
use crate::model::{Model, fraction_inside, shape_from_spec};
use crate::projection::Projection;
use crate::report::kit::format::{DAYS_ROUNDING, days_label, percent_label, rounded};
use crate::report::kit::vocabulary::not_within_grid;
use crate::scenario::{Channel, RateUnit, Scenario, ShapeSpec};
use std::fmt::Write;
use std::path::Path;

/// What `check` prints for the scenario at `path`, with its model and its
/// Asimov-only projection (with limits).
pub fn check_summary(
    path: &Path,
    scenario: &Scenario,
    model: &Model,
    projection: &Projection,
) -> String {
    let mut text = format!("{}: valid\n  {}\n", path.display(), scenario.title);
    rates(&mut text, scenario, model);
    let last_day = projection.points.last().map_or(0.0, |point| point.days);
    timeline(&mut text, scenario, &model.live_time, last_day);
    let beyond = || not_within_grid(&format!("{} d", rounded(last_day)));
    text.push_str("  asymptotic calendar days to target:\n");
    for days in &projection.days_to_target {
        let answer = match (days.asimov_days, days.saturation_z) {
            (Some(days), _) => days_label(days),
            (None, _) if days.signal_unseen() => {
                "never: Z_A stays 0, the signal is too small to change any fit".to_string()
            }
            (None, Some(limit)) if limit < days.target => {
                format!(
                    "never: systematic uncertainties cap Z at {} sigma",
                    rounded(limit)
                )
            }
            (None, _) => beyond(),
        };
        let _ = writeln!(text, "    {} sigma: {answer}", days.target);
    }
    let exclusion = projection
        .days_to_exclusion
        .asimov_days
        .map_or_else(beyond, days_label);
    let _ = writeln!(
        text,
        "  asymptotic days until the signal is excluded at {} CL (median expected CLs limit): {exclusion}",
        percent_label(scenario.plan.cl)
    );
    let _ = writeln!(text, "  {DAYS_ROUNDING}");
    text
}

/// How a rate of `channel` was written when not per live day, e.g.
/// " (written per year of 365.25 live days)"; empty for a rate per live day.
fn written_as(unit: RateUnit, scenario: &Scenario, channel: &Channel) -> String {
    match (unit, channel.detector.or(scenario.detector)) {
        (RateUnit::PerDay, _) => String::new(),
        (RateUnit::PerKgDay, Some(detector)) => format!(
            " (written {}, detector mass {} kg)",
            unit.label(),
            rounded(detector.mass_kg)
        ),
        (unit, _) => format!(" (written {})", unit.label()),
    }
}

/// Each channel's rates (under a heading with its name when there are
/// several), then with several channels the totals of all of them.
fn rates(text: &mut String, scenario: &Scenario, model: &Model) {
    let [_] = scenario.channels.as_slice() else {
        for (index, channel) in scenario.channels.iter().enumerate() {
            let _ = writeln!(text, "  channel {}:", channel.name);
            channel_rates(
                text,
                scenario,
                index,
                model.channel_alone(index).nominal_rates(),
                "    ",
            );
        }
        let (signal, background) = model.nominal_rates();
        let _ = writeln!(
            text,
            "  all channels: signal {}, background {} events per live day, S/B = {}",
            rounded(signal),
            rounded(background),
            rounded(signal / background)
        );
        return;
    };
    channel_rates(text, scenario, 0, model.nominal_rates(), "  ");
}

/// Channel `index`'s rates per live day (`rates`: signal and background of
/// its model; with a detector-level signal, the channel's signal efficiency),
/// and S, B and S/B within the peak window; each line after `indent`.
fn channel_rates(
    text: &mut String,
    scenario: &Scenario,
    index: usize,
    rates: (f64, f64),
    indent: &str,
) {
    let channel = &scenario.channels[index];
    let (signal, background) = rates;
    let observable = &channel.observable;
    let efficiency = scenario
        .detector_signal
        .as_ref()
        .map_or(String::new(), |detector| {
            format!(
                " (detector-level signal, signal efficiency {})",
                rounded(detector.channels[index].efficiency)
            )
        });
    let _ = writeln!(
        text,
        "{indent}signal: {} events per live day{}{efficiency}",
        rounded(signal),
        written_as(channel.signal.rate_unit, scenario, channel)
    );
    for b in &channel.backgrounds {
        let _ = writeln!(
            text,
            "{indent}background {}: {} events per live day{}",
            b.name,
            rounded(b.events_per_day),
            written_as(b.rate_unit, scenario, channel)
        );
    }
    let _ = writeln!(
        text,
        "{indent}background total: {} events per live day",
        rounded(background)
    );
    let Some((low, high)) = peak_window(&channel.signal.shape, observable.range) else {
        let _ = writeln!(
            text,
            "{indent}the signal peak ±2 widths lies outside the range: no S/B at the peak"
        );
        return;
    };
    let in_window =
        |spec: &ShapeSpec, rate: f64| rate * fraction_inside(spec, observable.range, low, high);
    let signal_in = in_window(&channel.signal.shape, signal);
    let background_in: f64 = channel
        .backgrounds
        .iter()
        .map(|b| in_window(&b.shape, b.events_per_day))
        .sum();
    // No background in the window leaves no ratio to print (it would read inf).
    let ratio = if background_in > 0.0 {
        format!("S/B = {}", rounded(signal_in / background_in))
    } else {
        "no background within ±2 widths of the peak, so no S/B".to_string()
    };
    let _ = writeln!(
        text,
        "{indent}within [{}, {}] {}: S = {}, B = {} per live day, {ratio}",
        rounded(low),
        rounded(high),
        observable.unit,
        rounded(signal_in),
        rounded(background_in),
    );
}

/// The peak ±2 widths of a peaked shape ([`Shape::peak`](crate::shapes::Shape::peak): sigma for a
/// Gaussian, half width at half maximum for a Breit-Wigner), clipped to the
/// range; the whole range for other shapes; None when the window lies
/// entirely outside the range.
fn peak_window(shape: &ShapeSpec, range: [f64; 2]) -> Option<(f64, f64)> {
    let Some(peak) = shape_from_spec(shape, range).peak() else {
        return Some((range[0], range[1]));
    };
    let low = (peak.centre - 2.0 * peak.width).max(range[0]);
    let high = (peak.centre + 2.0 * peak.width).min(range[1]);
    (low < high).then_some((low, high))
}
