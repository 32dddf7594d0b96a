//! Shapes: densities on the observable range, integrated exactly over each bin.
//!
//! Every shape is normalised on the fitted range `[edges[0], edges[last]]` and
//! its bin fractions come from a closed-form cumulative distribution, never from
//! sampling. One shape per file, all behind the [`Shape`] trait.

#[cfg(test)]
#[macro_use]
mod contract;

mod breit_wigner;
mod exponential;
mod flat;
mod gaussian;
mod polynomial;
mod tails;

pub use breit_wigner::BreitWigner;
pub use exponential::Exponential;
pub use flat::Flat;
pub use gaussian::Gaussian;
pub use polynomial::{MAX_DEGREE as MAX_POLYNOMIAL_DEGREE, Polynomial, PolynomialError};

/// A normalised density on a range, with parameters that may float in fits.
///
/// `edges` are the bin edges, strictly increasing, at least two of them; the
/// density is normalised on `[edges[0], edges[last]]`.
///
/// A fit may try parameters outside a shape's domain (a width that is not
/// positive, a polynomial that is negative over part of the range). Then every
/// fraction, and every gradient entry, is set to `f64::NAN`, so the fitter
/// rejects the step; no fraction is ever silently negative.
pub trait Shape: std::fmt::Debug + Send + Sync {
    /// Names of the parameters, in the order used by every `params` slice.
    fn parameter_names(&self) -> Vec<String>;

    /// The parameter values given in the scenario.
    fn nominal_parameters(&self) -> Vec<f64>;

    /// The lowest value of each parameter inside the domain, a bound a fit
    /// holds it at; minus infinity by default.
    fn parameter_lower_bounds(&self) -> Vec<f64> {
        vec![f64::NEG_INFINITY; self.nominal_parameters().len()]
    }

    /// Where the density peaks, for a shape with a peak of its own (at
    /// nominal parameters); None for a continuum. Used to centre windows and
    /// bin widths on the signal and to warn about a peak outside the range.
    fn peak(&self) -> Option<Peak> {
        None
    }

    /// Whether the fractions depend only on the ratios of the parameters, so
    /// that multiplying all of them by one positive factor changes nothing.
    /// A fit then fixes that factor (see the likelihood's gauge term).
    fn scale_free(&self) -> bool {
        false
    }

    /// Fraction of the density (normalised on `[edges[0], edges[last]]`) inside
    /// each bin `[edges[i], edges[i + 1]]`, written to `fractions` (length
    /// `edges.len() - 1`). The fractions sum to one.
    fn bin_fractions(&self, params: &[f64], edges: &[f64], fractions: &mut [f64]);

    /// Bin fractions and their derivatives in each parameter:
    /// `gradient[k * bins + i]` = d fraction_i / d `params[k]`.
    ///
    /// The default uses central finite differences of [`Shape::bin_fractions`];
    /// shapes whose parameters commonly float override it analytically. It
    /// allocates nothing for up to `STACK_PARAMETERS` parameters: each row of
    /// `gradient` holds the upper fractions and `fractions` the lower ones
    /// until the difference is taken.
    fn bin_fractions_with_gradient(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &mut [f64],
        gradient: &mut [f64],
    ) {
        let bins = fractions.len();
        with_copy(params, |shifted| {
            for k in 0..params.len() {
                let step = 1e-6 * params[k].abs().max(1e-3);
                let row = &mut gradient[k * bins..(k + 1) * bins];
                shifted[k] = params[k] + step;
                self.bin_fractions(shifted, edges, row);
                shifted[k] = params[k] - step;
                self.bin_fractions(shifted, edges, fractions);
                shifted[k] = params[k];
                for (derivative, lower) in row.iter_mut().zip(&*fractions) {
                    *derivative = (*derivative - lower) / (2.0 * step);
                }
            }
        });
        self.bin_fractions(params, edges, fractions);
    }

    /// Second derivatives of the bin fractions in the parameters,
    /// `curvatures[(k * n + l) * bins + i]` = d2 fraction_i / d `params[k]` d `params[l]`
    /// with n = `params.len()`, given the `fractions` of the same parameters.
    /// Returns false, writing nothing, when the shape does not provide them;
    /// a fit then approximates that block of its Hessian (Gauss-Newton).
    fn bin_fraction_curvatures(
        &self,
        _params: &[f64],
        _edges: &[f64],
        _fractions: &[f64],
        _curvatures: &mut [f64],
    ) -> bool {
        false
    }

