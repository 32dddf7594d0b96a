//! Non-relativistic Breit-Wigner (Cauchy) peak truncated to the range.

use super::tails::{EdgeSlopes, TailEdge, fill_fractions_with_gradient, fill_masses, mass_between};
use super::{
    MovablePeak, ParameterSyntax, Peak, Shape, ShapeKind, finite, mark_invalid, normalise_masses,
    positive,
};
use std::f64::consts::FRAC_PI_2;

/// Mass on each side of the centre in units of pi times probability, the units
/// of [`Frame::edge`] tails.
const HALF_MASS: f64 = FRAC_PI_2;

/// Cauchy density gamma / (pi ((x - mean)² + gamma²)) with half width at half
/// maximum gamma = width / 2, normalised on the range.
///
/// Its distribution function is 1/2 + atan(u) / pi, u = (x - mean) / gamma
/// (Johnson, Kotz & Balakrishnan, Continuous Univariate Distributions, vol. 1,
/// ch. 16). The mass beyond |u| on the side of u is atan(1 / |u|) / pi, which
/// keeps relative precision far in the tails where atan(u) is close to ±pi/2.
/// Parameters: `["mean", "width"]`, `width` the full width at half maximum.
#[derive(Debug, Clone, PartialEq)]
pub struct BreitWigner {
    mean: f64,
    width: f64,
}

/// `{breit_wigner: {mean: M, width: W}}`: any finite mean, a positive full width.
pub(super) const KIND: ShapeKind = ShapeKind {
    key: "breit_wigner",
    parameters: &[ParameterSyntax::number("mean"), ParameterSyntax::number("width")],
    example: "{breit_wigner: {mean: M, width: W}}",
    explanation: &["Cauchy peak; W = full width at half maximum, in `unit`"],
    build: |values, _| {
        let mean = finite("breit_wigner.mean", values[0].number())?;
        let width = positive("breit_wigner.width", values[1].number())?;
        Ok(Box::new(BreitWigner::new(mean, width)))
    },
    rows: None,
};

impl BreitWigner {
    pub fn new(mean: f64, width: f64) -> BreitWigner {
        BreitWigner { mean, width }
    }
}

impl Shape for BreitWigner {
    /// The mean, with the half width at half maximum.
    fn peak(&self) -> Option<Peak> {
        Some(Peak {
            centre: self.mean,
            width: self.width / 2.0,
            centre_key: "breit_wigner.mean",
        })
    }

    /// The mean moves the peak; the full width widens it.
    fn movable_peak(&self) -> Option<MovablePeak> {
        Some(MovablePeak {
            position: 0,
            width: 1,
        })
    }

    fn parameter_names(&self) -> Vec<String> {
        vec!["mean".to_string(), "width".to_string()]
    }

    fn nominal_parameters(&self) -> Vec<f64> {
        vec![self.mean, self.width]
    }

    fn bin_fractions(&self, params: &[f64], edges: &[f64], fractions: &mut [f64]) {
        match Frame::new(params) {
            Some(frame) => {
                fill_masses(edges, fractions, HALF_MASS, |x| frame.edge(x));
                normalise_masses(fractions);
            }
            None => mark_invalid(fractions),
        }
    }

    /// Analytic derivatives: with F(x) = 1/2 + atan(u) / pi, u = (x - mean) / gamma
    /// and gamma = width / 2, pi dF / d mean = -1 / (gamma (1 + u²)) and
    /// pi dF / d width = -u / (2 gamma (1 + u²)) (differentiating the Cauchy
    /// distribution function of Johnson, Kotz & Balakrishnan, ch. 16).
    fn bin_fractions_with_gradient(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &mut [f64],
        gradient: &mut [f64],
    ) {
        let Some(frame) = Frame::new(params) else {
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
            |u| frame.distribution_slopes(u),
        );
    }

    /// Density 1 / (gamma (1 + u²) M) with M the mass of the range in units of
    /// pi times probability.
    fn density(&self, params: &[f64], low: f64, high: f64, x: f64) -> f64 {
        let Some(frame) = Frame::new(params) else {
            return f64::NAN;
        };
        if !(low..=high).contains(&x) {
            return 0.0;
        }
        let total = mass_between(frame.edge(low), frame.edge(high), HALF_MASS);
        let u = frame.standardised(x);
        1.0 / (frame.half_width * (1.0 + u * u) * total)
    }
}

/// The peak in units u = (x - mean) / gamma.
struct Frame {
    mean: f64,
    half_width: f64,
}

impl Frame {
    /// `None` when the parameters lie outside the domain (width not positive or
    /// not finite, mean not finite).
    fn new(params: &[f64]) -> Option<Frame> {
        let (mean, width) = (params[0], params[1]);
        if !(mean.is_finite() && width.is_finite() && width > 0.0) {
            return None;
        }
        Some(Frame {
            mean,
            half_width: 0.5 * width,
        })
    }

    fn standardised(&self, x: f64) -> f64 {
        (x - self.mean) / self.half_width
    }

    /// pi dF / d mean and pi dF / d width at standardised position `u`; both
    /// vanish as u grows without bound.
    fn distribution_slopes(&self, u: f64) -> EdgeSlopes {
        if u.is_infinite() {
            return EdgeSlopes {
                by_centre: 0.0,
                by_width: 0.0,
            };
        }
        let by_centre = -1.0 / (self.half_width * (1.0 + u * u));
        EdgeSlopes {
            by_centre,
            by_width: 0.5 * u * by_centre,
        }
    }

