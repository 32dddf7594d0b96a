//! `spectrum-<D>d.svg`: pseudo-data spectra, one panel per exposure side by
//! side, one row of panels per channel (each caption naming its channel when
//! there are several). Each panel shows the full range and, right of it, the
//! channel's signal region (`SpectrumChannel::window`: a few widths around
//! the signal's peak, or `--window`), where a narrow line on a wide range is
//! seen; the full range marks that region with two dotted lines.
//!
//! The fit of the pseudo-data (all channels together) is stated once, under
//! the title; each panel's caption gives its own channel's events and
//! expected signal and background.
//!
//! Each panel shows the pseudo-data counts per bin as points with their
//! one-standard-deviation Poisson error bars, the expected background as a
//! filled histogram and the expected signal + background as a step line; below,
//! the excess (n − b)/√b per bin with the expected signal excess. The count
//! axes are linear, so that empty bins and their error bars show.

use crate::report::ReportError;
use crate::report::kit::axis::{Axis, axis_label, linear_axis};
use crate::report::kit::figure::{self, Canvas, Chart, DrawError, Frame, LEGEND_WIDTH};
use crate::report::kit::format::{exposure_label, number, rounded};
use crate::report::kit::legend::{Legend, Line, Sample};
use crate::report::kit::marks;
use crate::report::kit::palette::{DASH, DOT, INK, INK_TEAL, PALE_LAVENDER, SLATE, VERMILION};
use crate::spectrum::{
    EXACT_INTERVAL_BELOW, ExposureSpectrum, Spectrum, SpectrumBin, SpectrumChannel,
};
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use std::ops::Range;

/// Name used in rendering errors.
const FILE: &str = "spectrum SVG";
/// Canvas width of a figure with one exposure, and of each panel when several.
const SINGLE_WIDTH: u32 = 900;
const PANEL_WIDTH: u32 = 640;
/// Width added to each panel for the zoom on the signal region.
const ZOOM_WIDTH: u32 = 380;
const HEIGHT: u32 = 720;
/// Share of a panel's height given to the counts; the rest shows the excess.
const COUNTS_SHARE: f64 = 0.68;
/// Pixels left of each plot for the vertical axis labels and description.
const Y_LABEL_AREA: u32 = 72;
/// Font sizes of the axis descriptions and tick labels.
const TEXT_SIZES: (u32, u32) = (17, 15);
const MARKER_RADIUS: u32 = 3;
/// The count axis reaches this factor above the highest bar or expectation.
const HEADROOM: f64 = 1.3;
/// Opacity of the error bars.
const BAR_OPACITY: f64 = 0.6;

type BinChart<'a, 'b> = Chart<'a, 'b, RangedCoordf64, RangedCoordf64>;

/// The spectra as SVG bytes: a row of panels per channel.
pub(super) fn render(spectrum: &Spectrum) -> Result<Vec<u8>, ReportError> {
    let panels = u32::try_from(spectrum.exposures.len()).unwrap_or(u32::MAX);
    let rows = u32::try_from(spectrum.channels.len()).unwrap_or(u32::MAX);
    let zoom = if zoomed(spectrum) { ZOOM_WIDTH } else { 0 };
    let width = if panels == 1 {
        SINGLE_WIDTH.saturating_add(zoom)
    } else {
        PANEL_WIDTH.saturating_add(zoom).saturating_mul(panels)
    }
    .saturating_add(LEGEND_WIDTH);
    let height = HEIGHT.saturating_mul(rows);
    figure::svg_bytes(FILE, (width, height), |canvas| draw(canvas, spectrum))
}

/// Whether any channel has a signal region to show beside its full range.
fn zoomed(spectrum: &Spectrum) -> bool {
    spectrum
        .channels
        .iter()
        .any(|channel| channel.window.is_some())
}

