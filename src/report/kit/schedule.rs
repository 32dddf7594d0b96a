//! The schedule on a figure against days: each stretch with a reduced or
//! zero rate shaded across the plot, with a short label of its factors
//! just above the plot ("no data" where nothing is recorded), where no
//! curve or band is.

use super::axis::axis_label;
use super::figure::{Canvas, Chart, DrawError};
use super::marks::{draw_label_clear, note_area};
use super::palette::{MAJOR_GRID, MINOR_GRID, SLATE};
use crate::projection::RateStretch;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

/// Font size of the labels of shaded stretches.
const SHADE_LABEL_SIZE: u32 = 13;

/// Shades every stretch of `stretches` with some rate below its nominal one
/// within the plotted days: grid grey where nothing is recorded (rate 0),
/// the lighter grid grey where rates are reduced, both translucent so the
/// grid shows through, each labelled by [`stretch_label`] above the plot at
/// the start of the stretch (a row higher when another label is there).
/// Stretches that only raise rates are left unshaded.
pub fn shade_reduced<X, Y>(
    chart: &mut Chart<'_, '_, X, Y>,
    canvas: &Canvas,
    stretches: &[RateStretch],
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    let days = chart.x_range();
    let (bottom, top) = {
        let values = chart.y_range();
        (values.start, values.end)
    };
    for stretch in stretches.iter().filter(|stretch| stretch.is_reduced()) {
        let (from, to) = (stretch.from.max(days.start), stretch.to.min(days.end));
        if from >= to {
            continue;
        }
        let colour = if stretch.rate_scale == 0.0 {
            MAJOR_GRID
        } else {
            MINOR_GRID
        };
        note_area(chart, &[(from, bottom), (to, top)]);
        let area = Rectangle::new([(from, bottom), (to, top)], colour.mix(0.7).filled());
        chart.draw_series(std::iter::once(area))?;
        let (left, upper) = chart.backend_coord(&(from, top));
        draw_label_clear(
            canvas,
            &stretch_label(stretch),
            (left, upper - 3),
            (SLATE, SHADE_LABEL_SIZE),
            (HPos::Left, VPos::Bottom),
            -1,
        )?;
    }
    Ok(())
}

/// "no data" at rate 0, else every factor that is not 1: "rate ×0.5",
/// "signal ×0.8", "continuum ×0.5", joined by commas.
pub fn stretch_label(stretch: &RateStretch) -> String {
    if stretch.rate_scale == 0.0 {
        return "no data".to_string();
    }
    let factor = |name: &str, factor: f64| format!("{name} ×{}", axis_label(&factor));
    let mut parts = Vec::new();
    if stretch.rate_scale != 1.0 {
        parts.push(factor("rate", stretch.rate_scale));
    }
    if stretch.signal_scale != 1.0 {
        parts.push(factor("signal", stretch.signal_scale));
    }
    for (name, scale) in &stretch.background_scale {
        parts.push(factor(name, *scale));
    }
    parts.join(", ")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stretch(rate_scale: f64, signal_scale: f64, background: &[(&str, f64)]) -> RateStretch {
        RateStretch {
            from: 10.0,
            to: 20.0,
            rate_scale,
            signal_scale,
            background_scale: background
                .iter()
                .map(|&(name, factor)| (name.to_string(), factor))
                .collect(),
        }
    }

    #[test]
    fn labels_name_every_factor_that_is_not_one() {
        assert_eq!(stretch_label(&stretch(0.0, 0.8, &[])), "no data");
        assert_eq!(stretch_label(&stretch(0.5, 1.0, &[])), "rate ×0.5");
        assert_eq!(
            stretch_label(&stretch(1.0, 0.8, &[("continuum", 0.5)])),
            "signal ×0.8, continuum ×0.5"
        );
    }
}
