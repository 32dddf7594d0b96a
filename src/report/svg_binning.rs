//! `binning.svg`: the Asimov significance against the bin width of the shape
//! fit (left) and against the width of a counting window centred on the
//! signal peak (right), on a common significance axis.
//!
//! Left: the recommended width (the coarsest within 1% of the best Z_A) is
//! marked, the scenario's own width drawn as a dotted line, and the best
//! window's Z_A as a dashed line for comparison. Right: Z_A of the window and,
//! on the right-hand axis, the fraction of the signal inside it; the best
//! window is marked.

use super::plot::{
    self, Canvas, DASH, DrawError, INK, INK_TEAL, MAJOR_GRID, MINOR_GRID, SLATE, VERMILION,
};
use super::{BINNING_SVG, ReportError, exposure_label, window_digits};
use crate::binning::BinningScan;
use plotters::element::DashedPathElement;
use plotters::prelude::*;

const SIZE: (u32, u32) = (1400, 640);
/// Pixel lengths of a dot and of the gap after it.
const DOT: (u32, u32) = (3, 4);

/// The binning plot as SVG bytes.
pub(super) fn render(scan: &BinningScan) -> Result<Vec<u8>, ReportError> {
    plot::svg_bytes_sized(BINNING_SVG, SIZE, |canvas| draw(canvas, scan))
}

