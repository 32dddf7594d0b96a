//! What a figure has drawn where, in pixels of its canvas: the boxes of its
//! title lines, legends and labels, and the curves, bands and markers they
//! must stay clear of. Kept while a figure is drawn (so labels can be placed
//! where nothing is yet, [`free_text_box`], [`Layout::covered`]) and, inside [`recording`],
//! returned beside the SVG so that tests check the layout from what was drawn.
//!
//! Text extents are estimated, not measured (the SVG names a font, it does not
//! embed one): [`text_box`] takes each character as [`CHARACTER_WIDTH`] of the
//! font size wide, on the wide side of the shipped font's average advance
//! (about 0.55 em for mixed text), and a line as tall as the font size.

use std::cell::RefCell;

/// Estimated width of one character, as a share of the font size.
pub const CHARACTER_WIDTH: f64 = 0.6;

/// A rectangle in canvas pixels: left, top, right, bottom.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PixelBox {
    pub left: f64,
    pub top: f64,
    pub right: f64,
    pub bottom: f64,
}

impl PixelBox {
    /// Whether the two boxes share more than their edges.
    pub fn overlaps(&self, other: &PixelBox) -> bool {
        self.left < other.right
            && other.left < self.right
            && self.top < other.bottom
            && other.top < self.bottom
    }

    /// Whether the segment from `a` to `b` passes through the box.
    pub fn meets_segment(&self, a: (f64, f64), b: (f64, f64)) -> bool {
        self.clip_segment(a, b).is_some()
    }

    /// The part of the segment from `a` to `b` inside the box, if any,
    /// clipped against its four edges (Liang and Barsky, Computer Vision,
    /// Graphics and Image Processing 4 (1984) 308).
    pub fn clip_segment(&self, a: (f64, f64), b: (f64, f64)) -> Option<[(f64, f64); 2]> {
        let (dx, dy) = (b.0 - a.0, b.1 - a.1);
        let (mut enter, mut leave) = (0.0_f64, 1.0_f64);
        for (p, q) in [
            (-dx, a.0 - self.left),
            (dx, self.right - a.0),
            (-dy, a.1 - self.top),
            (dy, self.bottom - a.1),
        ] {
            if p == 0.0 {
                if q < 0.0 {
                    return None;
                }
            } else if p < 0.0 {
                enter = enter.max(q / p);
            } else {
                leave = leave.min(q / p);
            }
        }
        let at = |t: f64| (a.0 + t * dx, a.1 + t * dy);
        (enter <= leave).then(|| [at(enter), at(leave)])
    }

    /// Whether any segment of `path` passes through the box.
    pub fn meets_path(&self, path: &[(f64, f64)]) -> bool {
        match path {
            [point] => self.meets_segment(*point, *point),
            _ => path
                .windows(2)
                .any(|pair| self.meets_segment(pair[0], pair[1])),
        }
    }

    /// Whether the box shares a point with the filled polygon `outline`
    /// (closed from its last point to its first): an edge passes through
    /// the box, or the box lies inside the polygon (its centre inside by the
    /// even-odd rule of crossings, Shimrat, CACM 5 (1962) 434).
    pub fn meets_polygon(&self, outline: &[(f64, f64)]) -> bool {
        if outline.is_empty() {
            return false;
        }
        let mut closed = outline.to_vec();
        closed.push(outline[0]);
        if self.meets_path(&closed) {
            return true;
        }
        let centre = (
            0.5 * (self.left + self.right),
            0.5 * (self.top + self.bottom),
        );
        let crossings = closed
            .windows(2)
            .filter(|edge| {
                let ((x0, y0), (x1, y1)) = (edge[0], edge[1]);
                (y0 > centre.1) != (y1 > centre.1)
                    && centre.0 < x0 + (centre.1 - y0) * (x1 - x0) / (y1 - y0)
            })
            .count();
        crossings % 2 == 1
    }

    /// The part of the box inside `other`, if they overlap.
    pub fn intersection(&self, other: &PixelBox) -> Option<PixelBox> {
        self.overlaps(other).then(|| PixelBox {
            left: self.left.max(other.left),
            top: self.top.max(other.top),
            right: self.right.min(other.right),
            bottom: self.bottom.min(other.bottom),
        })
    }

    /// The box grown by `margin` pixels on every side.
    pub fn grown(&self, margin: f64) -> PixelBox {
        PixelBox {
            left: self.left - margin,
            top: self.top - margin,
            right: self.right + margin,
            bottom: self.bottom + margin,
        }
    }
}

