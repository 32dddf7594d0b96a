//! `compare-probability.svg`: the probability P(Z ≥ target) of reaching each
//! target by a calendar day: the fraction of pseudo-experiments, or without
//! them the asymptotic Φ(Z_A − target) (Cowan et al., EPJC 71 (2011) 1554).
//! Each plan has its colour and each target its line style (solid for the
//! first, dashed for the second), every curve its legend entry, and each is
//! labelled with its target where it crosses 50%; dotted lines mark the 50%
//! and 90% levels. The title names the targets and the plans compared.

use super::{COMPARE_PROBABILITY_SVG, Comparison, day_range, plan_colour};
use crate::projection::DaysToTarget;
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, days_axis, linear_axis};
use crate::report::kit::figure::{self, Canvas, DrawError, Frame, Page, SIZE};
use crate::report::kit::format::target_label;
use crate::report::kit::legend::{Legend, Line};
use crate::report::kit::marks::{self, CrossingLabels, Stroke};
use crate::report::kit::palette::{DASH, DOT};
use crate::report::kit::schedule;
use plotters::style::{Color, RGBColor};

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
    let page = Page::titled(canvas, &title(comparison))?;
    let scale = comparison.day_scale();
    let x = days_axis(day_range(comparison), &scale);
    let mut chart = figure::chart(&page.plot, &Frame::single(false), x, y)?;
    let mut legend = Legend::default();
    schedule::shade_reduced(&mut chart, canvas, comparison.shared_rate_stretches())?;
    for (level, label) in [(0.5, "50%"), (0.9, "90%")] {
        marks::reference_line(&mut chart, canvas, level, label)?;
    }
    let with_toys = comparison.with_toys();
    let method = if with_toys {
        "pseudo-experiments"
    } else {
        "asymptotic"
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
            let label = format!("{}: {} ({method})", plan.label, target_label(row.target));
            let line = target_line(slot, colour);
            marks::draw_line(&mut chart, &mut legend, curve, line, Some(label))?;
        }
    }
    let mut labels = CrossingLabels::default();
    // Labels once every curve is drawn, so that they keep off all of them.
    for (index, plan) in comparison.plans.iter().enumerate() {
        let colour = plan_colour(index);
        for (slot, row) in plan.projection.days_to_target.iter().enumerate() {
            let target = target_label(row.target);
            if let Some(days) = half_way(row, with_toys) {
                let shift = 6 + marks::LABEL_ROW * index as i32;
                let marker = if slot == 0 {
                    Stroke::Solid
                } else {
                    Stroke::Dashed
                };
                marks::mark_crossing(
                    &mut chart,
                    &mut labels,
                    (days, 0.5),
                    (colour, marker),
                    &target,
                    shift,
                )?;
            }
        }
    }
    labels.place(canvas)?;
    legend.draw(&page.legend)
}

/// "Probability to reach 3σ and 5σ: plan A vs plan B".
fn title(comparison: &Comparison) -> String {
    let targets: Vec<String> = comparison
        .first()
        .targets
        .iter()
        .map(|&target| target_label(target))
        .collect();
    let targets = match targets.split_last() {
        Some((last, [])) => last.clone(),
        Some((last, rest)) => format!("{} and {last}", rest.join(", ")),
        None => String::new(),
    };
    format!(
        "Probability to reach {targets}: {}",
        comparison.plans_compared()
    )
}

/// The line of the curve of the target in `slot`, in the plan's `colour`:
/// solid for the first target, dashed for the second, dotted for the third,
/// and so on in turn, so that within a plan's colour each target has its
/// own style.
fn target_line(slot: usize, colour: RGBColor) -> Line {
    match slot % 3 {
        0 => Line::Solid(colour.stroke_width(3)),
        1 => Line::Dashed(colour.stroke_width(2), DASH),
        _ => Line::Dashed(colour.stroke_width(2), DOT),
    }
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::compare::tests::two_plans;

    #[test]
    fn each_plan_and_target_has_its_labelled_curve_and_the_title_names_them() {
        let text = String::from_utf8(render(&two_plans(true)).unwrap()).unwrap();
        for expected in [
            "\nProbability to reach 3σ and 5σ: Now vs Upgrade\n</text>",
            "\nNow: 3σ (pseudo-experiments)\n</text>",
            "\nNow: 5σ (pseudo-experiments)\n</text>",
            // Longer labels break between words in the legend column.
            "\nUpgrade: 3σ\n</text>",
            "\nUpgrade: 5σ\n</text>",
        ] {
            assert!(text.contains(expected), "missing {expected:?}");
        }
        assert_eq!(text.matches("\n(pseudo-experiments)\n</text>").count(), 2);
        // Within a plan's colour the targets differ in style: one solid
        // curve per plan (the first target's) and its legend sample; the
        // second target's are dashed.
        let solid = text
            .lines()
            .filter(|line| line.starts_with("<polyline") && line.contains("stroke-width=\"3\""))
            .count();
        assert_eq!(solid, 4);
    }
}
