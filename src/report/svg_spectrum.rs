//! `spectrum-<D>d.svg`: pseudo-data spectra, one panel per exposure side by side.
//!
//! Each panel shows the pseudo-data counts per bin as points with their
//! one-standard-deviation Poisson error bars, the expected background as a
//! filled histogram and the expected signal + background as a step line; below,
//! the excess (n − b)/√b per bin with the expected signal excess. The count
//! axes are linear, so that empty bins and their error bars show.

use super::plot::{
    self, Canvas, DrawError, INK, INK_TEAL, MAJOR_GRID, MINOR_GRID, PALE_LAVENDER, SLATE, VERMILION,
};
use super::{ReportError, exposure_label};
use crate::spectrum::{EXACT_INTERVAL_BELOW, ExposureSpectrum, Spectrum, SpectrumBin};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

/// Name used in rendering errors.
const FILE: &str = "spectrum SVG";
/// Canvas width of a figure with one exposure, and of each panel when several.
const SINGLE_WIDTH: u32 = 900;
const PANEL_WIDTH: u32 = 640;
const HEIGHT: u32 = 720;
/// Share of a panel's height given to the counts; the rest shows the excess.
const COUNTS_SHARE: f64 = 0.68;
/// Pixels left of each plot for the vertical axis labels and description.
const Y_LABEL_AREA: u32 = 72;
const MARKER_RADIUS: u32 = 3;
/// The count axis reaches this factor above the highest bar or expectation,
/// leaving room for the legend.
const HEADROOM: f64 = 1.3;
/// Opacity of the error bars.
const BAR_OPACITY: f64 = 0.6;

type BinChart<'a, 'b> =
    ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// The spectra as SVG bytes.
pub(super) fn render(spectrum: &Spectrum) -> Result<Vec<u8>, ReportError> {
    let panels = u32::try_from(spectrum.exposures.len()).unwrap_or(u32::MAX);
    let width = if panels == 1 {
        SINGLE_WIDTH
    } else {
        PANEL_WIDTH.saturating_mul(panels)
    };
    plot::svg_bytes_sized(FILE, (width, HEIGHT), |canvas| draw(canvas, spectrum))
}

fn draw(canvas: &Canvas, spectrum: &Spectrum) -> Result<(), DrawError> {
    let body = canvas.titled(&spectrum.title, plot::text_style(24))?;
    let panels = body.split_evenly((1, spectrum.exposures.len()));
    for (index, (panel, exposure)) in panels.iter().zip(&spectrum.exposures).enumerate() {
        // One legend, in the first panel, serves them all.
        draw_panel(panel, spectrum, exposure, index == 0)?;
    }
    let (_, height) = canvas.dim_in_pixel();
    let second_last_line = i32::try_from(height).unwrap_or(i32::MAX) - 30;
    plot::draw_text(
        canvas,
        &format!(
            "Pseudo-data with seed {}. Error bars: exact central 68.27% Poisson interval \
             (Garwood 1936) below {EXACT_INTERVAL_BELOW} counts,",
            spectrum.seed
        ),
        (14, second_last_line),
        SLATE,
        15,
        (HPos::Left, VPos::Bottom),
    )?;
    plot::draw_footnote(
        canvas,
        "±√n from there on; not drawn for empty bins (0 to 1.84).",
    )
}

fn draw_panel(
    panel: &Canvas,
    spectrum: &Spectrum,
    exposure: &ExposureSpectrum,
    with_legend: bool,
) -> Result<(), DrawError> {
    let (_, height) = panel.dim_in_pixel();
    let split = (f64::from(height) * COUNTS_SHARE).round() as i32;
    let (upper, lower) = panel.split_vertically(split);
    let caption = format!(
        "{}: {} events",
        exposure_label(exposure.days, exposure.live_days),
        exposure.total_counts()
    );
    draw_counts(&upper, spectrum, exposure, &caption, with_legend)?;
    draw_excess(&lower, spectrum, exposure)
}

