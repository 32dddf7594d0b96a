//! `limits.svg`: the expected upper limit on the signal strength μ against
//! calendar days, by the CLs criterion (A. L. Read, J. Phys. G 28 (2002) 2693)
//! at the confidence level of the projection.
//!
//! With pseudo-experiments: the median of the limits of background-only
//! pseudo-experiments and their central 68.3% and 95.4% bands (quantiles
//! 15.9–84.1% and 2.3–97.7%), with the asymptotic median dashed. Asimov-only:
//! the asymptotic median with the asymptotic limits at ±1σ and ±2σ of the
//! background-only expectation as bands (Cowan et al., EPJC 71 (2011) 1554,
//! eqs. 88-89). Both axes are logarithmic: where statistics dominate, limits fall
//! as 1/√exposure, a straight line. A line at μ = 1 marks the nominal signal;
//! where a median limit crosses it, the nominal signal is expected to be
//! excluded, and the day is marked.

use super::ensembles::Ensemble;
use super::{LIMITS_SVG, day_range};
use crate::projection::{ExposurePoint, Projection};
use crate::report::ReportError;
use crate::report::kit::axis::{
    Axis, DayScale, DaysCoordinate, LogAxis, days_axis, log_axis, one_two_five_span, tick_label,
};
use crate::report::kit::dates::dated_days_label;
use crate::report::kit::figure::{self, Canvas, Chart, DrawError, Frame, Page, SIZE};
use crate::report::kit::format::percent_label;
use crate::report::kit::legend::Legend;
use crate::report::kit::marks::{self, BandPoint, CrossingLabels, Series, Stroke};
use crate::report::kit::palette::{DOT, INK_TEAL, LABEL_SIZE, SLATE, VERMILION};
use crate::report::kit::schedule;
use plotters::style::text_anchor::{HPos, VPos};

type LimitChart<'a, 'b> = Chart<'a, 'b, DaysCoordinate, LogAxis>;

/// The limit plot at the confidence level of the projection as SVG bytes;
/// only for a projection with limits (`cl` set).
pub(super) fn render(projection: &Projection) -> Result<Vec<u8>, ReportError> {
    let cl = projection.cl.ok_or_else(|| ReportError::Render {
        file: LIMITS_SVG,
        message: "the projection has no expected limits (no confidence level)".to_string(),
    })?;
    figure::svg_bytes(LIMITS_SVG, SIZE, |canvas| draw(canvas, projection, cl))
}

fn draw(canvas: &Canvas, projection: &Projection, cl: f64) -> Result<(), DrawError> {
    let points = &projection.points;
    let with_toys = projection.toys > 0;
    let (band, band_labels) = if with_toys {
        (
            series(points, |point| point.limit_band),
            ["Toys, central 95.4%", "Toys, central 68.3%"],
        )
    } else {
        (
            series(points, |point| point.limit_asimov_band),
            ["Asymptotic ±2σ", "Asymptotic ±1σ"],
        )
    };
    let median = series(points, |point| point.limit_median);
    let asymptotic = series(points, |point| point.limit_asimov);
    let description = format!("Expected {} CL upper limit on μ (CLs)", percent_label(cl));
    let format = |mu: &f64| tick_label(*mu);
    let y = Axis {
        coordinate: log_axis(limit_span(&band, &median, &asymptotic)),
        description: Some(&description),
        format: &format,
        labels: Some(12),
    };
    let footnote = footnote(projection);
    let page = Page::titled(canvas, &projection.title)?;
    let frame = Frame::single(footnote.is_some());
    let scale = DayScale::new(projection.day_spacing, projection.start);
    let x = days_axis(day_range(points), &scale);
    let mut chart = figure::chart(&page.plot, &frame, x, y)?;
    let mut legend = Legend::default();
    schedule::shade_reduced(&mut chart, canvas, &projection.rate_stretches)?;
    marks::draw_band(&mut chart, &mut legend, &band, band_labels)?;
    draw_nominal_signal(&mut chart, canvas, points)?;
    marks::draw_toys_and_asymptotic(
        &mut chart,
        &mut legend,
        Series {
            points: median,
            colour: INK_TEAL,
            label: format!("Toy median ({} per point)", projection.toys),
        },
        Series {
            points: asymptotic,
            colour: VERMILION,
            label: "Asymptotic median".to_string(),
        },
    )?;
    let mut labels = CrossingLabels::default();
    draw_days_to_exclusion(&mut chart, &mut labels, projection)?;
    labels.place(canvas)?;
    legend.draw(&page.legend)?;
    match footnote {
        Some(text) => marks::draw_footnote(canvas, &text),
        None => Ok(()),
    }
}

