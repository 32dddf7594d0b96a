//! Axes of any figure: linear or logarithmic coordinates, the ticks of a
//! logarithmic axis, and how tick labels read. The x axis may show calendar
//! days ([`days_axis`], dated when the schedule has a start) or any other
//! quantity, such as a position in the observable.

use crate::calendar::CalendarDate;
use crate::numeric::times_power_of_ten;
use crate::scenario::Spacing;
use plotters::coord::combinators::WithKeyPoints;
use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use std::ops::Range;

/// A logarithmic axis with labelled ticks chosen by [`log_ticks`].
pub type LogAxis = WithKeyPoints<LogCoord<f64>>;

/// One axis of a chart: its coordinate ([`linear_axis`] or [`log_axis`]),
/// its description (none for an axis that is not labelled), how its tick
/// labels read, and how many labels it asks for (plotters' default if none).
pub struct Axis<'f, C> {
    pub coordinate: C,
    pub description: Option<&'f str>,
    pub format: &'f dyn Fn(&f64) -> String,
    pub labels: Option<usize>,
}

/// How an axis is labelled: [`Axis`] without its coordinate.
pub struct Labelling<'f> {
    pub description: Option<&'f str>,
    pub format: &'f dyn Fn(&f64) -> String,
    pub labels: Option<usize>,
}

impl<'f, C> Axis<'f, C> {
    /// The coordinate, and how the axis is labelled.
    pub fn split(self) -> (C, Labelling<'f>) {
        let labelling = Labelling {
            description: self.description,
            format: self.format,
            labels: self.labels,
        };
        (self.coordinate, labelling)
    }
}

/// A linear axis over `range`.
pub fn linear_axis(range: Range<f64>) -> RangedCoordf64 {
    range.into()
}

/// A logarithmic axis over `range` (both ends above zero), with the ticks of
/// [`log_ticks`].
pub fn log_axis(range: Range<f64>) -> LogAxis {
    let (major, minor) = log_ticks(range.start, range.end);
    range
        .log_scale()
        .with_key_points(major)
        .with_light_points(minor)
}

/// The calendar-day axis of a figure: logarithmic or linear as the grid's
/// [`Spacing`], so that every figure against days is drawn the same way.
pub enum DaysCoordinate {
    Log(LogAxis),
    Linear(RangedCoordf64),
}

impl Ranged for DaysCoordinate {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        match self {
            DaysCoordinate::Log(axis) => axis.map(value, limit),
            DaysCoordinate::Linear(axis) => axis.map(value, limit),
        }
    }

    fn key_points<Hint: KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        match self {
            DaysCoordinate::Log(axis) => axis.key_points(hint),
            DaysCoordinate::Linear(axis) => axis.key_points(hint),
        }
    }

    fn range(&self) -> Range<f64> {
        match self {
            DaysCoordinate::Log(axis) => axis.range(),
            DaysCoordinate::Linear(axis) => axis.range(),
        }
    }
}

/// How a calendar-day axis reads: its spacing, its description and its tick
/// labels. With a start date (`schedule.start`) ticks are labelled with the
/// date by which that many days have passed (`CalendarDate::after`, as every
/// date runcast writes) and the description names the start, so that days
/// stay readable beside the dates; without one, ticks are the days as
/// written ("0.2", "5", "1000").
pub struct DayScale {
    spacing: Spacing,
    dated: bool,
    description: String,
    format: Box<dyn Fn(&f64) -> String>,
}

impl DayScale {
    /// The scale of a grid of `spacing`, dated from `start` if given.
    pub fn new(spacing: Spacing, start: Option<CalendarDate>) -> DayScale {
        let Some(start) = start else {
            let format: Box<dyn Fn(&f64) -> String> = match spacing {
                Spacing::Log => Box::new(tick_label_of),
                Spacing::Linear => Box::new(axis_label),
            };
            return DayScale {
                spacing,
                dated: false,
                description: "Calendar days".to_string(),
                format,
            };
        };
        DayScale {
            spacing,
            dated: true,
            description: format!("Date (calendar days counted from {start})"),
            format: Box::new(move |days: &f64| {
                start
                    .after(*days)
                    .map_or_else(|| tick_label(*days), |date| date.to_string())
            }),
        }
    }
}

/// Calendar days on an axis of `scale`: a logarithmic one with the ticks of
/// [`log_ticks`] (with dates, at 1 and 3 times powers of ten, so the longer
/// labels do not run into each other), a linear one with evenly spaced round
/// ticks (fewer with dates).
pub fn days_axis(days: Range<f64>, scale: &DayScale) -> Axis<'_, DaysCoordinate> {
    let coordinate = match (scale.spacing, scale.dated) {
        (Spacing::Log, false) => DaysCoordinate::Log(log_axis(days)),
        (Spacing::Log, true) => {
            let (_, minor) = log_ticks(days.start, days.end);
            let major = ticks_in(days.start, days.end, &[1.0, 3.0]);
            DaysCoordinate::Log(
                days.log_scale()
                    .with_key_points(major)
                    .with_light_points(minor),
            )
        }
        (Spacing::Linear, _) => DaysCoordinate::Linear(linear_axis(days)),
    };
    Axis {
        coordinate,
        description: Some(&scale.description),
        format: &*scale.format,
        labels: scale.dated.then_some(6),
    }
}

fn tick_label_of(value: &f64) -> String {
    tick_label(*value)
}

