//! Toy days solved, not read off the grid: where a toy quantity (the median
//! significance, the fraction of toys reaching a target, the median limit)
//! reaches its level, found by running extra ensembles at exposures inside
//! the grid interval that brackets the crossing (between no live time and the
//! first point when the crossing comes before it), until the bracket is
//! narrower than [`RELATIVE_PRECISION`] of the day or [`ABSOLUTE_PRECISION`].
//!
//! Each extra point draws its pseudo-experiments from streams keyed by its
//! live days ([`solving_index`]), so that adding one changes no other number
//! and a merge of shards, which runs them itself, gives the same bytes as an
//! unsharded run.

use super::point::{ChannelAlone, PointParts, PointRunner};
use super::{ExposurePoint, ProjectionError, ToySource};
use crate::asymptotic::AsimovSignificance;
use std::collections::HashMap;

/// The bracket of a solved day is at most this fraction of the day wide...
pub const RELATIVE_PRECISION: f64 = 0.005;
/// ...or at most this many calendar days, whichever is larger.
pub const ABSOLUTE_PRECISION: f64 = 0.05;
/// A toy day is given as a number only where at least this fraction of the
/// fits of the pseudo-experiments it comes from converged.
pub const MIN_CONVERGED_FRACTION: f64 = 0.9;
/// Extra points one day may take before the crossing inside the bracket
/// reached by then is reported (bisection alone needs about 40 to narrow
/// 10^4 days to 10^-8 of themselves; noisy toy quantities never need more).
const MAX_SOLVING_POINTS: usize = 60;

/// The first exposure index of the points added to solve days: above every
/// grid index ([`MAX_GRID_POINTS`](crate::scenario::limits::MAX_GRID_POINTS))
/// and below the `--at` indices ([`AT_EXPOSURE_INDEX`](super::AT_EXPOSURE_INDEX)).
const SOLVING_EXPOSURE_INDEX: usize = 1 << 30;

/// The exposure index of a point added at `live_days`: keyed by the exposure
/// itself (its bits mixed by splitmix64 into 30 bits), so the same exposure
/// always draws the same pseudo-experiments, whichever day asked for it.
pub fn solving_index(live_days: f64) -> usize {
    let mixed = crate::ensemble::splitmix64(live_days.to_bits());
    SOLVING_EXPOSURE_INDEX | (mixed as usize & (SOLVING_EXPOSURE_INDEX - 1))
}

/// A quantity of the pseudo-experiments at one point that grows with
/// exposure, and the level whose first crossing is a day.
pub(super) struct ToyQuantity<'q> {
    /// What the point must compute for it.
    pub parts: PointParts,
    pub level: f64,
    /// Its value at a point; None where the point has none (no converged fit).
    pub value: &'q dyn Fn(&ExposurePoint) -> Option<f64>,
    /// (converged, run) pseudo-experiments the value at a point comes from.
    pub converged: &'q dyn Fn(&ExposurePoint) -> (usize, usize),
}

/// A toy day as solved.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ToyDay {
    /// The calendar day.
    Day(f64),
    /// The grid ends before the quantity reaches its level.
    NotWithinGrid,
    /// Some point of the bracket has no value (no pseudo-experiments ran, or none converged).
    Unavailable,
    /// Too few fits converged at a point the day comes from: (converged, run) there.
    Withheld { converged: usize, toys: usize },
}

/// One sample of a quantity: calendar and live days, its value, and the
/// (converged, run) pseudo-experiments behind it.
#[derive(Debug, Clone, Copy)]
struct Sample {
    days: f64,
    live_days: f64,
    value: f64,
    converged: (usize, usize),
}

/// Where a solved day may lie before the first grid point with live time.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Origin {
    /// Anywhere from no live time on (a projection from the start of the run).
    NoLiveTime,
    /// Nowhere: the first point is where the data begin (a re-plan, whose
    /// first point is the data taken); a level reached there is reached on
    /// its day.
    FirstPoint,
}

/// Runs the extra points, whole ensembles from `source` (the run's seed),
/// keeping each point computed so that another day asking for the same
/// exposure and parts reuses it.
pub(super) struct DaySolver<'s, 'a, 'l, 'm, T: ToySource<Error = ProjectionError>> {
    runner: &'s PointRunner<'a, 'l, 'm>,
    source: T,
    origin: Origin,
    points: HashMap<(u64, PointParts), ExposurePoint>,
}

impl<'s, 'a, 'l, 'm, T: ToySource<Error = ProjectionError>> DaySolver<'s, 'a, 'l, 'm, T> {
    /// A solver whose extra points take their pseudo-experiments from
    /// `source`: whole ensembles ([`ShardSpec::WHOLE`](super::ShardSpec::WHOLE)) from the run's seed.
    pub fn new(runner: &'s PointRunner<'a, 'l, 'm>, source: T, origin: Origin) -> Self {
        DaySolver {
            runner,
            source,
            origin,
            points: HashMap::new(),
        }
    }

    /// Pseudo-experiments per point and hypothesis of the run.
    pub fn toys(&self) -> usize {
        self.runner.settings().toys
    }

