//! `levers.svg`: one row per input (in the order of the summary), one panel
//! per target (and global target with a scan) and for exclusion, each on its
//! own axis of calendar days. In every row a dot marks the nominal days and
//! two arrows leave it: teal to the days with the input improved by the
//! step, vermilion to the days with it worsened, each labelled with the days
//! saved or lost. Where a side reaches no day the row says why in words.
//! With `--toys`, the rows of the inputs that got toy-median days carry a
//! thin line below their arrows with open circles at the nominal, improved
//! and worsened toy medians.

use super::{Change, DayName, LEVERS_SVG, day_names, days_change, lost, no_day_reason, saved};
use crate::levers::{Lever, Levers, PlanDays, Reach};
use crate::report::ReportError;
use crate::report::kit::axis::{Axis, axis_label, linear_axis};
use crate::report::kit::figure::{self, Canvas, DrawError, Frame};
use crate::report::kit::format::days_label;
use crate::report::kit::marks::{draw_footnote_line, draw_text};
use crate::report::kit::palette::{DASH, INK, INK_TEAL, SLATE, VERMILION, text_style};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Pixel height of one input's row, of the title band and of the footer.
const ROW: u32 = 40;
const TITLE: u32 = 60;
const FOOTER: u32 = 75;
/// With `--toys`: the extra height of each row for the line of toy
/// medians below its arrows, and of the footer for the line saying so.
const TOY_LINE: u32 = 14;
const FOOTNOTE: u32 = 20;
/// Pixels from a row's centre down to its line of toy medians.
const TOY_OFFSET: i32 = 19;
/// Pixel width of the input names, and of each panel.
const NAMES: u32 = 330;
const PANEL: u32 = 330;
/// Names longer than this many characters are broken at a dot.
const NAME_LINE: usize = 40;

pub(super) fn render(levers: &Levers) -> Result<Vec<u8>, ReportError> {
    let names = day_names(levers);
    let width = NAMES + PANEL * names.len() as u32 + 20;
    let (row, footer) = match levers.toys {
        Some(_) => (ROW + TOY_LINE, FOOTER + FOOTNOTE),
        None => (ROW, FOOTER),
    };
    let height = TITLE + 60 + row * levers.levers.len().max(1) as u32 + footer;
    figure::svg_bytes(LEVERS_SVG, (width, height), |canvas| {
        draw(canvas, levers, &names, height)
    })
}

fn draw(canvas: &Canvas, levers: &Levers, names: &[DayName], height: u32) -> Result<(), DrawError> {
    draw_text(
        canvas,
        &format!("What each input is worth in days: {}", levers.title),
        (14, 14),
        INK,
        22,
        (HPos::Left, VPos::Top),
    )?;
    let footer = if levers.toys.is_some() {
        FOOTER + FOOTNOTE
    } else {
        FOOTER
    };
    let (_, rest) = canvas.split_vertically(TITLE);
    let (body, _) = rest.split_vertically(height - TITLE - footer);
    let (_, panels) = body.split_horizontally(NAMES);
    let panels = panels.split_evenly((1, names.len()));
    for (index, (panel, name)) in panels.iter().zip(names).enumerate() {
        draw_panel(canvas, panel, levers, name, index == 0)?;
    }
    draw_legend(canvas, &levers.step.to_string())?;
    let first = names
        .first()
        .map_or("exclusion", |name| name.label.as_str());
    let mut footnotes = vec![
        format!(
            "Asimov days as runcast project --asimov-only gives them; rows sorted by days saved at {first}; each panel has its own day axis."
        ),
        "Days past the plan's grid, or never reached (Z_A saturates below the target), are said in words; levers.csv and .json hold every number.".to_string(),
    ];
    if let Some(toys) = &levers.toys {
        footnotes.push(format!(
            "Thin line under the first {} rows: toy medians ({} pseudo-experiments per point, seed {}), open circles at the nominal (black), improved (teal) and worsened (vermilion) days.",
            levers.with_toys().len(),
            toys.toys,
            toys.seed
        ));
        let global_missing = toys.baseline.global.contains(&Reach::NotComputed);
        if let Some(line) = footnotes.last_mut().filter(|_| global_missing) {
            line.push_str(" Global panels have none: no look-elsewhere pseudo-experiments.");
        }
    }
    for (line, text) in footnotes.iter().rev().enumerate() {
        draw_footnote_line(canvas, text, line as i32)?;
    }
    Ok(())
}

