//! `reach.svg`: one panel per exposure, stacked, on one log rate axis
//! against the position: the Asimov median expected limit (dashed) with its
//! ±1σ and ±2σ bands, the toy median limit (solid) when toys ran, the rate
//! for a global discovery at every target (dotted, one colour per target),
//! and the scenario's own rate as a reference line. Panels keep the bands
//! of exposures apart.

use super::REACH_SVG;
use crate::reach::{ExposureReach, Reach};
use crate::report::ReportError;
use crate::report::kit::axis::{
    Axis, LogAxis, axis_label, linear_axis, log_axis, one_two_five_span,
};
use crate::report::kit::figure::{self, Canvas, Chart, DrawError, Frame, Page};
use crate::report::kit::format::{days_label, percent_label, target_label};
use crate::report::kit::legend::{Legend, Line};
use crate::report::kit::marks::{self, BandPoint, Stroke};
use crate::report::kit::palette::{DOT, INK_TEAL, PLUM, SLATE, VERMILION, VIOLET};
use plotters::coord::ranged1d::ValueFormatter;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use std::ops::Range;

/// Height of one exposure's panel, in pixels.
const PANEL_HEIGHT: u32 = 340;

/// Height of the title above the panels.
const TITLE_HEIGHT: u32 = 50;

/// The colours of the global discovery curves, one per target in order.
const TARGET_COLOURS: [RGBColor; 3] = [INK_TEAL, VERMILION, PLUM];

/// The colour of the limit curves, over the lavender bands.
const LIMIT_COLOUR: RGBColor = VIOLET;

/// The reach plot as SVG bytes.
pub(super) fn render(reach: &Reach) -> Result<Vec<u8>, ReportError> {
    let height = TITLE_HEIGHT + PANEL_HEIGHT * reach.exposures.len().max(1) as u32;
    figure::svg_bytes(REACH_SVG, (figure::SIZE.0, height), |canvas| {
        draw(canvas, reach)
    })
}

/// Every rate drawn, for the axis range.
fn drawn_rates(reach: &Reach) -> impl Iterator<Item = f64> + '_ {
    reach
        .exposures
        .iter()
        .flat_map(|exposure| {
            exposure.positions.iter().flat_map(|p| {
                let band = p.limit_rate_asimov_band.into_iter().flatten();
                [p.limit_rate_asimov, p.limit_rate_median]
                    .into_iter()
                    .flatten()
                    .chain(band)
                    .chain(p.discovery_rate_global.iter().copied().flatten())
            })
        })
        .chain(std::iter::once(reach.signal_rate))
}

/// The (position, rate) points where `value` is bounded.
pub(in crate::report) fn curve(
    exposure: &ExposureReach,
    value: impl Fn(usize) -> Option<f64>,
) -> Vec<(f64, f64)> {
    exposure
        .positions
        .iter()
        .enumerate()
        .filter_map(|(i, p)| value(i).map(|rate| (p.position, rate)))
        .collect()
}

fn draw(canvas: &Canvas, reach: &Reach) -> Result<(), DrawError> {
    let rates = rate_span(drawn_rates(reach));
    let page = Page::titled(canvas, &reach.title)?;
    let panels = page.plot.split_evenly((reach.exposures.len().max(1), 1));
    // Every panel draws the same kinds of curve: the first one's entries
    // are the legend, drawn once in the page's column.
    let mut legend = Legend::default();
    for (index, (exposure, panel)) in reach.exposures.iter().zip(&panels).enumerate() {
        let mut repeated = Legend::default();
        let entries = if index == 0 {
            &mut legend
        } else {
            &mut repeated
        };
        draw_exposure(panel, reach, exposure, rates.clone(), entries)?;
    }
    legend.draw(&page.legend)
}

