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

/// Where an increasing function of a positive argument reaches `level`: the
/// bracket is found by doubling or halving from `guess`, then refined by
/// [`regula_falsi`]. None when no bracket exists within 2^±60 of `guess`.
pub fn solve_increasing<E>(
    guess: f64,
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<Option<f64>, E> {
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
            return regula_falsi(below, above, level, value_at).map(Some);
        }
        previous = next;
    }
    Ok(None)
}

/// Root of an increasing function between `below` = (x, f(x)) with f(x) <
/// `level` and `above` with f(x) >= `level` (a bracket within a factor of two
/// or so), to a relative precision of 1e-7, by regula falsi with the
/// modification of Anderson and Björck (BIT 13 (1973) 253): when the same end
/// of the bracket is kept twice, its distance from `level` is scaled down by
/// m = 1 - f(new)/f(replaced) (by 1/2 when m <= 0), so both ends close in and
/// the convergence is superlinear, a handful of evaluations where bisection
/// takes two dozen.
pub fn regula_falsi<E>(
    below: (f64, f64),
    above: (f64, f64),
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<f64, E> {
    let (mut low, mut low_value) = (below.0, below.1 - level);
    let (mut high, mut high_value) = (above.0, above.1 - level);
    let mut kept_low_before = None;
    for _ in 0..200 {
        let tolerance = 1e-7 * low;
        if high - low <= tolerance {
            break;
        }
        if high_value == 0.0 {
            return Ok(high);
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
            (high, high_value) = (point, value);
        } else {
            if kept_low_before == Some(false) {
                high_value *= scale(low_value);
            }
            (low, low_value) = (point, value);
        }
        kept_low_before = Some(keeps_low);
    }
    Ok(0.5 * (low + high))
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
                .unwrap();
            assert!((root - 9.0).abs() < 1e-5, "from {guess}: {root}");
        }
        assert_eq!(solve_increasing::<()>(1.0, 3.0, |_| Ok(0.0)).unwrap(), None);
    }
}
