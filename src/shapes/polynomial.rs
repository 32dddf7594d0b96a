//! Polynomial density on the range, written in the Bernstein basis.

use super::{
    Built, ParameterSyntax, ParameterValue, Placement, Shape, ShapeError, ShapeKind, finite,
};
use super::mark_invalid;
use crate::message::{show, show_list, show_rounded};

/// Highest degree of the Bernstein form, also after degree elevation. Beyond
/// it the power-basis coefficients of a scenario lose their meaning to
/// rounding long before the shape gains any.
pub const MAX_DEGREE: usize = 20;

/// Density proportional to a polynomial p(x) = sum_k c_k x^k on the range
/// [low, high], written as
///
/// ```text
/// p(x) = sum_{k=0}^{n} beta_k b_{k,n}(t),   t = (x - low) / (high - low),
/// b_{k,n}(t) = C(n, k) t^k (1 - t)^(n - k)
/// ```
///
/// (Bernstein basis; Lorentz, Bernstein Polynomials, Univ. of Toronto Press,
/// 1953, ch. 1). The parameters are the n + 1 coefficients beta_k, named
/// `"b0"`, `"b1"`, ..., each with lower bound 0: every non-negative choice
/// (not all zero) is a density, so a fit that floats them never leaves the
/// domain. Their common scale cancels in the normalisation
/// ([`Shape::scale_free`]); the nominal coefficients are scaled to a mean of 1.
///
/// The family a fit can reach is exactly the polynomials of degree at most n
/// with non-negative Bernstein coefficients on the range: every polynomial
/// strictly positive on the range has such a form at some degree (Lorentz,
/// ch. 1.1), and the scenario's degree is raised by degree elevation until the
/// nominal coefficients are non-negative (at most [`MAX_DEGREE`]). A
/// polynomial touching zero inside the range has no such form and is refused
/// for floating by validation; it can still be a fixed shape.
///
/// The integral of b_{k,n} from 0 to t is sum_{j>k} b_{j,n+1}(t) / (n + 1),
/// so a bin [a, b] holds (P(b) - P(a)) / P(high) with
/// P(x) = sum_{j=0}^{n+1} B_j b_{j,n+1}(t(x)) and B_j = sum_{k<j} beta_k
/// (Lorentz, ch. 1.2), computed from the basis values at each edge. One
/// constant coefficient is a flat density and has no parameter.
#[derive(Debug, Clone, PartialEq)]
pub struct Polynomial {
    bernstein: Vec<f64>,
    low: f64,
    high: f64,
}

/// Why power-basis coefficients are no density on a range.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PolynomialError {
    /// No coefficient given.
    Empty,
    /// More than [`MAX_DEGREE`] + 1 coefficients.
    TooManyCoefficients,
    /// The polynomial is below zero at `at`, where it is `value`.
    Negative { at: f64, value: f64 },
    /// The polynomial is zero everywhere on the range.
    Zero,
}

/// `{polynomial: {coefficients: [c0, c1, ...]}}`: finite coefficients of a
/// polynomial that is a density on the range ([`Polynomial::new`]); when it
/// floats, one with a non-negative Bernstein form ([`Polynomial::can_float`]).
pub(super) const KIND: ShapeKind = ShapeKind {
    key: "polynomial",
    parameters: &[ParameterSyntax::list("coefficients")],
    example: "{polynomial: {coefficients: [c0, c1, ...]}}",
    explanation: &[
        "density proportional to c0 + c1 x + c2 x^2 + ...;",
        "must not be negative anywhere on the range",
    ],
    build: build_from_scenario,
    rows: None,
};

const FIELD: &str = "polynomial.coefficients";

/// The polynomial of a scenario's coefficients, each error naming the field.
fn build_from_scenario(values: &[ParameterValue], placement: Placement) -> Built {
    let coefficients = values[0].list();
    for (power, &coefficient) in coefficients.iter().enumerate() {
        finite(&format!("{FIELD}[{power}]"), coefficient)?;
    }
    let polynomial = Polynomial::new(coefficients, placement.range).map_err(|error| {
        ShapeError::Value {
            field: FIELD.to_string(),
            message: error.describe(coefficients, placement.range),
        }
    })?;
    if placement.floated && !polynomial.can_float() {
        let [low, high] = placement.range;
        return Err(ShapeError::CannotFloat {
            message: format!(
                "a floated polynomial must be positive on the range [{}, {}] by a margin its Bernstein coefficients of degree {MAX_DEGREE} or less can show, but shape.{FIELD} {} touches or nearly touches zero; raise its lowest point or set float_shape: false",
                show(low),
                show(high),
                show_list(coefficients)
            ),
        });
    }
    Ok(Box::new(polynomial))
}