/// The counts: expected background filled, signal + background stepped,
/// pseudo-data with error bars.
fn draw_counts(
    area: &Canvas,
    spectrum: &Spectrum,
    exposure: &ExposureSpectrum,
    caption: &str,
    with_legend: bool,
) -> Result<(), DrawError> {
    let bins = &exposure.bins;
    let ceiling = HEADROOM
        * bins
            .iter()
            .map(|bin| (bin.counts as f64 + bin.error_high).max(bin.signal_plus_background))
            .fold(0.0, f64::max);
    let mut chart = ChartBuilder::on(area)
        .caption(caption, plot::text_style(19))
        .margin_top(6)
        .margin_left(10)
        .margin_right(24)
        .x_label_area_size(10)
        .y_label_area_size(Y_LABEL_AREA)
        .build_cartesian_2d(observable_range(exposure), 0.0..ceiling)?;
    let per_bin = format!(
        "Events / {} {}",
        super::csv::number(spectrum.bin_width),
        spectrum.unit
    );
    configure_mesh(&mut chart, &per_bin, None)?;

    let background = step_outline(bins, |bin| bin.background);
    let mut filled = background.clone();
    filled.insert(0, (bins[0].low, 0.0));
    filled.push((bins[bins.len() - 1].high, 0.0));
    chart
        .draw_series(std::iter::once(Polygon::new(
            filled,
            PALE_LAVENDER.filled(),
        )))?
        .label("Expected background")
        .legend(|(x, y)| {
            EmptyElement::at((x, y))
                + Rectangle::new([(0, -6), (24, 6)], PALE_LAVENDER.filled())
                + PathElement::new([(0, -6), (24, -6)], INK_TEAL.stroke_width(2))
        });
    chart.draw_series(LineSeries::new(background, INK_TEAL.stroke_width(2)))?;
    let signal_plus_background = step_outline(bins, |bin| bin.signal_plus_background);
    let style = VERMILION.stroke_width(2);
    chart
        .draw_series(LineSeries::new(signal_plus_background, style))?
        .label("Expected signal + background")
        .legend(move |(x, y)| PathElement::new([(x, y), (x + 24, y)], style));
    let points = bins.iter().map(|bin| {
        let count = bin.counts as f64;
        DataPoint {
            x: centre(bin),
            y: count,
            bar: drawn_bar(bin, (count - bin.error_low, count + bin.error_high)),
        }
    });
    draw_points(&mut chart, points, "Pseudo-data")?;
    if with_legend {
        plot::draw_legend_at(&mut chart, SeriesLabelPosition::UpperRight)?;
    }
    Ok(())
}

/// The excess over the expected background, (n − b)/√b, with error bars
/// scaled alike, and the expected signal excess (s + b − b)/√b.
fn draw_excess(
    area: &Canvas,
    spectrum: &Spectrum,
    exposure: &ExposureSpectrum,
) -> Result<(), DrawError> {
    let bins = &exposure.bins;
    let largest = bins
        .iter()
        .flat_map(|bin| [bin.pull(), bin.expected_pull()])
        .flatten()
        .fold(0.0, |largest: f64, pull| largest.max(pull.abs()));
    let limit = (1.15 * largest).max(3.5);
    let mut chart = ChartBuilder::on(area)
        .margin_left(10)
        .margin_right(24)
        .margin_bottom(50)
        .x_label_area_size(50)
        .y_label_area_size(Y_LABEL_AREA)
        .build_cartesian_2d(observable_range(exposure), -limit..limit)?;
    let axis = format!("{} [{}]", spectrum.observable, spectrum.unit);
    configure_mesh(&mut chart, "(n − b)/√b", Some(&axis))?;
    let (low, high) = (bins[0].low, bins[bins.len() - 1].high);
    chart.draw_series(LineSeries::new(
        [(low, 0.0), (high, 0.0)],
        SLATE.stroke_width(1),
    ))?;
    let expected: Vec<(f64, f64)> = bins
        .iter()
        .filter_map(|bin| Some((bin, bin.expected_pull()?)))
        .flat_map(|(bin, pull)| [(bin.low, pull), (bin.high, pull)])
        .collect();
    chart.draw_series(LineSeries::new(expected, VERMILION.stroke_width(2)))?;
    let points = bins.iter().filter_map(|bin| {
        let pull = bin.pull()?;
        let root = bin.background.sqrt();
        let clamp = |value: f64| value.clamp(-limit, limit);
        let bar = (
            clamp(pull - bin.error_low / root),
            clamp(pull + bin.error_high / root),
        );
        Some(DataPoint {
            x: centre(bin),
            y: pull,
            bar: drawn_bar(bin, bar),
        })
    });
    draw_points(&mut chart, points, "")
}