/// `path` clipped to `plot`: the pieces of it that are drawn, each a path.
pub fn clip_path(path: &[(f64, f64)], plot: &PixelBox) -> Vec<Vec<(f64, f64)>> {
    let mut pieces: Vec<Vec<(f64, f64)>> = Vec::new();
    if let [point] = path {
        if plot.meets_segment(*point, *point) {
            pieces.push(vec![*point]);
        }
        return pieces;
    }
    for pair in path.windows(2) {
        let Some([from, to]) = plot.clip_segment(pair[0], pair[1]) else {
            continue;
        };
        match pieces.last_mut() {
            Some(piece) if piece.last() == Some(&from) => piece.push(to),
            _ => pieces.push(vec![from, to]),
        }
    }
    pieces
}

/// How a text is anchored at its position.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Anchor {
    Start,
    Middle,
    End,
}

/// The estimated box of one line of `text` in a font of `size` pixels, whose
/// anchor point is `position`: horizontally as `anchor` says, vertically at
/// the top when `vertical` is 0, the middle at 0.5, the bottom at 1.
pub fn text_box(
    text: &str,
    size: u32,
    position: (i32, i32),
    anchor: Anchor,
    vertical: f64,
) -> PixelBox {
    let width = text_width(text, size);
    let height = f64::from(size);
    let x = f64::from(position.0);
    let left = match anchor {
        Anchor::Start => x,
        Anchor::Middle => x - width / 2.0,
        Anchor::End => x - width,
    };
    let top = f64::from(position.1) - vertical * height;
    PixelBox {
        left,
        top,
        right: left + width,
        bottom: top + height,
    }
}

/// The estimated width of one line of `text` in a font of `size` pixels.
pub fn text_width(text: &str, size: u32) -> f64 {
    text.chars().count() as f64 * f64::from(size) * CHARACTER_WIDTH
}

/// What a figure drew where.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Layout {
    /// Width and height of the canvas.
    pub canvas: (u32, u32),
    /// Every title or caption line.
    pub titles: Vec<PixelBox>,
    /// Every legend.
    pub legends: Vec<PixelBox>,
    /// Every label and footnote line, with its text.
    pub texts: Vec<(String, PixelBox)>,
    /// Every curve, as the paths of its points inside the plot it is drawn
    /// on (a curve leaving the plot is cut there, as drawn).
    pub curves: Vec<Vec<(f64, f64)>>,
    /// Every band or shaded stretch, as its bounding box.
    pub areas: Vec<PixelBox>,
    /// Every band of quantiles, as its outline and the plot it is drawn on.
    pub bands: Vec<Band>,
    /// Every chart: its plot and the range of its x axis.
    pub charts: Vec<ChartBox>,
    /// Every leader line from a marker to a label placed away from it.
    pub leaders: Vec<Leader>,
    /// Every marker, as its bounding box.
    pub markers: Vec<PixelBox>,
}

/// A leader line from a marker to its label: its two ends.
pub type Leader = [(f64, f64); 2];

/// A filled band as drawn: its outline, clipped to `plot`.
#[derive(Debug, Clone, PartialEq)]
pub struct Band {
    pub outline: Vec<(f64, f64)>,
    pub plot: PixelBox,
}

impl Band {
    /// Whether `text` covers part of the band inside its plot.
    pub fn meets(&self, text: &PixelBox) -> bool {
        text.intersection(&self.plot)
            .is_some_and(|inside| inside.meets_polygon(&self.outline))
    }
}

/// A chart as drawn: its plot in canvas pixels and its x axis range in the
/// chart's own unit (days, a position, a bin width).
#[derive(Debug, Clone, PartialEq)]
pub struct ChartBox {
    pub plot: PixelBox,
    pub x_range: (f64, f64),
}

thread_local! {
    /// The layout of the figure being drawn on this thread.
    static DRAWING: RefCell<Option<Layout>> = const { RefCell::new(None) };
    /// The layouts of finished figures, while [`recording`].
    static FINISHED: RefCell<Option<Vec<Layout>>> = const { RefCell::new(None) };
}

/// Starts the layout of a figure of `canvas` pixels.
pub(crate) fn begin(canvas: (u32, u32)) {
    DRAWING.with(|drawing| {
        *drawing.borrow_mut() = Some(Layout {
            canvas,
            ..Layout::default()
        });
    });
}

/// Ends the figure being drawn, keeping its layout while [`recording`].
pub(crate) fn end() {
    let layout = DRAWING.with(|drawing| drawing.borrow_mut().take());
    FINISHED.with(|finished| {
        if let (Some(finished), Some(layout)) = (finished.borrow_mut().as_mut(), layout) {
            finished.push(layout);
        }
    });
}

