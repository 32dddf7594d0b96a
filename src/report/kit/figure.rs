//! A figure: an SVG canvas drawn by a closure, and charts on it over any
//! pair of axes ([`chart`] with a [`Frame`] and two [`Axis`]), so that days,
//! positions, bin widths or counts on either axis are drawn the same way.
//!
//! Text is written as SVG `<text>` elements (no font is embedded); plotters
//! estimates label extents from the font size alone, so the layout leaves
//! generous room around every label.

use super::axis::{Axis, Labelling};
use super::palette::{INK, MAJOR_GRID, MINOR_GRID, text_style};
use crate::report::ReportError;
use plotters::chart::MeshStyle;
use plotters::coord::Shift;
use plotters::coord::ranged1d::ValueFormatter;
use plotters::prelude::*;

/// Canvas size of a single chart, in pixels.
pub const SIZE: (u32, u32) = (900, 600);

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
    /// A chart filling a canvas of [`SIZE`], titled `title`, with room below
    /// the x axis for a one-line footnote when `footnote`.
    pub fn single(title: &'t str, footnote: bool) -> Frame<'t> {
        Frame {
            caption: Some((title, 26)),
            margins: [14, 64, if footnote { 34 } else { 14 }, 14],
            label_areas: (52, 64, 0),
            text_sizes: (19, 16),
            light_lines: (None, Some(1)),
        }
    }
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
    if let Some((caption, size)) = frame.caption {
        builder.caption(caption, text_style(size));
    }
    let [top, right, bottom, left] = frame.margins;
    let (x_labels, y_labels, right_labels) = frame.label_areas;
    builder
        .margin_top(top)
        .margin_right(right)
        .margin_bottom(bottom)
        .margin_left(left)
        .x_label_area_size(x_labels)
        .y_label_area_size(y_labels)
        .right_y_label_area_size(right_labels);
    builder.build_cartesian_2d(x, y)
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
    use super::super::axis::{days_axis, linear_axis};
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
            chart(
                canvas,
                &Frame::single(hostile, true),
                days_axis(1.0..100.0, crate::scenario::Spacing::Log),
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
