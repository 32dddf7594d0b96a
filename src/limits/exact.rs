//! Exact CLs for a single counting window, from sums of Poisson probabilities.
//!
//! Uncertain yields (Gaussian constraints on the signal or background
//! normalisation) are averaged over their constraint distributions, the hybrid
//! treatment of Cousins and Highland, Nucl. Instrum. Meth. A 320 (1992) 331; a
//! known yield is the special case of a single node.

use crate::numeric::{Crossing, solve_increasing};
use statrs::function::gamma::gamma_ur;

/// The fewest Gauss-Hermite nodes per uncertain yield: exact for polynomials
/// up to degree 19 in the standard normal variable.
pub const QUADRATURE_NODES: usize = 10;

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

/// An expected yield as quadrature nodes (value, weight) with weights summing
/// to one: a single node when known exactly, a Gaussian truncated at zero
/// otherwise.
#[derive(Debug, Clone, PartialEq)]
pub struct UncertainYield {
    nodes: Vec<(f64, f64)>,
}

impl UncertainYield {
    pub fn known(value: f64) -> UncertainYield {
        UncertainYield {
            nodes: vec![(value, 1.0)],
        }
    }

    /// N(mean, width) truncated at zero, on the standard-normal nodes
    /// `standard` (from [`standard_normal_nodes`]): nodes below zero are dropped
    /// and the remaining weights renormalised.
    pub fn gaussian(mean: f64, width: f64, standard: &[(f64, f64)]) -> UncertainYield {
        if width <= 0.0 {
            return UncertainYield::known(mean.max(0.0));
        }
        let mut nodes: Vec<(f64, f64)> = standard
            .iter()
            .map(|&(z, weight)| (mean + width * z, weight))
            .filter(|&(value, _)| value >= 0.0)
            .collect();
        let total: f64 = nodes.iter().map(|&(_, weight)| weight).sum();
        if total <= 0.0 {
            return UncertainYield::known(0.0);
        }
        nodes.iter_mut().for_each(|(_, weight)| *weight /= total);
        UncertainYield { nodes }
    }

    /// The expectation of `f` over this yield.
    fn expectation(&self, f: impl Fn(f64) -> f64) -> f64 {
        self.nodes
            .iter()
            .map(|&(value, weight)| weight * f(value))
            .sum()
    }
}

/// Nodes and weights of `count`-point Gauss-Hermite quadrature for the
/// standard normal density: the roots x_i of the probabilists' Hermite
/// polynomial He_n, with Christoffel weights 1 / sum_{k<n} h_k(x_i)^2 where
/// h_k = He_k / sqrt(k!) are orthonormal (Abramowitz and Stegun, 22.2.15 and
/// 25.4.46; Golub and Welsch, Math. Comp. 23 (1969) 221). The normalised
/// recurrence keeps the values finite for hundreds of nodes; the roots are
/// bracketed on a grid finer than their spacing and refined by bisection.
pub fn standard_normal_nodes(count: usize) -> Vec<(f64, f64)> {
    let reach = 2.0 * (count as f64).sqrt() + 2.0;
    let steps = 40 * count;
    let at = |step: usize| -reach + 2.0 * reach * step as f64 / steps as f64;
    let mut nodes = Vec::with_capacity(count);
    for step in 0..steps {
        let (mut low, mut high) = (at(step), at(step + 1));
        let low_sign = orthonormal_hermite(low, count).0.signum();
        if low_sign * orthonormal_hermite(high, count).0.signum() > 0.0 {
            continue;
        }
        for _ in 0..60 {
            let middle = 0.5 * (low + high);
            if orthonormal_hermite(middle, count).0.signum() == low_sign {
                low = middle;
            } else {
                high = middle;
            }
        }
        let root = 0.5 * (low + high);
        nodes.push((root, 1.0 / orthonormal_hermite(root, count).1));
    }
    nodes
}