/// Adds to the layout of the figure being drawn, if any.
pub(crate) fn note(add: impl FnOnce(&mut Layout)) {
    DRAWING.with(|drawing| {
        if let Some(layout) = drawing.borrow_mut().as_mut() {
            add(layout);
        }
    });
}

/// Runs `look` on the layout of the figure being drawn, if any.
pub(crate) fn with_drawing<T>(look: impl FnOnce(Option<&Layout>) -> T) -> T {
    DRAWING.with(|drawing| look(drawing.borrow().as_ref()))
}

/// The first of `candidates` that covers nothing drawn so far (no text,
/// title, legend, marker, curve, band or leader line), else the first one.
pub(crate) fn free_text_box(candidates: &[PixelBox]) -> usize {
    with_drawing(|drawn| {
        drawn
            .and_then(|drawn| {
                candidates
                    .iter()
                    .position(|candidate| !drawn.covered(candidate))
            })
            .unwrap_or(0)
    })
}

impl Layout {
    /// Whether `text` would cover a text, title, legend, marker, curve,
    /// band or leader line of the layout.
    pub fn covered(&self, text: &PixelBox) -> bool {
        self.texts
            .iter()
            .map(|(_, drawn)| drawn)
            .chain(&self.titles)
            .chain(&self.legends)
            .chain(&self.markers)
            .any(|drawn| drawn.overlaps(text))
            || self.curves.iter().any(|curve| text.meets_path(curve))
            || self.bands.iter().any(|band| band.meets(text))
            || self
                .leaders
                .iter()
                .any(|[from, to]| text.meets_segment(*from, *to))
    }

    /// Whether a leader line from `from` to `to` would cross a text, title
    /// or legend of the layout.
    pub fn blocks_leader(&self, from: (f64, f64), to: (f64, f64)) -> bool {
        self.texts
            .iter()
            .map(|(_, drawn)| drawn)
            .chain(&self.titles)
            .chain(&self.legends)
            .any(|drawn| drawn.meets_segment(from, to))
    }
}

#[cfg(test)]
/// Runs `render` and returns its result with the layout of every figure it
/// drew on this thread, in order.
pub fn recording<T>(render: impl FnOnce() -> T) -> (T, Vec<Layout>) {
    FINISHED.with(|finished| *finished.borrow_mut() = Some(Vec::new()));
    let result = render();
    let layouts = FINISHED.with(|finished| finished.borrow_mut().take().unwrap_or_default());
    (result, layouts)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boxes_and_segments_meet_only_where_they_cross() {
        let square = PixelBox {
            left: 0.0,
            top: 0.0,
            right: 10.0,
            bottom: 10.0,
        };
        assert!(square.meets_segment((-5.0, 5.0), (15.0, 5.0)));
        assert!(square.meets_path(&[(-5.0, -5.0), (5.0, 5.0), (20.0, 20.0)]));
        assert!(!square.meets_segment((-5.0, 12.0), (15.0, 12.0)));
        assert!(!square.meets_segment((11.0, -20.0), (30.0, 5.0)));
        let beside = PixelBox {
            left: 10.0,
            ..square
        };
        assert!(!square.overlaps(&PixelBox {
            right: 20.0,
            ..beside
        }));
        assert!(square.overlaps(&PixelBox {
            left: 9.0,
            right: 20.0,
            ..square
        }));
    }

    /// A band is its filled outline: a label inside it meets it without
    /// touching an edge, one beside its slanted edge does not, though it
    /// lies inside the band's bounding box.
    #[test]
    fn boxes_meet_a_band_inside_its_outline_only() {
        let triangle = [(0.0, 0.0), (100.0, 0.0), (0.0, 100.0)];
        let label = |left: f64, top: f64| PixelBox {
            left,
            top,
            right: left + 10.0,
            bottom: top + 10.0,
        };
        assert!(label(10.0, 10.0).meets_polygon(&triangle));
        assert!(label(45.0, 45.0).meets_polygon(&triangle));
        assert!(!label(70.0, 70.0).meets_polygon(&triangle));
        assert!(!label(120.0, 10.0).meets_polygon(&triangle));
        let pieces = clip_path(
            &[(-50.0, 5.0), (50.0, 5.0), (50.0, 200.0)],
            &label(0.0, 0.0).grown(90.0),
        );
        assert_eq!(pieces, vec![vec![(-50.0, 5.0), (50.0, 5.0), (50.0, 100.0)]]);
    }

    #[test]
    fn text_boxes_follow_their_anchor() {
        let text = text_box("3σ: 516 d", 20, (100, 50), Anchor::End, 0.0);
        assert_eq!(text.right, 100.0);
        assert_eq!(text.left, 100.0 - 9.0 * 12.0);
        assert_eq!((text.top, text.bottom), (50.0, 70.0));
    }
}
