//! What the SVG plots share: the palette, the canvas, logarithmic axes (calendar
//! days, and the limit on the signal strength), bands, crossing markers, and
//! text placed by hand in the margins.
//!
//! Text is written as SVG `<text>` elements (no font is embedded); plotters
//! estimates label extents from the font size alone, so the layout leaves
//! generous room around every label.

use super::ReportError;
use crate::projection::{ExposurePoint, Projection};
use plotters::coord::Shift;
use plotters::coord::combinators::WithKeyPoints;
use plotters::coord::ranged1d::ValueFormatter;
use plotters::coord::types::RangedCoordf64;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::ops::Range;

/// Canvas size in pixels.
const SIZE: (u32, u32) = (900, 600);

/// Font family of every text; the viewer picks its own sans-serif face.
const FONT: &str = "sans-serif";

/// Toy median: deep ink teal.
pub(super) const INK_TEAL: RGBColor = RGBColor(0x0b, 0x4f, 0x6c);
/// Asimov curve: warm vermilion.
pub(super) const VERMILION: RGBColor = RGBColor(0xd9, 0x4f, 0x2b);
/// Central band (about ±1σ of the toys): soft lavender.
pub(super) const LAVENDER: RGBColor = RGBColor(0xb9, 0xb3, 0xdc);
/// Outer band (about ±2σ of the toys): pale lavender-grey.
pub(super) const PALE_LAVENDER: RGBColor = RGBColor(0xe6, 0xe3, 0xf3);
/// Reference lines (targets, probability levels): slate grey.
pub(super) const SLATE: RGBColor = RGBColor(0x5f, 0x6b, 0x7a);
/// Axis labels, titles and footnotes: near-black ink.
pub(super) const INK: RGBColor = RGBColor(0x22, 0x26, 0x2e);
/// One colour per target in the probability plot, cycled past the sixth.
pub(super) const TARGET_COLOURS: [RGBColor; 6] = [
    INK_TEAL,
    VERMILION,
    RGBColor(0x6a, 0x3d, 0x9a), // violet
    RGBColor(0xa8, 0x32, 0x6e), // plum
    RGBColor(0x3a, 0x6e, 0xa5), // cornflower slate
    RGBColor(0x8c, 0x5a, 0x2b), // umber
];
pub(super) const MAJOR_GRID: RGBColor = RGBColor(0xd5, 0xd9, 0xe0);
pub(super) const MINOR_GRID: RGBColor = RGBColor(0xee, 0xf0, 0xf3);

/// Font size of the labels drawn inside a plot.
pub(super) const LABEL_SIZE: u32 = 16;

/// Pixel lengths of a dash and of the gap after it, for asymptotic curves.
pub(super) const DASH: (u32, u32) = (9, 5);
/// Pixel lengths for reference lines.
pub(super) const DOT: (u32, u32) = (3, 4);

pub(super) type Canvas<'a> = DrawingArea<SVGBackend<'a>, Shift>;
pub(super) type DrawError = DrawingAreaErrorKind<std::io::Error>;
/// A logarithmic axis with labelled ticks chosen by [`log_ticks`].
pub(super) type LogAxis = WithKeyPoints<LogCoord<f64>>;
/// A chart with calendar days on a logarithmic x axis and a y axis `Y`,
/// linear unless the plot asks for [`LogAxis`].
pub(super) type DayChart<'a, 'b, Y = RangedCoordf64> =
    ChartContext<'a, SVGBackend<'b>, Cartesian2d<LogAxis, Y>>;
/// Quantiles at one day: 2.3%, 15.9%, 84.1%, 97.7% (or the asymptotic -2, -1,
/// +1, +2 σ values standing in for them).
pub(super) type BandPoint = (f64, [f64; 4]);

