//! Gaussian peak truncated to the range.

use super::tails::{EdgeSlopes, TailEdge, fill_fractions_with_gradient, fill_masses, mass_between};
use super::{
    MovablePeak, ParameterSyntax, Peak, Shape, ShapeKind, finite, mark_invalid, normalise_masses,
    positive, range_of,
};
use statrs::function::erf::erfc;
use std::f64::consts::{PI, SQRT_2};

/// Below this argument `erfc` is a normal double (erfc(26) is about 6e-296) and
/// the scale exp(26²), about 2e293, does not overflow; from it on the
/// asymptotic series is exact to double precision.
const DIRECT_ERFC_LIMIT: f64 = 26.0;

/// exp(x) rounds to 0 below this: exp(-745.14) is half the smallest
/// subnormal double, 2^-1075 (IEEE 754: 2^-1074 is the smallest).
const EXPONENT_OF_ZERO: f64 = -746.0;

/// Mass on each side of the mean, in the units of [`Frame::scaled_tail`] when
/// the range contains the mean (the only case in which it is used).
const HALF_MASS: f64 = 0.5;

/// Gaussian density exp(-z²/2) / (sigma sqrt(2 pi)), z = (x - mean) / sigma,
/// normalised on the range.
///
/// The mass of a bin comes from the standard normal upper tail
/// Q(z) = erfc(z / sqrt 2) / 2 (Abramowitz & Stegun, Handbook of Mathematical
/// Functions, section 26.2) at its edges, taken on the side of the mean where
/// each edge lies, so bins deep in either tail keep their relative precision:
/// that of the statrs erfc, about 5e-11 (measured against mpmath), and double
/// precision beyond 36.8 sigma. Parameters: `["mean", "sigma"]`.
#[derive(Debug, Clone, PartialEq)]
pub struct Gaussian {
    mean: f64,
    sigma: f64,
}

/// `{gaussian: {mean: M, sigma: S}}`: any finite mean, a positive sigma.
pub(super) const KIND: ShapeKind = ShapeKind {
    key: "gaussian",
    parameters: &[ParameterSyntax::number("mean"), ParameterSyntax::number("sigma")],
    example: "{gaussian: {mean: M, sigma: S}}",
    explanation: &["normal peak; M and S in `unit`"],
    build: |values, _| {
        let mean = finite("gaussian.mean", values[0].number())?;
        let sigma = positive("gaussian.sigma", values[1].number())?;
        Ok(Box::new(Gaussian::new(mean, sigma)))
    },
    rows: None,
};

impl Gaussian {
    pub fn new(mean: f64, sigma: f64) -> Gaussian {
        Gaussian { mean, sigma }
    }
}

impl Shape for Gaussian {
    fn peak(&self) -> Option<Peak> {
        Some(Peak {
            centre: self.mean,
            width: self.sigma,
            centre_key: "gaussian.mean",
        })
    }

    /// The mean moves the peak; sigma is its width.
    fn movable_peak(&self) -> Option<MovablePeak> {
        Some(MovablePeak {
            position: 0,
            width: 1,
        })
    }

    fn parameter_names(&self) -> Vec<String> {
        vec!["mean".to_string(), "sigma".to_string()]
    }

    fn nominal_parameters(&self) -> Vec<f64> {
        vec![self.mean, self.sigma]
    }

    fn bin_fractions(&self, params: &[f64], edges: &[f64], fractions: &mut [f64]) {
        let (low, high) = range_of(edges);
        match Frame::new(params, low, high) {
            Some(frame) => {
                fill_masses(edges, fractions, HALF_MASS, |x| frame.edge(x));
                normalise_masses(fractions);
            }
            None => mark_invalid(fractions),
        }
    }

    /// Analytic derivatives: with Phi the standard normal distribution function
    /// and phi its density, d Phi(z) / d mean = -phi(z) / sigma and
    /// d Phi(z) / d sigma = -z phi(z) / sigma; a fraction m_i / M then has
    /// derivative (m_i' - f_i M') / M (quotient rule).
    fn bin_fractions_with_gradient(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &mut [f64],
        gradient: &mut [f64],
    ) {
        let (low, high) = range_of(edges);
        let Some(frame) = Frame::new(params, low, high) else {
            mark_invalid(fractions);
            mark_invalid(gradient);
            return;
        };
        fill_fractions_with_gradient(
            edges,
            fractions,
            gradient,
            HALF_MASS,
            |x| frame.edge(x),
            |z| frame.distribution_slopes(z),
        );
    }

