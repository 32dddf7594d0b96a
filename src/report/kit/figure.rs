//! A figure: an SVG canvas drawn by a closure, and charts on it over any
//! pair of axes ([`chart`] with a [`Frame`] and two [`Axis`]), so that days,
//! positions, bin widths or counts on either axis are drawn the same way.
//!
//! Text is written as SVG `<text>` elements (no font is embedded); label
//! extents are estimated from the font size alone (`layout.rs`), so the
//! layout leaves generous room around every label. Titles wrap onto a second
//! line, and shrink when two lines are still too long ([`draw_title`]), so no
//! title runs off the canvas. A single chart keeps its legend in a column of
//! its own right of the plot ([`Page`]), off every curve.

use super::axis::{Axis, Labelling};
use super::layout::{self, Anchor};
use super::palette::{INK, MAJOR_GRID, MINOR_GRID, text_style};
use crate::report::ReportError;
use plotters::chart::MeshStyle;
use plotters::coord::Shift;
use plotters::coord::ranged1d::ValueFormatter;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Canvas size of a single chart with its legend column, in pixels.
pub const SIZE: (u32, u32) = (1200, 600);
/// Width of the legend column right of a single chart, in pixels.
pub const LEGEND_WIDTH: u32 = 300;
/// Font size of the title of a single chart.
pub const TITLE_SIZE: u32 = 26;
/// Smallest font size a title shrinks to.
const SMALLEST_TITLE: u32 = 11;
/// Space left and right of a title, and above it, in pixels.
const TITLE_PAD: u32 = 12;

pub type Canvas<'a> = DrawingArea<SVGBackend<'a>, Shift>;
pub type DrawError = DrawingAreaErrorKind<std::io::Error>;
/// A chart over x coordinate `X` and y coordinate `Y`.
pub type Chart<'a, 'b, X, Y> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<X, Y>>;

/// Draws on a white canvas of `size` pixels and returns the SVG document as
/// bytes; drawing errors are reported against `file`.
pub fn svg_bytes(
    file: &'static str,
    size: (u32, u32),
    draw: impl FnOnce(&Canvas) -> Result<(), DrawError>,
) -> Result<Vec<u8>, ReportError> {
    let mut svg = String::new();
    {
        let canvas = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        layout::begin(size);
        let drawn = canvas
            .fill(&WHITE)
            .and_then(|()| draw(&canvas))
            .and_then(|()| canvas.present());
        layout::end();
        drawn.map_err(|error| ReportError::Render {
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

/// The frame of a chart: caption, margins, label areas, text sizes and grid
/// density. Every field is in pixels except the counts.
pub struct Frame<'t> {
    /// Caption above the chart and its font size.
    pub caption: Option<(&'t str, u32)>,
    /// Top, right, bottom, left.
    pub margins: [u32; 4],
    /// Heights of the x label area, widths of the left and right y label areas.
    pub label_areas: (u32, u32, u32),
    /// Font sizes of the axis descriptions and of the tick labels.
    pub text_sizes: (u32, u32),
    /// Light grid lines between two labelled ones, per axis (plotters' default if none).
    pub light_lines: (Option<usize>, Option<usize>),
}

impl<'t> Frame<'t> {
    /// The chart of a [`Page`] (its title is the page's), with room above
    /// the plot for the labels of shaded stretches, right of it for the
    /// labels of reference lines, and below the x axis for a one-line
    /// footnote when `footnote`.
    pub fn single(footnote: bool) -> Frame<'t> {
        Frame {
            caption: None,
            margins: [22, 64, if footnote { 34 } else { 14 }, 14],
            label_areas: (52, 64, 0),
            text_sizes: (19, 16),
            light_lines: (None, Some(1)),
        }
    }
}

/// A canvas with a title across it and below it a plot area and, right of
/// that, a legend column of [`LEGEND_WIDTH`].
pub struct Page<'a> {
    pub plot: Canvas<'a>,
    pub legend: Canvas<'a>,
}

impl<'a> Page<'a> {
    /// Draws `title` across `canvas` and splits what is below it.
    pub fn titled(canvas: &Canvas<'a>, title: &str) -> Result<Page<'a>, DrawError> {
        let body = titled(canvas, title, TITLE_SIZE)?;
        let (width, _) = body.dim_in_pixel();
        let (plot, legend) = body.split_horizontally(width.saturating_sub(LEGEND_WIDTH));
        Ok(Page { plot, legend })
    }
}

/// Draws `title` across the top of `area` ([`draw_title`]) and returns the
/// area below it.
pub fn titled<'a>(area: &Canvas<'a>, title: &str, size: u32) -> Result<Canvas<'a>, DrawError> {
    let height = draw_title(area, title, size)?;
    Ok(area.split_vertically(height).1)
}

/// Draws `title` centred across the top of `area` in ink of `size` pixels:
/// on one line when it fits the width, else broken at the space nearest its
/// middle onto two, in a smaller font when the longer line still does not
/// fit (never below [`SMALLEST_TITLE`]). Returns the height it takes.
pub fn draw_title(area: &Canvas, title: &str, size: u32) -> Result<u32, DrawError> {
    let (width, _) = area.dim_in_pixel();
    let room = f64::from(width.saturating_sub(2 * TITLE_PAD));
    let lines = title_lines(title, size, room);
    let longest = lines
        .iter()
        .map(|line| layout::text_width(line, size))
        .fold(0.0, f64::max);
    let size = if longest > room {
        ((f64::from(size) * room / longest).floor() as u32).max(SMALLEST_TITLE)
    } else {
        size
    };
    let line_height = size + size / 4;
    let centre = i32::try_from(width / 2).unwrap_or(i32::MAX);
    let (left, top) = area.get_base_pixel();
    for (row, line) in (0..).zip(&lines) {
        let y = i32::try_from(TITLE_PAD + row * line_height).unwrap_or(i32::MAX);
        let style = text_style(size).pos(Pos::new(HPos::Center, VPos::Top));
        area.draw(&Text::new(line.clone(), (centre, y), style))?;
        let drawn = layout::text_box(line, size, (left + centre, top + y), Anchor::Middle, 0.0);
        layout::note(|layout| layout.titles.push(drawn));
    }
    let rows = u32::try_from(lines.len()).unwrap_or(1);
    Ok(TITLE_PAD + rows * line_height)
}

/// `title` as one line when it fits `room` pixels at `size`, else as two
/// lines broken at the space that makes the longer one shortest (in the
/// middle of the text when it has no space).
fn title_lines(title: &str, size: u32, room: f64) -> Vec<String> {
    if layout::text_width(title, size) <= room {
        return vec![title.to_string()];
    }
    let characters: Vec<char> = title.chars().collect();
    let longer_half = |at: usize| at.max(characters.len() - at);
    let split = (0..characters.len())
        .filter(|&at| characters[at] == ' ')
        .min_by_key(|&at| longer_half(at))
        .unwrap_or(characters.len() / 2);
    let first: String = characters[..split].iter().collect();
    let second: String = characters[split..].iter().collect();
    vec![first.trim().to_string(), second.trim().to_string()]
}

/// Builds a chart on `area` inside `frame` over `x` and `y`, and draws its
/// grid, axes, tick labels and axis descriptions.
pub fn chart<'a, 'b, X, Y>(
    area: &'a Canvas<'b>,
    frame: &Frame,
    x: Axis<X>,
    y: Axis<Y>,
) -> Result<Chart<'a, 'b, X, Y>, DrawError>
where
    X: Ranged<ValueType = f64> + ValueFormatter<f64>,
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let (x_coordinate, x) = x.split();
    let (y_coordinate, y) = y.split();
    let mut chart = build(area, frame, x_coordinate, y_coordinate)?;
    draw_grid(chart.configure_mesh(), frame, x, y)?;
    Ok(chart)
}

