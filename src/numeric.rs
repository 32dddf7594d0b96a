//! Root finding for increasing functions, shared by every stage that solves for a crossing,
//! and round numbers.

/// `mantissa × 10^decade` for a mantissa such as 1, 2.5 or 5. Negative
/// decades divide by 10^-decade, which is exact up to 10^22, so that the
/// result is the double nearest the decimal (2.5e-1 reads back as 0.25);
/// 10^-1 itself is not exact.
pub fn times_power_of_ten(mantissa: f64, decade: i32) -> f64 {
    let power = 10f64.powi(decade.abs());
    if decade < 0 {
        mantissa / power
    } else {
        mantissa * power
    }
}

/// Root of an increasing function between `low` (below `level`) and `high`
/// (at or above it), by bisection in log(x) to a relative precision of 1e-7.
pub fn bisect_log<E>(
    mut low: f64,
    mut high: f64,
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<f64, E> {
    while high / low > 1.0 + 1e-7 {
        let middle = (low * high).sqrt();
        if value_at(middle)? >= level {
            high = middle;
        } else {
            low = middle;
        }
    }
    Ok((low * high).sqrt())
}

/// What a search for the argument where an increasing function reaches a
/// level found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Crossing {
    /// The function crosses the level here.
    At(f64),
    /// The function stays below the level up to 2^60 times the guess: the
    /// level is out of reach (an unbounded upper limit, say).
    OutOfReach,
    /// The function is at or above the level down to 2^-60 times the guess.
    AtOrigin,
    /// A bracket was found but holds no crossing: the function jumps across
    /// the level there, or the refinement did not converge.
    NoRoot,
}

impl Crossing {
    /// The root, when there is one.
    pub fn root(self) -> Option<f64> {
        match self {
            Crossing::At(x) => Some(x),
            _ => None,
        }
    }
}