/// Draws on a white canvas and returns the SVG document as bytes; drawing
/// errors are reported against `file`.
pub(super) fn svg_bytes(
    file: &'static str,
    draw: impl FnOnce(&Canvas) -> Result<(), DrawError>,
) -> Result<Vec<u8>, ReportError> {
    svg_bytes_sized(file, SIZE, draw)
}

/// [`svg_bytes`] on a canvas of `size` pixels.
pub(super) fn svg_bytes_sized(
    file: &'static str,
    size: (u32, u32),
    draw: impl FnOnce(&Canvas) -> Result<(), DrawError>,
) -> Result<Vec<u8>, ReportError> {
    let mut svg = String::new();
    {
        let canvas = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        canvas
            .fill(&WHITE)
            .and_then(|()| draw(&canvas))
            .and_then(|()| canvas.present())
            .map_err(|error| ReportError::Render {
                file,
                message: error.to_string(),
            })?;
    }
    svg.push('\n');
    Ok(xml_safe(&svg).into_bytes())
}

/// The document with every character XML 1.0 does not allow (control
/// characters other than tab, line feed and carriage return, and U+FFFE,
/// U+FFFF) replaced by U+FFFD, so that the SVG parses whatever a title, name
/// or unit holds. The backend already escapes `<`, `>`, `&` and quotes in
/// text and attributes; these characters cannot be escaped at all
/// (W3C, Extensible Markup Language 1.0, 5th ed., production [2] `Char`).
fn xml_safe(svg: &str) -> String {
    svg.chars()
        .map(|c| if is_xml_char(c) { c } else { '\u{FFFD}' })
        .collect()
}

/// Production [2] of XML 1.0: `#x9 | #xA | #xD | [#x20-#xD7FF] |
/// [#xE000-#xFFFD] | [#x10000-#x10FFFF]` (a Rust `char` is never a surrogate).
fn is_xml_char(c: char) -> bool {
    matches!(c, '\t' | '\n' | '\r' | ' '..='\u{D7FF}' | '\u{E000}'..='\u{FFFD}' | '\u{10000}'..)
}

/// What the y axis shows: its coordinate (`linear_axis` or `log_axis`), its
/// description and how its tick labels read.
pub(super) struct ValueAxis<'f, Y> {
    pub coordinate: Y,
    pub description: &'f str,
    pub format: &'f dyn Fn(&f64) -> String,
}

/// A linear value axis over `range`.
pub(super) fn linear_axis(range: Range<f64>) -> RangedCoordf64 {
    range.into()
}

/// A logarithmic axis over `range` (both ends above zero), with the ticks of
/// [`log_ticks`].
pub(super) fn log_axis(range: Range<f64>) -> LogAxis {
    let (major, minor) = log_ticks(range.start, range.end);
    range
        .log_scale()
        .with_key_points(major)
        .with_light_points(minor)
}

/// Builds a titled chart over `days` (log scale, ticks at 1-2-5 or at powers
/// of ten) and draws its grid and axes. `footnote` leaves room below the x
/// axis for one line of text.
pub(super) fn day_chart<'a, 'b, Y>(
    canvas: &'a Canvas<'b>,
    title: &str,
    days: Range<f64>,
    value_axis: ValueAxis<Y>,
    footnote: bool,
) -> Result<DayChart<'a, 'b, Y>, DrawError>
where
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let ValueAxis {
        coordinate,
        description,
        format,
    } = value_axis;
    let mut chart = ChartBuilder::on(canvas)
        .caption(title, text_style(26))
        .margin_top(14)
        .margin_left(14)
        .margin_right(64)
        .margin_bottom(if footnote { 34 } else { 14 })
        .x_label_area_size(52)
        .y_label_area_size(64)
        .build_cartesian_2d(log_axis(days), coordinate)?;
    chart
        .configure_mesh()
        .x_desc("Calendar days")
        .y_desc(description)
        .x_label_formatter(&|days| tick_label(*days))
        .y_label_formatter(format)
        .y_labels(12)
        .axis_desc_style(text_style(19))
        .label_style(text_style(16))
        .axis_style(INK)
        .bold_line_style(MAJOR_GRID)
        .light_line_style(MINOR_GRID)
        .y_max_light_lines(1)
        .draw()?;
    Ok(chart)
}

