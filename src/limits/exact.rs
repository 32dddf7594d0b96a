//! Exact CLs for a single counting window, from sums of Poisson probabilities.

use crate::numeric::solve_increasing;
use statrs::function::gamma::gamma_ur;

/// P(n <= observed | mean) = Q(observed + 1, mean), the regularised upper
/// incomplete gamma function (Abramowitz and Stegun, Handbook of Mathematical
/// Functions, 6.5.2 and 26.4.21).
pub fn poisson_cdf(observed: f64, mean: f64) -> f64 {
    if mean <= 0.0 {
        1.0
    } else {
        gamma_ur(observed + 1.0, mean)
    }
}

/// CLs(mu) = P(n <= n_obs | mu s + b) / P(n <= n_obs | b) for a single count
/// with expected signal `signal` at mu = 1 and background `background` (Read,
/// J. Phys. G 28 (2002) 2693; Junk, Nucl. Instrum. Meth. A 434 (1999) 435).
pub fn poisson_cls(observed: f64, signal: f64, background: f64, mu: f64) -> f64 {
    poisson_cdf(observed, mu * signal + background) / poisson_cdf(observed, background)
}

/// The upper limit on mu at CLs = alpha for one observed count. With no
/// background it is the classical Poisson upper limit, e.g. 3.00 signal events
/// for n = 0 at 95% CL (Particle Data Group, statistics review, table of
/// Poisson limits).
pub fn poisson_upper_limit(observed: f64, signal: f64, background: f64, alpha: f64) -> f64 {
    // 1 - CLs increases with mu from 0; solve 1 - CLs = 1 - alpha.
    let guess = (observed + 3.0) / signal;
    solve_increasing::<()>(guess, 1.0 - alpha, |mu| {
        Ok(1.0 - poisson_cls(observed, signal, background, mu))
    })
    .ok()
    .flatten()
    .unwrap_or(f64::INFINITY)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn classical_poisson_limits_without_background() {
        // 95% CL upper limits on the mean for n = 0..4 observed and no background:
        // 3.00, 4.74, 6.30, 7.75, 9.15 (Particle Data Group, statistics review,
        // table of Poisson limits; equal to half the chi2_{2(n+1)} 95% quantile).
        for (n, published) in [3.00, 4.74, 6.30, 7.75, 9.15].into_iter().enumerate() {
            let limit = poisson_upper_limit(n as f64, 1.0, 1e-12, 0.05);
            assert!((limit - published).abs() < 0.005, "n = {n}: {limit}");
        }
    }

    #[test]
    fn background_lowers_the_limit_but_cls_keeps_it_above_zero_signal() {
        // With b = 3 and n = 0, CLs = exp(-mu s): the limit stays 3.00 whatever b
        // (a known property of CLs for n = 0; Read 2002).
        let limit = poisson_upper_limit(0.0, 1.0, 3.0, 0.05);
        assert!((limit - 2.9957).abs() < 1e-3, "{limit}");
        assert!(
            poisson_upper_limit(5.0, 1.0, 3.0, 0.05) < poisson_upper_limit(5.0, 1.0, 0.0, 0.05)
        );
    }

    #[test]
    fn poisson_cdf_matches_direct_sum() {
        // P(n <= 2 | 1.5) = e^-1.5 (1 + 1.5 + 1.125) (definition).
        let direct = (-1.5f64).exp() * (1.0 + 1.5 + 1.125);
        assert!((poisson_cdf(2.0, 1.5) - direct).abs() < 1e-14);
    }
}