fn draw(canvas: &Canvas, spectrum: &Spectrum) -> Result<(), DrawError> {
    let body = figure::titled(canvas, &spectrum.title, 24)?;
    let body = figure::titled(&body, &fit_caption(spectrum), 18)?;
    let (width, _) = body.dim_in_pixel();
    let (body, legend_area) = body.split_horizontally(width.saturating_sub(LEGEND_WIDTH));
    let columns = spectrum.exposures.len();
    let panels = body.split_evenly((spectrum.channels.len(), columns));
    let named = spectrum.channels.len() > 1;
    let mut legends = Vec::new();
    for (index, panel) in panels.iter().enumerate() {
        let channel = &spectrum.channels[index / columns];
        let exposure = &spectrum.exposures[index % columns];
        legends.push(draw_panel(
            panel,
            channel,
            exposure,
            named,
            zoomed(spectrum),
        )?);
    }
    // Every panel draws the same series: the first one's legend serves them all.
    if let Some(legend) = legends.first() {
        legend.draw(&legend_area)?;
    }
    marks::draw_footnote_line(
        canvas,
        &format!(
            "Pseudo-data with seed {}. Error bars: exact central 68.27% Poisson interval \
             (Garwood 1936) below {EXACT_INTERVAL_BELOW} counts,",
            spectrum.seed
        ),
        1,
    )?;
    marks::draw_footnote(
        canvas,
        "±√n from there on; not drawn for empty bins (0 to 1.84).",
    )
}

/// The fit of the pseudo-data to all channels at once, stated once for the
/// figure: "Fit of the pseudo-data: μ̂ = 0.40, local Z = 1.15σ", or with
/// several exposures each after its days ("30 d: μ̂ = …; 365 d: …").
fn fit_caption(spectrum: &Spectrum) -> String {
    let several = spectrum.exposures.len() > 1;
    let fits: Vec<String> = spectrum
        .exposures
        .iter()
        .map(|exposure| {
            let fit = match &exposure.fit {
                Some(fit) => format!(
                    "μ̂ = {:.2}, local Z = {:.2}σ",
                    fit.signal_strength, fit.local_z
                ),
                None => "failed".to_string(),
            };
            if several {
                format!("{} d: {fit}", exposure.days)
            } else {
                fit
            }
        })
        .collect();
    let scope = if spectrum.channels.len() > 1 {
        " (all channels together)"
    } else {
        ""
    };
    format!("Fit of the pseudo-data{scope}: {}", fits.join("; "))
}

/// One channel at one exposure, and the legend of what it drew; its caption
/// starts with the channel's name when `named` (several channels) and gives
/// the channel's own counts and expected signal s and background b. When the
/// channel has a signal region, the full range on the left and the region on
/// the right; when only other channels have one (`zoomed`), the full range
/// keeps the left part so that the panels line up.
fn draw_panel(
    panel: &Canvas,
    channel: &SpectrumChannel,
    exposure: &ExposureSpectrum,
    named: bool,
    zoomed: bool,
) -> Result<Legend, DrawError> {
    let bins = channel.bins_of(exposure);
    let counts: u64 = bins.iter().map(|bin| bin.counts).sum();
    let background: f64 = bins.iter().map(|bin| bin.background).sum();
    let signal: f64 = bins
        .iter()
        .map(|bin| bin.signal_plus_background - bin.background)
        .sum();
    let fitted = exposure
        .fit
        .as_ref()
        .map(|fit| &fit.expected[channel.bins.clone()]);
    let exposure_caption = format!(
        "{}: {counts} events; expected s = {}, b = {}",
        exposure_label(exposure.days, exposure.live_days),
        rounded(signal),
        rounded(background)
    );
    let caption = if named {
        format!("{}, {exposure_caption}", channel.name)
    } else {
        exposure_caption
    };
    let body = figure::titled(panel, &caption, 19)?;
    let mut legend = Legend::default();
    if !zoomed {
        draw_view(&body, &mut legend, channel, View::full(bins, fitted))?;
        return Ok(legend);
    }
    let (width, _) = body.dim_in_pixel();
    let (full, zoom) = body.split_horizontally(width.saturating_sub(ZOOM_WIDTH));
    let mut full_view = View::full(bins, fitted);
    full_view.caption = Some("Full range".to_string());
    if let Some(window) = &channel.window {
        full_view.marked = Some(window.clone());
        let first = bins.iter().position(|bin| bin.low >= window.start);
        let last = bins.iter().rposition(|bin| bin.high <= window.end);
        let inside = first.unwrap_or(0)..last.map_or(bins.len(), |last| last + 1);
        let region = View {
            bins: &bins[inside.clone()],
            fitted: fitted.map(|fitted| &fitted[inside]),
            caption: Some(format!(
                "Signal region: {} to {} {}",
                number(window.start),
                number(window.end),
                channel.unit
            )),
            marked: None,
            x_labels: 5,
        };
        // The region's series are those of the full range: one legend.
        draw_view(&zoom, &mut Legend::default(), channel, region)?;
    }
    draw_view(&full, &mut legend, channel, full_view)?;
    Ok(legend)
}

