//! `compare-probability.svg`: the probability P(Z ≥ target) of reaching each
//! target by a calendar day, for each plan in its colour: the fraction of
//! pseudo-experiments solid, or without them the asymptotic Φ(Z_A − target)
//! dashed (Cowan et al., EPJC 71 (2011) 1554). Each curve is labelled with
//! its target where it crosses 50%; dotted lines mark the 50% and 90% levels.

use super::{COMPARE_PROBABILITY_SVG, Comparison, day_range, plan_colour};
use crate::projection::DaysToTarget;
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, days_axis, linear_axis};
use crate::report::kit::figure::{self, Canvas, DrawError, Frame, Page, SIZE};
use crate::report::kit::format::target_label;
use crate::report::kit::legend::Legend;
use crate::report::kit::marks::{self, Stroke};
use crate::report::kit::schedule;

/// The probability comparison as SVG bytes.
pub(super) fn render(comparison: &Comparison) -> Result<Vec<u8>, ReportError> {
    figure::svg_bytes(COMPARE_PROBABILITY_SVG, SIZE, |canvas| {
        draw(canvas, comparison)
    })
}

fn draw(canvas: &Canvas, comparison: &Comparison) -> Result<(), DrawError> {
    let format = |probability: &f64| format!("{probability:.1}");
    let y = Axis {
        coordinate: linear_axis(0.0..1.0),
        description: Some("Probability P(Z ≥ target)"),
        format: &format,
        labels: Some(12),
    };
    let page = Page::titled(
        canvas,
        "Run plans compared: probability of reaching each target",
    )?;
    let x = days_axis(day_range(comparison), comparison.day_spacing());
    let mut chart = figure::chart(&page.plot, &Frame::single(false), x, y)?;
    let mut legend = Legend::default();
    schedule::shade_reduced(&mut chart, canvas, comparison.shared_rate_stretches())?;
    for (level, label) in [(0.5, "50%"), (0.9, "90%")] {
        marks::reference_line(&mut chart, canvas, level, label)?;
    }
    let with_toys = comparison.with_toys();
    let (stroke, method) = if with_toys {
        (Stroke::Solid, "pseudo-experiments")
    } else {
        (Stroke::Dashed, "asymptotic")
    };
    for (index, plan) in comparison.plans.iter().enumerate() {
        let colour = plan_colour(index);
        let points = &plan.projection.points;
        // Probabilities follow the order of the targets (checked before rendering).
        for (slot, row) in plan.projection.days_to_target.iter().enumerate() {
            let curve: Vec<(f64, f64)> = points
                .iter()
                .map(|point| {
                    let probability = &point.probability[slot];
                    let value = if with_toys {
                        probability.toys.unwrap_or(0.0)
                    } else {
                        probability.asimov
                    };
                    (point.days, value)
                })
                .collect();
            let label = format!("{}, {}", plan.label, method);
            if slot == 0 {
                marks::draw_curve(&mut chart, &mut legend, curve, colour, stroke, label)?;
            } else {
                marks::draw_line(&mut chart, &mut legend, curve, stroke.line(colour), None)?;
            }
            if let Some(days) = half_way(row, with_toys) {
                let label = target_label(row.target);
                let shift = 6 + 18 * index as i32;
                marks::mark_crossing(
                    &mut chart,
                    canvas,
                    (days, 0.5),
                    (colour, stroke),
                    &label,
                    shift,
                )?;
            }
        }
    }
    legend.draw(&page.legend)
}

/// Where the curve crosses 50%: the day half the pseudo-experiments reach the
/// target, or asymptotically where Φ(Z_A − target) = ½, i.e. Z_A = target.
fn half_way(row: &DaysToTarget, with_toys: bool) -> Option<f64> {
    if with_toys {
        row.p50_days
    } else {
        row.asimov_days
    }
}
