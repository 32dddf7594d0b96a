//! The CLs criterion with the asymptotic distributions of q~_mu.

use statrs::distribution::{ContinuousCDF, Normal};

/// CLs = p_mu / (1 - p_b) for an observed q~_mu, with both p-values from the
/// asymptotic distribution of q~_mu (Cowan, Cranmer, Gross, Vitells, Eur.
/// Phys. J. C 71 (2011) 1554, eqs. 65-66, with sigma from the Asimov dataset):
///
///   q~ <= mu^2/sigma^2:  p_mu = 1 - Phi(sqrt(q~)),                   1 - p_b = Phi(mu/sigma - sqrt(q~))
///   q~ >  mu^2/sigma^2:  p_mu = 1 - Phi((q~ + mu^2/sigma^2) / (2 mu/sigma)),
///                        1 - p_b = 1 - Phi((q~ - mu^2/sigma^2) / (2 mu/sigma))
///
/// The CLs construction itself is A. L. Read, J. Phys. G 28 (2002) 2693 and
/// T. Junk, Nucl. Instrum. Meth. A 434 (1999) 435.
pub fn asymptotic_cls(q_tilde: f64, mu: f64, sigma: f64) -> f64 {
    let normal = Normal::standard();
    let q = q_tilde.max(0.0);
    let ratio = mu / sigma;
    if ratio <= 0.0 {
        // mu = 0 is the background itself: it can never be excluded.
        return 1.0;
    }
    let ratio_squared = ratio * ratio;
    let (p_mu, one_minus_p_b) = if q <= ratio_squared {
        let root = q.sqrt();
        (normal.sf(root), normal.cdf(ratio - root))
    } else {
        (
            normal.sf((q + ratio_squared) / (2.0 * ratio)),
            normal.sf((q - ratio_squared) / (2.0 * ratio)),
        )
    };
    p_mu / one_minus_p_b
}

/// The observed sqrt(q~_mu) at which CLs = alpha for this mu: larger values
/// exclude mu. Found by bisection, since CLs falls as q~_mu grows.
pub fn exclusion_threshold(mu: f64, sigma: f64, alpha: f64) -> f64 {
    let (mut low, mut high) = (0.0, mu / sigma + 40.0);
    if asymptotic_cls(0.0, mu, sigma) <= alpha {
        return 0.0;
    }
    while high - low > 1e-9 {
        let middle = 0.5 * (low + high);
        if asymptotic_cls(middle * middle, mu, sigma) > alpha {
            low = middle;
        } else {
            high = middle;
        }
    }
    0.5 * (low + high)
}

/// sqrt(q~_mu,A) at the expected limit of band `n_sigma` (0 = median):
/// Phi^-1(1 - alpha Phi(N)) + N, so that mu_up(N) = sigma_A (Phi^-1(1 - alpha
/// Phi(N)) + N) (Cowan et al. 2011, eqs. 88-89); 1.960 for the median at 95% CL.
pub fn expected_limit_significance(alpha: f64, n_sigma: f64) -> f64 {
    let normal = Normal::standard();
    normal.inverse_cdf(1.0 - alpha * normal.cdf(n_sigma)) + n_sigma
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn median_expected_limit_is_1_96_sigma_at_95_percent() {
        // Cowan et al. 2011, eq. 89 with N = 0: Phi^-1(1 - 0.05/2) = 1.959964 (standard normal table).
        assert!((expected_limit_significance(0.05, 0.0) - 1.959964).abs() < 1e-6);
    }

    #[test]
    fn cls_at_the_asimov_median_equals_alpha() {
        // On the background-only Asimov dataset q~_mu = mu^2/sigma^2 (Cowan et al. 2011,
        // eq. 29), so CLs = 2 (1 - Phi(mu/sigma)): alpha at mu/sigma = 1.959964.
        let (mu, sigma) = (1.959964, 1.0);
        assert!((asymptotic_cls(mu * mu, mu, sigma) - 0.05).abs() < 1e-6);
    }

    #[test]
    fn threshold_at_the_median_limit_is_its_asimov_value() {
        // At mu = 1.959964 sigma the Asimov q~ = (mu/sigma)^2 gives CLs = 0.05 (eq. 89).
        assert!((exclusion_threshold(1.959964, 1.0, 0.05) - 1.959964).abs() < 1e-5);
    }

    #[test]
    fn cls_falls_as_the_observed_statistic_grows() {
        let values: Vec<f64> = [0.0, 1.0, 4.0, 9.0]
            .iter()
            .map(|&q| asymptotic_cls(q, 2.0, 1.0))
            .collect();
        assert!(values.windows(2).all(|w| w[1] < w[0]), "{values:?}");
    }
}
