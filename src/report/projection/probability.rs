//! `probability.svg`: the probability P(Z ≥ target) of reaching each target
//! against calendar days. One colour per target; solid for the fraction of
//! pseudo-experiments, dashed for the asymptotic Φ(Z_A − target) (Cowan et
//! al., EPJC 71 (2011) 1554). Dotted lines mark the 50% and 90% levels that
//! the summary reports.

use super::{PROBABILITY_SVG, day_range};
use crate::projection::Projection;
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, DayScale, days_axis, linear_axis};
use crate::report::kit::figure::{self, Canvas, DrawError, Frame, Page, SIZE};
use crate::report::kit::format::target_label;
use crate::report::kit::legend::Legend;
use crate::report::kit::marks::{self, Series};
use crate::report::kit::palette::SERIES_COLOURS;
use crate::report::kit::schedule;

/// The probability plot as SVG bytes.
pub(super) fn render(projection: &Projection) -> Result<Vec<u8>, ReportError> {
    figure::svg_bytes(PROBABILITY_SVG, SIZE, |canvas| draw(canvas, projection))
}

fn draw(canvas: &Canvas, projection: &Projection) -> Result<(), DrawError> {
    let points = &projection.points;
    let format = |probability: &f64| format!("{probability:.1}");
    let y = Axis {
        coordinate: linear_axis(0.0..1.0),
        description: Some("Probability P(Z ≥ target)"),
        format: &format,
        labels: Some(12),
    };
    let page = Page::titled(canvas, &projection.title)?;
    let scale = DayScale::new(projection.day_spacing, projection.start);
    let x = days_axis(day_range(points), &scale);
    let mut chart = figure::chart(&page.plot, &Frame::single(false), x, y)?;
    let mut legend = Legend::default();
    schedule::shade_reduced(&mut chart, canvas, &projection.rate_stretches)?;
    for (level, label) in [(0.5, "50%"), (0.9, "90%")] {
        marks::reference_line(&mut chart, canvas, level, label)?;
    }
    for (slot, &target) in projection.targets.iter().enumerate() {
        let colour = SERIES_COLOURS[slot % SERIES_COLOURS.len()];
        let label = target_label(target);
        // Probabilities follow the order of the targets (checked before rendering).
        let toys: Vec<(f64, f64)> = points
            .iter()
            .filter_map(|point| Some((point.days, point.probability[slot].toys?)))
            .collect();
        let asymptotic = points
            .iter()
            .map(|point| (point.days, point.probability[slot].asimov))
            .collect();
        marks::draw_toys_and_asymptotic(
            &mut chart,
            &mut legend,
            Series {
                points: toys,
                colour,
                label: format!("{label}, pseudo-experiments"),
            },
            Series {
                points: asymptotic,
                colour,
                label: format!("{label}, asymptotic"),
            },
        )?;
    }
    legend.draw(&page.legend)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::projection::example;

    #[test]
    fn one_solid_and_one_dashed_curve_per_target() {
        let text = String::from_utf8(render(&example::with_toys()).unwrap()).unwrap();
        for expected in [
            "3σ, pseudo-experiments",
            "3σ, asymptotic",
            "5σ, pseudo-experiments",
            "5σ, asymptotic",
            "Probability P(Z ≥ target)",
            "\n90%\n</text>",
        ] {
            assert!(text.contains(expected), "missing {expected:?}");
        }
    }

    #[test]
    fn asimov_only_has_no_toy_curves() {
        let text = String::from_utf8(render(&example::asimov_only()).unwrap()).unwrap();
        assert!(text.contains("5σ, asymptotic"));
        assert!(!text.contains("pseudo-experiments"));
    }
}
