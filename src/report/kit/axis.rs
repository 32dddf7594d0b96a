//! Axes of any figure: linear or logarithmic coordinates, the ticks of a
//! logarithmic axis, and how tick labels read. The x axis may show calendar
//! days ([`days_axis`]) or any other quantity, such as a position in the
//! observable.

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

/// Calendar days on an axis of `scale`, ticks labelled as written ("0.2",
/// "5", "1000"): a logarithmic one with the ticks of [`log_ticks`], a linear
/// one with evenly spaced round ticks.
pub fn days_axis(days: Range<f64>, scale: Spacing) -> Axis<'static, DaysCoordinate> {
    let coordinate = match scale {
        Spacing::Log => DaysCoordinate::Log(log_axis(days)),
        Spacing::Linear => DaysCoordinate::Linear(linear_axis(days)),
    };
    let format: &'static dyn Fn(&f64) -> String = match scale {
        Spacing::Log => &tick_label_of,
        Spacing::Linear => &axis_label,
    };
    Axis {
        coordinate,
        description: Some("Calendar days"),
        format,
        labels: None,
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
    let first_decade = low.log10().floor() as i32;
    let last_decade = high.log10().ceil() as i32;
    let mantissas: &[f64] = if high / low <= 1e3 {
        &[1.0, 2.0, 5.0]
    } else {
        &[1.0]
    };
    let in_range = |value: &f64| (low * (1.0 - 1e-9)..=high * (1.0 + 1e-9)).contains(value);
    let ticks = |mantissas: &[f64]| -> Vec<f64> {
        (first_decade..=last_decade)
            .flat_map(|decade| {
                mantissas
                    .iter()
                    .map(move |&mantissa| times_power_of_ten(mantissa, decade))
            })
            .filter(in_range)
            .collect()
    };
    let every_integer = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0];
    (ticks(mantissas), ticks(&every_integer))
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
        let axis = days_axis(1.0..1000.0, Spacing::Linear);
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
    fn axis_labels_drop_rounding_noise() {
        assert_eq!(axis_label(&(0.1 + 0.2)), "0.3");
        assert_eq!(axis_label(&20.0), "20");
        assert_eq!(axis_label(&0.0125), "0.0125");
    }
}