    /// Exposure points added so far that ran pseudo-experiments (points
    /// computing Z_A and global significances alone run none).
    pub fn points_with_toys(&self) -> usize {
        let with_toys = |parts: &PointParts| {
            parts.discovery || parts.limits || parts.calibration || parts.look_elsewhere
        };
        self.points
            .keys()
            .filter(|(_, parts)| with_toys(parts) && self.toys() > 0)
            .count()
    }

    /// The point at calendar day `days` computing `parts`.
    pub fn point(
        &mut self,
        asimov: &mut AsimovSignificance,
        days: f64,
        parts: PointParts,
    ) -> Result<&ExposurePoint, ProjectionError> {
        let live_days = self.runner.likelihood().model().live_time.live_days(days);
        let key = (live_days.to_bits(), parts);
        if !self.points.contains_key(&key) {
            let channels: &mut [ChannelAlone] = &mut [];
            let point = self.runner.point(
                asimov,
                channels,
                solving_index(live_days),
                days,
                parts,
                &mut self.source,
            )?;
            self.points.insert(key, point);
        }
        Ok(&self.points[&key])
    }

    /// The first calendar day where `quantity` reaches its level: bracketed
    /// on the `grid`, then narrowed with extra points.
    pub fn solve(
        &mut self,
        asimov: &mut AsimovSignificance,
        grid: &[ExposurePoint],
        quantity: &ToyQuantity,
    ) -> Result<ToyDay, ProjectionError> {
        let (mut below, mut above) = match bracket(grid, quantity, self.origin) {
            Ok(bracket) => bracket,
            Err(day) => return Ok(day),
        };
        let live_time = self.live_time();
        let calendar_days = |live_days| live_time.calendar_days(live_days);
        let mut probe = Probe::Interpolate;
        let mut width_before_pair = above.days - below.days;
        for _ in 0..MAX_SOLVING_POINTS {
            let width = above.days - below.days;
            if width <= tolerance(above.days) {
                break;
            }
            if probe == Probe::Interpolate {
                width_before_pair = width;
            }
            let guess = probe.days(&below, &above, quantity.level, calendar_days);
            let days = self
                .computed_inside(below.days, above.days, guess, quantity.parts)
                .unwrap_or(guess);
            let point = self.point(asimov, days, quantity.parts)?;
            let Some(value) = (quantity.value)(point) else {
                return Ok(ToyDay::Unavailable);
            };
            let sample = Sample {
                days,
                live_days: point.live_days,
                value,
                converged: (quantity.converged)(point),
            };
            let reached = value >= quantity.level;
            if reached {
                above = sample;
            } else {
                below = sample;
            }
            probe = probe.next(reached, above.days - below.days, width_before_pair);
        }
        Ok(day_between(&below, &above, quantity.level, calendar_days))
    }

    /// The calendar day of a point already computed with `parts` strictly
    /// between `below` and `above`, the nearest to `guess`: its
    /// pseudo-experiments narrow the bracket at no cost (so the 50% day,
    /// solved after the median one, mostly reuses the median's points).
    fn computed_inside(
        &self,
        below: f64,
        above: f64,
        guess: f64,
        parts: PointParts,
    ) -> Option<f64> {
        self.points
            .iter()
            .filter(|((_, computed), point)| {
                *computed == parts && point.days > below && point.days < above
            })
            .map(|(_, point)| point.days)
            .min_by(|a, b| {
                let distance = |days: &f64| (days - guess).abs();
                distance(a).total_cmp(&distance(b)).then(a.total_cmp(b))
            })
    }

    fn live_time(&self) -> &'l crate::model::LiveTime {
        &self.runner.likelihood().model().live_time
    }
}

/// How the next extra point is placed inside the bracket.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Probe {
    /// Where the quantity, linear in live days across the bracket, reaches the level.
    Interpolate,
    /// Just inside the bracket from the end that last moved, so that a good
    /// interpolation closes the bracket with one more point.
    Squeeze { from_above: bool },
    /// The middle of the bracket, when the two above did not halve it.
    Bisect,
}

impl Probe {
    /// The calendar day of the probe; `calendar_days` maps live days to
    /// the first calendar day with that live time.
    fn days(
        self,
        below: &Sample,
        above: &Sample,
        level: f64,
        calendar_days: impl Fn(f64) -> f64,
    ) -> f64 {
        let width = above.days - below.days;
        let inside = |days: f64| days.clamp(below.days + 0.05 * width, above.days - 0.05 * width);
        match self {
            Probe::Interpolate => {
                let live_days = interpolate(below, above, level);
                inside(calendar_days(live_days))
            }
            // Inside the bracket, as it is wider than the tolerance.
            Probe::Squeeze { from_above: true } => above.days - 0.9 * tolerance(above.days),
            Probe::Squeeze { from_above: false } => below.days + 0.9 * tolerance(below.days),
            Probe::Bisect => below.days + 0.5 * width,
        }
    }