impl PolynomialError {
    /// The message for `coefficients` on `range` (a scenario's field).
    fn describe(self, coefficients: &[f64], range: [f64; 2]) -> String {
        let [low, high] = range;
        match self {
            PolynomialError::Empty => {
                "needs at least one coefficient [c0, c1, ...], got an empty list".to_string()
            }
            PolynomialError::TooManyCoefficients => format!(
                "takes at most {} coefficients (degree {MAX_DEGREE}), got {}",
                MAX_DEGREE + 1,
                coefficients.len()
            ),
            PolynomialError::Negative { at, value } => format!(
                "the polynomial must not be negative on the range [{}, {}], but is {} at x = {}; got {}",
                show(low),
                show(high),
                show_rounded(value),
                show_rounded(at),
                show_list(coefficients)
            ),
            PolynomialError::Zero => format!(
                "the polynomial is zero everywhere on the range [{}, {}]; got {}",
                show(low),
                show(high),
                show_list(coefficients)
            ),
        }
    }
}

impl Polynomial {
    /// The density proportional to sum_k `coefficients[k]` x^k on `range`,
    /// refused when that is no density there: negative beyond rounding at its
    /// lowest point on the range, found exactly (see `lowest_below_zero`), or
    /// zero everywhere.
    pub fn new(coefficients: &[f64], range: [f64; 2]) -> Result<Polynomial, PolynomialError> {
        let [low, high] = range;
        if coefficients.is_empty() {
            return Err(PolynomialError::Empty);
        }
        if coefficients.len() > MAX_DEGREE + 1 {
            return Err(PolynomialError::TooManyCoefficients);
        }
        if let Some((at, value)) = lowest_below_zero(coefficients, low, high) {
            return Err(PolynomialError::Negative { at, value });
        }
        let mut bernstein = to_bernstein(coefficients, low, high);
        let original = bernstein.clone();
        while bernstein.iter().any(|&beta| beta < 0.0) && bernstein.len() <= MAX_DEGREE {
            bernstein = elevate(&bernstein);
        }
        if bernstein.iter().any(|&beta| beta < 0.0) {
            bernstein = original;
        }
        let mean = bernstein.iter().sum::<f64>() / bernstein.len() as f64;
        if mean.is_nan() || mean <= 0.0 {
            return Err(PolynomialError::Zero);
        }
        bernstein.iter_mut().for_each(|beta| *beta /= mean);
        Ok(Polynomial {
            bernstein,
            low,
            high,
        })
    }

    /// Whether the nominal Bernstein coefficients are all non-negative, so that
    /// the shape can float inside the family described on [`Polynomial`].
    pub fn can_float(&self) -> bool {
        self.bernstein.iter().all(|&beta| beta >= 0.0)
    }

    /// Degree n of the Bernstein form (after any elevation).
    pub fn degree(&self) -> usize {
        self.bernstein.len() - 1
    }

    /// The Bernstein coefficients at `params` (the nominal ones for a constant,
    /// which has no parameter).
    fn coefficients_at<'a>(&'a self, params: &'a [f64]) -> &'a [f64] {
        if params.is_empty() {
            &self.bernstein
        } else {
            params
        }
    }

    /// t and 1 - t of `x`, each from its own difference, so both keep their
    /// relative precision near their zero.
    fn position(&self, x: f64) -> (f64, f64) {
        let width = self.high - self.low;
        ((x - self.low) / width, (self.high - x) / width)
    }
}

/// Room for the basis of degree [`MAX_DEGREE`] + 1, on the stack.
const BASIS_LENGTH: usize = MAX_DEGREE + 2;

