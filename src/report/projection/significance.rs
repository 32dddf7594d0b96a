//! `projection.svg`: expected significance against calendar days.
//!
//! With pseudo-experiments: the central 68.3% and 95.4% bands of the toy
//! significances (quantiles 15.9–84.1% and 2.3–97.7%), their median, and the
//! Asimov curve dashed. Asimov-only: the Asimov curve with asymptotic bands
//! Z_A ± 1 and Z_A ± 2 floored at 0, since √q0 is approximately normal with
//! unit width about Z_A and q0 is set to 0 when the fitted signal is negative
//! (Cowan et al., EPJC 71 (2011) 1554). With a scan of the signal position,
//! the global significances beside them (the toy median's solid, Z_A's
//! dashed, in their own colours): the local ones after the look-elsewhere
//! effect. Each target is a horizontal line, with a marker and a label where
//! each curve reaches it (global labels below the line). With several
//! channels, each channel's own Asimov curve, thin, beside the combined one.

use super::ensembles::Ensemble;
use super::{PROJECTION_SVG, day_range};
use crate::projection::Projection;
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, DayScale, DaysCoordinate, days_axis, linear_axis};
use crate::report::kit::dates::dated_days_label;
use crate::report::kit::figure::{self, Canvas, Chart, DrawError, Frame, Page, SIZE};
use crate::report::kit::format::target_label;
use crate::report::kit::legend::{Legend, Line};
use crate::report::kit::marks::{self, BandPoint, CrossingLabels, Series, Stroke};
use crate::report::kit::palette::{
    DASH, INK_TEAL, LABEL_SIZE, PLUM, SERIES_COLOURS, VERMILION, VIOLET,
};
use crate::report::kit::schedule;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

type SignificanceChart<'a, 'b> = Chart<'a, 'b, DaysCoordinate, RangedCoordf64>;

/// Colours of the channels' own curves: the series colours after the two the
/// toy median and the combined Asimov curve use.
const CHANNEL_COLOURS: [RGBColor; 4] = [
    SERIES_COLOURS[2],
    SERIES_COLOURS[3],
    SERIES_COLOURS[4],
    SERIES_COLOURS[5],
];

/// The significance plot as SVG bytes.
pub(super) fn render(projection: &Projection) -> Result<Vec<u8>, ReportError> {
    figure::svg_bytes(PROJECTION_SVG, SIZE, |canvas| draw(canvas, projection))
}

fn draw(canvas: &Canvas, projection: &Projection) -> Result<(), DrawError> {
    let points = &projection.points;
    let with_toys = projection.toys > 0;
    let band = if with_toys {
        toy_band(projection)
    } else {
        asymptotic_band(projection)
    };
    let footnote = footnote(projection);
    let ceiling = significance_ceiling(projection, &band);
    // Key points such as 0.6000000000000001 print as 0.6.
    let format = |z: &f64| format!("{}", (z * 100.0).round() / 100.0);
    let y = Axis {
        coordinate: linear_axis(0.0..ceiling),
        description: Some("Expected significance Z [σ]"),
        format: &format,
        labels: Some(12),
    };
    let page = Page::titled(canvas, &projection.title)?;
    let frame = Frame::single(footnote.is_some());
    let scale = DayScale::new(projection.day_spacing, projection.start);
    let x = days_axis(day_range(points), &scale);
    let mut chart = figure::chart(&page.plot, &frame, x, y)?;
    let mut legend = Legend::default();
    schedule::shade_reduced(&mut chart, canvas, &projection.rate_stretches)?;
    let band_labels = if with_toys {
        ["Toys, central 95.4%", "Toys, central 68.3%"]
    } else {
        ["Z_A ± 2 (asymptotic)", "Z_A ± 1 (asymptotic)"]
    };
    marks::draw_band(&mut chart, &mut legend, &band, band_labels)?;
    for &target in &projection.targets {
        marks::reference_line(&mut chart, canvas, target, &target_label(target))?;
    }
    let median: Vec<(f64, f64)> = points
        .iter()
        .filter_map(|point| Some((point.days, point.z_median?)))
        .collect();
    marks::draw_toys_and_asymptotic(
        &mut chart,
        &mut legend,
        Series {
            points: median,
            colour: INK_TEAL,
            label: format!("Toy median ({} per point)", projection.toys),
        },
        Series {
            points: points
                .iter()
                .map(|point| (point.days, point.z_asimov))
                .collect(),
            colour: VERMILION,
            label: "Asimov Z_A".to_string(),
        },
    )?;
    draw_channels(&mut chart, &mut legend, projection)?;
    draw_global(&mut chart, &mut legend, projection)?;
    let mut labels = CrossingLabels::default();
    draw_saturation(&mut chart, &mut labels, projection, ceiling)?;
    draw_days_to_target(&mut chart, &mut labels, projection)?;
    draw_global_days_to_target(&mut chart, &mut labels, projection)?;
    labels.place(canvas)?;
    legend.draw(&page.legend)?;
    match footnote {
        Some(text) => marks::draw_footnote(canvas, &text),
        None => Ok(()),
    }
}

