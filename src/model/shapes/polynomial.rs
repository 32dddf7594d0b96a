//! Polynomial density on the range.

use super::{Shape, mark_invalid, normalise_masses};

/// Density proportional to p(x) = sum_k c_k x^k, normalised on the range.
///
/// A bin [a, b] holds (P(b) - P(a)) / (P(high) - P(low)) with the
/// antiderivative P(x) = sum_k c_k x^(k+1) / (k+1), both evaluated by Horner's
/// rule. A common factor of all coefficients cancels in the normalisation, so
/// the coefficient of largest magnitude at nominal (the reference) stays fixed
/// and the others are the parameters, named after their power of x: `"c0"`,
/// `"c2"`, ... Parameters for which a bin would receive a negative mass (beyond
/// rounding) are outside the domain.
#[derive(Debug, Clone, PartialEq)]
pub struct Polynomial {
    coefficients: Vec<f64>,
    reference: usize,
}

impl Polynomial {
    /// `coefficients[k]` multiplies x^k.
    pub fn new(coefficients: Vec<f64>) -> Polynomial {
        let reference = coefficients.iter().enumerate().fold(0, |best, (power, c)| {
            if c.abs() > coefficients[best].abs() {
                power
            } else {
                best
            }
        });
        Polynomial {
            coefficients,
            reference,
        }
    }

    /// Smallest value of the nominal polynomial sum_k c_k x^k (not normalised)
    /// on [low, high].
    ///
    /// The minimum lies at an end or where p' changes sign. Those sign changes
    /// are isolated exactly: between consecutive sign changes of p'' the
    /// derivative p' is monotone, so it changes sign at most once there, found by
    /// bisection; the sign changes of p'' come the same way from p''', down to a
    /// constant (root isolation by successive derivatives, common practice).
    pub fn min_on_range(&self, low: f64, high: f64) -> f64 {
        sign_changes(&derivative(&self.coefficients), low, high)
            .into_iter()
            .chain([low, high])
            .map(|x| evaluate(&self.coefficients, x))
            .fold(f64::INFINITY, f64::min)
    }

    /// Whether the nominal polynomial is nowhere below zero on [low, high],
    /// allowing for the rounding of its evaluation (so a polynomial touching zero
    /// counts as non-negative).
    pub fn is_non_negative_on(&self, low: f64, high: f64) -> bool {
        let reach = low.abs().max(high.abs());
        let allowance = rounding_allowance(
            self.coefficients.len(),
            |power| self.coefficients[power],
            reach,
        );
        self.min_on_range(low, high) >= -allowance
    }

    /// Powers whose coefficients are parameters: all but the reference.
    fn floating_powers(&self) -> impl Iterator<Item = usize> + '_ {
        (0..self.coefficients.len()).filter(|&power| power != self.reference)
    }

    /// c_k at `params`: the reference coefficient is fixed, the others are
    /// `params` in order of increasing power.
    fn coefficient(&self, params: &[f64], power: usize) -> f64 {
        match power.cmp(&self.reference) {
            std::cmp::Ordering::Less => params[power],
            std::cmp::Ordering::Equal => self.coefficients[power],
            std::cmp::Ordering::Greater => params[power - 1],
        }
    }

    fn value(&self, params: &[f64], x: f64) -> f64 {
        horner(
            self.coefficients.len(),
            |power| self.coefficient(params, power),
            x,
        )
    }

    /// Coefficient of x^power in the antiderivative P(x) = sum_k c_k x^(k+1) / (k+1).
    fn antiderivative_coefficient(&self, params: &[f64], power: usize) -> f64 {
        match power {
            0 => 0.0,
            _ => self.coefficient(params, power - 1) / power as f64,
        }
    }

    fn antiderivative(&self, params: &[f64], x: f64) -> f64 {
        horner(
            self.coefficients.len() + 1,
            |power| self.antiderivative_coefficient(params, power),
            x,
        )
    }
}

