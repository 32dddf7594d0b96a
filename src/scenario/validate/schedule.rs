//! `schedule`: the live fraction, the periods and their factors, the start
//! date and the breaks.

use super::values::{Checked, require_positive};
use crate::calendar::CalendarDate;
use crate::message::show;
use crate::scenario::{Scenario, ScenarioError, Schedule};

/// The names of the backgrounds of every channel, in order, each once.
pub(super) fn background_names(scenario: &Scenario) -> Vec<&str> {
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
pub(super) fn validate_schedule(schedule: &Schedule, backgrounds: &[&str]) -> Checked {
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

#[cfg(test)]
mod tests {
    use super::super::test_scenario::{accepted, rejected_field, rejection, with};

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
}