/// With several channels, each channel's own Asimov curve, thin and dashed,
/// labelled with its name in the legend; a combined Z_A is never below a
/// channel's (the other channels only add deviance terms), so the axis needs
/// no room for them.
fn draw_channels<'a, 'b: 'a>(
    chart: &mut SignificanceChart<'a, 'b>,
    legend: &mut Legend,
    projection: &Projection,
) -> Result<(), DrawError> {
    let Some(first) = projection.points.first() else {
        return Ok(());
    };
    for (index, channel) in first.channels.iter().enumerate() {
        let curve = projection
            .points
            .iter()
            .map(|point| (point.days, point.channels[index].z_asimov))
            .collect();
        let colour = CHANNEL_COLOURS[index % CHANNEL_COLOURS.len()];
        let line = Line::Dashed(colour.stroke_width(1), DASH);
        let label = format!("Asimov Z_A, {} alone", channel.name);
        marks::draw_line(chart, legend, curve, line, Some(label))?;
    }
    Ok(())
}

/// The toy quantiles where present.
fn toy_band(projection: &Projection) -> Vec<BandPoint> {
    projection
        .points
        .iter()
        .filter_map(|point| Some((point.days, point.z_band?)))
        .collect()
}

/// Z_A ± 1 and Z_A ± 2, floored at 0, as the projection computed them.
fn asymptotic_band(projection: &Projection) -> Vec<BandPoint> {
    projection
        .points
        .iter()
        .map(|point| (point.days, point.z_asimov_band))
        .collect()
}

/// Top of the y axis: 10% above the highest curve or target, rounded up to a
/// whole σ.
fn significance_ceiling(projection: &Projection, band: &[BandPoint]) -> f64 {
    let highest = projection
        .points
        .iter()
        .map(|point| point.z_asimov)
        .chain(band.iter().map(|(_, quantiles)| quantiles[3]))
        .chain(projection.targets.iter().copied())
        .fold(1.0, f64::max);
    (1.1 * highest).ceil()
}

/// Markers where the toy median and the Asimov curve reach each target, each
/// labelled "3σ: 42 d" in the curve's colour, or once "3σ: 42 d (toys and
/// Asimov)" when both read the same. Curves rise with exposure, so the labels
/// go above the target line and left of their marker, the median's one row
/// above the Asimov one; a label that would leave the plot on the left goes
/// right of its marker instead.
fn draw_days_to_target(
    chart: &mut SignificanceChart,
    labels: &mut CrossingLabels,
    projection: &Projection,
) -> Result<(), DrawError> {
    const ROW: i32 = marks::LABEL_ROW;
    for row in &projection.days_to_target {
        let label = |days: Option<f64>| {
            days.map(|days| {
                format!(
                    "{}: {}",
                    target_label(row.target),
                    dated_days_label(days, projection.start)
                )
            })
        };
        let (median, asimov) =
            marks::merge_coinciding(label(row.median_days), label(row.asimov_days));
        let crossings = [
            (row.median_days, median, (INK_TEAL, Stroke::Solid), 2 * ROW),
            (row.asimov_days, asimov, (VERMILION, Stroke::Dashed), ROW),
        ];
        for (days, label, curve, raise) in crossings {
            let (Some(days), Some(label)) = (days, label) else {
                continue;
            };
            marks::mark_crossing(chart, labels, (days, row.target), curve, &label, -raise)?;
        }
    }
    Ok(())
}