impl Shape for Polynomial {
    fn parameter_names(&self) -> Vec<String> {
        self.floating_powers()
            .map(|power| format!("c{power}"))
            .collect()
    }

    fn nominal_parameters(&self) -> Vec<f64> {
        self.floating_powers()
            .map(|power| self.coefficients[power])
            .collect()
    }

    fn bin_fractions(&self, params: &[f64], edges: &[f64], fractions: &mut [f64]) {
        debug_assert_eq!(edges.len(), fractions.len() + 1);
        let mut lower = self.antiderivative(params, edges[0]);
        for (mass, &x) in fractions.iter_mut().zip(&edges[1..]) {
            let upper = self.antiderivative(params, x);
            *mass = upper - lower;
            lower = upper;
        }
        let reach = edges[0].abs().max(edges[edges.len() - 1].abs());
        let allowance = rounding_allowance(
            self.coefficients.len() + 1,
            |power| self.antiderivative_coefficient(params, power),
            reach,
        );
        if fractions.iter().any(|&mass| mass < -allowance) {
            mark_invalid(fractions);
            return;
        }
        for mass in fractions.iter_mut().filter(|mass| **mass < 0.0) {
            *mass = 0.0;
        }
        normalise_masses(fractions);
    }

    /// p(x) / (P(high) - P(low)); NaN when that is not a density (a total mass
    /// that is not positive, or a value below zero beyond rounding).
    fn density(&self, params: &[f64], low: f64, high: f64, x: f64) -> f64 {
        let total = self.antiderivative(params, high) - self.antiderivative(params, low);
        if !(total > 0.0 && total.is_finite()) {
            return f64::NAN;
        }
        if !(low..=high).contains(&x) {
            return 0.0;
        }
        let value = self.value(params, x);
        let allowance = rounding_allowance(
            self.coefficients.len(),
            |power| self.coefficient(params, power),
            x.abs(),
        );
        if value < -allowance {
            return f64::NAN;
        }
        value.max(0.0) / total
    }
}

/// sum_{k < terms} coefficient(k) x^k by Horner's rule.
fn horner(terms: usize, coefficient: impl Fn(usize) -> f64, x: f64) -> f64 {
    (0..terms)
        .rev()
        .fold(0.0, |sum, power| sum * x + coefficient(power))
}

fn evaluate(coefficients: &[f64], x: f64) -> f64 {
    horner(coefficients.len(), |power| coefficients[power], x)
}

/// How far below zero a polynomial with these coefficients may come out from
/// rounding alone at |x| <= `reach`. Horner's rule errs by at most about
/// 2 n epsilon sum_k |c_k| |x|^k over n terms (Higham, Accuracy and Stability
/// of Numerical Algorithms, 2nd ed., section 5.1); doubled for the difference
/// of two such values.
fn rounding_allowance(terms: usize, coefficient: impl Fn(usize) -> f64, reach: f64) -> f64 {
    let magnitude = horner(terms, |power| coefficient(power).abs(), reach);
    4.0 * terms as f64 * f64::EPSILON * magnitude
}

fn derivative(coefficients: &[f64]) -> Vec<f64> {
    coefficients
        .iter()
        .enumerate()
        .skip(1)
        .map(|(power, c)| power as f64 * c)
        .collect()
}

/// Points of (low, high) where the polynomial changes sign, each bracketed
/// between consecutive sign changes of its derivative, where it is monotone.
fn sign_changes(coefficients: &[f64], low: f64, high: f64) -> Vec<f64> {
    if coefficients.len() < 2 {
        return Vec::new();
    }
    let mut bounds = vec![low];
    bounds.extend(sign_changes(&derivative(coefficients), low, high));
    bounds.push(high);
    bounds
        .windows(2)
        .filter_map(|pair| bisect_sign_change(coefficients, pair[0], pair[1]))
        .collect()
}