/// What one pair of charts (counts above, excess below) shows.
struct View<'v> {
    bins: &'v [SpectrumBin],
    /// The expected counts at the fit, one per bin of `bins`.
    fitted: Option<&'v [f64]>,
    caption: Option<String>,
    /// The signal region, marked by two dotted lines on the full range.
    marked: Option<Range<f64>>,
    /// How many labelled ticks the observable axis has.
    x_labels: usize,
}

impl<'v> View<'v> {
    /// The full range of `bins`, without caption or marks.
    fn full(bins: &'v [SpectrumBin], fitted: Option<&'v [f64]>) -> View<'v> {
        View {
            bins,
            fitted,
            caption: None,
            marked: None,
            x_labels: 8,
        }
    }
}

/// The counts above and the excess below, in `area`.
fn draw_view(
    area: &Canvas,
    legend: &mut Legend,
    channel: &SpectrumChannel,
    view: View,
) -> Result<(), DrawError> {
    let (_, height) = area.dim_in_pixel();
    let split = (f64::from(height) * COUNTS_SHARE).round() as i32;
    let (upper, lower) = area.split_vertically(split);
    draw_counts(&upper, legend, channel, &view)?;
    draw_excess(&lower, legend, channel, &view)
}

/// The counts: expected background filled, signal + background stepped,
/// pseudo-data with error bars, the expected counts at the fit of the
/// pseudo-data unless it failed, and the signal region's edges when marked.
fn draw_counts(
    area: &Canvas,
    legend: &mut Legend,
    channel: &SpectrumChannel,
    view: &View,
) -> Result<(), DrawError> {
    let (bins, fitted) = (view.bins, view.fitted);
    let ceiling = HEADROOM
        * bins
            .iter()
            .map(|bin| (bin.counts as f64 + bin.error_high).max(bin.signal_plus_background))
            .chain(fitted.into_iter().flatten().copied())
            .fold(0.0, f64::max);
    let frame = Frame {
        caption: view.caption.as_deref().map(|caption| (caption, 16)),
        margins: [6, 24, 0, 10],
        label_areas: (10, Y_LABEL_AREA, 0),
        text_sizes: TEXT_SIZES,
        light_lines: (Some(1), Some(1)),
    };
    // The observable is labelled on the excess chart below.
    let x = Axis {
        coordinate: linear_axis(observable_range(bins)),
        description: None,
        format: &|_| String::new(),
        labels: Some(view.x_labels),
    };
    let per_bin = format!("Events / {} {}", number(channel.bin_width), channel.unit);
    let y = value_axis(0.0..ceiling, &per_bin);
    let mut chart = figure::chart(area, &frame, x, y)?;
    if let Some(region) = &view.marked {
        let edge = Line::Dashed(SLATE.stroke_width(1), DOT);
        for (index, at) in [region.start, region.end].into_iter().enumerate() {
            let label = (index == 0).then(|| "Signal region, drawn on the right".to_string());
            marks::draw_line(
                &mut chart,
                legend,
                vec![(at, 0.0), (at, ceiling)],
                edge,
                label,
            )?;
        }
    }

    let background = step_outline(bins, |bin| bin.background);
    let mut filled = background.clone();
    filled.insert(0, (bins[0].low, 0.0));
    filled.push((bins[bins.len() - 1].high, 0.0));
    marks::note_area(&chart, &filled);
    chart.draw_series(std::iter::once(Polygon::new(
        filled,
        PALE_LAVENDER.filled(),
    )))?;
    legend.add(
        Sample::SwatchWithEdge(PALE_LAVENDER, INK_TEAL.stroke_width(2)),
        "Expected background",
    );
    let edge = Line::Solid(INK_TEAL.stroke_width(2));
    marks::draw_line(&mut chart, legend, background, edge, None)?;
    let signal_plus_background = step_outline(bins, |bin| bin.signal_plus_background);
    marks::draw_line(
        &mut chart,
        legend,
        signal_plus_background,
        Line::Solid(VERMILION.stroke_width(2)),
        Some("Expected signal + background".to_string()),
    )?;
    if let Some(fitted) = fitted {
        let fitted = bins
            .iter()
            .zip(fitted)
            .flat_map(|(bin, &count)| [(bin.low, count), (bin.high, count)])
            .collect();
        marks::draw_line(
            &mut chart,
            legend,
            fitted,
            Line::Dashed(INK.stroke_width(2), DASH),
            Some("Fit to the pseudo-data (μ̂ free)".to_string()),
        )?;
    }
    let points = bins.iter().map(|bin| {
        let count = bin.counts as f64;
        DataPoint {
            x: centre(bin),
            y: count,
            bar: drawn_bar(bin, (count - bin.error_low, count + bin.error_high)),
        }
    });
    draw_points(&mut chart, legend, points, "Pseudo-data")
}