/// The chart of [`chart`] before anything is drawn, for a chart that adds a
/// secondary axis first (then [`draw_grid`]).
pub fn build<'a, 'b, X, Y>(
    area: &'a Canvas<'b>,
    frame: &Frame,
    x: X,
    y: Y,
) -> Result<Chart<'a, 'b, X, Y>, DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    let mut builder = ChartBuilder::on(area);
    let [top, right, bottom, left] = frame.margins;
    let top = match frame.caption {
        Some((caption, size)) => top + draw_title(area, caption, size)?,
        None => top,
    };
    let (x_labels, y_labels, right_labels) = frame.label_areas;
    builder
        .margin_top(top)
        .margin_right(right)
        .margin_bottom(bottom)
        .margin_left(left)
        .x_label_area_size(x_labels)
        .y_label_area_size(y_labels)
        .right_y_label_area_size(right_labels);
    let chart = builder.build_cartesian_2d(x, y)?;
    let (columns, rows) = chart.plotting_area().get_pixel_range();
    let range = chart.x_range();
    let drawn = layout::ChartBox {
        plot: layout::PixelBox {
            left: f64::from(columns.start),
            top: f64::from(rows.start),
            right: f64::from(columns.end),
            bottom: f64::from(rows.end),
        },
        x_range: (range.start, range.end),
    };
    layout::note(|layout| layout.charts.push(drawn));
    Ok(chart)
}

/// Draws the grid, axes, tick labels and descriptions of `mesh` as `frame`,
/// `x` and `y` ask.
pub fn draw_grid<'f, X, Y>(
    mut mesh: MeshStyle<'_, 'f, X, Y, SVGBackend<'_>>,
    frame: &Frame,
    x: Labelling<'f>,
    y: Labelling<'f>,
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64> + ValueFormatter<f64>,
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    if let Some(description) = x.description {
        mesh.x_desc(description);
    }
    if let Some(description) = y.description {
        mesh.y_desc(description);
    }
    if let Some(labels) = x.labels {
        mesh.x_labels(labels);
    }
    if let Some(labels) = y.labels {
        mesh.y_labels(labels);
    }
    if let Some(lines) = frame.light_lines.0 {
        mesh.x_max_light_lines(lines);
    }
    if let Some(lines) = frame.light_lines.1 {
        mesh.y_max_light_lines(lines);
    }
    let (description_size, label_size) = frame.text_sizes;
    mesh.x_label_formatter(x.format)
        .y_label_formatter(y.format)
        .axis_desc_style(text_style(description_size))
        .label_style(text_style(label_size))
        .axis_style(INK)
        .bold_line_style(MAJOR_GRID)
        .light_line_style(MINOR_GRID)
        .draw()
}

#[cfg(test)]
pub(crate) mod tests {
    use super::super::axis::{DayScale, days_axis, linear_axis};
    use super::super::marks::draw_footnote;
    use super::*;

    /// A minimal XML 1.0 well-formedness check of what the SVG backend
    /// writes: only allowed characters (production [2]), no `<` or raw `&`
    /// inside text or attribute values, and every tag closed in order.
    pub(crate) fn assert_well_formed(document: &str) {
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
        let format = |value: &f64| format!("{value}{hostile}");
        let bytes = svg_bytes("test.svg", SIZE, |canvas| {
            let y = Axis {
                coordinate: linear_axis(0.0..5.0),
                description: Some(hostile),
                format: &format,
                labels: None,
            };
            let page = Page::titled(canvas, hostile)?;
            let scale = DayScale::new(crate::scenario::Spacing::Log, None);
            chart(
                &page.plot,
                &Frame::single(true),
                days_axis(1.0..100.0, &scale),
                y,
            )?;
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
}
