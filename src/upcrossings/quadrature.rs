//! Adaptive Gauss-Legendre quadrature for smooth integrands.

/// Nodes of each Gauss-Legendre rule; exact for polynomials of degree 15.
const NODES: usize = 8;

/// Deepest halving of a panel: 2^-30 of it is far below any peak width.
const MAX_DEPTH: u32 = 30;

/// The integral of `integrand` over `[from, to]` to a relative accuracy of
/// about `tolerance` (well below 1e-6 for smooth integrands, which is what it
/// is used for).
///
/// The interval is cut into `panels` equal panels, which must be no wider
/// than the integrand's narrowest feature (a rule that samples none of a
/// peak sees nothing to refine); on each, the
/// `NODES`-point Gauss-Legendre rule over the panel is compared with the sum
/// of the rule over its two halves, and the halves are accepted when they
/// differ by less than `tolerance` times their magnitude (or an absolute
/// `tolerance` times the first estimate of the whole integral), else each
/// half is treated the same way (adaptive quadrature, Davis and Rabinowitz,
/// "Methods of Numerical Integration", 1984, ch. 6). The Gauss-Legendre nodes
/// are the roots of P_n, found by Newton's method from
/// cos(pi (i - 1/4) / (n + 1/2)), with weights 2 / ((1 - x²) P_n'(x)²)
/// (Abramowitz & Stegun 25.4.29).
pub fn integrate<E>(
    from: f64,
    to: f64,
    panels: usize,
    tolerance: f64,
    mut integrand: impl FnMut(f64) -> Result<f64, E>,
) -> Result<f64, E> {
    if to <= from {
        return Ok(0.0);
    }
    let rule = gauss_legendre(NODES);
    let panels = panels.max(1);
    let width = (to - from) / panels as f64;
    let mut estimates = Vec::with_capacity(panels);
    for panel in 0..panels {
        let low = from + panel as f64 * width;
        let high = if panel + 1 == panels { to } else { low + width };
        estimates.push(((low, high), apply(&rule, low, high, &mut integrand)?));
    }
    let scale: f64 = estimates.iter().map(|(_, value)| value.abs()).sum();
    let mut total = 0.0;
    for ((low, high), whole) in estimates {
        total += refine(&rule, low, high, whole, tolerance, scale, 0, &mut integrand)?;
    }
    Ok(total)
}

/// The integral over [low, high], whose one-rule estimate is `whole`, refined
/// by halving until the halves agree with the whole.
#[allow(clippy::too_many_arguments)]
fn refine<E>(
    rule: &[(f64, f64)],
    low: f64,
    high: f64,
    whole: f64,
    tolerance: f64,
    scale: f64,
    depth: u32,
    integrand: &mut impl FnMut(f64) -> Result<f64, E>,
) -> Result<f64, E> {
    let middle = 0.5 * (low + high);
    let left = apply(rule, low, middle, integrand)?;
    let right = apply(rule, middle, high, integrand)?;
    let halves = left + right;
    let agreed = (halves - whole).abs() <= tolerance * halves.abs().max(scale * (high - low));
    if agreed || depth == MAX_DEPTH {
        return Ok(halves);
    }
    Ok(refine(
        rule,
        low,
        middle,
        left,
        tolerance,
        scale,
        depth + 1,
        integrand,
    )? + refine(
        rule,
        middle,
        high,
        right,
        tolerance,
        scale,
        depth + 1,
        integrand,
    )?)
}

/// The rule mapped onto [low, high].
fn apply<E>(
    rule: &[(f64, f64)],
    low: f64,
    high: f64,
    integrand: &mut impl FnMut(f64) -> Result<f64, E>,
) -> Result<f64, E> {
    let half = 0.5 * (high - low);
    let centre = 0.5 * (high + low);
    let mut sum = 0.0;
    for &(node, weight) in rule {
        sum += weight * integrand(centre + half * node)?;
    }
    Ok(half * sum)
}

/// The n-point Gauss-Legendre rule on [-1, 1]: (node, weight) pairs.
fn gauss_legendre(n: usize) -> Vec<(f64, f64)> {
    (1..=n)
        .map(|i| {
            let mut x = (std::f64::consts::PI * (i as f64 - 0.25) / (n as f64 + 0.5)).cos();
            for _ in 0..100 {
                let (value, derivative) = legendre(n, x);
                let step = value / derivative;
                x -= step;
                if step.abs() < 1e-16 {
                    break;
                }
            }
            let slope = legendre(n, x).1;
            (x, 2.0 / ((1.0 - x * x) * slope * slope))
        })
        .collect()
}

/// P_n(x) and P_n'(x) by the three-term recurrence
/// (k + 1) P_{k+1} = (2k + 1) x P_k - k P_{k-1} (Abramowitz & Stegun 22.7.10)
/// and P_n' = n (x P_n - P_{n-1}) / (x² - 1) (A&S 22.8.5).
fn legendre(n: usize, x: f64) -> (f64, f64) {
    let (mut previous, mut value) = (1.0, x);
    for k in 1..n {
        let k = k as f64;
        (previous, value) = (
            value,
            ((2.0 * k + 1.0) * x * value - k * previous) / (k + 1.0),
        );
    }
    let derivative = n as f64 * (x * value - previous) / (x * x - 1.0);
    (value, derivative)
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::function::erf::erf;
    use std::convert::Infallible;

    fn integral(from: f64, to: f64, panels: usize, f: impl Fn(f64) -> f64) -> f64 {
        integrate::<Infallible>(from, to, panels, 1e-10, |x| Ok(f(x))).unwrap()
    }

    /// The 8-point rule integrates x^14 exactly: 2/15 over [-1, 1] (degree
    /// 2n - 1 exactness of Gauss-Legendre, A&S 25.4.29), and its weights sum to 2.
    #[test]
    fn rule_is_exact_for_polynomials_up_to_degree_fifteen() {
        let rule = gauss_legendre(NODES);
        let weights: f64 = rule.iter().map(|(_, w)| w).sum();
        assert!((weights - 2.0).abs() < 1e-14, "{weights}");
        let moment: f64 = rule.iter().map(|(x, w)| w * x.powi(14)).sum();
        assert!((moment - 2.0 / 15.0).abs() < 1e-14, "{moment}");
    }

    /// The integral of exp(-x²) over [0, 3] is sqrt(pi)/2 erf(3) (erf from
    /// statrs, reference library); a narrow peak, exp(-((x - 4.3)/0.05)²/2)
    /// over [0, 10], integrates to 0.05 sqrt(2 pi) (normal density,
    /// definition): both to 1e-9 relative, the peak from panels of two widths.
    #[test]
    fn smooth_and_peaked_integrands_to_high_accuracy() {
        let expected = 0.5 * std::f64::consts::PI.sqrt() * erf(3.0);
        let value = integral(0.0, 3.0, 1, |x| (-x * x).exp());
        assert!(
            (value / expected - 1.0).abs() < 1e-9,
            "{value} vs {expected}"
        );
        let width = 0.05;
        let expected = width * (2.0 * std::f64::consts::PI).sqrt();
        let value = integral(0.0, 10.0, 100, |x| {
            (-0.5 * ((x - 4.3) / width).powi(2)).exp()
        });
        assert!(
            (value / expected - 1.0).abs() < 1e-9,
            "{value} vs {expected}"
        );
    }

    /// An empty interval holds nothing (definition).
    #[test]
    fn empty_interval_is_zero() {
        assert_eq!(integral(2.0, 2.0, 4, |_| 1.0), 0.0);
    }
}
