//! Error bars of an observed count: the exact central Poisson interval for
//! small counts, ±√N for large ones.

use statrs::distribution::{ChiSquared, ContinuousCDF, Normal};

/// From this count on, error bars are ±√N instead of the exact interval.
///
/// For large n the exact central 68.27% interval is about
/// [n - √n + 1/3, n + √n + 1] (its chi-square quantiles expanded to first order,
/// Wilson-Hilferty), so it differs from ±√N by about one count: under 0.1% of the
/// count from 1000 on, invisible on a plot scaled to the data, and ±√N is what
/// readers expect there (common practice). Below, the exact interval keeps the
/// bars of empty and nearly empty bins honest.
pub const EXACT_INTERVAL_BELOW: u64 = 1000;

/// The confidence level of one standard deviation of a normal distribution:
/// P(|Z| < 1) = 0.6827 (Particle Data Group, Review of Particle Physics,
/// statistics chapter).
pub fn one_sigma_confidence() -> f64 {
    let normal = Normal::standard();
    normal.cdf(1.0) - normal.cdf(-1.0)
}

/// The exact central confidence interval for the mean of a Poisson count `n`
/// at confidence level `confidence` = 1 - α:
///
///   lower = ½ χ²_{2n}(α/2)  (0 for n = 0),   upper = ½ χ²_{2(n+1)}(1 - α/2),
///
/// with χ²_k(p) the p-quantile of the chi-square distribution with k degrees of
/// freedom (Garwood, Biometrika 28 (1936) 437). Each bound leaves α/2 of
/// Poisson probability beyond n: P(N ≥ n | lower) = P(N ≤ n | upper) = α/2.
pub fn garwood_interval(n: u64, confidence: f64) -> (f64, f64) {
    let tail = 0.5 * (1.0 - confidence);
    let half_quantile = |degrees: u64, p: f64| {
        let chi_square =
            ChiSquared::new(degrees as f64).expect("degrees of freedom are positive and finite");
        0.5 * chi_square.inverse_cdf(p)
    };
    let lower = if n == 0 {
        0.0
    } else {
        half_quantile(2 * n, tail)
    };
    (lower, half_quantile(2 * (n + 1), 1.0 - tail))
}

/// The one-standard-deviation error bar of a count, as distances (below, above)
/// from `n`: the exact central 68.27% interval of [`garwood_interval`] below
/// [`EXACT_INTERVAL_BELOW`] counts, ±√N from there on.
pub fn error_bar(n: u64) -> (f64, f64) {
    let count = n as f64;
    if n < EXACT_INTERVAL_BELOW {
        let (lower, upper) = garwood_interval(n, one_sigma_confidence());
        (count - lower, upper - count)
    } else {
        (count.sqrt(), count.sqrt())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{DiscreteCDF, Poisson};

    /// n = 0 at 68.27%: [0, 1.841] (Garwood, Biometrika 28 (1936) 437; the
    /// upper bound is -ln(0.158655) in closed form).
    #[test]
    fn no_counts_give_zero_to_1_841() {
        let (lower, upper) = garwood_interval(0, one_sigma_confidence());
        assert_eq!(lower, 0.0);
        assert!((upper - 1.841).abs() < 5e-4, "{upper}");
        let closed_form = -(0.5 * (1.0 - one_sigma_confidence())).ln();
        assert!(
            (upper - closed_form).abs() < 1e-9,
            "{upper} vs {closed_form}"
        );
    }

    /// Table values of the central 68.27% interval, n = 1: [0.173, 3.300],
    /// n = 2: [0.708, 4.638] (from memory; the next test recomputes them from
    /// the defining Poisson tail probabilities).
    #[test]
    fn small_counts_match_table_values() {
        let confidence = one_sigma_confidence();
        for (n, table) in [(1, (0.173, 3.300)), (2, (0.708, 4.638))] {
            let (lower, upper) = garwood_interval(n, confidence);
            assert!((lower - table.0).abs() < 5e-4, "n = {n}: lower {lower}");
            assert!((upper - table.1).abs() < 5e-4, "n = {n}: upper {upper}");
        }
    }

    /// Each bound leaves α/2 of Poisson probability beyond n (the definition,
    /// Garwood 1936), with the Poisson distribution function of statrs
    /// (reference library): P(N ≥ n | lower) = P(N ≤ n | upper) = α/2.
    #[test]
    fn bounds_leave_half_alpha_in_each_poisson_tail() {
        for confidence in [one_sigma_confidence(), 0.9, 0.95] {
            let tail = 0.5 * (1.0 - confidence);
            for n in [1, 2, 3, 5, 10, 30, 100, 500] {
                let (lower, upper) = garwood_interval(n, confidence);
                let at_least_n = 1.0 - Poisson::new(lower).unwrap().cdf(n - 1);
                let at_most_n = Poisson::new(upper).unwrap().cdf(n);
                assert!((at_least_n - tail).abs() < 1e-9, "n = {n}: {at_least_n}");
                assert!((at_most_n - tail).abs() < 1e-9, "n = {n}: {at_most_n}");
            }
        }
    }

    /// The upper bound at confidence 1 - 2α is the classical one-sided upper
    /// limit at 1 - α. Particle Data Group statistics review, table of Poisson
    /// upper limits with no background, n = 0..10, 90% and 95% CL.
    #[test]
    fn upper_bounds_match_published_poisson_upper_limits() {
        let published_90 = [
            2.30, 3.89, 5.32, 6.68, 7.99, 9.27, 10.53, 11.77, 12.99, 14.21, 15.41,
        ];
        let published_95 = [
            3.00, 4.74, 6.30, 7.75, 9.15, 10.51, 11.84, 13.15, 14.43, 15.71, 16.96,
        ];
        for (n, (limit_90, limit_95)) in published_90.iter().zip(published_95).enumerate() {
            let (_, upper_90) = garwood_interval(n as u64, 0.8);
            let (_, upper_95) = garwood_interval(n as u64, 0.9);
            assert!((upper_90 - limit_90).abs() < 0.005, "n = {n}: {upper_90}");
            assert!((upper_95 - limit_95).abs() < 0.005, "n = {n}: {upper_95}");
        }
    }

    /// At the switch the exact bars lie within about one count of ±√N (see
    /// [`EXACT_INTERVAL_BELOW`]), so the change of method does not show.
    #[test]
    fn exact_bars_meet_square_root_bars_at_the_switch() {
        let n = EXACT_INTERVAL_BELOW - 1;
        let (below, above) = error_bar(n);
        let root = (n as f64).sqrt();
        assert!((below - root).abs() < 1.0 && (above - root).abs() < 1.2);
        assert!(above > below, "the exact interval leans upward");
        assert_eq!(
            error_bar(EXACT_INTERVAL_BELOW),
            (1000f64.sqrt(), 1000f64.sqrt())
        );
    }
}