/// The point of [low, high] where a polynomial monotone there changes sign,
/// bisected down to adjacent doubles; `None` without a strict sign change.
fn bisect_sign_change(coefficients: &[f64], low: f64, high: f64) -> Option<f64> {
    let at_low = evaluate(coefficients, low);
    let at_high = evaluate(coefficients, high);
    let low_is_negative = at_low < 0.0;
    if low_is_negative == (at_high < 0.0) || at_low == 0.0 || at_high == 0.0 {
        return None;
    }
    let (mut below, mut above) = (low, high);
    loop {
        let middle = 0.5 * (below + above);
        if middle <= below || middle >= above {
            return Some(middle);
        }
        if (evaluate(coefficients, middle) < 0.0) == low_is_negative {
            below = middle;
        } else {
            above = middle;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::shapes::assert_normalised;

    fn nominal_fractions(coefficients: &[f64], edges: &[f64]) -> Vec<f64> {
        let shape = Polynomial::new(coefficients.to_vec());
        let mut fractions = vec![0.0; edges.len() - 1];
        shape.bin_fractions(&shape.nominal_parameters(), edges, &mut fractions);
        fractions
    }

    /// Density 2x on [0, 1] has distribution function x², so [0, 0.5] holds
    /// 0.25 (closed form).
    #[test]
    fn linear_density_quarter_below_midpoint() {
        let fractions = nominal_fractions(&[0.0, 2.0], &[0.0, 0.5, 1.0]);
        assert_normalised(&fractions);
        assert!((fractions[0] - 0.25).abs() < 1e-15);
    }

    /// 1 + x² on [-1, 2] with antiderivative x + x³/3: the bins [-1, 0],
    /// [0, 1], [1, 2] hold 4/3, 4/3, 10/3 of a total 6 (closed form).
    #[test]
    fn quadratic_fractions_from_antiderivative() {
        let fractions = nominal_fractions(&[1.0, 0.0, 1.0], &[-1.0, 0.0, 1.0, 2.0]);
        assert_normalised(&fractions);
        for (fraction, expected) in fractions.iter().zip([2.0 / 9.0, 2.0 / 9.0, 5.0 / 9.0]) {
            assert!(
                (fraction - expected).abs() < 1e-15,
                "{fraction} vs {expected}"
            );
        }
    }

    /// The reference is the coefficient of largest magnitude; scaling every
    /// coefficient leaves the fractions unchanged.
    #[test]
    fn reference_coefficient_is_fixed_and_scale_cancels() {
        let shape = Polynomial::new(vec![1.0, -3.0, 0.5]);
        assert_eq!(shape.parameter_names(), ["c0", "c2"]);
        assert_eq!(shape.nominal_parameters(), [1.0, 0.5]);
        let edges = [6.0, 7.0, 7.5, 9.0];
        let unit = nominal_fractions(&[1.0, -3.0, 0.5], &edges);
        let doubled = nominal_fractions(&[2.0, -6.0, 1.0], &edges);
        assert_normalised(&unit);
        for (a, b) in unit.iter().zip(&doubled) {
            assert!((a - b).abs() < 1e-15);
        }
    }

    /// 1 - 3x is negative beyond x = 1/3, and -1 everywhere: both outside the domain.
    #[test]
    fn negative_polynomial_gives_nan() {
        for coefficients in [[1.0, -3.0], [-1.0, 0.0]] {
            let fractions = nominal_fractions(&coefficients, &[0.0, 0.5, 1.0]);
            assert!(fractions.iter().all(|fraction| fraction.is_nan()));
        }
        let shape = Polynomial::new(vec![-1.0]);
        assert!(shape.density(&[], 0.0, 1.0, 0.5).is_nan());
    }

    /// The trait's finite-difference gradient against the quotient rule on
    /// m_i = sum_k c_k (b^(k+1) - a^(k+1)) / (k+1): d f_i / d c_k =
    /// ((b^(k+1) - a^(k+1)) / (k+1) - f_i (high^(k+1) - low^(k+1)) / (k+1)) / M
    /// (hand-derived, common practice).
    #[test]
    fn default_gradient_matches_quotient_rule() {
        let coefficients = [1.0, 0.5, 0.25];
        let shape = Polynomial::new(coefficients.to_vec());
        let edges = [0.0, 0.5, 1.0, 1.5, 2.0];
        let mut fractions = [0.0; 4];
        let mut gradient = [0.0; 8];
        shape.bin_fractions_with_gradient(&[0.5, 0.25], &edges, &mut fractions, &mut gradient);
        let moment = |power: i32, a: f64, b: f64| {
            (b.powi(power + 1) - a.powi(power + 1)) / f64::from(power + 1)
        };
        let total: f64 = (0..3)
            .map(|k| coefficients[k as usize] * moment(k, 0.0, 2.0))
            .sum();
        for (block, power) in [(0, 1), (1, 2)] {
            for (i, bin) in edges.windows(2).enumerate() {
                let expected = (moment(power, bin[0], bin[1])
                    - fractions[i] * moment(power, 0.0, 2.0))
                    / total;
                let numeric = gradient[block * 4 + i];
                assert!((numeric - expected).abs() < 1e-8, "{numeric} vs {expected}");
            }
        }
    }

    /// Minima from calculus (closed forms): x² - x + 0.21 has its vertex at 0.5
    /// with value -0.04; x³ - x has a minimum -2/(3 sqrt 3) at 1/sqrt 3;
    /// x⁵ - 5x has a minimum -4 at 1 and, on [-2, 0], its minimum -22 at the end -2.
    #[test]
    fn minimum_on_range_from_critical_points_and_ends() {
        let cases = [
            (vec![0.21, -1.0, 1.0], 0.0, 1.0, -0.04),
            (
                vec![0.0, -1.0, 0.0, 1.0],
                0.0,
                2.0,
                -2.0 / (3.0 * 3f64.sqrt()),
            ),
            (vec![0.0, -5.0, 0.0, 0.0, 0.0, 1.0], 0.0, 2.0, -4.0),
            (vec![0.0, -5.0, 0.0, 0.0, 0.0, 1.0], -2.0, 0.0, -22.0),
        ];
        for (coefficients, low, high, expected) in cases {
            let minimum = Polynomial::new(coefficients).min_on_range(low, high);
            assert!(
                (minimum - expected).abs() < 1e-14,
                "{minimum} vs {expected}"
            );
        }
    }

    /// (x² - 1/4)² touches zero at ±1/2 and is non-negative; lowering it by
    /// 1e-6 makes it dip below zero there (closed form).
    #[test]
    fn touching_zero_is_non_negative_but_a_dip_is_not() {
        let touching = Polynomial::new(vec![0.0625, 0.0, -0.5, 0.0, 1.0]);
        assert!(touching.is_non_negative_on(-1.0, 1.0));
        assert!(touching.min_on_range(-1.0, 1.0).abs() < 1e-15);
        let dipping = Polynomial::new(vec![0.0625 - 1e-6, 0.0, -0.5, 0.0, 1.0]);
        assert!(!dipping.is_non_negative_on(-1.0, 1.0));
        assert!((dipping.min_on_range(-1.0, 1.0) + 1e-6).abs() < 1e-15);
    }

    /// Density 2x on [0, 1] is 0.6 at 0.3; 1 + x² on [-1, 2] is 2/6 at 1
    /// (closed forms); zero outside the range.
    #[test]
    fn density_is_normalised_polynomial() {
        let linear = Polynomial::new(vec![0.0, 2.0]);
        assert!((linear.density(&[0.0], 0.0, 1.0, 0.3) - 0.6).abs() < 1e-15);
        assert_eq!(linear.density(&[0.0], 0.0, 1.0, 1.5), 0.0);
        let quadratic = Polynomial::new(vec![1.0, 0.0, 1.0]);
        let density = quadratic.density(&quadratic.nominal_parameters(), -1.0, 2.0, 1.0);
        assert!((density - 1.0 / 3.0).abs() < 1e-15);
    }
}