    fn density(&self, params: &[f64], low: f64, high: f64, x: f64) -> f64 {
        let Some(frame) = Frame::new(params, low, high) else {
            return f64::NAN;
        };
        if !(low..=high).contains(&x) {
            return 0.0;
        }
        let total = mass_between(frame.edge(low), frame.edge(high), HALF_MASS);
        frame.scaled_density(frame.standardised(x)) / (frame.sigma * total)
    }
}

/// The Gaussian in standardised units on one range.
///
/// Every tail mass and density value is multiplied by exp(z0² / 2), z0 the
/// smallest |z| on the range (zero when the range contains the mean). The
/// factor is common to all bins and cancels in the fractions; with it a range
/// hundreds of sigma from the mean neither underflows nor loses digits.
struct Frame {
    mean: f64,
    sigma: f64,
    nearest: f64,
    /// exp(z0² / 2); only used where z / sqrt 2 < [`DIRECT_ERFC_LIMIT`], which
    /// implies z0 is small enough for it to be finite.
    direct_scale: f64,
}

impl Frame {
    /// `None` when the parameters lie outside the domain (sigma not positive or
    /// not finite, mean not finite).
    fn new(params: &[f64], low: f64, high: f64) -> Option<Frame> {
        let (mean, sigma) = (params[0], params[1]);
        if !(mean.is_finite() && sigma.is_finite() && sigma > 0.0) {
            return None;
        }
        let z_low = (low - mean) / sigma;
        let z_high = (high - mean) / sigma;
        let nearest = if z_low >= 0.0 {
            z_low
        } else if z_high <= 0.0 {
            -z_high
        } else {
            0.0
        };
        Some(Frame {
            mean,
            sigma,
            nearest,
            direct_scale: (0.5 * nearest * nearest).exp(),
        })
    }

    fn standardised(&self, x: f64) -> f64 {
        (x - self.mean) / self.sigma
    }

    fn edge(&self, x: f64) -> TailEdge {
        let z = self.standardised(x);
        TailEdge {
            position: z,
            tail: self.scaled_tail(z.abs()),
        }
    }

    /// Q(z) exp(z0² / 2) for z >= z0 >= 0. Far out, Q(z) = exp(-z²/2) erfcx(z/sqrt 2) / 2
    /// with erfcx(x) = exp(x²) erfc(x), and the exponent is formed as
    /// -(z - z0)(z + z0)/2 so that it stays exact.
    fn scaled_tail(&self, z: f64) -> f64 {
        let x = z / SQRT_2;
        if x < DIRECT_ERFC_LIMIT {
            0.5 * erfc(x) * self.direct_scale
        } else {
            let relative = self.relative_exponential(z);
            if relative == 0.0 {
                // The series is finite and positive: the product is this zero.
                return 0.0;
            }
            0.5 * erfc_scaled_asymptotic(x) * relative
        }
    }

    /// exp(-(z² - z0²) / 2) for |z| >= z0; 0 without calling `exp` below
    /// [`EXPONENT_OF_ZERO`], where it rounds to 0 anyway (most edges of a
    /// narrow peak on a wide range lie there, and the library's underflow
    /// path is slow). The compiler, which sees no side effect in `exp`, may
    /// compute it before the test and choose afterwards, so every far edge
    /// would take that path after all: `black_box` keeps the call behind
    /// the test.
    fn relative_exponential(&self, z: f64) -> f64 {
        let distance = z.abs();
        let exponent = -0.5 * (distance - self.nearest) * (distance + self.nearest);
        if exponent < EXPONENT_OF_ZERO {
            return 0.0;
        }
        std::hint::black_box(exponent).exp()
    }

    /// phi(z) exp(z0² / 2), phi the standard normal density.
    fn scaled_density(&self, z: f64) -> f64 {
        self.relative_exponential(z) / (2.0 * PI).sqrt()
    }

