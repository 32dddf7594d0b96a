//! `binning.svg`: the Asimov significance against the bin width of the shape
//! fit (left) and against the width of a counting window centred on the
//! signal peak (right), on a common significance axis.
//!
//! Left: the recommended width (the coarsest within 1% of the best Z_A) is
//! marked, the scenario's own width drawn as a dotted line, and the best
//! window's Z_A as a dashed line for comparison. Right: Z_A of the window and,
//! on the right-hand axis, the fraction of the signal inside it; the best
//! window is marked.

use super::{BINNING_SVG, window_digits};
use crate::binning::BinningScan;
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, axis_label, linear_axis, log_axis};
use crate::report::kit::figure::{self, Canvas, DrawError, Frame};
use crate::report::kit::format::{exposure_label, number};
use crate::report::kit::legend::{Legend, Line, Sample};
use crate::report::kit::marks;
use crate::report::kit::palette::{DASH, DOT, INK, INK_TEAL, SLATE, VERMILION, text_style};
use plotters::prelude::*;

const SIZE: (u32, u32) = (1400, 790);
/// Height of the legend below each panel, in pixels.
const LEGEND_HEIGHT: u32 = 150;
/// Font sizes of the axis descriptions and tick labels of both panels.
const TEXT_SIZES: (u32, u32) = (18, 15);
/// Size of the significance markers.
const MARKER: (RGBColor, u32) = (VERMILION, 7);

/// The binning plot as SVG bytes.
pub(super) fn render(scan: &BinningScan) -> Result<Vec<u8>, ReportError> {
    figure::svg_bytes(BINNING_SVG, SIZE, |canvas| draw(canvas, scan))
}

fn draw(canvas: &Canvas, scan: &BinningScan) -> Result<(), DrawError> {
    let title = format!(
        "{} — {}",
        scan.title,
        exposure_label(scan.days, scan.live_days)
    );
    let body = figure::titled(canvas, &title, 22)?;
    let panels = body.split_evenly((1, 2));
    let ceiling = significance_ceiling(scan);
    draw_bin_widths(&panels[0], scan, ceiling)?;
    draw_windows(&panels[1], scan, ceiling)
}

/// 15% above the highest Z_A of either scan.
fn significance_ceiling(scan: &BinningScan) -> f64 {
    let highest = scan
        .bin_widths
        .iter()
        .map(|point| point.z_asimov)
        .chain(scan.windows.iter().map(|window| window.z_asimov))
        .fold(0.0, f64::max);
    if highest > 0.0 { 1.15 * highest } else { 1.0 }
}

/// `panel` split into its plot and the legend area below it.
fn with_legend_below<'a>(panel: &Canvas<'a>) -> (Canvas<'a>, Canvas<'a>) {
    let (_, height) = panel.dim_in_pixel();
    let (plot, legend) = panel.split_vertically(height.saturating_sub(LEGEND_HEIGHT));
    (plot, legend.margin(0, 0, 14, 14))
}

fn draw_bin_widths(panel: &Canvas, scan: &BinningScan, ceiling: f64) -> Result<(), DrawError> {
    let (area, legend_area) = with_legend_below(panel);
    let mut legend = Legend::default();
    let widths = &scan.bin_widths;
    let (first, last) = (widths[0].width, widths[widths.len() - 1].width);
    let (low, high) = if last > first {
        (first / 1.25, last * 1.25)
    } else {
        (first / 2.0, first * 2.0)
    };
    let frame = Frame {
        caption: Some(("Binned shape fit", 19)),
        margins: [14, 24, 14, 14],
        label_areas: (52, 64, 0),
        text_sizes: TEXT_SIZES,
        light_lines: (None, Some(1)),
    };
    let x_description = format!("Bin width [{}]", scan.unit);
    let x = Axis {
        coordinate: log_axis(low..high),
        description: Some(&x_description),
        format: &axis_label,
        labels: None,
    };
    let mut chart = figure::chart(&area, &frame, x, significance_axis(ceiling))?;

    let best_window = scan.best_window.z_asimov;
    marks::draw_line(
        &mut chart,
        &mut legend,
        vec![(low, best_window), (high, best_window)],
        Line::Dashed(SLATE.stroke_width(2), DASH),
        Some(format!("Best counting window: {best_window:.3}σ")),
    )?;
    let scenario_width = scan.scenario_bin_width;
    marks::draw_line(
        &mut chart,
        &mut legend,
        vec![(scenario_width, 0.0), (scenario_width, ceiling)],
        Line::Dashed(SLATE.stroke_width(1), DOT),
        Some(format!("Scenario: {scenario_width} {}", scan.unit)),
    )?;

    let curve: Vec<(f64, f64)> = widths.iter().map(|p| (p.width, p.z_asimov)).collect();
    marks::draw_line(
        &mut chart,
        &mut legend,
        curve.clone(),
        Line::Solid(INK_TEAL.stroke_width(3)),
        Some("Z_A of the shape fit".to_string()),
    )?;
    chart.draw_series(
        curve
            .iter()
            .map(|&point| Circle::new(point, 4, INK_TEAL.filled())),
    )?;

    let recommended = widths
        .iter()
        .find(|point| point.width == scan.recommended_bin_width)
        .map_or(0.0, |point| point.z_asimov);
    let label = format!(
        "Recommended: {} {} ({recommended:.3}σ)",
        scan.recommended_bin_width, scan.unit
    );
    marks::mark_point(
        &mut chart,
        &mut legend,
        (scan.recommended_bin_width, recommended),
        MARKER,
        label,
    )?;
    legend.draw(&legend_area)
}