/// The narrowest range from a 1-2-5 value (1, 2 or 5 times a power of ten)
/// up to another that holds `low..=high` (both above zero), so that both ends
/// of a logarithmic axis carry a labelled tick.
pub fn one_two_five_span(low: f64, high: f64) -> Range<f64> {
    let first_decade = low.log10().floor() as i32 - 1;
    let last_decade = high.log10().ceil() as i32 + 1;
    let values: Vec<f64> = (first_decade..=last_decade)
        .flat_map(|decade| [1.0, 2.0, 5.0].map(|mantissa| times_power_of_ten(mantissa, decade)))
        .collect();
    let start = values.iter().rev().find(|&&value| value <= low);
    let end = values.iter().find(|&&value| value >= high);
    *start.unwrap_or(&low)..*end.unwrap_or(&high)
}

/// Labelled ticks at 1, 2, 5 times powers of ten when the range spans at most
/// three decades and at powers of ten beyond that; light grid lines at every
/// integer multiple of a power of ten.
pub fn log_ticks(low: f64, high: f64) -> (Vec<f64>, Vec<f64>) {
    let mantissas: &[f64] = if high / low <= 1e3 {
        &[1.0, 2.0, 5.0]
    } else {
        &[1.0]
    };
    let every_integer = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0];
    (
        ticks_in(low, high, mantissas),
        ticks_in(low, high, &every_integer),
    )
}

/// Every `mantissas` times a power of ten from `low` to `high`.
fn ticks_in(low: f64, high: f64, mantissas: &[f64]) -> Vec<f64> {
    let first_decade = low.log10().floor() as i32;
    let last_decade = high.log10().ceil() as i32;
    let in_range = |value: &f64| (low * (1.0 - 1e-9)..=high * (1.0 + 1e-9)).contains(value);
    (first_decade..=last_decade)
        .flat_map(|decade| {
            mantissas
                .iter()
                .map(move |&mantissa| times_power_of_ten(mantissa, decade))
        })
        .filter(in_range)
        .collect()
}

/// A tick of a logarithmic axis as written: "0.2", "5", "1000".
pub fn tick_label(value: f64) -> String {
    value.to_string()
}

/// A tick label: the value to ten significant digits, shortest form, so that
/// 0.30000000000000004 prints as 0.3 and 20.0 as 20.
pub fn axis_label(value: &f64) -> String {
    format!("{value:.9e}")
        .parse::<f64>()
        .map_or_else(|_| value.to_string(), |rounded| rounded.to_string())
}

#[cfg(test)]
mod tests {
    use super::*;
    use plotters::coord::ranged1d::BoldPoints;

    #[test]
    fn a_thousand_days_get_one_two_five_ticks() {
        let (major, minor) = log_ticks(1.0, 1000.0);
        assert_eq!(
            major,
            [1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0]
        );
        assert_eq!(minor.len(), 28);
    }

    #[test]
    fn wide_ranges_get_powers_of_ten() {
        let (major, _) = log_ticks(0.5, 2e4);
        assert_eq!(major, [1.0, 10.0, 100.0, 1000.0, 10000.0]);
        let labels: Vec<String> = log_ticks(0.1, 30.0).0.into_iter().map(tick_label).collect();
        assert_eq!(labels, ["0.1", "0.2", "0.5", "1", "2", "5", "10", "20"]);
    }

    #[test]
    fn spans_end_on_one_two_five_values() {
        assert_eq!(one_two_five_span(0.127, 18.07), 0.1..20.0);
        assert_eq!(one_two_five_span(0.3, 1.0), 0.2..1.0);
        assert_eq!(one_two_five_span(2.0, 4.9), 2.0..5.0);
        assert_eq!(one_two_five_span(0.0041, 5.2), 0.002..10.0);
    }

    #[test]
    fn a_linear_day_axis_has_evenly_spaced_ticks() {
        let scale = DayScale::new(Spacing::Linear, None);
        let axis = days_axis(1.0..1000.0, &scale);
        let ticks = axis.coordinate.key_points(10);
        let labels: Vec<String> = ticks.iter().map(axis.format).collect();
        assert_eq!(
            labels,
            [
                "100", "200", "300", "400", "500", "600", "700", "800", "900", "1000"
            ]
        );
        let pixels: Vec<i32> = ticks
            .iter()
            .map(|day| axis.coordinate.map(day, (0, 999)))
            .collect();
        let steps: Vec<i32> = pixels.windows(2).map(|pair| pair[1] - pair[0]).collect();
        assert!(
            steps.iter().all(|step| (step - steps[0]).abs() <= 1),
            "{pixels:?}"
        );
    }

    #[test]
    fn with_a_start_date_ticks_read_as_dates() {
        let start = CalendarDate::parse("2027-03-01").unwrap();
        let scale = DayScale::new(Spacing::Log, Some(start));
        let axis = days_axis(1.0..365.0, &scale);
        let ticks = axis.coordinate.key_points(BoldPoints(12));
        let labels: Vec<String> = ticks.iter().map(axis.format).collect();
        // 1 March + 30 days = 31 March; + 100 days = 9 June; + 300 = 26 December.
        assert_eq!(
            labels,
            [
                "2027-03-02",
                "2027-03-04",
                "2027-03-11",
                "2027-03-31",
                "2027-06-09",
                "2027-12-26"
            ]
        );
        assert_eq!(
            axis.description,
            Some("Date (calendar days counted from 2027-03-01)")
        );
        let undated = DayScale::new(Spacing::Log, None);
        assert_eq!(
            days_axis(1.0..365.0, &undated).description,
            Some("Calendar days")
        );
    }

    #[test]
    fn axis_labels_drop_rounding_noise() {
        assert_eq!(axis_label(&(0.1 + 0.2)), "0.3");
        assert_eq!(axis_label(&20.0), "20");
        assert_eq!(axis_label(&0.0125), "0.0125");
    }
}