/// (h_count(x), sum_{k < count} h_k(x)^2) for the orthonormal probabilists'
/// Hermite polynomials, h_{k+1} = (x h_k - sqrt(k) h_{k-1}) / sqrt(k + 1).
fn orthonormal_hermite(x: f64, count: usize) -> (f64, f64) {
    let (mut previous, mut current, mut squares) = (0.0, 1.0, 0.0);
    for k in 0..count {
        squares += current * current;
        let next = (x * current - (k as f64).sqrt() * previous) / ((k + 1) as f64).sqrt();
        previous = current;
        current = next;
    }
    (current, squares)
}

/// Quadrature nodes enough to average a Poisson probability over a Gaussian
/// yield of width `width` when the count itself spreads by sqrt(`events`): the
/// Poisson probability changes over sqrt(events), so the nodes must be finer
/// than that across the Gaussian; never fewer than [`QUADRATURE_NODES`].
pub fn quadrature_nodes_for(width: f64, events: f64) -> usize {
    let ratio = width / (events + 1.0).sqrt();
    ((6.0 * ratio).ceil() as usize + QUADRATURE_NODES).min(MAX_QUADRATURE_NODES)
}

/// The most nodes [`quadrature_nodes_for`] asks for.
pub const MAX_QUADRATURE_NODES: usize = 200;

/// CLs(mu) = <P(n <= n_obs | mu s + b)> / <P(n <= n_obs | b)> for one observed
/// count, the averages taken over the uncertain signal s (at mu = 1) and
/// background b (Read, J. Phys. G 28 (2002) 2693; Junk, Nucl. Instrum. Meth. A
/// 434 (1999) 435; Cousins and Highland 1992 for the averaging).
pub fn poisson_cls(
    observed: f64,
    signal: &UncertainYield,
    background: &UncertainYield,
    mu: f64,
) -> f64 {
    let with_signal =
        background.expectation(|b| signal.expectation(|s| poisson_cdf(observed, mu * s + b)));
    with_signal / background.expectation(|b| poisson_cdf(observed, b))
}