    /// The normalised density at `x` on the range `[low, high]` (per unit of the
    /// observable), zero outside the range and NaN outside the shape's domain.
    fn density(&self, params: &[f64], low: f64, high: f64, x: f64) -> f64;
}

/// The maximum of a peaked density and its width.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Peak {
    /// Position of the maximum, in units of the observable.
    pub centre: f64,
    /// Gaussian sigma, or Breit-Wigner half width at half maximum.
    pub width: f64,
    /// The scenario key of the centre inside the shape's mapping, e.g.
    /// `"gaussian.mean"`, for messages that name the field.
    pub centre_key: &'static str,
}

/// Shapes with at most this many parameters are differentiated without allocating.
const STACK_PARAMETERS: usize = 8;

/// Runs `work` on a mutable copy of `params`, on the stack when it is short.
fn with_copy(params: &[f64], work: impl FnOnce(&mut [f64])) {
    if params.len() <= STACK_PARAMETERS {
        let mut copy = [0.0; STACK_PARAMETERS];
        copy[..params.len()].copy_from_slice(params);
        work(&mut copy[..params.len()]);
    } else {
        work(&mut params.to_vec());
    }
}

/// Divides bin masses by their sum, turning them into fractions, and returns the sum.
///
/// When a mass is negative or NaN, or the sum is not positive and finite, the
/// parameters lie outside the shape's domain: every entry becomes NaN and the
/// result is `None`.
fn normalise_masses(masses: &mut [f64]) -> Option<f64> {
    let (total, non_negative) = sum_and_sign(masses);
    let valid = non_negative && total > 0.0 && total.is_finite();
    if !valid {
        mark_invalid(masses);
        return None;
    }
    let scale = total.recip();
    for mass in masses.iter_mut() {
        *mass *= scale;
    }
    Some(total)
}

/// The sum of `values`, in four interleaved partial sums that the compiler
/// can keep in vector registers (it may not reorder a single sum), and
/// whether every value is non-negative (not NaN).
fn sum_and_sign(values: &[f64]) -> (f64, bool) {
    let mut sums = [0.0; 4];
    let mut non_negative = true;
    let mut chunks = values.chunks_exact(4);
    for chunk in &mut chunks {
        for (partial, &value) in sums.iter_mut().zip(chunk) {
            *partial += value;
            non_negative &= value >= 0.0;
        }
    }
    for &value in chunks.remainder() {
        sums[0] += value;
        non_negative &= value >= 0.0;
    }
    ((sums[0] + sums[2]) + (sums[1] + sums[3]), non_negative)
}

/// The fitted range `[edges[0], edges[last]]`.
fn range_of(edges: &[f64]) -> (f64, f64) {
    (edges[0], edges[edges.len() - 1])
}

/// Marks fractions or gradient entries as coming from parameters outside the domain.
fn mark_invalid(values: &mut [f64]) {
    values.fill(f64::NAN);
}

/// Asserts that fractions are non-negative and sum to one within rounding.
#[cfg(test)]
fn assert_normalised(fractions: &[f64]) {
    let sum: f64 = fractions.iter().sum();
    assert!((sum - 1.0).abs() < 1e-12, "fractions sum to {sum}");
    assert!(
        fractions.iter().all(|&fraction| fraction >= 0.0),
        "negative or NaN fraction in {fractions:?}"
    );
}

/// Central difference (f(p + step) - f(p - step)) / (2 step) of every bin
/// fraction in parameter `k`, an independent check of analytic gradients.
#[cfg(test)]
fn central_difference(
    shape: &dyn Shape,
    params: &[f64],
    edges: &[f64],
    k: usize,
    step: f64,
) -> Vec<f64> {
    let bins = edges.len() - 1;
    let fractions_at = |value: f64| {
        let mut shifted = params.to_vec();
        shifted[k] = value;
        let mut fractions = vec![0.0; bins];
        shape.bin_fractions(&shifted, edges, &mut fractions);
        fractions
    };
    let upper = fractions_at(params[k] + step);
    let lower = fractions_at(params[k] - step);
    upper
        .iter()
        .zip(&lower)
        .map(|(up, down)| (up - down) / (2.0 * step))
        .collect()
}
