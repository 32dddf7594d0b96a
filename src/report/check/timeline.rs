//! The timeline `runcast check` prints: each stretch of the schedule with its
//! calendar days, its rate factors and the live days accumulated, and the
//! live days at the end of the grid.

use crate::calendar::DayDate;
use crate::message::{show, show_rounded};
use crate::model::LiveTime;
use crate::report::kit::dates::with_date;
use crate::scenario::{Period, Scenario};
use std::fmt::Write;

/// Appends the timeline of `live_time` (the schedule of `scenario`) up to
/// `last_day`, the last day of the grid.
pub(super) fn timeline(
    text: &mut String,
    scenario: &Scenario,
    live_time: &LiveTime,
    last_day: f64,
) {
    let start = live_time.start();
    let day = |days: f64| with_date(format!("day {}", show(days)), days, start);
    let _ = writeln!(
        text,
        "  timeline (live fraction {}; live days = live fraction x days x rate; \
         a stretch from day A to day B holds day A and ends where day B begins):",
        show(scenario.schedule.live_fraction)
    );
    let breaks = scenario.schedule.break_dates();
    let mut end_of_schedule = 0.0;
    for (from, to, rate_scale, period) in live_time.stretches() {
        let until = if to.is_finite() {
            format!("to {}", day(to))
        } else {
            "on, to the end of the run".to_string()
        };
        let live_by_end = if to.is_finite() {
            format!(
                "{} live days by its end",
                show_rounded(live_time.live_days(to))
            )
        } else {
            String::new()
        };
        let as_written = start
            .and_then(|start| start.after(from))
            .and_then(|first| breaks.iter().find(|(from, _)| DayDate::On(*from) == first))
            .map(|(from, to)| format!(" ({from} to {to} as written, both days included)"))
            .filter(|_| rate_scale == 0.0)
            .unwrap_or_default();
        let _ = writeln!(
            text,
            "    {} {until}: {}{as_written}{}{live_by_end}",
            day(from),
            factors(rate_scale, period),
            if live_by_end.is_empty() { "" } else { "; " },
        );
        end_of_schedule = to;
    }
    if end_of_schedule.is_finite() {
        let _ = writeln!(text, "    {} on: nominal rates", day(end_of_schedule));
    }
    let _ = writeln!(
        text,
        "  live days at the end of the grid ({}): {}",
        day(last_day),
        show_rounded(live_time.live_days(last_day))
    );
}

/// The rate factors of one stretch: a break (rate 0 cutting a period, or
/// after them), a pause, or the rate scale with the signal and background
/// factors that differ from 1.
fn factors(rate_scale: f64, period: Option<&Period>) -> String {
    if rate_scale == 0.0 {
        return match period {
            Some(period) if period.rate_scale == 0.0 => "no data (rate 0)".to_string(),
            _ => "break, no data".to_string(),
        };
    }
    let mut parts = Vec::new();
    if rate_scale != 1.0 {
        parts.push(format!("all rates x{}", show(rate_scale)));
    }
    if let Some(period) = period {
        if period.signal_scale != 1.0 {
            parts.push(format!("signal x{}", show(period.signal_scale)));
        }
        for (name, &factor) in &period.background_scale {
            if factor != 1.0 {
                parts.push(format!("{name} x{}", show(factor)));
            }
        }
    }
    if parts.is_empty() {
        "nominal rates".to_string()
    } else {
        parts.join(", ")
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::projection::example;

    #[test]
    fn each_stretch_shows_its_days_factors_and_live_days() {
        // Invented schedule, hand count: live fraction 0.5; 10 days at rate
        // 0.4 (2 live days), 20 nominal days (12), then the first background
        // halved to the end of the run, cut by a break on days 40 to 45
        // (2027-03-11..15, both included): 12 + 5 = 17 live days by day 40,
        // still 17 by day 45, and 17 + 27.5 = 44.5 by day 100.
        let mut scenario = example::invented_peak();
        let name = scenario.backgrounds()[0].name.clone();
        scenario.schedule = serde_yaml::from_str(&format!(
            "{{live_fraction: 0.5, start: 2027-01-30, breaks: [{{from: 2027-03-11, to: 2027-03-15}}],\n\
              periods: [{{days: 10, rate_scale: 0.4}}, {{days: 20}}, {{background_scale: {{{name}: 0.5}}}}]}}"
        ))
        .unwrap();
        let live_time = LiveTime::from_schedule(&scenario.schedule);
        let mut text = String::new();
        timeline(&mut text, &scenario, &live_time, 100.0);
        let expected = [
            "day 0 (2027-01-30) to day 10 (2027-02-09): all rates x0.4; 2 live days by its end",
            "day 10 (2027-02-09) to day 30 (2027-03-01): nominal rates; 12 live days by its end",
            &format!(
                "day 30 (2027-03-01) to day 40 (2027-03-11): {name} x0.5; 17 live days by its end"
            ),
            "day 40 (2027-03-11) to day 45 (2027-03-16): break, no data (2027-03-11 to 2027-03-15 as written, both days included); 17 live days by its end",
            &format!("day 45 (2027-03-16) on, to the end of the run: {name} x0.5"),
            "live days at the end of the grid (day 100 (2027-05-10)): 44.5",
        ];
        for line in expected {
            assert!(text.contains(line), "{line:?} missing from\n{text}");
        }
        assert!(!text.contains("on: nominal rates"), "{text}");
    }
}