/// How a curve is stroked: solid for pseudo-experiments, dashed for
/// asymptotic (Asimov) results, in every plot.
#[derive(Debug, Clone, Copy)]
pub(super) enum Stroke {
    Solid,
    Dashed,
}

/// A curve through `points`, with its legend entry.
pub(super) fn draw_curve<'a, 'b: 'a, Y: Ranged<ValueType = f64>>(
    chart: &mut DayChart<'a, 'b, Y>,
    points: Vec<(f64, f64)>,
    colour: RGBColor,
    stroke: Stroke,
    label: String,
) -> Result<(), DrawError> {
    const SAMPLE: i32 = 24;
    match stroke {
        Stroke::Solid => {
            let style = colour.stroke_width(3);
            chart
                .draw_series(LineSeries::new(points, style))?
                .label(label)
                .legend(move |(x, y)| PathElement::new([(x, y), (x + SAMPLE, y)], style));
        }
        Stroke::Dashed => {
            let style = colour.stroke_width(2);
            let (dash, gap) = DASH;
            chart
                .draw_series(DashedLineSeries::new(points, dash, gap, style))?
                .label(label)
                .legend(move |(x, y)| {
                    DashedPathElement::new([(x, y), (x + SAMPLE, y)], dash, gap, style)
                });
        }
    }
    Ok(())
}

/// The outer band (quantiles 0 to 3) in pale lavender, then the inner one
/// (quantiles 1 to 2) in lavender over it, each a closed polygon with its
/// legend entry; nothing when fewer than two days carry quantiles.
pub(super) fn draw_band<'a, 'b: 'a, Y: Ranged<ValueType = f64>>(
    chart: &mut DayChart<'a, 'b, Y>,
    band: &[BandPoint],
    [outer, inner]: [&str; 2],
) -> Result<(), DrawError> {
    if band.len() < 2 {
        return Ok(());
    }
    for (lower, upper, colour, label) in [(0, 3, PALE_LAVENDER, outer), (1, 2, LAVENDER, inner)] {
        let outline: Vec<(f64, f64)> = band
            .iter()
            .map(|(days, quantiles)| (*days, quantiles[upper]))
            .chain(
                band.iter()
                    .rev()
                    .map(|(days, quantiles)| (*days, quantiles[lower])),
            )
            .collect();
        chart
            .draw_series(std::iter::once(Polygon::new(outline, colour.filled())))?
            .label(label)
            .legend(move |(x, y)| Rectangle::new([(x, y - 6), (x + 24, y + 6)], colour.filled()));
    }
    Ok(())
}

/// The legend of any chart, at `position` inside the plot.
pub(super) fn draw_legend_at<'a, 'b: 'a, Coordinates: CoordTranslate>(
    chart: &mut ChartContext<'a, SVGBackend<'b>, Coordinates>,
    position: SeriesLabelPosition,
) -> Result<(), DrawError> {
    chart
        .configure_series_labels()
        .position(position)
        .margin(12)
        .background_style(WHITE.mix(0.92))
        .border_style(MAJOR_GRID)
        .label_font(text_style(16))
        .draw()
}

/// A dotted horizontal line across the plot at `value`, labelled in the right
/// margin.
pub(super) fn reference_line<Y: Ranged<ValueType = f64>>(
    chart: &mut DayChart<'_, '_, Y>,
    canvas: &Canvas,
    value: f64,
    label: &str,
) -> Result<(), DrawError> {
    let (x, y) = horizontal_line(chart, value, SLATE, DOT)?;
    draw_text(
        canvas,
        label,
        (x + 8, y),
        SLATE,
        17,
        (HPos::Left, VPos::Center),
    )
}

