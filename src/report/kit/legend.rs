//! Legends: the small drawing beside each entry ([`Sample`]), one kind per
//! way a series is drawn, so every figure's legend matches its series, and
//! the [`Legend`] a figure collects and draws outside its plot.

use super::figure::{Canvas, DrawError};
use super::layout::{self, PixelBox};
use super::palette::{MAJOR_GRID, text_style};
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::ShapeStyle;
use plotters::style::text_anchor::{HPos, Pos, VPos};

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
    /// Draws the sample with its left end at pixel `(x, y)` of `area`.
    fn draw(self, area: &Canvas, (x, y): (i32, i32)) -> Result<(), DrawError> {
        match self {
            Sample::Line(Line::Solid(style)) => {
                area.draw(&PathElement::new([(x, y), (x + LENGTH, y)], style))
            }
            Sample::Line(Line::Dashed(style, (dash, gap))) => area.draw(&DashedPathElement::new(
                [(x, y), (x + LENGTH, y)],
                dash,
                gap,
                style,
            )),
            Sample::Swatch(colour) => area.draw(&Rectangle::new(
                [(x, y - 6), (x + LENGTH, y + 6)],
                colour.filled(),
            )),
            Sample::SwatchWithEdge(colour, edge) => {
                area.draw(&Rectangle::new(
                    [(x, y - 6), (x + LENGTH, y + 6)],
                    colour.filled(),
                ))?;
                area.draw(&PathElement::new([(x, y - 6), (x + LENGTH, y - 6)], edge))
            }
            Sample::Marker(style, radius) => area.draw(&Circle::new((x + 12, y), radius, style)),
            Sample::MarkerWithBar(style, radius, bar) => {
                area.draw(&PathElement::new([(x + 12, y - 7), (x + 12, y + 7)], bar))?;
                area.draw(&Circle::new((x + 12, y), radius, style))
            }
        }
    }
}

/// The entries of a legend, in the order they are added, drawn in a box of
/// their own ([`Legend::draw`]) outside the plot, so that no entry covers a
/// curve.
#[derive(Default)]
pub struct Legend {
    entries: Vec<(Sample, String)>,
}

impl Legend {
    /// Adds `label` with its `sample`.
    pub fn add(&mut self, sample: Sample, label: impl Into<String>) {
        self.entries.push((sample, label.into()));
    }

    /// Draws the entries in a bordered box at the top left of `area`, one
    /// under the other, each label broken between words onto as many lines
    /// as the width of `area` needs; nothing without entries.
    pub fn draw(&self, area: &Canvas) -> Result<(), DrawError> {
        if self.entries.is_empty() {
            return Ok(());
        }
        let (width, _) = area.dim_in_pixel();
        let width = i32::try_from(width).unwrap_or(i32::MAX) - PAD;
        let text_left = PAD + LENGTH + GAP;
        let room = f64::from(width - text_left - PAD);
        let mut y = TOP + PAD;
        let mut rows = Vec::new();
        for (sample, label) in &self.entries {
            let lines = wrap(label, room);
            let height = LINE * i32::try_from(lines.len()).unwrap_or(1);
            rows.push((*sample, lines, y));
            y += height + ENTRY_GAP;
        }
        let bottom = y - ENTRY_GAP + PAD;
        area.draw(&Rectangle::new([(0, TOP), (width, bottom)], WHITE.filled()))?;
        area.draw(&Rectangle::new([(0, TOP), (width, bottom)], MAJOR_GRID))?;
        let (left, top) = area.get_base_pixel();
        let drawn = PixelBox {
            left: f64::from(left),
            top: f64::from(top + TOP),
            right: f64::from(left + width),
            bottom: f64::from(top + bottom),
        };
        layout::note(|layout| layout.legends.push(drawn));
        for (sample, lines, y) in rows {
            sample.draw(area, (PAD, y + LINE / 2))?;
            for (row, line) in (0..).zip(lines) {
                let style = text_style(SIZE).pos(Pos::new(HPos::Left, VPos::Center));
                area.draw(&Text::new(
                    line,
                    (text_left, y + LINE / 2 + row * LINE),
                    style,
                ))?;
            }
        }
        Ok(())
    }
}

/// Font size of legend labels.
const SIZE: u32 = 14;
/// Height of a legend line, the space between entries, the padding inside
/// the box, the space between a sample and its label, and the box's top.
const LINE: i32 = 19;
const ENTRY_GAP: i32 = 5;
const PAD: i32 = 10;
const GAP: i32 = 8;
const TOP: i32 = 22;

/// `label` broken between words into lines of at most `room` pixels each at
/// the legend's font size (a single word longer than that keeps its line).
fn wrap(label: &str, room: f64) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for word in label.split(' ') {
        match lines.last_mut() {
            Some(line) if layout::text_width(&format!("{line} {word}"), SIZE) <= room => {
                line.push(' ');
                line.push_str(word);
            }
            _ => lines.push(word.to_string()),
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn long_labels_break_between_words() {
        let room = layout::text_width("Toy median (2000", SIZE);
        assert_eq!(
            wrap("Toy median (2000 per point)", room),
            ["Toy median (2000", "per point)"]
        );
        assert_eq!(wrap("Asimov Z_A", room), ["Asimov Z_A"]);
    }
}
