//! The look-elsewhere effect: global p-values of a search over many signal
//! positions, from the upcrossings of the local q0 under the background.
//!
//! Gross and Vitells (Eur. Phys. J. C 70 (2010) 525), after Davies
//! (Biometrika 74 (1987) 33), bound the probability that the largest local
//! q0 over all positions exceeds q by
//!
//!   p_global(q) ≈ p_local(q) + N(u0) exp(-(q - u0) / 2),
//!
//! where N(u0) is the mean number of upcrossings of a reference level u0 by
//! q0(position) under the background-only hypothesis and p_local(q) =
//! 1 - Phi(sqrt q) is the one-sided p-value of the half chi-square law of q0
//! (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, eq. 49).
//! N(u0) may come from pseudo-experiments (as `runcast project` measures it)
//! or from any other estimate: [`global_p_value`] takes it as a number.

use crate::asymptotic::p_value;
use statrs::distribution::{ContinuousCDF, Normal};

/// The reference level u0 whose upcrossings the background-only scans count:
/// q0 = 1, a local significance of 1 sigma. It is crossed often (Rice's rate
/// falls as exp(-u0/2), so 61% as often as at u0 = 0), which keeps N(u0)
/// well measured by a few hundred scans, and it lies clear of q0 = 0, where
/// the one-sided q0 sits for half of all positions and a crossing would be
/// a matter of rounding.
pub const REFERENCE_LEVEL: f64 = 1.0;

/// p_global(q) ≈ p_local(q) + N(u0) exp(-(q - u0)/2), at most 1 (Gross and
/// Vitells 2010, for one degree of freedom; Davies 1987).
/// `upcrossings` is N at `reference_level`.
pub fn global_p_value(q0: f64, reference_level: f64, upcrossings: f64) -> f64 {
    let local = p_value(q0.max(0.0).sqrt());
    (local + upcrossings * (-(q0 - reference_level) / 2.0).exp()).min(1.0)
}

/// The global significance of a local one: Z_global = Phi^-1(1 -
/// p_global(Z_local^2)) = -Phi^-1(p_global), the second form exact also for
/// p-values far below the rounding of 1 - p, floored at 0 (a global p-value
/// of 1/2 or more is no evidence at all).
pub fn global_significance(z_local: f64, reference_level: f64, upcrossings: f64) -> f64 {
    let p = global_p_value(z_local * z_local, reference_level, upcrossings);
    (-Normal::standard().inverse_cdf(p)).max(0.0)
}

/// The trials factor p_global / p_local at a local significance `z_local`.
pub fn trials_factor(z_local: f64, reference_level: f64, upcrossings: f64) -> f64 {
    global_p_value(z_local * z_local, reference_level, upcrossings) / p_value(z_local)
}

/// The mean number of upcrossings per scan and its standard error, from
/// their sum and sum of squares over `scans` scans (sample variance with
/// n - 1; the standard error of a mean, common practice). The error is None
/// for fewer than two scans.
pub fn mean_upcrossings(sum: u64, sum_of_squares: u64, scans: usize) -> (f64, Option<f64>) {
    let n = scans as f64;
    let mean = sum as f64 / n;
    let error = (scans >= 2).then(|| {
        let variance = (sum_of_squares as f64 - n * mean * mean).max(0.0) / (n - 1.0);
        (variance / n).sqrt()
    });
    (mean, error)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Without upcrossings the global p-value is the local one: one-sided
    /// 3 sigma is p = 1.350e-3 (PDG statistics review).
    #[test]
    fn no_upcrossings_leave_the_local_p_value() {
        assert!((global_p_value(9.0, 1.0, 0.0) - 1.350e-3).abs() < 1e-6);
        assert!((global_significance(3.0, 1.0, 0.0) - 3.0).abs() < 1e-9);
        assert!((trials_factor(3.0, 1.0, 0.0) - 1.0).abs() < 1e-12);
    }

    /// At q = u0 the correction is N(u0) itself; 4 upcrossings of u0 = 1
    /// at local Z = 1 give p_local + 4 = capped at 1, Z_global 0.
    #[test]
    fn correction_at_the_reference_level_is_the_upcrossing_count() {
        let local = p_value(1.0);
        assert!((global_p_value(1.0, 1.0, 0.1) - (local + 0.1)).abs() < 1e-15);
        assert_eq!(global_p_value(1.0, 1.0, 4.0), 1.0);
        assert_eq!(global_significance(1.0, 1.0, 4.0), 0.0);
    }

    /// The formula of Gross and Vitells 2010 evaluated by hand: N(u0 = 1) = 10
    /// at q = 25 (local 5 sigma) adds 10 exp(-12) = 6.144e-5 to p_local =
    /// 2.867e-7 (PDG statistics review), a trials factor of about 215.
    #[test]
    fn five_sigma_local_with_ten_upcrossings() {
        let p = global_p_value(25.0, 1.0, 10.0);
        let expected = 2.866516e-7 + 10.0 * (-12.0f64).exp();
        assert!((p - expected).abs() < 1e-12, "{p}");
        let factor = trials_factor(5.0, 1.0, 10.0);
        assert!((factor - expected / 2.866516e-7).abs() < 1e-3 * factor);
        let z = crate::asymptotic::significance(expected);
        assert!((global_significance(5.0, 1.0, 10.0) - z).abs() < 1e-9);
    }

    /// Far beyond the rounding of 1 - p: local 12 sigma without upcrossings
    /// stays 12 sigma (p = 1.78e-33; Phi^-1 symmetric, common practice).
    #[test]
    fn deep_tails_keep_their_significance() {
        assert!((global_significance(12.0, 1.0, 0.0) - 12.0).abs() < 1e-6);
    }

    /// Counts 1, 2, 3: mean 2, sample variance 1, standard error 1/sqrt(3).
    #[test]
    fn mean_and_standard_error_of_upcrossings() {
        let (mean, error) = mean_upcrossings(6, 14, 3);
        assert_eq!(mean, 2.0);
        assert!((error.unwrap() - (1.0f64 / 3.0).sqrt()).abs() < 1e-15);
        assert_eq!(mean_upcrossings(2, 4, 1).1, None);
    }
}
