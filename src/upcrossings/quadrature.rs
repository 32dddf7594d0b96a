//! Adaptive Gauss-Legendre quadrature for smooth integrands.

/// Nodes of each Gauss-Legendre rule; exact for polynomials of degree 15.
const NODES: usize = 8;

/// Deepest halving of a panel: 2^-30 of it is far below any peak width.
const MAX_DEPTH: u32 = 30;

/// One composite rule over `[from, to]` fine enough for every one of
/// `lanes` integrands, each to a relative accuracy of about `tolerance`
/// (well below 1e-6 for smooth integrands, which is what it is used for).
///
/// The interval is cut into `panels` equal panels, which must be no wider
/// than the integrands' narrowest feature (a rule that samples none of a
/// peak sees nothing to refine); on each, the `NODES`-point Gauss-Legendre
/// rule over the panel is compared with the sum of the rule over its two
/// halves, and the halves are accepted when they differ by less than
/// `tolerance` times their magnitude (or an absolute `tolerance` times the
/// first estimate of the whole integral) for every lane, else each half is
/// treated the same way (adaptive quadrature, Davis and Rabinowitz,
/// "Methods of Numerical Integration", 1984, ch. 6). The Gauss-Legendre
/// nodes are the roots of P_n, found by Newton's method from
/// cos(pi (i - 1/4) / (n + 1/2)), with weights 2 / ((1 - x²) P_n'(x)²)
/// (Abramowitz & Stegun 25.4.29).
/// Returns
/// the nodes of the final halves, each as `node(x)` made it, with their
/// weights, so that the integral of any of these integrands (or of one
/// between them) is the weighted sum of its values at the nodes; none for an
/// empty interval. `value(&node, lane)` is integrand `lane` at a node; a
/// lane without a value at some node takes no further part in the halving.
pub fn common_rule<N>(
    from: f64,
    to: f64,
    panels: usize,
    tolerance: f64,
    lanes: usize,
    node: impl FnMut(f64) -> N,
    value: impl FnMut(&N, usize) -> Option<f64>,
) -> Vec<(N, f64)> {
    let mut rule = Vec::new();
    if to <= from {
        return rule;
    }
    let mut common = Common {
        rule: gauss_legendre(NODES),
        node,
        value,
        dropped: vec![false; lanes],
    };
    let panels = panels.max(1);
    let width = (to - from) / panels as f64;
    let wholes: Vec<Panel<N>> = (0..panels)
        .map(|panel| {
            let low = from + panel as f64 * width;
            let high = if panel + 1 == panels { to } else { low + width };
            common.panel(low, high)
        })
        .collect();
    let scales: Vec<f64> = (0..lanes)
        .map(|lane| wholes.iter().map(|panel| panel.sums[lane].abs()).sum())
        .collect();
    for whole in wholes {
        common.refine(whole, tolerance, &scales, 0, &mut rule);
    }
    rule
}

/// The rule over [low, high] of [`common_rule`]: its nodes with their
/// weights, and each lane's weighted sum.
struct Panel<N> {
    low: f64,
    high: f64,
    nodes: Vec<(N, f64)>,
    sums: Vec<f64>,
}

/// The integrands of [`common_rule`] and the lanes that dropped out.
struct Common<F, V> {
    rule: Vec<(f64, f64)>,
    node: F,
    value: V,
    dropped: Vec<bool>,
}

impl<N, F, V> Common<F, V>
where
    F: FnMut(f64) -> N,
    V: FnMut(&N, usize) -> Option<f64>,
{
    /// The rule mapped onto [low, high].
    fn panel(&mut self, low: f64, high: f64) -> Panel<N> {
        let half = 0.5 * (high - low);
        let centre = 0.5 * (high + low);
        let mut sums = vec![0.0; self.dropped.len()];
        let mut nodes = Vec::with_capacity(self.rule.len());
        for &(x, weight) in &self.rule {
            let node = (self.node)(centre + half * x);
            for (lane, sum) in sums.iter_mut().enumerate() {
                match (self.value)(&node, lane) {
                    Some(value) => *sum += weight * value,
                    None => self.dropped[lane] = true,
                }
            }
            nodes.push((node, half * weight));
        }
        sums.iter_mut().for_each(|sum| *sum *= half);
        Panel {
            low,
            high,
            nodes,
            sums,
        }
    }

    /// Adds to `rule` the nodes of `whole` halved until the halves agree
    /// with it for every lane still taking part.
    fn refine(
        &mut self,
        whole: Panel<N>,
        tolerance: f64,
        scales: &[f64],
        depth: u32,
        rule: &mut Vec<(N, f64)>,
    ) {
        let (low, high) = (whole.low, whole.high);
        let middle = 0.5 * (low + high);
        let left = self.panel(low, middle);
        let right = self.panel(middle, high);
        let agreed = (0..whole.sums.len())
            .filter(|&lane| !self.dropped[lane])
            .all(|lane| {
                let halves = left.sums[lane] + right.sums[lane];
                (halves - whole.sums[lane]).abs()
                    <= tolerance * halves.abs().max(scales[lane] * (high - low))
            });
        if agreed || depth == MAX_DEPTH {
            rule.extend(left.nodes);
            rule.extend(right.nodes);
        } else {
            self.refine(left, tolerance, scales, depth + 1, rule);
            self.refine(right, tolerance, scales, depth + 1, rule);
        }
    }
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

    fn integral(from: f64, to: f64, panels: usize, f: impl Fn(f64) -> f64) -> f64 {
        common_rule(from, to, panels, 1e-10, 1, |x| x, |&x, _| Some(f(x)))
            .into_iter()
            .map(|(x, weight)| weight * f(x))
            .sum()
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

    /// One rule for a narrow peak, exp(-((x - 4.3)/0.05)²/2), and a slow
    /// fall, exp(-x/3), over [0, 10] from panels of two widths integrates
    /// each (0.05 sqrt(2 pi), normal density; 3 (1 - exp(-10/3)),
    /// elementary) and their mean, which it was not refined for, to 1e-9
    /// relative.
    #[test]
    fn common_rule_integrates_each_integrand_and_a_blend() {
        let width = 0.05;
        let peak = |x: f64| (-0.5 * ((x - 4.3) / width).powi(2)).exp();
        let fall = |x: f64| (-x / 3.0).exp();
        let rule = common_rule(
            0.0,
            10.0,
            100,
            1e-10,
            2,
            |x| x,
            |&x, lane| Some(if lane == 0 { peak(x) } else { fall(x) }),
        );
        let sum = |f: &dyn Fn(f64) -> f64| rule.iter().map(|(x, w)| w * f(*x)).sum::<f64>();
        let peak_integral = width * (2.0 * std::f64::consts::PI).sqrt();
        let fall_integral = 3.0 * (1.0 - (-10.0_f64 / 3.0).exp());
        for (value, expected) in [
            (sum(&peak), peak_integral),
            (sum(&fall), fall_integral),
            (
                sum(&|x| 0.5 * (peak(x) + fall(x))),
                0.5 * (peak_integral + fall_integral),
            ),
        ] {
            assert!(
                (value / expected - 1.0).abs() < 1e-9,
                "{value} vs {expected}"
            );
        }
    }

    /// An empty interval holds nothing (definition).
    #[test]
    fn empty_interval_is_zero() {
        assert_eq!(integral(2.0, 2.0, 4, |_| 1.0), 0.0);
    }
}
