//! What figures draw on a chart: curves, bands, reference lines, markers,
//! legends, and text placed by hand in the margins. Every function works for
//! any x axis.

use super::figure::{Canvas, Chart, DrawError};
use super::layout::{self, Anchor, Leader, PixelBox};
use super::legend::{Legend, Line, Sample};
use super::palette::{DASH, DOT, LABEL_SIZE, LAVENDER, PALE_LAVENDER, SLATE, text_style};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Quantiles at one x: 2.3%, 15.9%, 84.1%, 97.7% (or the asymptotic -2, -1,
/// +1, +2 σ values standing in for them).
pub type BandPoint = (f64, [f64; 4]);

/// How a curve is stroked: solid for pseudo-experiments, dashed for
/// asymptotic (Asimov) results, in every plot.
#[derive(Debug, Clone, Copy)]
pub enum Stroke {
    Solid,
    Dashed,
}

impl Stroke {
    /// The stroke in `colour`, 3 pixels wide when solid, 2 when dashed.
    pub fn line(self, colour: RGBColor) -> Line {
        match self {
            Stroke::Solid => Line::Solid(colour.stroke_width(3)),
            Stroke::Dashed => Line::Dashed(colour.stroke_width(2), DASH),
        }
    }
}

/// A curve through `points`, with its legend entry.
pub fn draw_curve<'a, 'b: 'a, X, Y>(
    chart: &mut Chart<'a, 'b, X, Y>,
    legend: &mut Legend,
    points: Vec<(f64, f64)>,
    colour: RGBColor,
    stroke: Stroke,
    label: String,
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    draw_line(chart, legend, points, stroke.line(colour), Some(label))
}

/// One curve of a figure: its points, colour and legend label.
pub struct Series {
    pub points: Vec<(f64, f64)>,
    pub colour: RGBColor,
    pub label: String,
}

/// The pairing every figure against days draws: a quantity from
/// pseudo-experiments as a solid curve (when at least two points carry it;
/// one point makes no curve), then its asymptotic counterpart dashed, each
/// with its legend entry.
pub fn draw_toys_and_asymptotic<'a, 'b: 'a, X, Y>(
    chart: &mut Chart<'a, 'b, X, Y>,
    legend: &mut Legend,
    toys: Series,
    asymptotic: Series,
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    if toys.points.len() > 1 {
        draw_curve(
            chart,
            legend,
            toys.points,
            toys.colour,
            Stroke::Solid,
            toys.label,
        )?;
    }
    draw_curve(
        chart,
        legend,
        asymptotic.points,
        asymptotic.colour,
        Stroke::Dashed,
        asymptotic.label,
    )
}

/// A line through `points`, with a legend entry when labelled.
pub fn draw_line<'a, 'b: 'a, X, Y>(
    chart: &mut Chart<'a, 'b, X, Y>,
    legend: &mut Legend,
    points: Vec<(f64, f64)>,
    line: Line,
    label: Option<String>,
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    note_curve(chart, &points);
    match line {
        Line::Solid(style) => chart.draw_series(LineSeries::new(points, style))?,
        Line::Dashed(style, (dash, gap)) => {
            chart.draw_series(DashedLineSeries::new(points, dash, gap, style))?
        }
    };
    if let Some(label) = label {
        legend.add(Sample::Line(line), label);
    }
    Ok(())
}

/// Notes the path of a curve through `points` in the figure's layout, in
/// canvas pixels, cut where it leaves the plot as the drawing is.
pub fn note_curve<Coordinates>(
    chart: &ChartContext<'_, SVGBackend<'_>, Coordinates>,
    points: &[(f64, f64)],
) where
    Coordinates: CoordTranslate<From = (f64, f64)>,
{
    let path = pixel_path(chart, points);
    let plot = plot_box(chart);
    layout::note(|layout| layout.curves.extend(layout::clip_path(&path, &plot)));
}

/// `points` in canvas pixels.
fn pixel_path<Coordinates>(
    chart: &ChartContext<'_, SVGBackend<'_>, Coordinates>,
    points: &[(f64, f64)],
) -> Vec<(f64, f64)>
where
    Coordinates: CoordTranslate<From = (f64, f64)>,
{
    points
        .iter()
        .map(|point| {
            let (x, y) = chart.plotting_area().map_coordinate(point);
            (f64::from(x), f64::from(y))
        })
        .collect()
}