/// The excess over the expected background, (n − b)/√b, with error bars
/// scaled alike, and the expected signal excess (s + b − b)/√b.
fn draw_excess(
    area: &Canvas,
    legend: &mut Legend,
    channel: &SpectrumChannel,
    view: &View,
) -> Result<(), DrawError> {
    let bins = view.bins;
    let largest = bins
        .iter()
        .flat_map(|bin| [bin.pull(), bin.expected_pull()])
        .flatten()
        .fold(0.0, |largest: f64, pull| largest.max(pull.abs()));
    let limit = (1.15 * largest).max(3.5);
    let frame = Frame {
        caption: None,
        margins: [0, 24, 50, 10],
        label_areas: (50, Y_LABEL_AREA, 0),
        text_sizes: TEXT_SIZES,
        light_lines: (Some(1), Some(1)),
    };
    let description = format!("{} [{}]", channel.observable, channel.unit);
    let x = Axis {
        coordinate: linear_axis(observable_range(bins)),
        description: Some(&description),
        format: &axis_label,
        labels: Some(view.x_labels),
    };
    let y = value_axis(-limit..limit, "(n − b)/√b");
    let mut chart = figure::chart(area, &frame, x, y)?;
    let (low, high) = (bins[0].low, bins[bins.len() - 1].high);
    let zero = Line::Solid(SLATE.stroke_width(1));
    marks::draw_line(
        &mut chart,
        legend,
        vec![(low, 0.0), (high, 0.0)],
        zero,
        None,
    )?;
    let expected: Vec<(f64, f64)> = bins
        .iter()
        .filter_map(|bin| Some((bin, bin.expected_pull()?)))
        .flat_map(|(bin, pull)| [(bin.low, pull), (bin.high, pull)])
        .collect();
    let expected_line = Line::Solid(VERMILION.stroke_width(2));
    marks::draw_line(&mut chart, legend, expected, expected_line, None)?;
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
    draw_points(&mut chart, legend, points, "")
}

/// The value axis of either chart over `range`, described by `description`.
fn value_axis(range: Range<f64>, description: &str) -> Axis<'_, RangedCoordf64> {
    Axis {
        coordinate: linear_axis(range),
        description: Some(description),
        format: &axis_label,
        labels: Some(6),
    }
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
    legend: &mut Legend,
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
    chart.draw_series(
        points
            .iter()
            .map(|point| Circle::new((point.x, point.y), MARKER_RADIUS, INK.filled())),
    )?;
    if !label.is_empty() {
        legend.add(
            Sample::MarkerWithBar(INK.filled(), MARKER_RADIUS, bar_style),
            label,
        );
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

fn observable_range(bins: &[SpectrumBin]) -> Range<f64> {
    bins[0].low..bins[bins.len() - 1].high
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::projection::example;
    use crate::spectrum::pseudo_data_spectrum;

    fn spectrum(days: &[f64]) -> Spectrum {
        let scenario = example::invented_peak();
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
            "Fit of the pseudo-data: 3 d:",
            "Full range",
            "Signal region: ",
        ] {
            assert!(text.contains(expected), "missing {expected:?}");
        }
        // Panels give their own numbers; the fit is stated once, above them.
        assert_eq!(text.matches("events; expected s = ").count(), 2);
        assert_eq!(text.matches("μ̂ = ").count(), 2, "one per exposure");
        assert!(text.starts_with("<svg width=\"2340\" height=\"720\""));
    }

    #[test]
    fn one_exposure_fills_the_single_canvas() {
        let text = String::from_utf8(render(&spectrum(&[3.0])).unwrap()).unwrap();
        assert!(text.starts_with("<svg width=\"1580\" height=\"720\""));
    }

    #[test]
    fn hostile_names_and_units_give_a_well_formed_svg() {
        let mut spectrum = spectrum(&[3.0]);
        spectrum.title = "t\u{2}<t>".to_string();
        spectrum.channels[0].observable = "m&\u{7}".to_string();
        spectrum.channels[0].unit = "\u{0}]]>".to_string();
        let text = String::from_utf8(render(&spectrum).unwrap()).unwrap();
        crate::report::kit::figure::tests::assert_well_formed(&text);
        assert!(text.contains("m&amp;\u{FFFD} [\u{FFFD}]]&gt;]"));
    }
}
