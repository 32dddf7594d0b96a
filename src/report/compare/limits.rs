//! `compare-limits.svg`: the median expected upper limit on the signal
//! strength μ (CLs, A. L. Read, J. Phys. G 28 (2002) 2693) of each plan
//! against calendar days, in the plan's colour: the toy median solid, the
//! asymptotic median dashed (Cowan et al., EPJC 71 (2011) 1554). Both axes
//! logarithmic; a dotted line at μ = 1 marks the nominal signal, and the day
//! each plan's median limit reaches it is marked.

use super::{COMPARE_LIMITS_SVG, Comparison, day_range, plan_colour};
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, days_axis, log_axis, one_two_five_span, tick_label};
use crate::report::kit::dates::dated_days_label;
use crate::report::kit::figure::{self, Canvas, DrawError, Frame, Page, SIZE};
use crate::report::kit::format::percent_label;
use crate::report::kit::legend::Legend;
use crate::report::kit::marks::{self, CrossingLabels, Series, Stroke};
use crate::report::kit::palette::{DOT, SLATE};
use crate::report::kit::schedule;

/// The limit comparison as SVG bytes; only for plans with limits (`cl` set).
pub(super) fn render(comparison: &Comparison) -> Result<Vec<u8>, ReportError> {
    let cl = comparison.first().cl.ok_or_else(|| ReportError::Render {
        file: COMPARE_LIMITS_SVG,
        message: "the plans have no expected limits (no confidence level)".to_string(),
    })?;
    figure::svg_bytes(COMPARE_LIMITS_SVG, SIZE, |canvas| {
        draw(canvas, comparison, cl)
    })
}

/// Each plan's toy median and asymptotic median limits, `(days, μ)`.
fn medians(comparison: &Comparison) -> Vec<[Vec<(f64, f64)>; 2]> {
    comparison
        .plans
        .iter()
        .map(|plan| {
            let points = &plan.projection.points;
            let series = |value: fn(&crate::projection::ExposurePoint) -> Option<f64>| {
                points
                    .iter()
                    .filter_map(|point| Some((point.days, value(point)?)))
                    .collect()
            };
            [
                series(|point| point.limit_median),
                series(|point| point.limit_asimov),
            ]
        })
        .collect()
}

fn draw(canvas: &Canvas, comparison: &Comparison, cl: f64) -> Result<(), DrawError> {
    let medians = medians(comparison);
    let (low, high) = medians
        .iter()
        .flatten()
        .flatten()
        .fold((0.5, 2.0), |(low, high): (f64, f64), &(_, mu)| {
            (low.min(mu), high.max(mu))
        });
    let description = format!("Median expected {} CL upper limit on μ", percent_label(cl));
    let format = |mu: &f64| tick_label(*mu);
    let y = Axis {
        coordinate: log_axis(one_two_five_span(low, high)),
        description: Some(&description),
        format: &format,
        labels: Some(12),
    };
    let title = format!("{description}: {}", comparison.plans_compared());
    let page = Page::titled(canvas, &title)?;
    let scale = comparison.day_scale();
    let x = days_axis(day_range(comparison), &scale);
    let mut chart = figure::chart(&page.plot, &Frame::single(false), x, y)?;
    let mut legend = Legend::default();
    schedule::shade_reduced(&mut chart, canvas, comparison.shared_rate_stretches())?;
    marks::horizontal_line(&mut chart, 1.0, SLATE, DOT)?;
    const ROW: i32 = 18;
    let mut row = 0;
    for (index, (plan, [toys, asymptotic])) in comparison.plans.iter().zip(medians).enumerate() {
        let colour = plan_colour(index);
        marks::draw_toys_and_asymptotic(
            &mut chart,
            &mut legend,
            Series {
                points: toys,
                colour,
                label: format!("{}: toy median", plan.label),
            },
            Series {
                points: asymptotic,
                colour,
                label: format!("{}: asymptotic median", plan.label),
            },
        )?;
    }
    let mut labels = CrossingLabels::default();
    // Labels once every curve is drawn, so that they keep off all of them.
    for (index, plan) in comparison.plans.iter().enumerate() {
        let colour = plan_colour(index);
        let exclusion = &plan.projection.days_to_exclusion;
        let label = |days: Option<f64>| {
            days.map(|days| {
                format!(
                    "excluded: {}",
                    dated_days_label(days, plan.projection.start)
                )
            })
        };
        let (median, asimov) =
            marks::merge_coinciding(label(exclusion.median_days), label(exclusion.asimov_days));
        let crossings = [
            (exclusion.median_days, median, Stroke::Solid),
            (exclusion.asimov_days, asimov, Stroke::Dashed),
        ];
        for (days, label, stroke) in crossings {
            let (Some(days), Some(label)) = (days, label) else {
                continue;
            };
            let shift = ROW / 2 + row * ROW;
            marks::mark_crossing(
                &mut chart,
                &mut labels,
                (days, 1.0),
                (colour, stroke),
                &label,
                shift,
            )?;
            row += 1;
        }
    }
    labels.place(canvas)?;
    legend.draw(&page.legend)
}