/// The plot of `chart` in canvas pixels.
pub fn plot_box<Coordinates>(chart: &ChartContext<'_, SVGBackend<'_>, Coordinates>) -> PixelBox
where
    Coordinates: CoordTranslate<From = (f64, f64)>,
{
    let (x, y) = chart.plotting_area().get_pixel_range();
    PixelBox {
        left: f64::from(x.start),
        top: f64::from(y.start),
        right: f64::from(x.end),
        bottom: f64::from(y.end),
    }
}

/// Notes the box spanned by `points` as a band or shaded area in the
/// figure's layout, in canvas pixels.
pub fn note_area<Coordinates>(
    chart: &ChartContext<'_, SVGBackend<'_>, Coordinates>,
    points: &[(f64, f64)],
) where
    Coordinates: CoordTranslate<From = (f64, f64)>,
{
    let pixels = pixel_path(chart, points);
    let spanned = pixels
        .iter()
        .fold(None, |spanned: Option<PixelBox>, &(x, y)| {
            Some(match spanned {
                None => PixelBox {
                    left: x,
                    top: y,
                    right: x,
                    bottom: y,
                },
                Some(b) => PixelBox {
                    left: b.left.min(x),
                    top: b.top.min(y),
                    right: b.right.max(x),
                    bottom: b.bottom.max(y),
                },
            })
        });
    if let Some(spanned) = spanned {
        layout::note(|layout| layout.areas.push(spanned));
    }
}

/// Notes the filled band outlined by `outline` in the figure's layout: its
/// box as [`note_area`] does, and its outline, so that labels keep off it.
fn note_band<Coordinates>(
    chart: &ChartContext<'_, SVGBackend<'_>, Coordinates>,
    outline: &[(f64, f64)],
) where
    Coordinates: CoordTranslate<From = (f64, f64)>,
{
    note_area(chart, outline);
    let band = layout::Band {
        outline: pixel_path(chart, outline),
        plot: plot_box(chart),
    };
    layout::note(|layout| layout.bands.push(band));
}

/// Notes a marker of `radius` pixels at `point` in the figure's layout.
fn note_marker<Coordinates>(
    chart: &ChartContext<'_, SVGBackend<'_>, Coordinates>,
    point: (f64, f64),
    radius: u32,
) where
    Coordinates: CoordTranslate<From = (f64, f64)>,
{
    let (x, y) = chart.plotting_area().map_coordinate(&point);
    let radius = f64::from(radius);
    let (x, y) = (f64::from(x), f64::from(y));
    let drawn = PixelBox {
        left: x - radius,
        top: y - radius,
        right: x + radius,
        bottom: y + radius,
    };
    layout::note(|layout| layout.markers.push(drawn));
}

/// The outer band (quantiles 0 to 3) in pale lavender, then the inner one
/// (quantiles 1 to 2) in lavender over it, each a closed polygon with its
/// legend entry; nothing when fewer than two points carry quantiles.
pub fn draw_band<'a, 'b: 'a, X, Y>(
    chart: &mut Chart<'a, 'b, X, Y>,
    legend: &mut Legend,
    band: &[BandPoint],
    [outer, inner]: [&str; 2],
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    if band.len() < 2 {
        return Ok(());
    }
    for (lower, upper, colour, label) in [(0, 3, PALE_LAVENDER, outer), (1, 2, LAVENDER, inner)] {
        let outline: Vec<(f64, f64)> = band
            .iter()
            .map(|(x, quantiles)| (*x, quantiles[upper]))
            .chain(
                band.iter()
                    .rev()
                    .map(|(x, quantiles)| (*x, quantiles[lower])),
            )
            .collect();
        note_band(chart, &outline);
        chart.draw_series(std::iter::once(Polygon::new(outline, colour.filled())))?;
        legend.add(Sample::Swatch(colour), label);
    }
    Ok(())
}

/// A marker of `radius` pixels at `point`, explained in the legend.
pub fn mark_point<'a, 'b: 'a, Coordinates>(
    chart: &mut ChartContext<'a, SVGBackend<'b>, Coordinates>,
    legend: &mut Legend,
    point: (f64, f64),
    (colour, radius): (RGBColor, u32),
    label: String,
) -> Result<(), DrawError>
where
    Coordinates: CoordTranslate<From = (f64, f64)>,
{
    note_marker(chart, point, radius);
    chart.draw_series(std::iter::once(Circle::new(point, radius, colour.filled())))?;
    legend.add(Sample::Marker(colour.filled(), radius), label);
    Ok(())
}