/// With a scan: the global significances of the toy median and of Z_A,
/// where measured.
fn draw_global<'a, 'b: 'a>(
    chart: &mut SignificanceChart<'a, 'b>,
    legend: &mut Legend,
    projection: &Projection,
) -> Result<(), DrawError> {
    let Some(scan) = &projection.scan else {
        return Ok(());
    };
    let series = |value: fn(&crate::projection::GlobalSignificance) -> Option<f64>| {
        projection
            .points
            .iter()
            .filter_map(|point| Some((point.days, value(point.global.as_ref()?)?)))
            .collect::<Vec<_>>()
    };
    let median = series(|global| global.z_global_median);
    if median.len() > 1 {
        let label = format!("Global, toy median ({} positions)", scan.positions);
        marks::draw_curve(chart, legend, median, VIOLET, Stroke::Solid, label)?;
    }
    let asimov = series(|global| global.z_global_asimov);
    if asimov.len() > 1 {
        let label = format!("Global Z_A ({} positions)", scan.positions);
        marks::draw_curve(chart, legend, asimov, PLUM, Stroke::Dashed, label)?;
    }
    Ok(())
}

/// Markers where the global curves reach each target, labelled "5σ global:
/// 37 d" below the target line and right of the marker, the median's one row
/// below the Asimov one, or once "5σ global: 37 d (toys and Asimov)" when
/// both read the same.
fn draw_global_days_to_target(
    chart: &mut SignificanceChart,
    labels: &mut CrossingLabels,
    projection: &Projection,
) -> Result<(), DrawError> {
    const ROW: i32 = marks::LABEL_ROW;
    for row in &projection.days_to_target {
        let Some(global) = &row.global else { continue };
        let label = |days: Option<f64>| {
            days.map(|days| {
                format!(
                    "{} global: {}",
                    target_label(row.target),
                    dated_days_label(days, projection.start)
                )
            })
        };
        let (median, asimov) = marks::merge_coinciding(
            label(global.global_median_days),
            label(global.global_asimov_days),
        );
        let crossings = [
            (
                global.global_median_days,
                median,
                (VIOLET, Stroke::Solid),
                2 * ROW,
            ),
            (
                global.global_asimov_days,
                asimov,
                (PLUM, Stroke::Dashed),
                ROW,
            ),
        ];
        for (days, label, curve, lower) in crossings {
            let (Some(days), Some(label)) = (days, label) else {
                continue;
            };
            marks::mark_crossing_right(chart, labels, (days, row.target), curve, &label, lower)?;
        }
    }
    Ok(())
}

/// When systematic uncertainties cap Z_A within the plotted range, a line at
/// that saturation value, labelled inside the plot above its right end (or
/// where the labels find room).
fn draw_saturation(
    chart: &mut SignificanceChart,
    labels: &mut CrossingLabels,
    projection: &Projection,
    ceiling: f64,
) -> Result<(), DrawError> {
    let saturation = projection
        .days_to_target
        .iter()
        .find_map(|row| row.saturation_z)
        .filter(|&saturation| saturation < ceiling);
    let Some(saturation) = saturation else {
        return Ok(());
    };
    marks::horizontal_line(chart, saturation, VERMILION, DASH)?;
    let right_end = (chart.x_range().end, saturation);
    let text = format!("Z_A limit {saturation:.2}σ");
    let raise = i32::try_from(LABEL_SIZE).unwrap_or(0) + 4;
    labels.label_point(chart, right_end, VERMILION, &text, -raise);
    Ok(())
}

