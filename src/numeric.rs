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
/// (at or above it), by bisection in log(x) to [`ROOT_PRECISION`].
pub fn bisect_log<E>(
    mut low: f64,
    mut high: f64,
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<f64, E> {
    while high / low > 1.0 + ROOT_PRECISION {
        let middle = (low * high).sqrt();
        if value_at(middle)? >= level {
            high = middle;
        } else {
            low = middle;
        }
    }
    Ok((low * high).sqrt())
}

/// The relative precision of the roots [`solve_increasing`] and
/// [`bisect_log`] find: far below anything reported, and still a thousand
/// times the rounding of the functions they solve (exact Poisson CLs).
pub const ROOT_PRECISION: f64 = 1e-10;

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
            let root = regula_falsi(below, above, level, ROOT_PRECISION, value_at)?;
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

/// Most Newton steps [`solve_increasing_with_slope`] takes before it hands
/// the search to [`solve_increasing`].
const NEWTON_STEPS: usize = 16;

/// A Newton iterate is a root when the function is within this fraction of
/// the level there and the next step would move the argument by less than
/// this fraction of itself.
const NEWTON_TOLERANCE: f64 = 1e-10;

/// A Newton step below this fraction of the argument is taken as the last
/// one without evaluating where it lands, when the slope agrees with the
/// secant through the last two evaluations to `SECANT_AGREEMENT`: the
/// error left after it is of the order of the step squared (quadratic
/// convergence), about 1e-10 of the argument.
const EXTRAPOLATED_STEP: f64 = 1e-5;

/// How closely the slope must agree with the secant for a final step to be
/// taken unevaluated: a slope that is not the function's (or a function that
/// is not smooth there) shows up as a disagreement.
const SECANT_AGREEMENT: f64 = 1e-2;

/// Each Newton step stays within this factor of the last argument, so a
/// tangent that is nearly flat sends no evaluation to absurd arguments.
const NEWTON_REACH: f64 = 4.0;

/// Where an increasing function of a positive argument reaches `level`,
/// from its value and slope: Newton's method from `guess`, each step kept
/// within a factor `NEWTON_REACH` of the last argument and inside the
/// bracket the evaluations so far have found (bisected when it would leave
/// it). An iterate is returned, moved by its last Newton step, once the
/// function there is within `NEWTON_TOLERANCE` of the level and that step
/// is below the same fraction of the argument: quadratic convergence takes
/// three or four evaluations from a guess within a factor of two where
/// bracketing and regula falsi take eight (Nocedal and Wright, Numerical
/// Optimization, 2nd ed., Springer 2006, thm. 11.2; safeguarding by a
/// bracket: Press et al., Numerical Recipes, 3rd ed., 2007, sec. 9.4). A
/// step below `EXTRAPOLATED_STEP` of the argument whose slope the secant
/// through the last two evaluations confirms is taken without evaluating
/// where it lands.
/// When that has not happened after `NEWTON_STEPS` evaluations (no root,
/// a level out of reach, a jump, or a slope that is not the function's), the
/// search starts again from `guess` as [`solve_increasing`], so the answers
/// where there is no root are exactly those of the search without slopes.
pub fn solve_increasing_with_slope<E>(
    guess: f64,
    level: f64,
    mut value_and_slope: impl FnMut(f64) -> Result<(f64, f64), E>,
) -> Result<Crossing, E> {
    let mut x = guess;
    let (mut below, mut above) = (0.0_f64, f64::INFINITY);
    let mut last: Option<(f64, f64)> = None;
    for _ in 0..NEWTON_STEPS {
        let (value, slope) = value_and_slope(x)?;
        if value == level {
            return Ok(Crossing::At(x));
        }
        if value < level {
            below = below.max(x);
        } else {
            above = above.min(x);
        }
        let step = (level - value) / slope;
        let newton = slope > 0.0 && step.is_finite();
        let converged = (value - level).abs() <= NEWTON_TOLERANCE * level.abs()
            && step.abs() <= NEWTON_TOLERANCE * x;
        let confirmed = last.is_some_and(|(last_x, last_value)| {
            let secant = (value - last_value) / (x - last_x);
            step.abs() <= EXTRAPOLATED_STEP * x && (secant / slope - 1.0).abs() <= SECANT_AGREEMENT
        });
        if newton && (converged || confirmed) {
            return Ok(Crossing::At(x + step));
        }
        last = Some((x, value));
        let mut next = if newton {
            (x + step).clamp(x / NEWTON_REACH, x * NEWTON_REACH)
        } else if value < level {
            x * 2.0
        } else {
            x * 0.5
        };
        if !(next > below && next < above) {
            next = if above.is_finite() && below > 0.0 {
                0.5 * (below + above)
            } else if value < level {
                x * 2.0
            } else {
                x * 0.5
            };
        }
        x = next;
    }
    solve_increasing(guess, level, |x| value_and_slope(x).map(|(value, _)| value))
}

/// sqrt(q) and its slope (dq/dx) / (2 sqrt q), from q and dq/dx: a test
/// statistic's significance, which Newton's method solves for rather than
/// q itself, as it is nearly linear in the signal.
pub fn square_root_with_slope(value: f64, slope: f64) -> (f64, f64) {
    let root = value.sqrt();
    (root, slope / (2.0 * root))
}

/// Above this ratio of the slope across the final bracket to the slope across
/// the first, the function is taken to jump across the level there rather
/// than cross it: a smooth function would need to be a thousand times steeper
/// at its root than on average over a bracket a factor of two wide.
const JUMP_SLOPE_RATIO: f64 = 1e3;

/// Root of an increasing function between `below` = (x, f(x)) with f(x) <
/// `level` and `above` with f(x) >= `level` (a bracket within a factor of two
/// or so), to the relative `precision` asked ([`ROOT_PRECISION`] for
/// exact functions; coarser where the function is only known to a fit's
/// precision), by regula falsi with the
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
    precision: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<Option<f64>, E> {
    let first_slope = (above.1 - below.1) / (above.0 - below.0);
    let (mut low, mut low_value) = (below.0, below.1 - level);
    let (mut high, mut high_value) = (above.0, above.1 - level);
    // The values as evaluated; the ones above are scaled by the modification.
    let (mut low_raw, mut high_raw) = (low_value, high_value);
    let mut kept_low_before = None;
    for _ in 0..200 {
        let tolerance = precision * low;
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
            let found = regula_falsi::<()>(
                (low, function(low)),
                (high, function(high)),
                2.0,
                1e-7,
                |x| {
                    evaluations += 1;
                    Ok(function(x))
                },
            )
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

    /// x^2 = 2 from either side, far or near (root 2^(1/2) = 1.4142135623730951,
    /// by hand): Newton with the slope 2x lands on it to 1e-10 in a few
    /// evaluations.
    #[test]
    fn newton_finds_a_square_root_in_few_evaluations() {
        for guess in [1e-3, 1.0, 1.3, 40.0] {
            let mut evaluations = 0;
            let root = solve_increasing_with_slope::<()>(guess, 2.0, |x| {
                evaluations += 1;
                Ok((x * x, 2.0 * x))
            })
            .unwrap()
            .root()
            .unwrap();
            assert!(
                (root / std::f64::consts::SQRT_2 - 1.0).abs() < 1e-10,
                "from {guess}: {root}"
            );
            let most = if guess == 1.3 { 4 } else { 12 };
            assert!(
                evaluations <= most,
                "from {guess}: {evaluations} evaluations"
            );
        }
    }

    /// Without a root the answers are those of the search without slopes;
    /// a slope that is not the function's (ten times too large, so every
    /// step falls short) still finds the root or hands over, never a
    /// point away from it.
    #[test]
    fn newton_without_a_root_or_with_a_wrong_slope_falls_back() {
        assert_eq!(
            solve_increasing_with_slope::<()>(1.0, 3.0, |_| Ok((0.0, 0.0))).unwrap(),
            Crossing::OutOfReach
        );
        assert_eq!(
            solve_increasing_with_slope::<()>(1.0, 3.0, |_| Ok((5.0, 0.0))).unwrap(),
            Crossing::AtOrigin
        );
        let step = |x: f64| Ok::<(f64, f64), ()>((if x >= 2.0 { 5.0 } else { 0.1 * x }, 0.1));
        assert_eq!(
            solve_increasing_with_slope(1.0, 3.0, step).unwrap(),
            Crossing::NoRoot
        );
        let root = solve_increasing_with_slope::<()>(1.0, 3.0, |x| Ok((x.sqrt(), 5.0 / x.sqrt())))
            .unwrap()
            .root()
            .unwrap();
        assert!((root - 9.0).abs() < 1e-5, "{root}");
    }

    /// A root at the first bracket end itself is exact, and returned as such.
    #[test]
    fn an_exact_root_at_a_bracket_end_is_a_root() {
        let root = solve_increasing::<()>(1.0, 4.0, |x| Ok(x * x)).unwrap();
        assert_eq!(root, Crossing::At(2.0));
    }
}