/// A dotted horizontal line across the plot at `value`, labelled in the right
/// margin.
pub fn reference_line<X, Y>(
    chart: &mut Chart<'_, '_, X, Y>,
    canvas: &Canvas,
    value: f64,
    label: &str,
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
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

/// A thin horizontal line of `(dash, gap)` pixels across the plot at
/// `value`, noted in the layout as a curve, so that labels keep off it;
/// returns the pixel position of its right end.
pub fn horizontal_line<X, Y>(
    chart: &mut Chart<'_, '_, X, Y>,
    value: f64,
    colour: RGBColor,
    (dash, gap): (u32, u32),
) -> Result<(i32, i32), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    let range = chart.x_range();
    note_curve(chart, &[(range.start, value), (range.end, value)]);
    chart.draw_series(DashedLineSeries::new(
        [(range.start, value), (range.end, value)],
        dash,
        gap,
        colour.stroke_width(1),
    ))?;
    Ok(chart.backend_coord(&(range.end, value)))
}

/// A marker where a curve crosses a reference line at `(x, value)`, filled
/// for a solid curve and a ring for a dashed one (a ring around a dot shows
/// both where they coincide), and `label` in the curve's colour, queued in
/// `labels` to be placed once everything is drawn ([`CrossingLabels::place`]):
/// its top `shift` pixels below the marker (above it when negative), left of
/// the marker, or right of it when it would leave the plot on the left;
/// elsewhere when that covers something. No label when `label` is empty.
pub fn mark_crossing<X, Y>(
    chart: &mut Chart<'_, '_, X, Y>,
    labels: &mut CrossingLabels,
    point: (f64, f64),
    curve: (RGBColor, Stroke),
    label: &str,
    shift: i32,
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    mark_crossing_on(chart, labels, point, curve, label, shift, false)
}

/// As [`mark_crossing`], but the label goes right of the marker, or left of
/// it when it would leave the plot on the right: below a rising curve's
/// crossing, where the curve has already passed.
pub fn mark_crossing_right<X, Y>(
    chart: &mut Chart<'_, '_, X, Y>,
    labels: &mut CrossingLabels,
    point: (f64, f64),
    curve: (RGBColor, Stroke),
    label: &str,
    shift: i32,
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    mark_crossing_on(chart, labels, point, curve, label, shift, true)
}

/// The labels of the toy and the Asimov crossing of the same line: where
/// both read the same, one label for both, "3σ: 516 d (toys and Asimov)", on
/// the toy crossing and an empty one on the Asimov crossing.
pub fn merge_coinciding(
    toys: Option<String>,
    asimov: Option<String>,
) -> (Option<String>, Option<String>) {
    match (toys, asimov) {
        (Some(toys), Some(asimov)) if toys == asimov => (
            Some(format!("{toys} (toys and Asimov)")),
            Some(String::new()),
        ),
        pair => pair,
    }
}

fn mark_crossing_on<X, Y>(
    chart: &mut Chart<'_, '_, X, Y>,
    labels: &mut CrossingLabels,
    (x, value): (f64, f64),
    (colour, stroke): (RGBColor, Stroke),
    label: &str,
    shift: i32,
    right_first: bool,
) -> Result<(), DrawError>
where
    X: Ranged<ValueType = f64>,
    Y: Ranged<ValueType = f64>,
{
    let (marker, radius) = match stroke {
        Stroke::Solid => (Circle::new((x, value), 5, colour.filled()), 5),
        Stroke::Dashed => (Circle::new((x, value), 7, colour.stroke_width(2)), 7),
    };
    note_marker(chart, (x, value), radius);
    chart.draw_series(std::iter::once(marker))?;
    if !label.is_empty() {
        labels.pending.push(PendingLabel {
            text: label.to_string(),
            colour,
            marker: chart.backend_coord(&(x, value)),
            radius,
            shift,
            right_first,
            plot: plot_box(chart),
        });
    }
    Ok(())
}

