//! `replan.svg`: the significance against calendar days, from the data
//! taken on. The observed local Z as a point on the day the data stopped;
//! from there the conditional pseudo-experiments with the signal (their
//! central 68.3% and 95.4% bands and median, solid) and without it (the
//! median, solid, in its own colour); the original forecast from day 0
//! (the scenario's Asimov Z_A, dashed) for comparison; each target a
//! horizontal line, with a marker where the conditional median with the signal
//! reaches it, its day in the legend.

use super::REPLAN_SVG;
use crate::replan::{Hypothesis, Replan};
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, DayScale, days_axis, linear_axis};
use crate::report::kit::dates::dated_days_label;
use crate::report::kit::figure::{self, Canvas, DrawError, Frame, Page, SIZE};
use crate::report::kit::format::{rounded, target_label};
use crate::report::kit::legend::{Legend, Sample};
use crate::report::kit::marks::{self, BandPoint, CrossingLabels, Stroke};
use crate::report::kit::palette::{INK, INK_TEAL, PLUM, SLATE};
use crate::report::kit::schedule;
use plotters::style::Color;

/// The re-plan figure as SVG bytes.
pub(super) fn render(replan: &Replan) -> Result<Vec<u8>, ReportError> {
    figure::svg_bytes(REPLAN_SVG, SIZE, |canvas| draw(canvas, replan))
}

fn draw(canvas: &Canvas, replan: &Replan) -> Result<(), DrawError> {
    let signal = replan.projection(Hypothesis::Signal);
    let background = replan.projection(Hypothesis::NoSignal);
    let band: Vec<BandPoint> = signal
        .points
        .iter()
        .filter_map(|point| Some((point.days, point.z_band?)))
        .collect();
    let forecast: Vec<(f64, f64)> = replan
        .forecast
        .points
        .iter()
        .map(|point| (point.days, point.z_asimov))
        .collect();
    let highest = forecast
        .iter()
        .map(|&(_, z)| z)
        .chain(band.iter().map(|(_, quantiles)| quantiles[3]))
        .chain(signal.targets.iter().copied())
        .chain(std::iter::once(replan.observed.z_local))
        .fold(1.0, f64::max);
    let ceiling = (1.1 * highest).ceil();
    let format = |z: &f64| format!("{}", (z * 100.0).round() / 100.0);
    let y = Axis {
        coordinate: linear_axis(0.0..ceiling),
        description: Some("Significance Z [σ]"),
        format: &format,
        labels: Some(12),
    };
    let first = forecast.first().map_or(0.0, |&(days, _)| days);
    let last = signal.points.last().map_or(replan.taken_days, |p| p.days);
    let days = if last > first {
        first..last
    } else {
        first / 2.0..first * 2.0
    };
    let title = format!(
        "{}: re-planned after {}",
        replan.title,
        dated_days_label(replan.taken_days, signal.start)
    );
    let page = Page::titled(canvas, &title)?;
    let frame = Frame::single(false);
    let scale = DayScale::new(signal.day_spacing, signal.start);
    let x = days_axis(days, &scale);
    let mut chart = figure::chart(&page.plot, &frame, x, y)?;
    let mut legend = Legend::default();
    schedule::shade_reduced(&mut chart, canvas, &signal.rate_stretches)?;
    marks::draw_band(
        &mut chart,
        &mut legend,
        &band,
        [
            "With the signal: central 95.4% of toys",
            "With the signal: central 68.3% of toys",
        ],
    )?;
    for &target in &signal.targets {
        marks::reference_line(&mut chart, canvas, target, &target_label(target))?;
    }
    let median = |projection: &crate::projection::Projection| -> Vec<(f64, f64)> {
        projection
            .points
            .iter()
            .filter_map(|point| Some((point.days, point.z_median?)))
            .collect()
    };
    marks::draw_curve(
        &mut chart,
        &mut legend,
        median(signal),
        INK_TEAL,
        Stroke::Solid,
        format!("With the signal: toy median ({} per point)", signal.toys),
    )?;
    marks::draw_curve(
        &mut chart,
        &mut legend,
        median(background),
        PLUM,
        Stroke::Solid,
        "Without signal: toy median".to_string(),
    )?;
    marks::draw_curve(
        &mut chart,
        &mut legend,
        forecast,
        SLATE,
        Stroke::Dashed,
        "Original forecast from day 0 (Asimov Z_A)".to_string(),
    )?;
    marks::mark_point(
        &mut chart,
        &mut legend,
        (replan.taken_days, replan.observed.z_local),
        (INK, 6),
        format!(
            "Observed Z = {}σ by {}",
            rounded(replan.observed.z_local),
            dated_days_label(replan.taken_days, signal.start)
        ),
    )?;
    // The days go into the legend, beside the markers' sample, so that no
    // label lies over the bands or the curves that cross there.
    let mut labels = CrossingLabels::default();
    for row in &signal.days_to_target {
        let Some(days) = row.median_days.filter(|&days| days > replan.taken_days) else {
            continue;
        };
        marks::mark_crossing(
            &mut chart,
            &mut labels,
            (days, row.target),
            (INK_TEAL, Stroke::Solid),
            "",
            0,
        )?;
        legend.add(
            Sample::Marker(INK_TEAL.filled(), 5),
            format!(
                "{} with the signal (toy median): {}",
                target_label(row.target),
                dated_days_label(days, signal.start)
            ),
        );
    }
    labels.place(canvas)?;
    legend.draw(&page.legend)
}