/// The log rate axis over `rates` (every rate a figure draws), widened to
/// round values a little beyond the smallest and largest.
pub(in crate::report) fn rate_span(rates: impl Iterator<Item = f64>) -> Range<f64> {
    let (low, high) = rates.fold((f64::INFINITY, 0.0_f64), |(low, high), r| {
        (low.min(r), high.max(r))
    });
    one_two_five_span(low / 1.2, high * 1.2)
}

/// A chart of rates against the signal position on `panel` (a panel below
/// its caption, [`figure::titled`]): the position (in `unit`) from
/// `positions.start` to `positions.end` across and `y` up (the log rate axis
/// of [`rate_axis`], or another the caller describes).
pub(in crate::report) fn position_chart<'a, 'b, Y>(
    panel: &'a Canvas<'b>,
    unit: &str,
    positions: Range<f64>,
    y: Axis<'_, Y>,
) -> Result<Chart<'a, 'b, RangedCoordf64, Y>, DrawError>
where
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let frame = Frame {
        caption: None,
        margins: [8, 24, 8, 14],
        label_areas: (46, 64, 0),
        text_sizes: (16, 14),
        light_lines: (None, Some(1)),
    };
    let x_description = format!("Signal position [{unit}]");
    let x = Axis {
        coordinate: linear_axis(positions),
        description: Some(&x_description),
        format: &axis_label,
        labels: None,
    };
    figure::chart(panel, &frame, x, y)
}

/// The log axis of rates in `rate_unit` over `rates` ([`rate_span`]).
pub(in crate::report) fn rate_axis<'d>(
    description: &'d str,
    rates: Range<f64>,
) -> Axis<'d, LogAxis> {
    Axis {
        coordinate: log_axis(rates),
        description: Some(description),
        format: &axis_label,
        labels: None,
    }
}

/// One exposure's panel.
fn draw_exposure(
    panel: &Canvas,
    reach: &Reach,
    exposure: &ExposureReach,
    rates: Range<f64>,
    legend: &mut Legend,
) -> Result<(), DrawError> {
    let positions = &exposure.positions;
    let from = positions[0].position;
    let to = positions[positions.len() - 1].position;
    let caption = format!("After {}", days_label(exposure.days));
    let y_description = format!("Rate [{}]", reach.rate_unit);
    let panel = &figure::titled(panel, &caption, 18)?;
    let mut chart = position_chart(
        panel,
        &reach.unit,
        from..to,
        rate_axis(&y_description, rates),
    )?;
    let band: Vec<BandPoint> = positions
        .iter()
        .filter_map(|p| p.limit_rate_asimov_band.map(|band| (p.position, band)))
        .collect();
    marks::draw_band(&mut chart, legend, &band, ["Limit ±2σ", "Limit ±1σ"])?;
    let cl = percent_label(reach.cl);
    let colour = LIMIT_COLOUR;
    marks::draw_curve(
        &mut chart,
        legend,
        curve(exposure, |i| positions[i].limit_rate_asimov),
        colour,
        Stroke::Dashed,
        format!("{cl} CL limit (Asimov median)"),
    )?;
    let toys = curve(exposure, |i| positions[i].limit_rate_median);
    if !toys.is_empty() {
        marks::draw_curve(
            &mut chart,
            legend,
            toys,
            colour,
            Stroke::Solid,
            format!("{cl} CL limit (toy median)"),
        )?;
    }
    for (target_index, &target) in reach.targets.iter().enumerate() {
        let global = curve(exposure, |i| {
            positions[i].discovery_rate_global[target_index]
        });
        let target_colour = TARGET_COLOURS[target_index % TARGET_COLOURS.len()];
        marks::draw_line(
            &mut chart,
            legend,
            global,
            Line::Dashed(target_colour.stroke_width(2), DOT),
            Some(format!("Global {} (Asimov)", target_label(target))),
        )?;
    }
    marks::draw_line(
        &mut chart,
        legend,
        vec![(from, reach.signal_rate), (to, reach.signal_rate)],
        Line::Dashed(SLATE.stroke_width(1), DOT),
        Some("Scenario's signal rate".to_string()),
    )?;
    Ok(())
}