impl CrossingLabels {
    /// Queues `text` in `colour` for the point `(x, value)` of `chart`
    /// where no marker is drawn (the end of a line), its top `shift`
    /// pixels below the point (above it when negative) and its right end
    /// at the point; placed as the crossing labels are.
    pub fn label_point<X, Y>(
        &mut self,
        chart: &Chart<'_, '_, X, Y>,
        point: (f64, f64),
        colour: RGBColor,
        text: &str,
        shift: i32,
    ) where
        X: Ranged<ValueType = f64>,
        Y: Ranged<ValueType = f64>,
    {
        self.pending.push(PendingLabel {
            text: text.to_string(),
            colour,
            marker: chart.backend_coord(&point),
            radius: 0,
            shift,
            right_first: false,
            plot: plot_box(chart),
        });
    }
}

/// The labels of a figure's crossing markers, placed last, so that each
/// keeps off every curve, band and marker of the figure and off the labels
/// placed before it.
#[derive(Default)]
pub struct CrossingLabels {
    pending: Vec<PendingLabel>,
}

/// A crossing label waiting to be placed, in canvas pixels.
struct PendingLabel {
    text: String,
    colour: RGBColor,
    marker: (i32, i32),
    radius: u32,
    shift: i32,
    right_first: bool,
    plot: PixelBox,
}

impl CrossingLabels {
    /// Draws every label in the order they were marked: where
    /// [`mark_crossing`] meant it to go when that covers nothing drawn,
    /// else at the nearest free position in the plot ([`place_near`]), with
    /// a leader line from its marker when that is away from it.
    pub fn place(self, canvas: &Canvas) -> Result<(), DrawError> {
        self.pending.iter().try_for_each(|label| label.draw(canvas))
    }
}

impl PendingLabel {
    fn draw(&self, canvas: &Canvas) -> Result<(), DrawError> {
        const GAP: f64 = 8.0;
        let (pixel_x, pixel_y) = (f64::from(self.marker.0), f64::from(self.marker.1));
        let width = layout::text_width(&self.text, LABEL_SIZE);
        let fits_left = pixel_x - GAP - width >= self.plot.left;
        let fits_right = pixel_x + GAP + width <= self.plot.right;
        let go_right = if self.right_first {
            fits_right
        } else {
            !fits_left
        };
        let left = if go_right {
            pixel_x + GAP
        } else {
            pixel_x - GAP - width
        };
        let top = pixel_y + f64::from(self.shift);
        let preferred = PixelBox {
            left,
            top,
            right: left + width,
            bottom: top + f64::from(LABEL_SIZE),
        };
        let marker = (pixel_x, pixel_y);
        let (placed, leader) = place_near(&self.plot, preferred, marker, f64::from(self.radius))
            // Nowhere free in the plot: where it was meant to go.
            .unwrap_or((preferred, None));
        let base = canvas.get_base_pixel();
        let pixel = |(x, y): (f64, f64)| (x.round() as i32 - base.0, y.round() as i32 - base.1);
        if let Some([from, to]) = leader {
            layout::note(|layout| layout.leaders.push([from, to]));
            canvas.draw(&PathElement::new(
                vec![pixel(from), pixel(to)],
                self.colour.stroke_width(1),
            ))?;
        }
        // Text runs narrower than its estimated box: anchored on the side
        // that faces the marker, it ends where the leader does.
        let (x, horizontal) = if placed.right <= pixel_x {
            (placed.right, HPos::Right)
        } else if placed.left >= pixel_x {
            (placed.left, HPos::Left)
        } else {
            (0.5 * (placed.left + placed.right), HPos::Center)
        };
        draw_text(
            canvas,
            &self.text,
            pixel((x, placed.top)),
            self.colour,
            LABEL_SIZE,
            (horizontal, VPos::Top),
        )
    }
}

/// Step between the candidate positions of a label, in pixels.
const PLACEMENT_STEP: f64 = 6.0;
/// Clear space kept around a label placed inside a plot, in pixels.
const LABEL_CLEARANCE: f64 = 2.0;