    /// d Phi(z) / d mean = -phi(z) / sigma and d Phi(z) / d sigma = -z phi(z) / sigma,
    /// both scaled like the tails.
    fn distribution_slopes(&self, z: f64) -> EdgeSlopes {
        let density = self.scaled_density(z);
        if density == 0.0 {
            // z may be infinite for a vanishing sigma; the slopes vanish with phi.
            return EdgeSlopes {
                by_centre: 0.0,
                by_width: 0.0,
            };
        }
        EdgeSlopes {
            by_centre: -density / self.sigma,
            by_width: -z * density / self.sigma,
        }
    }
}

/// erfcx(x) = exp(x²) erfc(x) for x >= [`DIRECT_ERFC_LIMIT`] from the asymptotic series
/// sqrt(pi) x erfcx(x) ~ 1 + sum_{m>=1} (-1)^m 1·3···(2m-1) / (2x²)^m
/// (Abramowitz & Stegun 7.1.23). At x >= 26 the first omitted term, 13!!/(2x²)^7,
/// is below 2e-17.
fn erfc_scaled_asymptotic(x: f64) -> f64 {
    let inverse_two_x_squared = 1.0 / (2.0 * x * x);
    let mut term = 1.0;
    let mut sum = 1.0;
    for m in 1..=6 {
        term *= -f64::from(2 * m - 1) * inverse_two_x_squared;
        sum += term;
    }
    sum / (x * PI.sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;

    // Near the peak and deep in a tail; sigma zero, negative or NaN is outside.
    shape_contract_tests! {
        shape: Gaussian::new(4.2, 1.3),
        inside: [
            (&[4.2, 1.3], &(0..=20).map(|i| 0.5 * f64::from(i)).collect::<Vec<f64>>()),
            (&[0.0, 1.0], &[40.0, 40.02, 40.1, 40.5, 42.0]),
        ],
        outside: [&[1.0, 0.0], &[1.0, -0.5], &[1.0, f64::NAN]],
    }

    /// A normal density peaks at its mean, with width sigma (definition).
    #[test]
    fn peak_is_the_mean() {
        let peak = Gaussian::new(3.5, 0.25).peak().unwrap();
        assert_eq!((peak.centre, peak.width), (3.5, 0.25));
        assert_eq!(peak.centre_key, "gaussian.mean");
    }
    use crate::shapes::assert_normalised;
    use statrs::distribution::{Continuous, ContinuousCDF, Normal};

    fn fractions(mean: f64, sigma: f64, edges: &[f64]) -> Vec<f64> {
        let mut fractions = vec![0.0; edges.len() - 1];
        Gaussian::new(mean, sigma).bin_fractions(&[mean, sigma], edges, &mut fractions);
        assert_normalised(&fractions);
        fractions
    }

    /// Coverage of ±1 sigma and ±2 sigma: 0.6827 and 0.9545 (Particle Data
    /// Group, Review of Particle Physics, statistics chapter); six digits,
    /// 0.682689 and 0.954500, from standard normal tables. The range ±40 sigma
    /// leaves out less than 1e-300 of the mass.
    #[test]
    fn one_and_two_sigma_coverage() {
        let one = fractions(0.0, 1.0, &[-40.0, -1.0, 1.0, 40.0]);
        assert!((one[1] - 0.682689).abs() < 1e-6, "{}", one[1]);
        let two = fractions(5.0, 0.5, &[-15.0, 4.0, 6.0, 25.0]);
        assert!((two[1] - 0.954500).abs() < 1e-6, "{}", two[1]);
    }

    /// Truncated Gaussian: (Phi(b) - Phi(a)) / (Phi(high) - Phi(low)) with Phi
    /// from statrs (reference library).
    #[test]
    fn truncated_fractions_match_reference_distribution_function() {
        let edges = [0.0, 1.0, 2.5, 4.0, 7.0, 10.0];
        let normal = Normal::new(3.0, 2.0).unwrap();
        let total = normal.cdf(10.0) - normal.cdf(0.0);
        for (fraction, bin) in fractions(3.0, 2.0, &edges).iter().zip(edges.windows(2)) {
            let expected = (normal.cdf(bin[1]) - normal.cdf(bin[0])) / total;
            assert!(
                (fraction - expected).abs() < 1e-13,
                "{fraction} vs {expected}"
            );
        }
    }

    /// A range entirely in the upper tail, 10 to 20 sigma, keeps relative
    /// precision: compared with differences of the statrs survival function
    /// (reference library, built on erfc like this shape). The mirrored lower
    /// tail is compared with the statrs distribution function.
    #[test]
    fn tail_fractions_match_reference_survival_function() {
        let normal = Normal::new(0.0, 1.0).unwrap();
        let edges = [10.0, 11.0, 12.5, 15.0, 20.0];
        let total = normal.sf(10.0) - normal.sf(20.0);
        for (fraction, bin) in fractions(0.0, 1.0, &edges).iter().zip(edges.windows(2)) {
            let expected = (normal.sf(bin[0]) - normal.sf(bin[1])) / total;
            let relative_error = (fraction / expected - 1.0).abs();
            assert!(relative_error < 1e-13, "{fraction} vs {expected}");
        }
        let mirrored: Vec<f64> = edges.iter().rev().map(|x| -x).collect();
        for (fraction, bin) in fractions(0.0, 1.0, &mirrored)
            .iter()
            .zip(mirrored.windows(2))
        {
            let expected = (normal.cdf(bin[1]) - normal.cdf(bin[0])) / total;
            let relative_error = (fraction / expected - 1.0).abs();
            assert!(relative_error < 1e-13, "{fraction} vs {expected}");
        }
    }

    /// Across the switch from erfc to its asymptotic series (36.8 sigma), bins
    /// of the range [35, 37] sigma against (Q(a) - Q(b)) / (Q(35) - Q(37))
    /// computed with mpmath 1.3 at 50 digits (reference library). The
    /// tolerance is the accuracy of the statrs erfc used below the switch,
    /// about 5e-11 relative (measured against mpmath).
    #[test]
    fn tail_fractions_across_series_switch_match_high_precision_values() {
        let edges = [35.0, 36.0, 36.5, 36.7, 36.8, 37.0];
        let expected = [
            0.9999999999999996,
            3.71818312892253e-16,
            4.92579024440813e-24,
            3.16399901566457e-27,
            8.20115575139901e-29,
        ];
        for (fraction, expected) in fractions(0.0, 1.0, &edges).iter().zip(expected) {
            let relative_error = (fraction / expected - 1.0).abs();
            assert!(relative_error < 2e-10, "{fraction} vs {expected}");
        }
    }

    /// 1000 sigma from the mean, where Q underflows any double: by the leading
    /// term of the Mills ratio, Q(z) ≈ phi(z) / z (Abramowitz & Stegun 7.1.23),
    /// the bin [a, a + w] of the range [a, a + 1], a = 1000, w = 2^-10, holds
    /// 1 - exp(-w (2a + w) / 2) a / (a + w); the next term of the series moves
    /// this by 7e-13.
    #[test]
    fn range_a_thousand_sigma_away() {
        let (start, width): (f64, f64) = (1000.0, 1.0 / 1024.0);
        let expected = 1.0 - (-0.5 * width * (2.0 * start + width)).exp() * start / (start + width);
        let upper = fractions(0.0, 1.0, &[start, start + width, 1000.01, 1001.0]);
        assert!(
            (upper[0] - expected).abs() < 2e-12,
            "{} vs {expected}",
            upper[0]
        );
        let lower = fractions(0.0, 1.0, &[-1001.0, -1000.01, -start - width, -start]);
        assert!(
            (lower[2] - expected).abs() < 2e-12,
            "{} vs {expected}",
            lower[2]
        );
    }

    /// Density of the truncated Gaussian: phi / (Phi(high) - Phi(low)) with phi
    /// and Phi from statrs (reference library); zero outside the range.
    #[test]
    fn density_matches_reference_truncated_density() {
        let normal = Normal::new(2.0, 0.7).unwrap();
        let total = normal.cdf(4.0) - normal.cdf(1.0);
        let shape = Gaussian::new(2.0, 0.7);
        for x in [1.0, 1.7, 2.0, 3.3, 4.0] {
            let expected = normal.pdf(x) / total;
            let density = shape.density(&[2.0, 0.7], 1.0, 4.0, x);
            assert!(
                (density / expected - 1.0).abs() < 1e-13,
                "{density} vs {expected}"
            );
        }
        assert_eq!(shape.density(&[2.0, 0.7], 1.0, 4.0, 4.5), 0.0);
    }
}