/// A thin dashed horizontal line across the plot at `value`; returns the
/// pixel position of its right end.
pub(super) fn horizontal_line<Y: Ranged<ValueType = f64>>(
    chart: &mut DayChart<'_, '_, Y>,
    value: f64,
    colour: RGBColor,
    (dash, gap): (u32, u32),
) -> Result<(i32, i32), DrawError> {
    let days = chart.x_range();
    chart.draw_series(DashedLineSeries::new(
        [(days.start, value), (days.end, value)],
        dash,
        gap,
        colour.stroke_width(1),
    ))?;
    Ok(chart.backend_coord(&(days.end, value)))
}

/// A marker where a curve crosses a reference line at `(days, value)`,
/// filled for a solid curve and a ring for a dashed one (a ring around a dot
/// shows both where they coincide), and `label` in the curve's colour, its
/// top `shift` pixels below the marker (above it when negative). The label
/// goes left of the marker, or right of it when it would leave the plot on
/// the left.
pub(super) fn mark_crossing<Y: Ranged<ValueType = f64>>(
    chart: &mut DayChart<'_, '_, Y>,
    canvas: &Canvas,
    (days, value): (f64, f64),
    (colour, stroke): (RGBColor, Stroke),
    label: &str,
    shift: i32,
) -> Result<(), DrawError> {
    const GAP: i32 = 8;
    let marker = match stroke {
        Stroke::Solid => Circle::new((days, value), 5, colour.filled()),
        Stroke::Dashed => Circle::new((days, value), 7, colour.stroke_width(2)),
    };
    chart.draw_series(std::iter::once(marker))?;
    let plot_left = chart.plotting_area().get_pixel_range().0.start;
    let (x, y) = chart.backend_coord(&(days, value));
    let (width, _) = canvas.estimate_text_size(label, &text_style(LABEL_SIZE))?;
    let width = i32::try_from(width).unwrap_or(i32::MAX);
    let (horizontal, left) = if x - GAP - width >= plot_left {
        (HPos::Right, x - GAP)
    } else {
        (HPos::Left, x + GAP)
    };
    draw_text(
        canvas,
        label,
        (left, y + shift),
        colour,
        LABEL_SIZE,
        (horizontal, VPos::Top),
    )
}

/// A line of text at pixel `position`, anchored by `(horizontal, vertical)`.
pub(super) fn draw_text(
    canvas: &Canvas,
    text: &str,
    position: (i32, i32),
    colour: RGBColor,
    size: u32,
    (horizontal, vertical): (HPos, VPos),
) -> Result<(), DrawError> {
    let style = text_style(size)
        .color(&colour)
        .pos(Pos::new(horizontal, vertical));
    canvas.draw(&Text::new(text.to_string(), position, style))
}

/// A footnote at the bottom left of the canvas.
pub(super) fn draw_footnote(canvas: &Canvas, text: &str) -> Result<(), DrawError> {
    let (_, height) = canvas.dim_in_pixel();
    let bottom = i32::try_from(height).unwrap_or(i32::MAX) - 10;
    draw_text(
        canvas,
        text,
        (14, bottom),
        SLATE,
        15,
        (HPos::Left, VPos::Bottom),
    )
}

/// A tick label: the value to ten significant digits, shortest form, so that
/// 0.30000000000000004 prints as 0.3 and 20.0 as 20.
pub(super) fn axis_label(value: &f64) -> String {
    format!("{value:.9e}")
        .parse::<f64>()
        .map_or_else(|_| value.to_string(), |rounded| rounded.to_string())
}

/// What a plot over one ensemble says below its axis: how the bands are made
/// when the projection ran no pseudo-experiments (`asimov_only`), otherwise the
/// failed fits of that ensemble, when any: "Failed fits: 12 of 62000
/// pseudo-experiments, excluded from the median and bands."
pub(super) struct EnsembleFootnote<'a> {
    pub asimov_only: &'a str,
    pub heading: &'a str,
    pub ensemble: &'a str,
    pub failed_at: fn(&ExposurePoint) -> usize,
}