impl Shape for Polynomial {
    fn parameter_names(&self) -> Vec<String> {
        match self.degree() {
            0 => Vec::new(),
            _ => (0..self.bernstein.len()).map(|k| format!("b{k}")).collect(),
        }
    }

    fn nominal_parameters(&self) -> Vec<f64> {
        match self.degree() {
            0 => Vec::new(),
            _ => self.bernstein.clone(),
        }
    }

    fn parameter_lower_bounds(&self) -> Vec<f64> {
        vec![0.0; self.nominal_parameters().len()]
    }

    fn scale_free(&self) -> bool {
        true
    }

    fn bin_fractions(&self, params: &[f64], edges: &[f64], fractions: &mut [f64]) {
        self.fill_fractions(params, edges, fractions, None);
    }

    /// Analytic derivative of f_i = m_i / T, with m_i linear in the
    /// coefficients and T = sum_k beta_k: d f_i / d beta_k = (dm_i/dbeta_k -
    /// f_i) / T, where dm_i/dbeta_k = S_k(b) - S_k(a) and S_k(t) = sum_{j>k}
    /// b_{j,n+1}(t) (the integral of b_{k,n} times n + 1).
    fn bin_fractions_with_gradient(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &mut [f64],
        gradient: &mut [f64],
    ) {
        self.fill_fractions(params, edges, fractions, Some(gradient));
    }

    /// d2 f_i / d beta_k d beta_l = -(d f_i/d beta_k + d f_i/d beta_l) / T,
    /// the gradient above differentiated once more (quotient rule).
    fn bin_fraction_curvatures(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &[f64],
        curvatures: &mut [f64],
    ) -> bool {
        let bins = fractions.len();
        let n = params.len();
        let total: f64 = params.iter().sum();
        let mut gradient = [0.0; BASIS_LENGTH];
        self.for_each_bin(n, edges, |i, changes| {
            for (derivative, change) in gradient[..n].iter_mut().zip(changes) {
                *derivative = (change - fractions[i]) / total;
            }
            for k in 0..n {
                for l in 0..n {
                    curvatures[(k * n + l) * bins + i] = -(gradient[k] + gradient[l]) / total;
                }
            }
        });
        true
    }

    /// p(x) (n + 1) / (T (high - low)), since each b_{k,n} integrates to
    /// 1 / (n + 1) over t; NaN when that is not a density (a total that is not
    /// positive, or a value below zero beyond rounding).
    fn density(&self, params: &[f64], low: f64, high: f64, x: f64) -> f64 {
        let beta = self.coefficients_at(params);
        let total: f64 = beta.iter().sum();
        if !(total > 0.0 && total.is_finite()) {
            return f64::NAN;
        }
        if !(low..=high).contains(&x) {
            return 0.0;
        }
        let (t, s) = self.position(x);
        let mut values = [0.0; BASIS_LENGTH];
        let values = &mut values[..beta.len()];
        basis(t, s, values);
        let value: f64 = beta.iter().zip(&*values).map(|(b, v)| b * v).sum();
        let largest = beta.iter().fold(0.0_f64, |m, b| m.max(b.abs()));
        if value < -rounding_of_sum(beta.len(), largest) {
            return f64::NAN;
        }
        value.max(0.0) * beta.len() as f64 / (total * (high - low))
    }
}

impl Polynomial {
    /// Calls `visit(i, changes)` for each bin i, with changes[k] = S_k(b) -
    /// S_k(a) over the bin for k < `count`, where S_k(t) = sum_{j>k}
    /// b_{j,n+1}(t) is (n + 1) times the integral of b_{k,n} from 0 to t.
    fn for_each_bin(&self, count: usize, edges: &[f64], mut visit: impl FnMut(usize, &[f64])) {
        let mut values = [0.0; BASIS_LENGTH];
        let mut tails = [[0.0; BASIS_LENGTH]; 2];
        let mut changes = [0.0; BASIS_LENGTH];
        let terms = self.bernstein.len() + 1;
        for (index, &x) in edges.iter().enumerate() {
            let (t, s) = self.position(x);
            basis(t, s, &mut values[..terms]);
            tails.swap(0, 1);
            let [previous, current] = &mut tails;
            let mut tail = 0.0;
            for k in (0..count).rev() {
                tail += values[k + 1];
                current[k] = tail;
            }
            if index > 0 {
                for k in 0..count {
                    changes[k] = current[k] - previous[k];
                }
                visit(index - 1, &changes[..count]);
            }
        }
    }