/// Where an increasing function of a positive argument reaches `level`: the
/// bracket is found by doubling or halving from `guess`, then refined by
/// [`regula_falsi`]. A bracket end is never returned as a root: without a
/// bracket the level is out of reach (or reached at the origin), and a
/// bracket holding a jump across `level` gives no root.
pub fn solve_increasing<E>(
    guess: f64,
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<Crossing, E> {
    let mut previous = (guess, value_at(guess)?);
    let step = if previous.1 >= level { 0.5 } else { 2.0 };
    for _ in 0..60 {
        let x = previous.0 * step;
        let next = (x, value_at(x)?);
        if (next.1 >= level) != (previous.1 >= level) {
            let (below, above) = if step > 1.0 {
                (previous, next)
            } else {
                (next, previous)
            };
            let root = regula_falsi(below, above, level, value_at)?;
            return Ok(root.map_or(Crossing::NoRoot, Crossing::At));
        }
        previous = next;
    }
    Ok(if step > 1.0 {
        Crossing::OutOfReach
    } else {
        Crossing::AtOrigin
    })
}

/// Above this ratio of the slope across the final bracket to the slope across
/// the first, the function is taken to jump across the level there rather
/// than cross it: a smooth function would need to be a thousand times steeper
/// at its root than on average over a bracket a factor of two wide.
const JUMP_SLOPE_RATIO: f64 = 1e3;

/// Root of an increasing function between `below` = (x, f(x)) with f(x) <
/// `level` and `above` with f(x) >= `level` (a bracket within a factor of two
/// or so), to a relative precision of 1e-7, by regula falsi with the
/// modification of Anderson and Björck (BIT 13 (1973) 253): when the same end
/// of the bracket is kept twice, its distance from `level` is scaled down by
/// m = 1 - f(new)/f(replaced) (by 1/2 when m <= 0), so both ends close in and
/// the convergence is superlinear, a handful of evaluations where bisection
/// takes two dozen.
///
/// A root is only returned where the function crosses `level`: None when the
/// final bracket holds a jump (its slope more than `JUMP_SLOPE_RATIO` times
/// the first bracket's; a failed evaluation or a step in the function would
/// otherwise come back as a root next to a bracket end) or when the
/// iterations run out.
pub fn regula_falsi<E>(
    below: (f64, f64),
    above: (f64, f64),
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<Option<f64>, E> {
    let first_slope = (above.1 - below.1) / (above.0 - below.0);
    let (mut low, mut low_value) = (below.0, below.1 - level);
    let (mut high, mut high_value) = (above.0, above.1 - level);
    // The values as evaluated; the ones above are scaled by the modification.
    let (mut low_raw, mut high_raw) = (low_value, high_value);
    let mut kept_low_before = None;
    for _ in 0..200 {
        let tolerance = 1e-7 * low;
        if high_raw == 0.0 {
            return Ok(Some(high));
        }
        if high - low <= tolerance {
            let slope = (high_raw - low_raw) / (high - low);
            let crosses = slope <= JUMP_SLOPE_RATIO * first_slope;
            return Ok(crosses.then_some(0.5 * (low + high)));
        }
        let mut point = high - high_value * (high - low) / (high_value - low_value);
        if !(point > low && point < high) {
            point = 0.5 * (low + high);
        }
        // At least half the tolerance inside the bracket: once the estimate is
        // that close to the root, the next evaluation falls on the other side
        // of it and the bracket is closed.
        point = point.clamp(low + 0.5 * tolerance, high - 0.5 * tolerance);
        let value = value_at(point)? - level;
        let keeps_low = value >= 0.0;
        let scale = |replaced: f64| {
            let m = 1.0 - value / replaced;
            if m > 0.0 { m } else { 0.5 }
        };
        if keeps_low {
            if kept_low_before == Some(true) {
                low_value *= scale(high_value);
            }
            (high, high_value, high_raw) = (point, value, value);
        } else {
            if kept_low_before == Some(false) {
                high_value *= scale(low_value);
            }
            (low, low_value, low_raw) = (point, value, value);
        }
        kept_low_before = Some(keeps_low);
    }
    Ok(None)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bisection_finds_a_square_root() {
        let root = bisect_log::<()>(1.0, 100.0, 3.0, |x| Ok(x.sqrt())).unwrap();
        assert!((root - 9.0).abs() < 1e-5);
    }

    /// Roots of x^8 = 2 (at 2^(1/8) = 1.0905077326652577, by hand) and of
    /// x - 1e-3 = 0, found to the promised relative precision in far fewer
    /// evaluations than bisection's 23 for a factor-two bracket.
    #[test]
    fn regula_falsi_converges_fast_and_to_the_tolerance() {
        for (low, high, function, root) in [
            (
                1.0,
                2.0,
                (|x: f64| x.powi(8)) as fn(f64) -> f64,
                1.090_507_732_665_257_7,
            ),
            (5e-4, 1e-3 * 1.5, |x: f64| x - 1e-3 + 2.0, 1e-3),
        ] {
            let mut evaluations = 0;
            let found =
                regula_falsi::<()>((low, function(low)), (high, function(high)), 2.0, |x| {
                    evaluations += 1;
                    Ok(function(x))
                })
                .unwrap()
                .unwrap();
            assert!((found / root - 1.0).abs() < 1e-7, "{found} vs {root}");
            assert!(evaluations <= 8, "{evaluations} evaluations");
        }
    }

    #[test]
    fn bracketing_works_from_either_side() {
        for guess in [1e-3, 1.0, 1e4] {
            let root = solve_increasing::<()>(guess, 3.0, |x| Ok(x.sqrt()))
                .unwrap()
                .root()
                .unwrap();
            assert!((root - 9.0).abs() < 1e-5, "from {guess}: {root}");
        }
        assert_eq!(
            solve_increasing::<()>(1.0, 3.0, |_| Ok(0.0)).unwrap(),
            Crossing::OutOfReach
        );
        assert_eq!(
            solve_increasing::<()>(1.0, 3.0, |_| Ok(5.0)).unwrap(),
            Crossing::AtOrigin
        );
    }

    /// A step function jumping across the level at 2, the end of the first
    /// bracket [1, 2] from the guess 1, and one jumping at 1.37 inside it: no
    /// root, not 1.9999999 or 1.3699999 (the bracket end or the jump).
    #[test]
    fn a_jump_across_the_level_is_no_root() {
        for jump in [2.0, 1.37] {
            let step = |x: f64| Ok::<f64, ()>(if x >= jump { 5.0 } else { 0.1 * x });
            assert_eq!(
                solve_increasing(1.0, 3.0, step).unwrap(),
                Crossing::NoRoot,
                "jump at {jump}"
            );
        }
        // The same jump on a steep but continuous ramp (0.1 x below 2, rising
        // by 5 over 0.01 above): a root, at 2 + 0.01 (3 - 0.2)/5 = 2.0056
        // (closed form).
        let ramp = |x: f64| Ok::<f64, ()>(0.1 * x.min(2.0) + 500.0 * (x - 2.0).max(0.0));
        let root = solve_increasing(1.0, 3.0, ramp).unwrap().root().unwrap();
        assert!((root - 2.0056).abs() < 1e-6, "{root}");
    }

    /// A root at the first bracket end itself is exact, and returned as such.
    #[test]
    fn an_exact_root_at_a_bracket_end_is_a_root() {
        let root = solve_increasing::<()>(1.0, 4.0, |x| Ok(x * x)).unwrap();
        assert_eq!(root, Crossing::At(2.0));
    }
}