/// The legend under the title: the nominal dot and the two arrows, drawn
/// as in the rows.
fn draw_legend(canvas: &Canvas, step: &str) -> Result<(), DrawError> {
    let y = 46;
    canvas.draw(&Circle::new((22, y), 5, INK.filled()))?;
    draw_text(
        canvas,
        "nominal days",
        (34, y),
        INK,
        14,
        (HPos::Left, VPos::Center),
    )?;
    let entries = [
        (
            180,
            INK_TEAL,
            format!("input improved by {step}: days saved"),
        ),
        (
            520,
            VERMILION,
            format!("input worsened by {step}: days lost"),
        ),
    ];
    for (left, colour, label) in entries {
        draw_arrow(canvas, (left, y), left + 40, colour)?;
        draw_text(
            canvas,
            &label,
            (left + 50, y),
            INK,
            14,
            (HPos::Left, VPos::Center),
        )?;
    }
    Ok(())
}

/// An arrow from pixel `from` along its row to x = `to`; a short tick at
/// `to` when it is too short to carry a head.
fn draw_arrow(
    canvas: &Canvas,
    from: (i32, i32),
    to: i32,
    colour: RGBColor,
) -> Result<(), DrawError> {
    let (start, y) = from;
    if (to - start).abs() < 12 {
        return canvas.draw(&PathElement::new(
            vec![(to, y - 5), (to, y + 5)],
            colour.stroke_width(3),
        ));
    }
    let direction = if to > start { 1 } else { -1 };
    canvas.draw(&PathElement::new(
        vec![(start, y), (to - direction * 6, y)],
        colour.stroke_width(3),
    ))?;
    canvas.draw(&Polygon::new(
        vec![
            (to, y),
            (to - direction * 9, y - 5),
            (to - direction * 9, y + 5),
        ],
        colour.filled(),
    ))
}

/// Every day of panel `name`: nominal, improved and worsened, for the axis.
fn panel_days(levers: &Levers, name: &DayName) -> Vec<f64> {
    let mut days: Vec<f64> = levers.baseline.all()[name.index]
        .day()
        .into_iter()
        .collect();
    for lever in &levers.levers {
        for side in [&lever.improved.days, &lever.worsened.days]
            .into_iter()
            .flatten()
        {
            days.extend(side.all()[name.index].day());
        }
        for side in [&lever.improved.toy_days, &lever.worsened.toy_days]
            .into_iter()
            .flatten()
        {
            days.extend(side.all()[name.index].day());
        }
    }
    if let Some(toys) = &levers.toys {
        days.extend(toys.baseline.all()[name.index].day());
    }
    days
}