    /// Tail beyond |u|, times pi: atan(1 / |u|), which is pi/2 at the centre.
    fn edge(&self, x: f64) -> TailEdge {
        let u = self.standardised(x);
        TailEdge {
            position: u,
            tail: u.abs().recip().atan(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Width zero, negative or infinite is outside the domain.
    shape_contract_tests! {
        shape: BreitWigner::new(1.0, 1.0),
        inside: [
            (&[1.0, 1.0], &[-3.0, 0.0, 0.5, 1.0, 1.5, 2.0, 5.0]),
            (&[0.0, 0.2], &[30.0, 31.0, 35.0, 50.0]),
        ],
        outside: [&[1.0, 0.0], &[1.0, -2.0], &[1.0, f64::INFINITY]],
    }

    /// A Cauchy density peaks at its mean; its half width at half maximum is
    /// half the full width (definition).
    #[test]
    fn peak_is_the_mean_with_half_the_full_width() {
        let peak = BreitWigner::new(91.0, 2.5).peak().unwrap();
        assert_eq!((peak.centre, peak.width), (91.0, 1.25));
        assert_eq!(peak.centre_key, "breit_wigner.mean");
    }
    use crate::shapes::assert_normalised;
    use statrs::distribution::{Cauchy, Continuous, ContinuousCDF};

    fn fractions(mean: f64, width: f64, edges: &[f64]) -> Vec<f64> {
        let mut fractions = vec![0.0; edges.len() - 1];
        BreitWigner::new(mean, width).bin_fractions(&[mean, width], edges, &mut fractions);
        assert_normalised(&fractions);
        fractions
    }

    /// Half of the untruncated mass lies within mean ± gamma, since
    /// atan(1) - atan(-1) = pi/2 (closed form). On the range mean ± K gamma,
    /// which holds (2/pi) atan(K) of the mass, the central bin holds
    /// 0.5 / ((2/pi) atan(K)).
    #[test]
    fn half_the_mass_within_one_half_width() {
        let (mean, width) = (40.0, 4.0);
        let half_width_multiple: f64 = 1e6;
        let reach = half_width_multiple * 0.5 * width;
        let edges = [mean - reach, mean - 2.0, mean + 2.0, mean + reach];
        let expected = 0.5 / (half_width_multiple.atan() / FRAC_PI_2);
        let central = fractions(mean, width, &edges)[1];
        assert!(
            (central - expected).abs() < 1e-14,
            "{central} vs {expected}"
        );
    }

    /// Truncated fractions against the statrs Cauchy distribution function
    /// (reference library), scale = gamma = width / 2.
    #[test]
    fn truncated_fractions_match_reference_distribution_function() {
        let edges = [100.0, 110.0, 118.0, 121.0, 124.0, 140.0, 160.0];
        let cauchy = Cauchy::new(120.0, 2.5).unwrap();
        let total = cauchy.cdf(160.0) - cauchy.cdf(100.0);
        for (fraction, bin) in fractions(120.0, 5.0, &edges).iter().zip(edges.windows(2)) {
            let expected = (cauchy.cdf(bin[1]) - cauchy.cdf(bin[0])) / total;
            assert!(
                (fraction - expected).abs() < 1e-13,
                "{fraction} vs {expected}"
            );
        }
    }

    /// Ten million half widths away, atan(1/u) = 1/u - 1/(3u³) + ...
    /// (Abramowitz & Stegun, section 4.4), so a bin [a, b] of the range [A, B] holds
    /// (1/a - 1/b) / (1/A - 1/B) up to a relative 1e-14. A difference of the
    /// distribution function would keep only about eight digits here.
    #[test]
    fn far_tail_keeps_relative_precision() {
        let edges: [f64; 4] = [1e7, 1.2e7, 1.5e7, 2e7];
        let total = 1.0 / edges[0] - 1.0 / edges[3];
        for (fraction, bin) in fractions(0.0, 2.0, &edges).iter().zip(edges.windows(2)) {
            let expected = (1.0 / bin[0] - 1.0 / bin[1]) / total;
            assert!(
                (fraction / expected - 1.0).abs() < 1e-12,
                "{fraction} vs {expected}"
            );
        }
        let mirrored: Vec<f64> = edges.iter().rev().map(|x| -x).collect();
        let mirrored_fractions = fractions(0.0, 2.0, &mirrored);
        let direct_fractions = fractions(0.0, 2.0, &edges);
        for (mirror, direct) in mirrored_fractions.iter().rev().zip(&direct_fractions) {
            assert!((mirror / direct - 1.0).abs() < 1e-14);
        }
    }

    /// Density of the truncated peak: statrs Cauchy density over the mass of
    /// the range (reference library); zero outside the range.
    #[test]
    fn density_matches_reference_truncated_density() {
        let cauchy = Cauchy::new(5.0, 0.25).unwrap();
        let total = cauchy.cdf(8.0) - cauchy.cdf(3.0);
        let shape = BreitWigner::new(5.0, 0.5);
        for x in [3.0, 4.9, 5.0, 5.3, 8.0] {
            let expected = cauchy.pdf(x) / total;
            let density = shape.density(&[5.0, 0.5], 3.0, 8.0, x);
            assert!(
                (density / expected - 1.0).abs() < 1e-13,
                "{density} vs {expected}"
            );
        }
        assert_eq!(shape.density(&[5.0, 0.5], 3.0, 8.0, 2.0), 0.0);
    }
}