/// `(days, value)` at every point that has the value; points without
/// exposure have no limit and are skipped.
fn series<T>(
    points: &[ExposurePoint],
    value: impl Fn(&ExposurePoint) -> Option<T>,
) -> Vec<(f64, T)> {
    points
        .iter()
        .filter_map(|point| Some((point.days, value(point)?)))
        .collect()
}

/// The y range: from a 1-2-5 value below the lowest limit drawn to one above
/// the highest, and at least 0.5 to 2 so that the μ = 1 line never runs
/// along the frame.
fn limit_span(
    band: &[BandPoint],
    median: &[(f64, f64)],
    asymptotic: &[(f64, f64)],
) -> std::ops::Range<f64> {
    let values = band
        .iter()
        .flat_map(|(_, quantiles)| *quantiles)
        .chain(median.iter().chain(asymptotic).map(|&(_, mu)| mu));
    let (low, high) = values.fold((0.5, 2.0), |(low, high), mu| (mu.min(low), mu.max(high)));
    one_two_five_span(low, high)
}

/// The dotted line at μ = 1, labelled "nominal signal (μ = 1)" inside the
/// plot where the limits leave room: above the line at the right end when
/// every limit of the last point lies below 1 (the nominal signal is excluded
/// by then), else below the line at the left end, where limits are highest.
fn draw_nominal_signal(
    chart: &mut LimitChart,
    canvas: &Canvas,
    points: &[ExposurePoint],
) -> Result<(), DrawError> {
    const INSET: i32 = 6;
    let (right, y) = marks::horizontal_line(chart, 1.0, SLATE, DOT)?;
    let excluded_at_the_end = points.last().is_some_and(|point| {
        let band = point
            .limit_band
            .or(point.limit_asimov_band)
            .unwrap_or_default();
        band.iter()
            .chain(&point.limit_median)
            .chain(&point.limit_asimov)
            .all(|&mu| mu < 1.0)
    });
    let (position, anchor) = if excluded_at_the_end {
        ((right - INSET, y - INSET), (HPos::Right, VPos::Bottom))
    } else {
        let left = chart.plotting_area().get_pixel_range().0.start;
        ((left + INSET, y + INSET), (HPos::Left, VPos::Top))
    };
    let direction = if excluded_at_the_end { -1 } else { 1 };
    marks::draw_label_clear(
        canvas,
        "nominal signal (μ = 1)",
        position,
        (SLATE, LABEL_SIZE),
        anchor,
        direction,
    )
}

/// Markers where the toy median and the asymptotic median limit reach μ = 1,
/// each labelled "excluded: 32 d" in the curve's colour, or once "excluded:
/// 32 d (toys and Asimov)" when both read the same. Limits fall with
/// exposure, so the labels go below the line, one row each, the median's
/// first.
fn draw_days_to_exclusion(
    chart: &mut LimitChart,
    labels: &mut CrossingLabels,
    projection: &Projection,
) -> Result<(), DrawError> {
    const ROW: i32 = marks::LABEL_ROW;
    let exclusion = &projection.days_to_exclusion;
    let label = |days: Option<f64>| {
        days.map(|days| format!("excluded: {}", dated_days_label(days, projection.start)))
    };
    let (median, asimov) =
        marks::merge_coinciding(label(exclusion.median_days), label(exclusion.asimov_days));
    let crossings = [
        (exclusion.median_days, median, (INK_TEAL, Stroke::Solid)),
        (exclusion.asimov_days, asimov, (VERMILION, Stroke::Dashed)),
    ];
    let reached = crossings
        .into_iter()
        .filter_map(|(days, label, curve)| Some((days?, label?, curve)));
    for (row, (days, label, curve)) in (0..).zip(reached) {
        marks::mark_crossing(
            chart,
            labels,
            (days, 1.0),
            curve,
            &label,
            ROW / 2 + row * ROW,
        )?;
    }
    Ok(())
}

