//! Root finding for increasing functions, shared by every stage that solves for a crossing.

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
/// [`bisect_log`]. None when no bracket exists within 2^±60 of `guess`.
pub fn solve_increasing<E>(
    guess: f64,
    level: f64,
    mut value_at: impl FnMut(f64) -> Result<f64, E>,
) -> Result<Option<f64>, E> {
    let mut low = guess;
    let mut high = guess;
    if value_at(guess)? >= level {
        for _ in 0..60 {
            low /= 2.0;
            if value_at(low)? < level {
                return bisect_log(low, high.min(low * 2.0), level, value_at).map(Some);
            }
        }
    } else {
        for _ in 0..60 {
            high *= 2.0;
            if value_at(high)? >= level {
                return bisect_log(high / 2.0, high, level, value_at).map(Some);
            }
        }
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