fn draw_panel(
    canvas: &Canvas,
    panel: &Canvas,
    levers: &Levers,
    name: &DayName,
    with_names: bool,
) -> Result<(), DrawError> {
    let days = panel_days(levers, name);
    let (low, high) = days
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &d| {
            (l.min(d), h.max(d))
        });
    let (low, high) = if low.is_finite() {
        (low, high)
    } else {
        (0.0, 1.0)
    };
    let pad = ((high - low) * 0.22).max(0.05 * high.abs()).max(0.5);
    let rows = levers.levers.len().max(1) as f64;
    let reach = levers.baseline.all()[name.index];
    let nominal = reach.day();
    let caption = match nominal {
        Some(day) => format!("{} (nominal {})", name.label, days_label(day)),
        None => format!(
            "{} (nominal: {})",
            name.label,
            no_day_reason(reach, levers.last_day)
        ),
    };
    let no_label = |_: &f64| String::new();
    let description = if days.is_empty() {
        format!("No plan reaches {}", name.label)
    } else {
        format!("Calendar days to {}", name.label)
    };
    let x = Axis {
        coordinate: linear_axis((low - pad).max(0.0)..high + pad),
        description: Some(&description),
        format: if days.is_empty() {
            &no_label
        } else {
            &axis_label
        },
        labels: Some(5),
    };
    let y = Axis {
        coordinate: linear_axis(rows - 0.5..-0.5),
        description: None,
        format: &no_label,
        labels: Some(0),
    };
    let frame = Frame {
        caption: Some((&caption, 17)),
        margins: [6, 22, 0, 10],
        label_areas: (48, 0, 0),
        text_sizes: (14, 13),
        light_lines: (Some(1), Some(0)),
    };
    let mut chart = figure::chart(panel, &frame, x, y)?;
    let plot = chart.plotting_area().get_pixel_range();
    if let Some(day) = nominal {
        let line = vec![(day, -0.5), (day, rows - 0.5)];
        chart.draw_series(DashedLineSeries::new(
            line,
            DASH.0,
            DASH.1,
            SLATE.stroke_width(1),
        ))?;
    }
    let pixel_x = |day: f64| chart.backend_coord(&(day, 0.0)).0;
    for (row, lever) in levers.levers.iter().enumerate() {
        let (_, pixel_y) = chart.backend_coord(&(0.0, row as f64));
        if with_names {
            draw_name(canvas, &lever.input.name, pixel_y)?;
        }
        let place = Row {
            levers,
            lever,
            name,
            pixel_y,
            start: nominal.map(pixel_x),
            edges: (plot.0.start, plot.0.end),
        };
        // Without a nominal day only an improved day can be drawn.
        for improved in [true, false]
            .into_iter()
            .take(if nominal.is_some() { 2 } else { 1 })
        {
            draw_side(canvas, &place, improved, &pixel_x)?;
        }
        if let Some(start) = place.start {
            canvas.draw(&Circle::new((start, pixel_y), 5, INK.filled()))?;
        }
        if row < levers.with_toys().len() {
            draw_toy_medians(canvas, levers, lever, name, pixel_y + TOY_OFFSET, &pixel_x)?;
        }
    }
    Ok(())
}

/// The toy medians of one row at pixel height `y`: a thin line from the
/// nominal toy median to each side's, open circles at the three (black,
/// teal, vermilion); a side or nominal plan without a toy-median day has
/// no circle.
fn draw_toy_medians(
    canvas: &Canvas,
    levers: &Levers,
    lever: &Lever,
    name: &DayName,
    y: i32,
    pixel_x: &dyn Fn(f64) -> i32,
) -> Result<(), DrawError> {
    let day = |days: Option<&PlanDays>| days.and_then(|days| days.all()[name.index].day());
    let nominal = day(levers.toys.as_ref().map(|toys| &toys.baseline)).map(pixel_x);
    let sides = [
        (day(lever.improved.toy_days.as_ref()), INK_TEAL),
        (day(lever.worsened.toy_days.as_ref()), VERMILION),
    ];
    for (side, colour) in sides {
        if let (Some(from), Some(to)) = (nominal, side.map(pixel_x)) {
            canvas.draw(&PathElement::new(
                vec![(from, y), (to, y)],
                colour.stroke_width(1),
            ))?;
        }
    }
    for (side, colour) in sides {
        if let Some(at) = side.map(pixel_x) {
            canvas.draw(&Circle::new((at, y), 4, colour.stroke_width(2)))?;
        }
    }
    if let Some(at) = nominal {
        canvas.draw(&Circle::new((at, y), 4, INK.stroke_width(2)))?;
    }
    Ok(())
}