    /// Bin fractions at `params`, and with `gradient` their derivatives (see
    /// [`Shape::bin_fractions_with_gradient`]); every entry NaN when a bin
    /// would hold a negative mass beyond rounding or the total is not positive.
    fn fill_fractions(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &mut [f64],
        mut gradient: Option<&mut [f64]>,
    ) {
        debug_assert_eq!(edges.len(), fractions.len() + 1);
        let beta = self.coefficients_at(params);
        let bins = fractions.len();
        let total: f64 = beta.iter().sum();
        let largest = beta.iter().fold(0.0_f64, |m, b| m.max(b.abs()));
        let allowance = 2.0 * rounding_of_sum(beta.len(), beta.len() as f64 * largest);
        self.for_each_bin(beta.len(), edges, |i, changes| {
            fractions[i] = beta.iter().zip(changes).map(|(b, c)| b * c).sum();
            if let Some(gradient) = gradient.as_deref_mut() {
                for (k, &change) in changes.iter().enumerate().take(params.len()) {
                    gradient[k * bins + i] = change;
                }
            }
        });
        let valid =
            total > 0.0 && total.is_finite() && fractions.iter().all(|&mass| mass >= -allowance);
        if !valid {
            mark_invalid(fractions);
            if let Some(gradient) = gradient {
                mark_invalid(gradient);
            }
            return;
        }
        for mass in fractions.iter_mut() {
            *mass = mass.max(0.0) / total;
        }
        if let Some(gradient) = gradient {
            for row in gradient.chunks_exact_mut(bins) {
                for (derivative, &fraction) in row.iter_mut().zip(&*fractions) {
                    *derivative = (*derivative - fraction) / total;
                }
            }
        }
    }
}

/// Values b_{j,m}(t) of the Bernstein basis of degree m = `values.len() - 1`,
/// from t and s = 1 - t: C(m, j) t^j s^(m - j), the binomial built up along j.
fn basis(t: f64, s: f64, values: &mut [f64]) {
    let degree = values.len() - 1;
    let mut t_power = 1.0;
    for value in values.iter_mut() {
        *value = t_power;
        t_power *= t;
    }
    let mut s_power = 1.0;
    for value in values.iter_mut().rev() {
        *value *= s_power;
        s_power *= s;
    }
    let mut binomial = 1.0;
    for (j, value) in values.iter_mut().enumerate() {
        *value *= binomial;
        binomial = binomial * (degree - j) as f64 / (j + 1) as f64;
    }
}

/// How far a sum of `terms` products of coefficients up to `largest` with
/// basis values (each at most one) may err from rounding: a few times
/// terms epsilon largest (Higham, Accuracy and Stability of Numerical
/// Algorithms, 2nd ed., section 3.1).
fn rounding_of_sum(terms: usize, largest: f64) -> f64 {
    4.0 * terms as f64 * f64::EPSILON * largest
}

/// Bernstein coefficients on [low, high] of sum_k c_k x^k, at its degree n:
/// the Taylor shift to powers of (x - low) by repeated synthetic division,
/// a_j = d_j (high - low)^j for powers of t, then
/// beta_i = sum_{j<=i} C(i, j) / C(n, j) a_j (Lorentz, Bernstein Polynomials,
/// 1953, ch. 1.3). Coefficients that are negative only by the rounding of
/// this conversion (bounded by the same conversion of |c_k| and |low|) are set
/// to zero, so a polynomial vanishing at an end keeps a zero there.
fn to_bernstein(coefficients: &[f64], low: f64, high: f64) -> Vec<f64> {
    let exact = power_to_bernstein(coefficients, low, high - low);
    let magnitudes: Vec<f64> = coefficients.iter().map(|c| c.abs()).collect();
    let bound = power_to_bernstein(&magnitudes, low.abs(), high - low);
    let terms = coefficients.len() as f64;
    exact
        .iter()
        .zip(&bound)
        .map(|(&beta, &scale)| {
            if beta < 0.0 && -beta <= 4.0 * terms * terms * f64::EPSILON * scale {
                0.0
            } else {
                beta
            }
        })
        .collect()
}