/// Footnote text: failed fits when any, or how Asimov-only bands are made.
fn footnote(projection: &Projection) -> Option<String> {
    if projection.toys == 0 {
        return Some(
            "Asimov only: bands are Z_A ± 1 and Z_A ± 2, floored at 0 (asymptotic).".to_string(),
        );
    }
    Ensemble::discovery().footnote(projection)
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
        let text = svg(&example::with_toys());
        for expected in [
            "Calendar days",
            "Expected significance Z [σ]",
            "Toy median (2000 per point)",
            "Toys, central 68.3%",
            "Asimov Z_A",
            "\n3σ\n</text>",
            "\n5σ\n</text>",
            "\n3σ: 34 d\n</text>",
            "\n5σ: 123 d\n</text>",
            "Z_A limit 10.00σ",
            "Failed fits: 12 of 62000 pseudo-experiments",
        ] {
            assert!(text.contains(expected), "missing {expected:?}");
        }
        assert!(!text.contains(" id="));
    }

    #[test]
    fn coinciding_toy_and_asimov_days_get_one_label() {
        let mut projection = example::with_toys();
        let row = &mut projection.days_to_target[0];
        row.median_days = row.asimov_days;
        let row = row.clone();
        let text = svg(&projection);
        let label = format!(
            "{}: {}",
            target_label(row.target),
            dated_days_label(row.asimov_days.unwrap(), None)
        );
        assert!(text.contains(&format!("\n{label} (toys and Asimov)\n</text>")));
        assert!(!text.contains(&format!("\n{label}\n</text>")));
    }

    /// The global days of the toy median and of Z_A reading the same: one
    /// label for both, as for the local ones.
    #[test]
    fn coinciding_global_days_get_one_label() {
        let mut projection = example::with_toys();
        projection.days_to_target[0].global = Some(crate::projection::GlobalDays {
            global_asimov_days: Some(37.0),
            global_median_days: Some(37.0),
        });
        let text = svg(&projection);
        let label = format!("{} global: 37 d", target_label(projection.targets[0]));
        assert!(text.contains(&format!("\n{label} (toys and Asimov)\n</text>")));
        assert!(!text.contains(&format!("\n{label}\n</text>")));
    }

    #[test]
    fn with_a_start_date_the_day_axis_reads_dates() {
        let mut projection = example::with_toys();
        let undated = svg(&projection);
        projection.start = crate::calendar::CalendarDate::parse("2027-03-01");
        let dated = svg(&projection);
        // The example grid runs from 1 to 1000 days: a tick at 100 days is
        // 9 June 2027.
        assert!(dated.contains("Date (calendar days counted from 2027-03-01)"));
        assert!(dated.contains("\n2027-06-09\n</text>"));
        assert!(undated.contains("\nCalendar days\n</text>") && !dated.contains("Calendar days"));
    }

    #[test]
    fn asimov_only_plot_draws_asymptotic_bands() {
        let text = svg(&example::asimov_only());
        assert!(text.contains("Z_A ± 1 (asymptotic)"));
        assert!(!text.contains("Toy median"));
        assert!(text.contains("Asimov only: bands are Z_A ± 1 and Z_A ± 2"));
    }

    /// The invented peak's stretches at other than nominal rates under
    /// `schedule` (YAML flow mapping).
    fn rate_stretches(schedule: &str) -> Vec<crate::projection::RateStretch> {
        let text = example::INVENTED_PEAK.replace("plan:", &format!("schedule: {schedule}\nplan:"));
        let scenario = crate::scenario::Scenario::from_yaml(&text).unwrap();
        let model = crate::model::Model::from_scenario(&scenario);
        crate::projection::RateStretch::of(&model.live_time)
    }

    #[test]
    fn a_break_and_a_reduced_period_are_shaded_and_labelled() {
        let mut projection = example::with_toys();
        projection.rate_stretches = rate_stretches(
            "{start: 2027-01-01, periods: [{days: 5, rate_scale: 0.3}], \
             breaks: [{from: 2027-03-01, to: 2027-03-31}]}",
        );
        let text = svg(&projection);
        assert!(text.contains("\nno data\n</text>"));
        assert!(text.contains("\nrate ×0.3\n</text>"));
        for (red, green, blue) in [(0xd5, 0xd9, 0xe0), (0xee, 0xf0, 0xf3)] {
            let fill = "<rect x=";
            let colour = format!("fill=\"#{red:02X}{green:02X}{blue:02X}\"");
            let shaded = text
                .lines()
                .any(|line| line.starts_with(fill) && line.contains(&colour));
            assert!(shaded, "no rectangle filled with {colour}");
        }
    }

    #[test]
    fn neutral_schedules_draw_the_same_figure_as_none() {
        let neutral =
            rate_stretches("{periods: [{days: 30, rate_scale: 1.0}, {signal_scale: 1.0}]}");
        assert!(neutral.is_empty());
        let raised = rate_stretches("{periods: [{days: 30, rate_scale: 1.5}]}");
        let mut projection = example::with_toys();
        let plain = svg(&projection);
        projection.rate_stretches = raised;
        assert_eq!(svg(&projection), plain, "a raised rate is shaded");
    }

    #[test]
    fn a_linear_grid_gets_evenly_spaced_day_ticks() {
        let mut projection = example::with_toys();
        let log = svg(&projection);
        projection.day_spacing = crate::scenario::Spacing::Linear;
        let linear = svg(&projection);
        // The example grid runs from 1 to 1000 days: a linear axis labels
        // round days such as 400, which a logarithmic one never does.
        assert!(linear.contains("\n400\n</text>") && !log.contains("\n400\n</text>"));
        assert!(log.contains("\n20\n</text>") && !linear.contains("\n20\n</text>"));
    }

    #[test]
    fn asymptotic_band_is_floored_at_zero() {
        let band = asymptotic_band(&example::tiny());
        assert_eq!(band[0], (10.0, [0.0, 0.75, 2.75, 3.75]));
    }
}