/// Footnote text: how Asimov-only bands are made, or failed limit fits when any.
fn footnote(projection: &Projection) -> Option<String> {
    if projection.toys == 0 {
        return Some(
            "Asimov only: bands are the asymptotic limits at ±1σ and ±2σ of the \
             background-only expectation."
                .to_string(),
        );
    }
    Ensemble::limits().footnote(projection)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::projection::example;

    fn svg(projection: &Projection) -> String {
        String::from_utf8(render(projection).unwrap()).unwrap()
    }

    #[test]
    fn toy_plot_has_its_labels_and_no_random_ids() {
        let text = svg(&example::with_limits());
        for expected in [
            "Calendar days",
            "Expected 95% CL upper limit on μ (CLs)",
            "Toy median (2000 per point)",
            "Toys, central 68.3%",
            "Toys, central 95.4%",
            "Asymptotic median",
            "\nnominal signal (μ = 1)\n</text>",
            "\nexcluded: 13 d\n</text>",
            "\nexcluded: 14 d\n</text>",
            "Failed limit fits: 4 of 62000 background-only pseudo-experiments",
        ] {
            assert!(text.contains(expected), "missing {expected:?}");
        }
        assert!(!text.contains(" id="));
    }

    #[test]
    fn asimov_only_plot_draws_asymptotic_bands() {
        let text = svg(&example::asimov_only_with_limits());
        for expected in [
            "Asymptotic ±1σ",
            "Asymptotic ±2σ",
            "Asymptotic median",
            "\nexcluded: 16 d\n</text>",
            "Asimov only: bands are the asymptotic limits at ±1σ and ±2σ",
        ] {
            assert!(text.contains(expected), "missing {expected:?}");
        }
        assert!(!text.contains("Toy median"));
        assert!(!text.contains("Toys, central"));
    }

    #[test]
    fn the_confidence_level_names_the_axis() {
        let mut projection = example::with_limits();
        projection.cl = Some(0.9);
        assert!(svg(&projection).contains("Expected 90% CL upper limit on μ (CLs)"));
    }

    #[test]
    fn points_without_a_limit_are_skipped() {
        let mut projection = example::with_limits();
        for point in &mut projection.points[..3] {
            point.limit_median = None;
            point.limit_band = None;
            point.limit_asimov = None;
            point.limit_asimov_band = None;
        }
        let points = &projection.points;
        let median = series(points, |point| point.limit_median);
        assert_eq!(median.len(), points.len() - 3);
        assert_eq!(median[0], (points[3].days, points[3].limit_median.unwrap()));
        assert!(svg(&projection).contains("Toy median (2000 per point)"));
    }

    #[test]
    fn the_limit_axis_spans_one_two_five_values_around_mu_one() {
        let band = [
            (1.0, [1.9, 2.6, 4.7, 5.9]),
            (1000.0, [0.12, 0.16, 0.3, 0.41]),
        ];
        assert_eq!(limit_span(&band, &[], &[(1.0, 3.4)]), 0.1..10.0);
        // Limits far above 1 still leave the μ = 1 line inside the plot.
        assert_eq!(limit_span(&[], &[(1.0, 40.0)], &[(1.0, 12.0)]), 0.5..50.0);
        assert_eq!(limit_span(&[], &[], &[]), 0.5..2.0);
    }

    #[test]
    fn the_nominal_signal_label_moves_left_when_not_yet_excluded() {
        let anchor = |projection: &Projection| {
            let text = svg(projection);
            let label = text.find("\nnominal signal (μ = 1)\n").unwrap();
            let start = text[..label].rfind("<text").unwrap();
            text[start..label].contains("text-anchor=\"end\"")
        };
        let mut projection = example::with_limits();
        assert!(
            anchor(&projection),
            "right end when excluded by the last day"
        );
        projection.points.truncate(9);
        assert!(!anchor(&projection), "left end while limits stay above 1");
    }
}