/// Where a label of the size of `preferred` goes inside `plot`: at
/// `preferred` if that covers nothing drawn so far, else at the free
/// position nearest to it on a grid of [`PLACEMENT_STEP`] pixels, with
/// [`LABEL_CLEARANCE`] around it. A label that ends up away from its marker
/// at `marker` (of `radius` pixels) gets a leader line from the marker's
/// edge to the label's nearest edge, returned beside the box. None when no
/// position inside the plot is free.
fn place_near(
    plot: &PixelBox,
    preferred: PixelBox,
    marker: (f64, f64),
    radius: f64,
) -> Option<(PixelBox, Option<Leader>)> {
    let (width, height) = (
        preferred.right - preferred.left,
        preferred.bottom - preferred.top,
    );
    let at = |left: f64, top: f64| PixelBox {
        left,
        top,
        right: left + width,
        bottom: top + height,
    };
    let inside = |candidate: &PixelBox| {
        candidate.left >= plot.left + LABEL_CLEARANCE
            && candidate.right <= plot.right - LABEL_CLEARANCE
            && candidate.top >= plot.top + LABEL_CLEARANCE
            && candidate.bottom <= plot.bottom - LABEL_CLEARANCE
    };
    let mut candidates: Vec<PixelBox> =
        std::iter::once(preferred)
            .chain(grid(plot.left, plot.right - width).flat_map(|left| {
                grid(plot.top, plot.bottom - height).map(move |top| at(left, top))
            }))
            .filter(inside)
            .collect();
    let distance = |candidate: &PixelBox| {
        (candidate.left - preferred.left).hypot(candidate.top - preferred.top)
    };
    candidates.sort_by(|a, b| distance(a).total_cmp(&distance(b)));
    // Beside its marker a label needs no leader: as far as the preferred
    // position is, and a row more.
    let beside = gap_to(&preferred, marker) + f64::from(LABEL_ROW);
    let leader_to = |chosen: &PixelBox| {
        let gap = gap_to(chosen, marker);
        (gap > beside).then(|| {
            let nearest = nearest_point(chosen, marker);
            let (ux, uy) = ((nearest.0 - marker.0) / gap, (nearest.1 - marker.1) / gap);
            let end = gap - LABEL_CLEARANCE;
            [
                (marker.0 + ux * radius, marker.1 + uy * radius),
                (marker.0 + ux * end, marker.1 + uy * end),
            ]
        })
    };
    layout::with_drawing(|drawn| {
        candidates.into_iter().find_map(|candidate| {
            let Some(drawn) = drawn else {
                return Some((candidate, None));
            };
            if drawn.covered(&candidate.grown(LABEL_CLEARANCE)) {
                return None;
            }
            let leader = leader_to(&candidate);
            match leader {
                Some([from, to]) if drawn.blocks_leader(from, to) => None,
                _ => Some((candidate, leader)),
            }
        })
    })
}

/// The point of `text` nearest to `point`.
fn nearest_point(text: &PixelBox, point: (f64, f64)) -> (f64, f64) {
    (
        point.0.clamp(text.left, text.right),
        point.1.clamp(text.top, text.bottom),
    )
}

/// The distance from `point` to the nearest point of `text`.
fn gap_to(text: &PixelBox, point: (f64, f64)) -> f64 {
    let nearest = nearest_point(text, point);
    (nearest.0 - point.0).hypot(nearest.1 - point.1)
}

/// `from`, `from` + [`PLACEMENT_STEP`], ... up to `to`.
fn grid(from: f64, to: f64) -> impl Iterator<Item = f64> + Clone {
    let steps = ((to - from) / PLACEMENT_STEP).floor().max(-1.0) as i64;
    (0..=steps).map(move |step| from + step as f64 * PLACEMENT_STEP)
}

/// Height of a row of labels inside a plot, in pixels.
pub const LABEL_ROW: i32 = 18;

/// As [`draw_text`], but moved by whole rows of [`LABEL_ROW`] pixels away
/// from its anchor (downwards when `direction` is positive, upwards when
/// negative) until it covers no text drawn before it, at most four rows.
pub fn draw_label_clear(
    canvas: &Canvas,
    text: &str,
    (x, y): (i32, i32),
    (colour, size): (RGBColor, u32),
    anchor: (HPos, VPos),
    direction: i32,
) -> Result<(), DrawError> {
    let step = if direction < 0 { -LABEL_ROW } else { LABEL_ROW };
    let base = canvas.get_base_pixel();
    let candidates: Vec<(i32, i32)> = (0..5).map(|row| (x, y + row * step)).collect();
    let boxes: Vec<PixelBox> = candidates
        .iter()
        .map(|&(x, y)| text_extent(text, size, (base.0 + x, base.1 + y), anchor))
        .collect();
    let chosen = candidates[layout::free_text_box(&boxes)];
    draw_text(canvas, text, chosen, colour, size, anchor)
}