impl EnsembleFootnote<'_> {
    pub fn text(&self, projection: &Projection) -> Option<String> {
        if projection.toys == 0 {
            return Some(self.asimov_only.to_string());
        }
        let failed: usize = projection.points.iter().map(self.failed_at).sum();
        let total = projection.toys * projection.points.len();
        (failed > 0).then(|| {
            format!(
                "{}: {failed} of {total} {}, excluded from the median and bands.",
                self.heading, self.ensemble
            )
        })
    }
}

pub(super) fn text_style(size: u32) -> TextStyle<'static> {
    TextStyle::from((FONT, size).into_font()).color(&INK)
}

/// The day range of the x axis: the grid itself, or a factor of two either
/// side of a single point. `points` is not empty (checked before rendering).
pub(super) fn day_range(points: &[ExposurePoint]) -> Range<f64> {
    let (first, last) = (points[0].days, points[points.len() - 1].days);
    if last > first {
        first..last
    } else {
        first / 2.0..first * 2.0
    }
}

/// The narrowest range from a 1-2-5 value (1, 2 or 5 times a power of ten)
/// up to another that holds `low..=high` (both above zero), so that both ends
/// of a logarithmic axis carry a labelled tick.
pub(super) fn one_two_five_span(low: f64, high: f64) -> Range<f64> {
    let first_decade = low.log10().floor() as i32 - 1;
    let last_decade = high.log10().ceil() as i32 + 1;
    let values: Vec<f64> = (first_decade..=last_decade)
        .flat_map(|decade| [1, 2, 5].map(|multiplier| scaled(multiplier, decade)))
        .collect();
    let start = values.iter().rev().find(|&&value| value <= low);
    let end = values.iter().find(|&&value| value >= high);
    *start.unwrap_or(&low)..*end.unwrap_or(&high)
}

/// Labelled ticks at 1, 2, 5 times powers of ten when the range spans at most
/// three decades and at powers of ten beyond that; light grid lines at every
/// integer multiple of a power of ten.
pub(super) fn log_ticks(low: f64, high: f64) -> (Vec<f64>, Vec<f64>) {
    let first_decade = low.log10().floor() as i32;
    let last_decade = high.log10().ceil() as i32;
    let multipliers: &[u32] = if high / low <= 1e3 { &[1, 2, 5] } else { &[1] };
    let in_range = |value: &f64| (low * (1.0 - 1e-9)..=high * (1.0 + 1e-9)).contains(value);
    let ticks = |multipliers: &[u32]| -> Vec<f64> {
        (first_decade..=last_decade)
            .flat_map(|decade| {
                multipliers
                    .iter()
                    .map(move |&multiplier| scaled(multiplier, decade))
            })
            .filter(in_range)
            .collect()
    };
    (ticks(multipliers), ticks(&[1, 2, 3, 4, 5, 6, 7, 8, 9]))
}

/// `multiplier × 10^decade`, dividing for negative decades so that 2e-1 is
/// the double nearest 0.2 and prints as such.
fn scaled(multiplier: u32, decade: i32) -> f64 {
    let power = 10f64.powi(decade.abs());
    if decade < 0 {
        f64::from(multiplier) / power
    } else {
        f64::from(multiplier) * power
    }
}

