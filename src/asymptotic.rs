//! Asymptotic (Asimov) answers: the median expected significance, its bands,
//! the probability of reaching a target, and the limit as exposure grows.

use crate::likelihood::{AsimovDiscovery, FitFailure, Likelihood};
use statrs::distribution::{ContinuousCDF, Normal};

/// Median expected discovery significance Z_A = sqrt(q0) of the Asimov dataset
/// generated at nominal parameters (mu = 1) with global observables at their
/// nominal values (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011)
/// 1554, sec. 5.1 and eq. 97 for the one-bin case), by one background-only
/// fit per exposure ([`AsimovDiscovery`]).
#[derive(Debug)]
pub struct AsimovSignificance<'l, 'm> {
    discovery: AsimovDiscovery<'l, 'm>,
}

impl<'l, 'm> AsimovSignificance<'l, 'm> {
    pub fn new(likelihood: &'l Likelihood<'m>) -> AsimovSignificance<'l, 'm> {
        AsimovSignificance {
            discovery: AsimovDiscovery::new(likelihood),
        }
    }

    /// Z_A after `live_days`.
    pub fn at_live_days(&mut self, live_days: f64) -> Result<f64, FitFailure> {
        self.discovery.significance(live_days, 1.0)
    }

    /// The value Z_A tends to as live time grows without bound, or None when it
    /// keeps growing.
    ///
    /// With a systematic uncertainty the large-exposure behaviour is
    /// 1/Z_A^2 = a/T + c (exact for one bin with a Gaussian-constrained
    /// background, where c = (delta b / s)^2; common practice), so 1/Z_A^2 at two
    /// large exposures is extrapolated linearly in 1/T to 1/T = 0. A
    /// statistics-limited Z_A (c = 0) grows as sqrt(T) and gives no limit.
    ///
    /// The extrapolation is written in the ratio r = Z_near/Z_far, as
    /// Z_near sqrt((T_far - T_near) / (T_far r^2 - T_near)), so that it holds
    /// for a Z_A of any size (1/Z_A^2 itself overflows for a tiny signal). A
    /// Z_A still 0 at the larger exposure (the signal moves no fit at all)
    /// tends to 0: the signal cannot be seen.
    pub fn limit(&mut self, reference_live_days: f64) -> Result<Option<f64>, FitFailure> {
        let near = reference_live_days * 1e3;
        let far = reference_live_days * 1e5;
        let z_near = self.at_live_days(near)?;
        let z_far = self.at_live_days(far)?;
        if z_far == 0.0 {
            return Ok(Some(0.0));
        }
        // A growth of Z_A over 100x more exposure close to sqrt(100) = 10 means no saturation.
        if z_far > 5.0 * z_near {
            return Ok(None);
        }
        let ratio = z_near / z_far;
        let denominator = far * ratio * ratio - near;
        if denominator <= 0.0 {
            return Ok(None);
        }
        Ok(Some(z_near * ((far - near) / denominator).sqrt()))
    }
}

/// One-sided p-value of a significance: p = 1 - Phi(Z) (Particle Data Group,
/// Review of Particle Physics, statistics chapter).
pub fn p_value(significance: f64) -> f64 {
    standard_normal().sf(significance)
}

/// Significance of a one-sided p-value: Z = Phi^-1(1 - p) (Particle Data Group,
/// Review of Particle Physics, statistics chapter).
pub fn significance(p_value: f64) -> f64 {
    standard_normal().inverse_cdf(1.0 - p_value)
}

/// Probability that an experiment reaches `target`, when its significance is
/// distributed as N(Z_A, 1): P(Z >= target) = Phi(Z_A - target) (Cowan et al.,
/// Eur. Phys. J. C 71 (2011) 1554, sec. 5.1).
pub fn probability_to_reach(z_asimov: f64, target: f64) -> f64 {
    standard_normal().cdf(z_asimov - target)
}

/// The asymptotic ±2 and ±1 sigma bands of the significance, Z_A - 2, Z_A - 1,
/// Z_A + 1, Z_A + 2, floored at zero (Cowan et al. 2011, sec. 5.1).
pub fn significance_band(z_asimov: f64) -> [f64; 4] {
    [-2.0, -1.0, 1.0, 2.0].map(|shift| (z_asimov + shift).max(0.0))
}

fn standard_normal() -> Normal {
    Normal::standard()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pdg_one_sided_p_values() {
        // Particle Data Group, statistics review: 3 sigma <-> 1.350e-3, 5 sigma <-> 2.867e-7.
        assert!((p_value(3.0) - 1.350e-3).abs() < 0.001e-3);
        assert!((p_value(5.0) - 2.867e-7).abs() < 0.001e-7);
        assert!((significance(1.350e-3) - 3.0).abs() < 1e-3);
        assert!((significance(2.867e-7) - 5.0).abs() < 1e-3);
    }

    #[test]
    fn probability_is_one_half_at_the_target() {
        // Median of N(Z_A, 1) at Z_A itself (definition).
        assert!((probability_to_reach(3.0, 3.0) - 0.5).abs() < 1e-15);
        // One sigma above: Phi(1) = 0.841345 (standard normal table).
        assert!((probability_to_reach(4.0, 3.0) - 0.841345).abs() < 1e-6);
    }

    #[test]
    fn bands_are_floored_at_zero() {
        assert_eq!(significance_band(1.5), [0.0, 0.5, 2.5, 3.5]);
    }
}