/// The estimated box of `text` anchored at canvas pixel `position`.
fn text_extent(
    text: &str,
    size: u32,
    position: (i32, i32),
    (horizontal, vertical): (HPos, VPos),
) -> PixelBox {
    let anchor = match horizontal {
        HPos::Left => Anchor::Start,
        HPos::Center => Anchor::Middle,
        HPos::Right => Anchor::End,
    };
    let vertical = match vertical {
        VPos::Top => 0.0,
        VPos::Center => 0.5,
        VPos::Bottom => 1.0,
    };
    layout::text_box(text, size, position, anchor, vertical)
}

/// A line of text at pixel `position`, anchored by `(horizontal, vertical)`.
pub fn draw_text(
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
    let (left, top) = canvas.get_base_pixel();
    let drawn = text_extent(
        text,
        size,
        (left + position.0, top + position.1),
        (horizontal, vertical),
    );
    layout::note(|layout| layout.texts.push((text.to_string(), drawn)));
    canvas.draw(&Text::new(text.to_string(), position, style))
}

/// A one-line footnote at the bottom left of the canvas.
pub fn draw_footnote(canvas: &Canvas, text: &str) -> Result<(), DrawError> {
    draw_footnote_line(canvas, text, 0)
}

/// A line of a footnote of several lines: `from_bottom` 0 is the last.
pub fn draw_footnote_line(canvas: &Canvas, text: &str, from_bottom: i32) -> Result<(), DrawError> {
    let (_, height) = canvas.dim_in_pixel();
    let bottom = i32::try_from(height).unwrap_or(i32::MAX) - 10 - 20 * from_bottom;
    draw_text(
        canvas,
        text,
        (14, bottom),
        SLATE,
        15,
        (HPos::Left, VPos::Bottom),
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::kit::axis::{Axis, axis_label, linear_axis};
    use crate::report::kit::figure::{Frame, Page, SIZE, chart, svg_bytes};
    use crate::report::kit::palette::INK_TEAL;

    #[test]
    fn marks_draw_over_a_linear_position_axis() {
        let bytes = svg_bytes("test.svg", SIZE, |canvas| {
            let x = Axis {
                coordinate: linear_axis(0.0..100.0),
                description: Some("Signal position [keV]"),
                format: &axis_label,
                labels: None,
            };
            let y = Axis {
                coordinate: linear_axis(0.0..6.0),
                description: Some("Z_A [σ]"),
                format: &axis_label,
                labels: None,
            };
            let page = Page::titled(canvas, "Invented scan")?;
            let mut chart = chart(&page.plot, &Frame::single(true), x, y)?;
            let mut legend = Legend::default();
            let band = [(10.0, [0.0, 1.0, 3.0, 4.0]), (90.0, [1.0, 2.0, 4.0, 5.0])];
            draw_band(&mut chart, &mut legend, &band, ["outer band", "inner band"])?;
            reference_line(&mut chart, canvas, 3.0, "3σ")?;
            let curve = vec![(10.0, 2.0), (90.0, 3.0)];
            let label = "median".to_string();
            draw_curve(
                &mut chart,
                &mut legend,
                curve,
                INK_TEAL,
                Stroke::Solid,
                label,
            )?;
            let curve = (INK_TEAL, Stroke::Solid);
            let mut labels = CrossingLabels::default();
            mark_crossing(
                &mut chart,
                &mut labels,
                (90.0, 3.0),
                curve,
                "3σ at 90 keV",
                -18,
            )?;
            labels.place(canvas)?;
            legend.draw(&page.legend)?;
            draw_footnote(canvas, "Invented numbers.")
        })
        .unwrap();
        let text = String::from_utf8(bytes).unwrap();
        for expected in [
            "\nSignal position [keV]\n</text>",
            "\n50\n</text>",
            "\n3σ\n</text>",
            "\n3σ at 90 keV\n</text>",
            "\nmedian\n</text>",
            "\nouter band\n</text>",
            "\ninner band\n</text>",
            "\nInvented numbers.\n</text>",
        ] {
            assert!(text.contains(expected), "missing {expected:?}");
        }
    }
}
