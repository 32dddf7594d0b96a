//! `reach.svg`: the expected limit on the signal rate against the position,
//! on a log rate axis, one colour per exposure (dashed: Asimov median limit;
//! solid: toy median limit; dotted: the rate for a global discovery at the
//! highest target), with the scenario's own rate as a reference line.

use super::REACH_SVG;
use crate::reach::{ExposureReach, Reach};
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, axis_label, linear_axis, log_axis, one_two_five_span};
use crate::report::kit::figure::{self, Canvas, DrawError, Frame, Page};
use crate::report::kit::format::{days_label, percent_label, target_label};
use crate::report::kit::legend::{Legend, Line};
use crate::report::kit::marks::{self, Stroke};
use crate::report::kit::palette::{DOT, SERIES_COLOURS, SLATE};
use plotters::prelude::*;

/// The reach plot as SVG bytes.
pub(super) fn render(reach: &Reach) -> Result<Vec<u8>, ReportError> {
    figure::svg_bytes(REACH_SVG, figure::SIZE, |canvas| draw(canvas, reach))
}

/// Every rate drawn, for the axis range.
fn drawn_rates(reach: &Reach) -> impl Iterator<Item = f64> + '_ {
    reach
        .exposures
        .iter()
        .flat_map(|exposure| {
            exposure.positions.iter().flat_map(|p| {
                [
                    p.limit_rate_asimov,
                    p.limit_rate_median,
                    p.discovery_rate_global.last().copied().flatten(),
                ]
                .into_iter()
                .flatten()
            })
        })
        .chain(std::iter::once(reach.signal_rate))
}

/// The (position, rate) points where `value` is bounded.
fn curve(exposure: &ExposureReach, value: impl Fn(usize) -> Option<f64>) -> Vec<(f64, f64)> {
    exposure
        .positions
        .iter()
        .enumerate()
        .filter_map(|(i, p)| value(i).map(|rate| (p.position, rate)))
        .collect()
}

fn draw(canvas: &Canvas, reach: &Reach) -> Result<(), DrawError> {
    let (low, high) = drawn_rates(reach).fold((f64::INFINITY, 0.0_f64), |(low, high), r| {
        (low.min(r), high.max(r))
    });
    let rates = one_two_five_span(low / 1.2, high * 1.2);
    let first = &reach.exposures[0].positions;
    let from = first[0].position;
    let to = first[first.len() - 1].position;
    let page = Page::titled(canvas, &reach.title)?;
    let x_description = format!("Signal position [{}]", reach.unit);
    let x = Axis {
        coordinate: linear_axis(from..to),
        description: Some(&x_description),
        format: &axis_label,
        labels: None,
    };
    let y = Axis {
        coordinate: log_axis(rates),
        description: Some("Signal rate [events per live day]"),
        format: &axis_label,
        labels: None,
    };
    let mut chart = figure::chart(&page.plot, &Frame::single(false), x, y)?;
    let mut legend = Legend::default();
    marks::draw_line(
        &mut chart,
        &mut legend,
        vec![(from, reach.signal_rate), (to, reach.signal_rate)],
        Line::Dashed(SLATE.stroke_width(1), DOT),
        Some("Scenario's signal rate".to_string()),
    )?;
    let cl = percent_label(reach.cl);
    let target = reach.targets.last().copied();
    for (index, exposure) in reach.exposures.iter().enumerate() {
        let colour = SERIES_COLOURS[index % SERIES_COLOURS.len()];
        let days = days_label(exposure.days);
        let asimov = curve(exposure, |i| exposure.positions[i].limit_rate_asimov);
        marks::draw_curve(
            &mut chart,
            &mut legend,
            asimov,
            colour,
            Stroke::Dashed,
            format!("{days}: {cl} CL limit (Asimov)"),
        )?;
        let toys = curve(exposure, |i| exposure.positions[i].limit_rate_median);
        if !toys.is_empty() {
            marks::draw_curve(
                &mut chart,
                &mut legend,
                toys,
                colour,
                Stroke::Solid,
                format!("{days}: {cl} CL limit (toy median)"),
            )?;
        }
        if let Some(target) = target {
            let global = curve(exposure, |i| {
                exposure.positions[i]
                    .discovery_rate_global
                    .last()
                    .copied()
                    .flatten()
            });
            marks::draw_line(
                &mut chart,
                &mut legend,
                global,
                Line::Dashed(colour.stroke_width(2), DOT),
                Some(format!("{days}: global {} (Asimov)", target_label(target))),
            )?;
        }
    }
    legend.draw(&page.legend)
}
