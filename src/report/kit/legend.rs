//! Legend samples: the small drawing beside each legend entry, one kind per
//! way a series is drawn, so every figure's legend matches its series.

use plotters::chart::SeriesAnno;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::ShapeStyle;

/// Length of a line sample, in pixels.
const LENGTH: i32 = 24;

/// How a line is drawn: solid, or in dashes of `(dash, gap)` pixels.
#[derive(Debug, Clone, Copy)]
pub enum Line {
    Solid(ShapeStyle),
    Dashed(ShapeStyle, (u32, u32)),
}

/// How a series looks in the legend.
#[derive(Debug, Clone, Copy)]
pub enum Sample {
    /// A line as its series is drawn.
    Line(Line),
    /// A filled box, for bands.
    Swatch(RGBColor),
    /// A filled box with a line along its top, for a filled histogram.
    SwatchWithEdge(RGBColor, ShapeStyle),
    /// A marker of `radius` pixels.
    Marker(ShapeStyle, u32),
    /// A marker with a vertical error bar, for data points.
    MarkerWithBar(ShapeStyle, u32, ShapeStyle),
}

impl Sample {
    /// Labels `series` in the legend with this sample beside `label`.
    pub fn attach<'a, DB: DrawingBackend + 'a>(
        self,
        series: &mut SeriesAnno<'a, DB>,
        label: impl Into<String>,
    ) {
        series.label(label);
        match self {
            Sample::Line(Line::Solid(style)) => {
                series.legend(move |(x, y)| PathElement::new([(x, y), (x + LENGTH, y)], style))
            }
            Sample::Line(Line::Dashed(style, (dash, gap))) => series.legend(move |(x, y)| {
                DashedPathElement::new([(x, y), (x + LENGTH, y)], dash, gap, style)
            }),
            Sample::Swatch(colour) => series.legend(move |(x, y)| {
                Rectangle::new([(x, y - 6), (x + LENGTH, y + 6)], colour.filled())
            }),
            Sample::SwatchWithEdge(colour, edge) => series.legend(move |(x, y)| {
                EmptyElement::at((x, y))
                    + Rectangle::new([(0, -6), (LENGTH, 6)], colour.filled())
                    + PathElement::new([(0, -6), (LENGTH, -6)], edge)
            }),
            Sample::Marker(style, radius) => {
                series.legend(move |(x, y)| Circle::new((x + 12, y), radius, style))
            }
            Sample::MarkerWithBar(style, radius, bar) => series.legend(move |(x, y)| {
                EmptyElement::at((x + 12, y))
                    + Circle::new((0, 0), radius, style)
                    + PathElement::new([(0, -7), (0, 7)], bar)
            }),
        };
    }
}