fn power_to_bernstein(coefficients: &[f64], low: f64, width: f64) -> Vec<f64> {
    let degree = coefficients.len() - 1;
    let mut shifted = coefficients.to_vec();
    for i in 0..degree {
        for k in (i..degree).rev() {
            shifted[k] += low * shifted[k + 1];
        }
    }
    let mut scale = 1.0;
    for a in shifted.iter_mut() {
        *a *= scale;
        scale *= width;
    }
    (0..=degree)
        .map(|i| {
            (0..=i)
                .map(|j| binomial(i, j) / binomial(degree, j) * shifted[j])
                .sum()
        })
        .collect()
}

/// C(n, k) as a double (exact for the degrees used here).
fn binomial(n: usize, k: usize) -> f64 {
    (0..k).fold(1.0, |product, j| product * (n - j) as f64 / (j + 1) as f64)
}

/// The coefficients of the same polynomial at degree n + 1:
/// beta'_k = (k beta_{k-1} + (n + 1 - k) beta_k) / (n + 1) (degree elevation;
/// Lorentz, ch. 1.3). Repeated, they converge to the polynomial's values.
/// A result within rounding of zero is zero, so an exact zero stays one.
fn elevate(bernstein: &[f64]) -> Vec<f64> {
    let raised = bernstein.len();
    (0..=raised)
        .map(|k| {
            let before = if k > 0 { bernstein[k - 1] } else { 0.0 };
            let at = if k < raised { bernstein[k] } else { 0.0 };
            let (a, b) = (k as f64 * before, (raised - k) as f64 * at);
            let sum = a + b;
            if sum.abs() <= 4.0 * f64::EPSILON * (a.abs() + b.abs()) {
                0.0
            } else {
                sum / raised as f64
            }
        })
        .collect()
}