/// Grid, axes and tick labels of either chart; only the lower one labels the
/// observable.
fn configure_mesh<'a, 'b: 'a>(
    chart: &mut BinChart<'a, 'b>,
    value_description: &str,
    observable_description: Option<&str>,
) -> Result<(), DrawError> {
    let mut mesh = chart.configure_mesh();
    mesh.y_desc(value_description)
        .x_labels(8)
        .y_labels(6)
        .y_label_formatter(&plot::axis_label)
        .axis_desc_style(plot::text_style(17))
        .label_style(plot::text_style(15))
        .axis_style(INK)
        .bold_line_style(MAJOR_GRID)
        .light_line_style(MINOR_GRID)
        .max_light_lines(1);
    match observable_description {
        Some(description) => mesh
            .x_desc(description)
            .x_label_formatter(&plot::axis_label),
        None => mesh.x_label_formatter(&|_| String::new()),
    };
    mesh.draw()
}

/// A pseudo-data point with its error bar (bottom, top), if drawn.
struct DataPoint {
    x: f64,
    y: f64,
    bar: Option<(f64, f64)>,
}

/// The error bar of a bin as drawn: none for an empty bin. Sparse spectra have
/// many empty bins, and their bars from 0 to 1.84 would hide the bins with
/// counts; the footnote says so, and the CSV keeps them.
fn drawn_bar(bin: &SpectrumBin, bar: (f64, f64)) -> Option<(f64, f64)> {
    (bin.counts > 0).then_some(bar)
}

/// The points with their error bars, bars lighter than the markers so that
/// dense spectra stay readable; a legend entry unless `label` is empty.
fn draw_points<'a, 'b: 'a>(
    chart: &mut BinChart<'a, 'b>,
    points: impl Iterator<Item = DataPoint>,
    label: &str,
) -> Result<(), DrawError> {
    let points: Vec<DataPoint> = points.collect();
    let bar_style = INK.mix(BAR_OPACITY).stroke_width(1);
    chart.draw_series(points.iter().filter_map(|point| {
        let (bottom, top) = point.bar?;
        Some(PathElement::new(
            [(point.x, bottom), (point.x, top)],
            bar_style,
        ))
    }))?;
    let markers = chart.draw_series(
        points
            .iter()
            .map(|point| Circle::new((point.x, point.y), MARKER_RADIUS, INK.filled())),
    )?;
    if !label.is_empty() {
        markers.label(label).legend(move |(x, y)| {
            EmptyElement::at((x + 12, y))
                + Circle::new((0, 0), MARKER_RADIUS, INK.filled())
                + PathElement::new([(0, -7), (0, 7)], bar_style)
        });
    }
    Ok(())
}

/// The outline of a histogram of `value` per bin: flat across each bin.
fn step_outline(bins: &[SpectrumBin], value: impl Fn(&SpectrumBin) -> f64) -> Vec<(f64, f64)> {
    bins.iter()
        .flat_map(|bin| [(bin.low, value(bin)), (bin.high, value(bin))])
        .collect()
}

fn centre(bin: &SpectrumBin) -> f64 {
    0.5 * (bin.low + bin.high)
}

fn observable_range(exposure: &ExposureSpectrum) -> std::ops::Range<f64> {
    exposure.bins[0].low..exposure.bins[exposure.bins.len() - 1].high
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::Scenario;
    use crate::spectrum::pseudo_data_spectrum;

    fn spectrum(days: &[f64]) -> Spectrum {
        let scenario = Scenario::from_yaml(
            "title: Invented peak\n\
             observable: {name: mass, unit: MeV, range: [0.0, 20.0], bin_width: 0.5}\n\
             signal: {events_per_day: 5.0, shape: {gaussian: {mean: 10.0, sigma: 1.0}}}\n\
             backgrounds:\n  - {name: flat, events_per_day: 40.0, shape: {flat: {}}}\n\
             plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3]}\n",
        )
        .unwrap();
        pseudo_data_spectrum(&scenario, days, 11)
    }

    #[test]
    fn panels_carry_their_labels() {
        let text = String::from_utf8(render(&spectrum(&[3.0, 30.0])).unwrap()).unwrap();
        for expected in [
            "Invented peak",
            "After 3 d (3 live days)",
            "After 30 d (30 live days)",
            "Events / 0.5 MeV",
            "mass [MeV]",
            "(n − b)/√b",
            "Expected background",
            "Expected signal + background",
            "Pseudo-data",
            "Garwood 1936",
        ] {
            assert!(text.contains(expected), "missing {expected:?}");
        }
        assert!(text.starts_with("<svg width=\"1280\" height=\"720\""));
    }

    #[test]
    fn one_exposure_fills_the_single_canvas() {
        let text = String::from_utf8(render(&spectrum(&[3.0])).unwrap()).unwrap();
        assert!(text.starts_with("<svg width=\"900\" height=\"720\""));
    }
}