/// The upper limit on mu at CLs = alpha for one observed count. With a known,
/// vanishing background it is the classical Poisson upper limit, e.g. 3.00
/// signal events for n = 0 at 95% CL (Particle Data Group, statistics review,
/// table of Poisson limits). None when 1 - CLs cannot be bracketed around
/// 1 - alpha.
pub fn poisson_upper_limit(
    observed: f64,
    signal: &UncertainYield,
    background: &UncertainYield,
    alpha: f64,
) -> Option<f64> {
    let mean_signal = signal.expectation(|s| s).max(f64::MIN_POSITIVE);
    // 1 - CLs increases with mu from 0; solve 1 - CLs = 1 - alpha.
    let guess = (observed + 3.0) / mean_signal;
    solve_increasing::<()>(guess, 1.0 - alpha, |mu| {
        Ok(1.0 - poisson_cls(observed, signal, background, mu))
    })
    .ok()
    .and_then(Crossing::root)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn known_limit(observed: f64, signal: f64, background: f64) -> f64 {
        let (s, b) = (
            UncertainYield::known(signal),
            UncertainYield::known(background),
        );
        poisson_upper_limit(observed, &s, &b, 0.05).unwrap()
    }

    #[test]
    fn classical_poisson_limits_without_background() {
        // 95% CL upper limits on the mean for n = 0..4 observed and no background:
        // 3.00, 4.74, 6.30, 7.75, 9.15 (Particle Data Group, statistics review,
        // table of Poisson limits; equal to half the chi2_{2(n+1)} 95% quantile).
        for (n, published) in [3.00, 4.74, 6.30, 7.75, 9.15].into_iter().enumerate() {
            let limit = known_limit(n as f64, 1.0, 1e-12);
            assert!((limit - published).abs() < 0.005, "n = {n}: {limit}");
        }
    }

    /// The same limits to 1e-9 against the chi-squared quantile of statrs
    /// (reference library): mu_up = chi2_{2(n+1)}(0.95) / 2 for n observed
    /// and no background (Particle Data Group, statistics review, Poisson
    /// limits).
    #[test]
    fn classical_poisson_limits_equal_the_chi_squared_quantile() {
        use statrs::distribution::{ChiSquared, ContinuousCDF};
        for n in 0..8 {
            let quantile = ChiSquared::new(2.0 * (n as f64 + 1.0))
                .unwrap()
                .inverse_cdf(0.95);
            let limit = known_limit(n as f64, 1.0, 0.0);
            assert!(
                (limit / (0.5 * quantile) - 1.0).abs() < 1e-9,
                "n = {n}: {limit} vs {}",
                0.5 * quantile
            );
        }
    }

    #[test]
    fn background_lowers_the_limit_but_cls_keeps_it_above_zero_signal() {
        // With b = 3 and n = 0, CLs = exp(-mu s): the limit stays 3.00 whatever b
        // (a known property of CLs for n = 0; Read 2002).
        let limit = known_limit(0.0, 1.0, 3.0);
        assert!((limit / 20f64.ln() - 1.0).abs() < 1e-9, "{limit}");
        assert!(known_limit(5.0, 1.0, 3.0) < known_limit(5.0, 1.0, 0.0));
    }

    #[test]
    fn an_uncertain_background_keeps_the_n_zero_limit_and_loosens_the_others() {
        // For n = 0 every node gives CLs = exp(-mu s), so the average does too
        // (Read 2002); for n > 0 an uncertain background weakens the limit
        // (Cousins and Highland, NIM A 320 (1992) 331).
        let nodes = standard_normal_nodes(QUADRATURE_NODES);
        let signal = UncertainYield::known(1.0);
        let uncertain = UncertainYield::gaussian(3.0, 1.0, &nodes);
        let n0 = poisson_upper_limit(0.0, &signal, &uncertain, 0.05).unwrap();
        assert!((n0 - 2.9957).abs() < 1e-3, "{n0}");
        let known = known_limit(5.0, 1.0, 3.0);
        let smeared = poisson_upper_limit(5.0, &signal, &uncertain, 0.05).unwrap();
        assert!(smeared > known, "{smeared} vs {known}");
        // A vanishing width gives back the known-background limit.
        let sharp = UncertainYield::gaussian(3.0, 1e-9, &nodes);
        assert!((poisson_upper_limit(5.0, &signal, &sharp, 0.05).unwrap() - known).abs() < 1e-6);
    }

    #[test]
    fn quadrature_reproduces_standard_normal_moments() {
        // E[z^0, z^2, z^4, z^6, z^8] = 1, 1, 3, 15, 105 for z ~ N(0, 1) (common
        // practice), all exact for 10-point Gauss-Hermite quadrature.
        let nodes = standard_normal_nodes(QUADRATURE_NODES);
        assert_eq!(nodes.len(), QUADRATURE_NODES);
        for (power, moment) in [(0, 1.0), (2, 1.0), (4, 3.0), (6, 15.0), (8, 105.0)] {
            let sum: f64 = nodes.iter().map(|&(z, w)| w * z.powi(power)).sum();
            assert!((sum - moment).abs() < 1e-9 * moment, "E[z^{power}] = {sum}");
        }
        let odd: f64 = nodes.iter().map(|&(z, w)| w * z.powi(3)).sum();
        assert!(odd.abs() < 1e-9);
        // Many nodes stay finite and keep the moments: E[z^4] = 3.
        let many = standard_normal_nodes(MAX_QUADRATURE_NODES);
        assert_eq!(many.len(), MAX_QUADRATURE_NODES);
        let fourth: f64 = many.iter().map(|&(z, w)| w * z.powi(4)).sum();
        assert!((fourth - 3.0).abs() < 1e-9, "E[z^4] = {fourth}");
    }

    #[test]
    fn poisson_cdf_matches_direct_sum() {
        // P(n <= 2 | 1.5) = e^-1.5 (1 + 1.5 + 1.125) (definition).
        let direct = (-1.5f64).exp() * (1.0 + 1.5 + 1.125);
        assert!((poisson_cdf(2.0, 1.5) - direct).abs() < 1e-14);
    }
}