    /// The probe after this one, which moved the upper end when `reached`,
    /// leaving a bracket `width` wide; `before_pair` is its width before the
    /// last interpolation. An interpolation is followed by a squeeze; when
    /// the two did not halve the bracket, a bisection comes next.
    fn next(self, reached: bool, width: f64, before_pair: f64) -> Probe {
        match self {
            Probe::Interpolate => Probe::Squeeze {
                from_above: reached,
            },
            Probe::Squeeze { .. } if width > 0.5 * before_pair => Probe::Bisect,
            Probe::Squeeze { .. } | Probe::Bisect => Probe::Interpolate,
        }
    }
}

/// The bracket's width at which a day is solved: [`RELATIVE_PRECISION`] of
/// the day or [`ABSOLUTE_PRECISION`].
fn tolerance(days: f64) -> f64 {
    (RELATIVE_PRECISION * days).max(ABSOLUTE_PRECISION)
}

/// The live days where the quantity, linear in live days between the two
/// samples, reaches `level`.
fn interpolate(below: &Sample, above: &Sample, level: f64) -> f64 {
    let rise = above.value - below.value;
    if rise <= 0.0 {
        return above.live_days;
    }
    let fraction = ((level - below.value) / rise).clamp(0.0, 1.0);
    below.live_days + fraction * (above.live_days - below.live_days)
}

/// The grid points (with live time, after the origin) below and at or above
/// the level where it is first reached; otherwise the day it stands for.
fn bracket(
    grid: &[ExposurePoint],
    quantity: &ToyQuantity,
    origin: Origin,
) -> Result<(Sample, Sample), ToyDay> {
    let mut first = true;
    let mut below = Sample {
        days: 0.0,
        live_days: 0.0,
        value: 0.0,
        converged: (1, 1),
    };
    for point in grid {
        if point.live_days <= 0.0 {
            below.days = point.days;
            continue;
        }
        let value = (quantity.value)(point).ok_or(ToyDay::Unavailable)?;
        let sample = Sample {
            days: point.days,
            live_days: point.live_days,
            value,
            converged: (quantity.converged)(point),
        };
        if value >= quantity.level {
            if first && origin == Origin::FirstPoint {
                return Err(ToyDay::Day(point.days));
            }
            return Ok((below, sample));
        }
        first = false;
        below = sample;
    }
    Err(ToyDay::NotWithinGrid)
}

/// The day where the quantity, linear in live days inside the final bracket,
/// reaches `level`, mapped back to the first calendar day with that live
/// time; withheld when too few fits converged at either end.
fn day_between(
    below: &Sample,
    above: &Sample,
    level: f64,
    calendar_days: impl Fn(f64) -> f64,
) -> ToyDay {
    for (converged, toys) in [below.converged, above.converged] {
        if (converged as f64) < MIN_CONVERGED_FRACTION * toys as f64 {
            return ToyDay::Withheld { converged, toys };
        }
    }
    let days = calendar_days(interpolate(below, above, level));
    ToyDay::Day(days.clamp(below.days, above.days))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample(days: f64, value: f64) -> Sample {
        Sample {
            days,
            live_days: days,
            value,
            converged: (100, 100),
        }
    }

    #[test]
    fn solving_indices_lie_between_the_grid_and_the_at_days() {
        use crate::projection::AT_EXPOSURE_INDEX;
        use crate::scenario::limits::MAX_GRID_POINTS;
        for live_days in [1e-6, 0.1, 1.0, 143.25, 1e7] {
            let index = solving_index(live_days);
            assert!(
                index > MAX_GRID_POINTS && index < AT_EXPOSURE_INDEX,
                "{index}"
            );
        }
        assert_ne!(solving_index(1.0), solving_index(1.0 + 1e-12));
        assert_eq!(solving_index(2.5), solving_index(2.5));
    }

    #[test]
    fn a_linear_quantity_closes_its_bracket_in_two_points() {
        // Z^2 = live days / 10 (statistics-limited, common practice): the
        // interpolated guess is exact, the squeeze closes the bracket.
        let level = 9.0;
        let (mut below, mut above) = (sample(0.0, 0.0), sample(500.0, 50.0));
        let mut probe = Probe::Interpolate;
        let mut points = 0;
        while above.days - below.days > tolerance(above.days) {
            let width = above.days - below.days;
            let days = probe.days(&below, &above, level, |live| live);
            let next = sample(days, days / 10.0);
            let reached = next.value >= level;
            if reached {
                above = next
            } else {
                below = next
            }
            probe = probe.next(reached, above.days - below.days, width);
            points += 1;
        }
        assert!(points <= 2, "{points}");
        match day_between(&below, &above, level, |live| live) {
            ToyDay::Day(days) => assert!((days - 90.0).abs() < 1e-9, "{days}"),
            other => panic!("{other:?}"),
        }
    }

    #[test]
    fn a_day_from_too_few_converged_fits_is_withheld() {
        let below = sample(10.0, 1.0);
        let mut above = sample(10.04, 10.0);
        above.converged = (89, 100);
        assert_eq!(
            day_between(&below, &above, 5.0, |live| live),
            ToyDay::Withheld {
                converged: 89,
                toys: 100
            }
        );
    }
}