/// Where sum_k c_k x^k dips below zero on [low, high] beyond its rounding:
/// (x, value) at its lowest point, or None.
///
/// The minimum lies at an end or where p' changes sign. Those sign changes
/// are isolated exactly: between consecutive sign changes of p'' the
/// derivative p' is monotone, so it changes sign at most once there, found by
/// bisection; the sign changes of p'' come the same way from p''', down to a
/// constant (root isolation by successive derivatives, common practice).
fn lowest_below_zero(coefficients: &[f64], low: f64, high: f64) -> Option<(f64, f64)> {
    let (at, value) = sign_changes(&derivative(coefficients), low, high)
        .into_iter()
        .chain([low, high])
        .map(|x| (x, evaluate(coefficients, x)))
        .fold((low, f64::INFINITY), |lowest, point| {
            if point.1 < lowest.1 { point } else { lowest }
        });
    let reach = low.abs().max(high.abs());
    let allowance = rounding_allowance(coefficients.len(), |power| coefficients[power], reach);
    (value < -allowance).then_some((at, value))
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
    use crate::shapes::assert_normalised;

    // 1 - x/2 + x²/5 + x³/20 on [0, 2] has Bernstein coefficients [1, 2/3,
    // 3/5, 6/5] (by hand); inside the domain and at a zero coefficient, and
    // outside where the polynomial dips below zero (b = [1, -3]: 1 - 4t).
    shape_contract_tests! {
        shape: Polynomial::new(&[1.0, -0.5, 0.2, 0.05], [0.0, 2.0]).unwrap(),
        inside: [
            (&[0.7, 1.3, 0.4, 2.0], &(0..=10).map(|i| 0.2 * f64::from(i)).collect::<Vec<f64>>()),
            (&[0.0, 1.0, 0.5, 1.5], &[0.0, 0.01, 0.5, 1.9, 2.0]),
        ],
        outside: [&[1.0, -3.0, 0.0, 0.0], &[-1.0, -1.0, -1.0, -1.0]],
    }

    fn nominal_fractions(coefficients: &[f64], edges: &[f64]) -> Vec<f64> {
        let range = [edges[0], edges[edges.len() - 1]];
        let shape = Polynomial::new(coefficients, range).unwrap();
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

    /// Bernstein coefficients of 1 + x² on [-1, 2] (t = (x + 1)/3): p = 2 -
    /// 6t + 9t², and with b0 = s², b1 = 2ts, b2 = t² the coefficients are
    /// p(0) = 2, p(0) + p'(0)/2 = -1 and p(1) = 5 (Lorentz 1953, ch. 1.3, by
    /// hand). -1 is negative, so the form is elevated: degree 3 gives
    /// [2, 0, 1, 5], all non-negative, then scaled to mean 1.
    #[test]
    fn conversion_and_elevation_by_hand() {
        assert_eq!(to_bernstein(&[1.0, 0.0, 1.0], -1.0, 2.0), [2.0, -1.0, 5.0]);
        assert_eq!(elevate(&[2.0, -1.0, 5.0]), [2.0, 0.0, 1.0, 5.0]);
        let shape = Polynomial::new(&[1.0, 0.0, 1.0], [-1.0, 2.0]).unwrap();
        assert!(shape.can_float());
        assert_eq!(shape.nominal_parameters(), [1.0, 0.0, 0.5, 2.5]);
        assert_eq!(shape.parameter_names(), ["b0", "b1", "b2", "b3"]);
        assert_eq!(shape.parameter_lower_bounds(), [0.0; 4]);
    }

    /// Every set of non-negative coefficients is a density, and the shapes
    /// where one of them is zero are reached at finite values: [0, 1] on
    /// [0, 1] is the density 2x, [1, 0] is 2(1 - x) (closed forms).
    #[test]
    fn zero_coefficients_are_reachable_densities() {
        let shape = Polynomial::new(&[1.0, 1.0], [0.0, 1.0]).unwrap();
        assert!((shape.density(&[0.0, 1.0], 0.0, 1.0, 0.25) - 0.5).abs() < 1e-15);
        assert!((shape.density(&[1.0, 0.0], 0.0, 1.0, 0.25) - 1.5).abs() < 1e-15);
        let mut fractions = [0.0; 2];
        shape.bin_fractions(&[0.0, 1.0], &[0.0, 0.5, 1.0], &mut fractions);
        assert_normalised(&fractions);
        assert!((fractions[0] - 0.25).abs() < 1e-15);
    }

    /// Scaling every coefficient leaves the fractions unchanged (the scale
    /// cancels in the normalised density, definition).
    #[test]
    fn common_scale_cancels() {
        let shape = Polynomial::new(&[1.0, -0.1, 0.005], [6.0, 9.0]).unwrap();
        let edges = [6.0, 7.0, 7.5, 9.0];
        let nominal = shape.nominal_parameters();
        let doubled: Vec<f64> = nominal.iter().map(|b| 2.0 * b).collect();
        let (mut unit, mut twice) = ([0.0; 3], [0.0; 3]);
        shape.bin_fractions(&nominal, &edges, &mut unit);
        shape.bin_fractions(&doubled, &edges, &mut twice);
        assert_normalised(&unit);
        for (a, b) in unit.iter().zip(&twice) {
            assert!((a - b).abs() < 1e-15);
        }
        assert!(shape.scale_free());
    }

    /// 1 - 3x and -1 are refused, 0 is no density.
    #[test]
    fn negative_polynomial_is_refused_or_nan() {
        assert!(matches!(
            Polynomial::new(&[1.0, -3.0], [0.0, 1.0]),
            Err(PolynomialError::Negative { .. })
        ));
        assert!(matches!(
            Polynomial::new(&[-1.0], [0.0, 1.0]),
            Err(PolynomialError::Negative { .. })
        ));
        assert_eq!(
            Polynomial::new(&[0.0, 0.0], [0.0, 1.0]),
            Err(PolynomialError::Zero)
        );
    }

    /// x² - 5e-4 x + 5.25e-8 has roots 1.5e-4 and 3.5e-4 and its minimum
    /// -1e-8 at 2.5e-4 (closed form): between two points of a 2,001-point
    /// grid on [0, 1], but found exactly.
    #[test]
    fn narrow_dip_is_found_exactly() {
        match Polynomial::new(&[5.25e-8, -5e-4, 1.0], [0.0, 1.0]) {
            Err(PolynomialError::Negative { at, value }) => {
                assert!((at - 2.5e-4).abs() < 1e-12, "{at}");
                assert!((value + 1e-8).abs() < 1e-20, "{value}");
            }
            other => panic!("{other:?}"),
        }
    }

    /// Minima from calculus (closed forms): x² - x + 0.21 has its vertex at 0.5
    /// with value -0.04; x³ - x has a minimum -2/(3 sqrt 3) at 1/sqrt 3;
    /// x⁵ - 5x has a minimum -4 at 1 and, on [-2, 0], its minimum -22 at the end -2.
    #[test]
    fn minimum_on_range_from_critical_points_and_ends() {
        let cases = [
            (vec![0.21, -1.0, 1.0], 0.0, 1.0, (0.5, -0.04)),
            (
                vec![0.0, -1.0, 0.0, 1.0],
                0.0,
                2.0,
                (1.0 / 3f64.sqrt(), -2.0 / (3.0 * 3f64.sqrt())),
            ),
            (vec![0.0, -5.0, 0.0, 0.0, 0.0, 1.0], 0.0, 2.0, (1.0, -4.0)),
            (
                vec![0.0, -5.0, 0.0, 0.0, 0.0, 1.0],
                -2.0,
                0.0,
                (-2.0, -22.0),
            ),
        ];
        for (coefficients, low, high, (at, minimum)) in cases {
            let (found_at, found) = lowest_below_zero(&coefficients, low, high).unwrap();
            assert!((found - minimum).abs() < 1e-14, "{found} vs {minimum}");
            assert!((found_at - at).abs() < 1e-7, "{found_at} vs {at}");
        }
    }

    /// (x² - 1/4)² touches zero at ±1/2 and is a density, with antiderivative
    /// x⁵/5 - x³/6 + x/16: [-1, -1/2], [-1/2, 0], [0, 1] hold 19/240, 1/60 and
    /// 23/240 of 23/120 (by hand). It has no non-negative Bernstein form at
    /// any degree (the coefficient nearest a zero inside the range stays
    /// negative; Lorentz 1953, ch. 1.1), so it cannot float. Lowered by 1e-6
    /// it dips below zero.
    #[test]
    fn touching_zero_is_a_density_that_cannot_float() {
        let coefficients = [0.0625, 0.0, -0.5, 0.0, 1.0];
        let touching = Polynomial::new(&coefficients, [-1.0, 1.0]).unwrap();
        assert!(!touching.can_float());
        let fractions = nominal_fractions(&coefficients, &[-1.0, -0.5, 0.0, 1.0]);
        let total = 23.0 / 120.0;
        for (fraction, mass) in fractions
            .iter()
            .zip([19.0 / 240.0, 1.0 / 60.0, 23.0 / 240.0])
        {
            assert!((fraction - mass / total).abs() < 1e-14, "{fraction}");
        }
        let dipping = [0.0625 - 1e-6, 0.0, -0.5, 0.0, 1.0];
        assert!(Polynomial::new(&dipping, [-1.0, 1.0]).is_err());
    }

    /// Density 2x on [0, 1] is 0.6 at 0.3; 1 + x² on [-1, 2] is 2/6 at 1
    /// (closed forms); zero outside the range.
    #[test]
    fn density_is_normalised_polynomial() {
        let linear = Polynomial::new(&[0.0, 2.0], [0.0, 1.0]).unwrap();
        let nominal = linear.nominal_parameters();
        assert!((linear.density(&nominal, 0.0, 1.0, 0.3) - 0.6).abs() < 1e-15);
        assert_eq!(linear.density(&nominal, 0.0, 1.0, 1.5), 0.0);
        let quadratic = Polynomial::new(&[1.0, 0.0, 1.0], [-1.0, 2.0]).unwrap();
        let density = quadratic.density(&quadratic.nominal_parameters(), -1.0, 2.0, 1.0);
        assert!((density - 1.0 / 3.0).abs() < 1e-15);
    }

    /// A constant is flat (definition) and has no parameter.
    #[test]
    fn constant_has_no_parameters() {
        let constant = Polynomial::new(&[3.0], [0.0, 2.0]).unwrap();
        assert!(constant.parameter_names().is_empty());
        let fractions = nominal_fractions(&[3.0], &[0.0, 0.5, 2.0]);
        assert!((fractions[0] - 0.25).abs() < 1e-15);
    }
}
