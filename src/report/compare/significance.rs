//! `compare.svg`: the median expected significance of each plan against
//! calendar days, in the plan's colour: the toy median solid, the Asimov Z_A
//! dashed (Cowan et al., EPJC 71 (2011) 1554). Each target is a horizontal
//! line, and where each plan's curves reach it a marker is labelled with the
//! days (once for both curves where they read the same).

use super::{COMPARE_SVG, Comparison, day_range, plan_colour};
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, days_axis, linear_axis};
use crate::report::kit::dates::dated_days_label;
use crate::report::kit::figure::{self, Canvas, DrawError, Frame, Page, SIZE};
use crate::report::kit::format::target_label;
use crate::report::kit::legend::Legend;
use crate::report::kit::marks::{self, CrossingLabels, Series, Stroke};
use crate::report::kit::schedule;

/// The significance comparison as SVG bytes.
pub(super) fn render(comparison: &Comparison) -> Result<Vec<u8>, ReportError> {
    figure::svg_bytes(COMPARE_SVG, SIZE, |canvas| draw(canvas, comparison))
}

fn draw(canvas: &Canvas, comparison: &Comparison) -> Result<(), DrawError> {
    let format = |z: &f64| format!("{}", (z * 100.0).round() / 100.0);
    let y = Axis {
        coordinate: linear_axis(0.0..significance_ceiling(comparison)),
        description: Some("Median expected significance Z [σ]"),
        format: &format,
        labels: Some(12),
    };
    let title = format!(
        "Median expected significance: {}",
        comparison.plans_compared()
    );
    let page = Page::titled(canvas, &title)?;
    let scale = comparison.day_scale();
    let x = days_axis(day_range(comparison), &scale);
    let mut chart = figure::chart(&page.plot, &Frame::single(false), x, y)?;
    let mut legend = Legend::default();
    schedule::shade_reduced(&mut chart, canvas, comparison.shared_rate_stretches())?;
    for &target in &comparison.first().targets {
        marks::reference_line(&mut chart, canvas, target, &target_label(target))?;
    }
    const ROW: i32 = 18;
    let rows_per_plan = if comparison.with_toys() { 2 } else { 1 };
    for (index, plan) in comparison.plans.iter().enumerate() {
        let colour = plan_colour(index);
        let points = &plan.projection.points;
        let median: Vec<(f64, f64)> = points
            .iter()
            .filter_map(|point| Some((point.days, point.z_median?)))
            .collect();
        marks::draw_toys_and_asymptotic(
            &mut chart,
            &mut legend,
            Series {
                points: median,
                colour,
                label: format!("{}: toy median", plan.label),
            },
            Series {
                points: points
                    .iter()
                    .map(|point| (point.days, point.z_asimov))
                    .collect(),
                colour,
                label: format!("{}: Asimov Z_A", plan.label),
            },
        )?;
    }
    let mut labels = CrossingLabels::default();
    // Labels once every curve is drawn, so that they keep off all of them;
    // they stack above the target line, one row per curve and plan.
    for (index, plan) in comparison.plans.iter().enumerate() {
        let colour = plan_colour(index);
        let base = (index * rows_per_plan) as i32;
        for row in &plan.projection.days_to_target {
            let label = |days: Option<f64>| {
                days.map(|days| {
                    format!(
                        "{}: {}",
                        target_label(row.target),
                        dated_days_label(days, plan.projection.start)
                    )
                })
            };
            let (median, asimov) =
                marks::merge_coinciding(label(row.median_days), label(row.asimov_days));
            let crossings = [
                (row.asimov_days, asimov, Stroke::Dashed, base + 1),
                (row.median_days, median, Stroke::Solid, base + 2),
            ];
            for (days, label, stroke, raise) in crossings {
                let (Some(days), Some(label)) = (days, label) else {
                    continue;
                };
                let point = (days, row.target);
                marks::mark_crossing(
                    &mut chart,
                    &mut labels,
                    point,
                    (colour, stroke),
                    &label,
                    -raise * ROW,
                )?;
            }
        }
    }
    labels.place(canvas)?;
    legend.draw(&page.legend)
}

/// Top of the y axis: 10% above the highest curve or target, rounded up to a
/// whole σ.
fn significance_ceiling(comparison: &Comparison) -> f64 {
    let highest = comparison
        .plans
        .iter()
        .flat_map(|plan| plan.projection.points.iter())
        .flat_map(|point| [point.z_asimov, point.z_median.unwrap_or(0.0)])
        .chain(comparison.first().targets.iter().copied())
        .fold(1.0, f64::max);
    (1.1 * highest).ceil()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::compare::tests::two_plans;

    #[test]
    fn coinciding_toy_and_asimov_days_of_a_plan_get_one_label() {
        let mut comparison = two_plans(true);
        let row = &mut comparison.plans[0].projection.days_to_target[0];
        row.median_days = row.asimov_days;
        let text = String::from_utf8(render(&comparison).unwrap()).unwrap();
        assert_eq!(text.matches(" (toys and Asimov)\n</text>").count(), 1);
    }
}
