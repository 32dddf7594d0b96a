//! `compare-reach.svg`: the plans' reach at one exposure on one page. Above,
//! every plan's Asimov median expected limit (solid) and the rate of a
//! global discovery at each target (dashed, dotted, in turn) against the
//! signal position on one log rate axis, each plan in its colour; below,
//! the same rates of every later plan over the first plan's at each
//! position (below 1: that plan reaches smaller signals), with a dotted
//! line at 1. The panels and axes are those of `reach.svg`.

use super::super::{COMPARE_REACH_SVG, Comparison, plan_colour};
use super::{compared_positions, exposure};
use crate::message::show_rounded;
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, axis_label, linear_axis};
use crate::report::kit::figure::{self, Canvas, DrawError, Page};
use crate::report::kit::format::{percent_label, target_label};
use crate::report::kit::legend::{Legend, Line};
use crate::report::kit::marks;
use crate::report::kit::palette::{DASH, DOT};
use crate::report::reach::{position_chart, rate_axis, rate_span};
use plotters::style::{Color, RGBColor};
use std::ops::Range;

/// Height of the page: the rates panel takes two thirds, the ratios one.
const HEIGHT: u32 = 820;

pub(in crate::report::compare) fn render(comparison: &Comparison) -> Result<Vec<u8>, ReportError> {
    figure::svg_bytes(COMPARE_REACH_SVG, (figure::SIZE.0, HEIGHT), |canvas| {
        draw(canvas, comparison)
    })
}

/// The line of a plan's limit (`None`) or of its global discovery rate at
/// the target in `slot`, in the plan's `colour`.
fn line(slot: Option<usize>, colour: RGBColor) -> Line {
    match slot {
        None => Line::Solid(colour.stroke_width(3)),
        Some(slot) if slot % 2 == 0 => Line::Dashed(colour.stroke_width(2), DASH),
        Some(_) => Line::Dashed(colour.stroke_width(2), DOT),
    }
}

/// The curves of one plan: its limit and each target's global discovery
/// rate, as (position, value) where the value is bounded.
struct Curves {
    limit: Vec<(f64, f64)>,
    global: Vec<Vec<(f64, f64)>>,
}

/// The curves of the plan at `index`: its rates, or with `ratios` their
/// ratios to the first plan's.
fn curves(comparison: &Comparison, index: usize, ratios: bool) -> Curves {
    let points = compared_positions(comparison, &comparison.plans[index]);
    let targets = comparison.first().targets.len();
    let pick = |rate: Option<f64>, ratio: Option<f64>| if ratios { ratio } else { rate };
    let limit = points
        .iter()
        .filter_map(|p| {
            pick(p.limit_rate_asimov, p.limit_rate_asimov_to_first).map(|y| (p.position, y))
        })
        .collect();
    let global = (0..targets)
        .map(|slot| {
            points
                .iter()
                .filter_map(|p| {
                    pick(
                        p.discovery_rate_global[slot],
                        p.discovery_rate_global_to_first[slot],
                    )
                    .map(|y| (p.position, y))
                })
                .collect()
        })
        .collect();
    Curves { limit, global }
}

fn draw(canvas: &Canvas, comparison: &Comparison) -> Result<(), DrawError> {
    let first = &comparison.plans[0];
    let reach = first.reach.as_ref().expect("checked before rendering");
    let positions = &exposure(first).positions;
    let span: Range<f64> = positions[0].position..positions[positions.len() - 1].position;
    let title = format!(
        "Reach after {} d: {}",
        show_rounded(exposure(first).days),
        comparison.plans_compared()
    );
    let page = Page::titled(canvas, &title)?;
    let (upper, lower) = page.plot.split_vertically(HEIGHT * 2 / 3 - 40);
    let plans = comparison.plans.len();
    let rate_curves: Vec<Curves> = (0..plans).map(|i| curves(comparison, i, false)).collect();
    let rates = rate_span(rate_curves.iter().flat_map(|c| {
        c.limit
            .iter()
            .chain(c.global.iter().flatten())
            .map(|&(_, rate)| rate)
    }));
    let y_description = format!("Rate [{}]", reach.rate_unit);
    let upper = figure::titled(&upper, "Asimov limit and global discovery rates", 18)?;
    let mut chart = position_chart(
        &upper,
        &reach.unit,
        span.clone(),
        rate_axis(&y_description, rates),
    )?;
    let mut legend = Legend::default();
    let cl = percent_label(reach.cl);
    for (index, (plan, curves)) in comparison.plans.iter().zip(rate_curves).enumerate() {
        let colour = plan_colour(index);
        let label = format!("{}: {cl} CL limit (Asimov median)", plan.label);
        marks::draw_line(
            &mut chart,
            &mut legend,
            curves.limit,
            line(None, colour),
            Some(label),
        )?;
        for (slot, global) in curves.global.into_iter().enumerate() {
            let target = target_label(comparison.first().targets[slot]);
            let label = format!("{}: global {target} (Asimov)", plan.label);
            marks::draw_line(
                &mut chart,
                &mut legend,
                global,
                line(Some(slot), colour),
                Some(label),
            )?;
        }
    }
    let ratio_curves: Vec<Curves> = (1..plans).map(|i| curves(comparison, i, true)).collect();
    let (low, high) = ratio_curves
        .iter()
        .flat_map(|c| {
            c.limit
                .iter()
                .chain(c.global.iter().flatten())
                .map(|&(_, r)| r)
        })
        .fold((1.0_f64, 1.0_f64), |(low, high), r| {
            (low.min(r), high.max(r))
        });
    let pad = 0.1 * (high - low).max(0.1);
    let caption = format!(
        "Over the first plan's ({}) rate at each position",
        first.label
    );
    let lower = figure::titled(&lower, &caption, 18)?;
    let y = Axis {
        coordinate: linear_axis((low - pad).max(0.0)..high + pad),
        description: Some("Ratio to the first plan"),
        format: &axis_label,
        labels: None,
    };
    let mut chart = position_chart(&lower, &reach.unit, span, y)?;
    marks::horizontal_line(&mut chart, 1.0, plan_colour(0), DOT)?;
    // The ratio panel draws the curves above again: their entries are there.
    let mut repeated = Legend::default();
    for (index, curves) in ratio_curves.into_iter().enumerate() {
        let colour = plan_colour(index + 1);
        marks::draw_line(
            &mut chart,
            &mut repeated,
            curves.limit,
            line(None, colour),
            None,
        )?;
        for (slot, global) in curves.global.into_iter().enumerate() {
            marks::draw_line(
                &mut chart,
                &mut repeated,
                global,
                line(Some(slot), colour),
                None,
            )?;
        }
    }
    legend.draw(&page.legend)
}