fn draw(canvas: &Canvas, scan: &BinningScan) -> Result<(), DrawError> {
    let title = format!(
        "{} — {}",
        scan.title,
        exposure_label(scan.days, scan.live_days)
    );
    let body = canvas.titled(&title, plot::text_style(22))?;
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

fn draw_bin_widths(area: &Canvas, scan: &BinningScan, ceiling: f64) -> Result<(), DrawError> {
    let widths = &scan.bin_widths;
    let (first, last) = (widths[0].width, widths[widths.len() - 1].width);
    let (low, high) = if last > first {
        (first / 1.25, last * 1.25)
    } else {
        (first / 2.0, first * 2.0)
    };
    let (major, minor) = plot::log_ticks(low, high);
    let x_axis = (low..high)
        .log_scale()
        .with_key_points(major)
        .with_light_points(minor);
    let mut chart = ChartBuilder::on(area)
        .caption("Binned shape fit", plot::text_style(19))
        .margin(14)
        .margin_right(24)
        .x_label_area_size(52)
        .y_label_area_size(64)
        .build_cartesian_2d(x_axis, 0.0..ceiling)?;
    chart
        .configure_mesh()
        .x_desc(format!("Bin width [{}]", scan.unit))
        .y_desc("Asimov significance Z_A [σ]")
        .x_label_formatter(&plot::axis_label)
        .y_label_formatter(&plot::axis_label)
        .y_labels(10)
        .axis_desc_style(plot::text_style(18))
        .label_style(plot::text_style(15))
        .axis_style(INK)
        .bold_line_style(MAJOR_GRID)
        .light_line_style(MINOR_GRID)
        .y_max_light_lines(1)
        .draw()?;

    let best_window = scan.best_window.z_asimov;
    let dashed = SLATE.stroke_width(2);
    let (dash, gap) = DASH;
    chart
        .draw_series(DashedLineSeries::new(
            [(low, best_window), (high, best_window)],
            dash,
            gap,
            dashed,
        ))?
        .label(format!("Best counting window: {best_window:.3}σ"))
        .legend(move |(x, y)| DashedPathElement::new([(x, y), (x + 24, y)], dash, gap, dashed));
    let (dot, dot_gap) = DOT;
    let scenario_width = scan.scenario_bin_width;
    chart
        .draw_series(DashedLineSeries::new(
            [(scenario_width, 0.0), (scenario_width, ceiling)],
            dot,
            dot_gap,
            SLATE.stroke_width(1),
        ))?
        .label(format!("Scenario: {scenario_width} {}", scan.unit))
        .legend(move |(x, y)| {
            DashedPathElement::new([(x, y), (x + 24, y)], dot, dot_gap, SLATE.stroke_width(1))
        });

    let curve: Vec<(f64, f64)> = widths.iter().map(|p| (p.width, p.z_asimov)).collect();
    let line = INK_TEAL.stroke_width(3);
    chart
        .draw_series(LineSeries::new(curve.clone(), line))?
        .label("Z_A of the shape fit")
        .legend(move |(x, y)| PathElement::new([(x, y), (x + 24, y)], line));
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
    draw_marker(&mut chart, (scan.recommended_bin_width, recommended), label)?;
    plot::draw_legend_at(&mut chart, SeriesLabelPosition::LowerLeft)
}

fn draw_windows(area: &Canvas, scan: &BinningScan, ceiling: f64) -> Result<(), DrawError> {
    let windows = &scan.windows;
    let widest = windows[windows.len() - 1].high - windows[windows.len() - 1].low;
    let mut chart = ChartBuilder::on(area)
        .caption(
            format!(
                "Counting window centred on {} {}",
                super::csv::number(scan.peak.centre),
                scan.unit
            ),
            plot::text_style(19),
        )
        .margin(14)
        .x_label_area_size(52)
        .y_label_area_size(64)
        .right_y_label_area_size(64)
        .build_cartesian_2d(0.0..widest, 0.0..ceiling)?
        .set_secondary_coord(0.0..widest, 0.0..1.0);
    chart
        .configure_mesh()
        .x_desc(format!("Window width [{}]", scan.unit))
        .x_label_formatter(&plot::axis_label)
        .y_desc("Asimov significance Z_A [σ]")
        .y_label_formatter(&plot::axis_label)
        .y_labels(10)
        .axis_desc_style(plot::text_style(18))
        .label_style(plot::text_style(15))
        .axis_style(INK)
        .bold_line_style(MAJOR_GRID)
        .light_line_style(MINOR_GRID)
        .max_light_lines(1)
        .draw()?;
    chart
        .configure_secondary_axes()
        .y_desc("Signal fraction in the window")
        .y_label_formatter(&|fraction| format!("{fraction:.1}"))
        .axis_desc_style(plot::text_style(18))
        .label_style(plot::text_style(15).color(&VERMILION))
        .axis_style(INK)
        .draw()?;

    let width = |low: f64, high: f64| high - low;
    let line = INK_TEAL.stroke_width(3);
    chart
        .draw_series(LineSeries::new(
            windows.iter().map(|w| (width(w.low, w.high), w.z_asimov)),
            line,
        ))?
        .label("Z_A of the window count")
        .legend(move |(x, y)| PathElement::new([(x, y), (x + 24, y)], line));
    let fraction_style = VERMILION.stroke_width(2);
    let (dash, gap) = DASH;
    chart
        .draw_secondary_series(DashedLineSeries::new(
            windows
                .iter()
                .map(|w| (width(w.low, w.high), w.signal_fraction)),
            dash,
            gap,
            fraction_style,
        ))?
        .label("Signal fraction (right axis)")
        .legend(move |(x, y)| {
            DashedPathElement::new([(x, y), (x + 24, y)], dash, gap, fraction_style)
        });

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
    draw_marker(
        &mut chart,
        (width(best.low, best.high), best.z_asimov),
        label,
    )?;
    plot::draw_legend_at(&mut chart, SeriesLabelPosition::LowerRight)
}

/// A large vermilion marker at `point`, explained in the legend.
fn draw_marker<'a, 'b: 'a, Coordinates>(
    chart: &mut ChartContext<'a, SVGBackend<'b>, Coordinates>,
    point: (f64, f64),
    label: String,
) -> Result<(), DrawError>
where
    Coordinates: CoordTranslate<From = (f64, f64)>,
{
    chart
        .draw_series(std::iter::once(Circle::new(point, 7, VERMILION.filled())))?
        .label(label)
        .legend(|(x, y)| Circle::new((x + 12, y), 7, VERMILION.filled()));
    Ok(())
}