/// The significance axis both panels share, from 0 to `ceiling`.
fn significance_axis(ceiling: f64) -> Axis<'static, plotters::coord::types::RangedCoordf64> {
    Axis {
        coordinate: linear_axis(0.0..ceiling),
        description: Some("Asimov significance Z_A [σ]"),
        format: &axis_label,
        labels: Some(10),
    }
}

fn draw_windows(panel: &Canvas, scan: &BinningScan, ceiling: f64) -> Result<(), DrawError> {
    let (area, legend_area) = with_legend_below(panel);
    let mut legend = Legend::default();
    let windows = &scan.windows;
    let widest = windows[windows.len() - 1].high - windows[windows.len() - 1].low;
    let caption = format!(
        "Counting window centred on {} {}",
        number(scan.peak.centre),
        scan.unit
    );
    let frame = Frame {
        caption: Some((&caption, 19)),
        margins: [14, 14, 14, 14],
        label_areas: (52, 64, 64),
        text_sizes: TEXT_SIZES,
        light_lines: (Some(1), Some(1)),
    };
    let x_description = format!("Window width [{}]", scan.unit);
    let x = Axis {
        coordinate: linear_axis(0.0..widest),
        description: Some(&x_description),
        format: &axis_label,
        labels: None,
    };
    let (x_coordinate, x) = x.split();
    let (y_coordinate, y) = significance_axis(ceiling).split();
    let mut chart = figure::build(&area, &frame, x_coordinate, y_coordinate)?
        .set_secondary_coord(0.0..widest, 0.0..1.0);
    figure::draw_grid(chart.configure_mesh(), &frame, x, y)?;
    let (description_size, label_size) = TEXT_SIZES;
    chart
        .configure_secondary_axes()
        .y_desc("Signal fraction in the window")
        .y_label_formatter(&|fraction| format!("{fraction:.1}"))
        .axis_desc_style(text_style(description_size))
        .label_style(text_style(label_size).color(&VERMILION))
        .axis_style(INK)
        .draw()?;

    let width = |low: f64, high: f64| high - low;
    let style = INK_TEAL.stroke_width(3);
    let window_count: Vec<(f64, f64)> = windows
        .iter()
        .map(|w| (width(w.low, w.high), w.z_asimov))
        .collect();
    marks::note_curve(&chart, &window_count);
    chart.draw_series(LineSeries::new(window_count, style))?;
    legend.add(Sample::Line(Line::Solid(style)), "Z_A of the window count");
    let fraction = VERMILION.stroke_width(2);
    let (dash, gap) = DASH;
    let fractions: Vec<(f64, f64)> = windows
        .iter()
        .map(|w| (width(w.low, w.high), w.signal_fraction))
        .collect();
    marks::note_curve(chart.borrow_secondary(), &fractions);
    chart.draw_secondary_series(DashedLineSeries::new(fractions, dash, gap, fraction))?;
    legend.add(
        Sample::Line(Line::Dashed(fraction, DASH)),
        "Signal fraction (right axis)",
    );

    let best = scan.best_window;
    let digits = window_digits(scan);
    let label = format!(
        "Best: [{:.digits$}, {:.digits$}] {}, {:.1}% of the signal, {:.3}σ",
        best.low,
        best.high,
        scan.unit,
        100.0 * best.signal_fraction,
        best.z_asimov
    );
    marks::mark_point(
        &mut chart,
        &mut legend,
        (width(best.low, best.high), best.z_asimov),
        MARKER,
        label,
    )?;
    legend.draw(&legend_area)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::binning::scan_binning;
    use crate::report::projection::example;

    #[test]
    fn hostile_titles_and_units_give_a_well_formed_svg() {
        let scenario = example::invented_peak();
        let mut scan = scan_binning(&scenario, 10.0).unwrap();
        scan.title = "<\u{3}>".to_string();
        scan.unit = "\u{1b}&".to_string();
        let text = String::from_utf8(render(&scan).unwrap()).unwrap();
        crate::report::kit::figure::tests::assert_well_formed(&text);
        assert!(text.contains("Bin width [\u{FFFD}&amp;]"));
        assert!(text.contains("&lt;\u{FFFD}&gt;"));
    }
}