/// A tick of a logarithmic axis as written: "0.2", "5", "1000".
pub(super) fn tick_label(value: f64) -> String {
    value.to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_thousand_days_get_one_two_five_ticks() {
        let (major, minor) = log_ticks(1.0, 1000.0);
        assert_eq!(
            major,
            [1.0, 2.0, 5.0, 10.0, 20.0, 50.0, 100.0, 200.0, 500.0, 1000.0]
        );
        assert_eq!(minor.len(), 28);
    }

    #[test]
    fn wide_ranges_get_powers_of_ten() {
        let (major, _) = log_ticks(0.5, 2e4);
        assert_eq!(major, [1.0, 10.0, 100.0, 1000.0, 10000.0]);
        let labels: Vec<String> = log_ticks(0.1, 30.0).0.into_iter().map(tick_label).collect();
        assert_eq!(labels, ["0.1", "0.2", "0.5", "1", "2", "5", "10", "20"]);
    }

    /// A minimal XML 1.0 well-formedness check of what the SVG backend
    /// writes: only allowed characters (production [2]), no `<` or raw `&`
    /// inside text or attribute values, and every tag closed in order.
    fn assert_well_formed(document: &str) {
        assert!(document.chars().all(is_xml_char), "a character XML forbids");
        let mut open: Vec<&str> = Vec::new();
        let mut rest = document;
        while let Some(start) = rest.find('<') {
            let text = &rest[..start];
            assert_entities_only(text);
            let end = rest[start..].find('>').expect("tag closed") + start;
            let tag = &rest[start + 1..end];
            assert!(!tag.contains('<'), "'<' inside a tag: {tag:?}");
            let attributes = tag.split('"').skip(1).step_by(2);
            attributes.for_each(assert_entities_only);
            if let Some(name) = tag.strip_prefix('/') {
                assert_eq!(open.pop(), Some(name.trim()), "closing tag out of order");
            } else if !tag.ends_with('/') {
                open.push(tag.split_whitespace().next().expect("tag name"));
            }
            rest = &rest[end + 1..];
        }
        assert_entities_only(rest);
        assert!(open.is_empty(), "unclosed tags: {open:?}");
    }

    fn assert_entities_only(text: &str) {
        for (index, _) in text.match_indices('&') {
            let entity = &text[index
                ..text[index..]
                    .find(';')
                    .map_or(text.len(), |end| index + end + 1)];
            assert!(
                ["&lt;", "&gt;", "&amp;", "&quot;", "&apos;"].contains(&entity),
                "raw '&' in {text:?}"
            );
        }
    }

    #[test]
    fn hostile_text_gives_a_well_formed_svg() {
        let hostile = "a</text><script>\u{1}\u{8}\u{1b}[0m\u{7f}&amp; \"quoted\" 'x' \u{FFFF}]]>";
        let bytes = svg_bytes("test.svg", |canvas| {
            let chart = day_chart(
                canvas,
                hostile,
                1.0..100.0,
                ValueAxis {
                    coordinate: linear_axis(0.0..5.0),
                    description: hostile,
                    format: &|value| format!("{value}{hostile}"),
                },
                true,
            )?;
            drop(chart);
            draw_footnote(canvas, hostile)
        })
        .unwrap();
        let document = String::from_utf8(bytes).unwrap();
        assert_well_formed(&document);
        assert!(document.contains("a&lt;/text&gt;&lt;script&gt;\u{FFFD}\u{FFFD}\u{FFFD}[0m"));
    }

    #[test]
    fn the_well_formedness_check_can_fail() {
        for broken in [
            "<a>\u{1}</a>",
            "<a>x & y</a>",
            "<a><b></a></b>",
            "<a b=\"<\"/>",
        ] {
            let failed = std::panic::catch_unwind(|| assert_well_formed(broken)).is_err();
            assert!(failed, "{broken:?} passed");
        }
    }

    #[test]
    fn spans_end_on_one_two_five_values() {
        assert_eq!(one_two_five_span(0.127, 18.07), 0.1..20.0);
        assert_eq!(one_two_five_span(0.3, 1.0), 0.2..1.0);
        assert_eq!(one_two_five_span(2.0, 4.9), 2.0..5.0);
        assert_eq!(one_two_five_span(0.0041, 5.2), 0.002..10.0);
    }
}