/// The input's name right-aligned beside its row, broken at a dot when long.
fn draw_name(canvas: &Canvas, name: &str, pixel_y: i32) -> Result<(), DrawError> {
    let lines: Vec<&str> = match name
        .char_indices()
        .rfind(|&(i, c)| c == '.' && i <= NAME_LINE)
    {
        Some((at, _)) if name.chars().count() > NAME_LINE => vec![&name[..=at], &name[at + 1..]],
        _ => vec![name],
    };
    let top = pixel_y - 8 * (lines.len() as i32 - 1);
    for (index, line) in lines.iter().enumerate() {
        draw_text(
            canvas,
            line,
            (NAMES as i32 - 8, top + 16 * index as i32),
            INK,
            13,
            (HPos::Right, VPos::Center),
        )?;
    }
    Ok(())
}

/// Where one lever's row is drawn in one panel, in pixels.
struct Row<'r> {
    levers: &'r Levers,
    lever: &'r Lever,
    name: &'r DayName,
    pixel_y: i32,
    /// The nominal day, when the nominal plan reaches one.
    start: Option<i32>,
    /// The left and right edges of the plot.
    edges: (i32, i32),
}

impl Row<'_> {
    /// Where words beside pixel `x` go: to its right in the left half of
    /// the plot, to its left in the right half, so they stay in the panel.
    fn beside(&self, x: i32, gap: i32) -> (i32, HPos) {
        let (left, right) = self.edges;
        if x - left < right - x {
            (x + gap, HPos::Left)
        } else {
            (x - gap, HPos::Right)
        }
    }
}

/// One arrow of a row (improved above the row's centre, worsened below),
/// with the days saved or lost; or the words saying why there is none.
fn draw_side(
    canvas: &Canvas,
    row: &Row,
    improved: bool,
    pixel_x: &dyn Fn(f64) -> i32,
) -> Result<(), DrawError> {
    let Row {
        levers,
        lever,
        name,
        ..
    } = *row;
    let (colour, side, change, offset) = if improved {
        (
            INK_TEAL,
            &lever.improved,
            saved(levers, lever, name.index),
            -6,
        )
    } else {
        (
            VERMILION,
            &lever.worsened,
            lost(levers, lever, name.index),
            6,
        )
    };
    let end = side
        .days
        .as_ref()
        .ok()
        .and_then(|days| days.all()[name.index].day())
        .map(pixel_x);
    let pixel_y = row.pixel_y + offset;
    let text = |words: String, x: i32, anchor: HPos| {
        let style = text_style(12)
            .color(&colour)
            .pos(Pos::new(anchor, VPos::Center));
        canvas.draw(&Text::new(words, (x, pixel_y), style))
    };
    match (row.start, end, &change) {
        (Some(from), Some(to), Change::Days(days)) => {
            draw_arrow(canvas, (from, pixel_y), to, colour)?;
            let sign = match (days.abs() < 0.01, improved) {
                (true, _) => "",
                (false, true) => "−",
                (false, false) => "+",
            };
            // Labels go outward from the arrow's head; a change too small
            // to point anywhere puts saved days left and lost days right.
            let outward = if to == from { !improved } else { to > from };
            let (x, anchor) = if outward {
                (to + 5, HPos::Left)
            } else {
                (to - 5, HPos::Right)
            };
            text(format!("{sign}{}", days_change(days.abs())), x, anchor)
        }
        (_, Some(to), _) => {
            // Reached only on this side: a hollow dot and the words.
            canvas.draw(&Circle::new((to, pixel_y), 5, colour.stroke_width(2)))?;
            let (x, anchor) = row.beside(to, 9);
            text(change.text(), x, anchor)
        }
        (from, None, _) => {
            let (x, anchor) = row.beside(from.unwrap_or(row.edges.0), 9);
            text(change.short_text(), x, anchor)
        }
    }
}
