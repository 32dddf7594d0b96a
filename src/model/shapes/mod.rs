//! Shapes: densities on the observable range, integrated exactly over each bin.
//!
//! Every shape is normalised on the fitted range `[edges[0], edges[last]]` and
//! its bin fractions come from a closed-form cumulative distribution, never from
//! sampling. One shape per file, all behind the [`Shape`] trait.

mod breit_wigner;
mod exponential;
mod flat;
mod gaussian;
mod polynomial;

pub use breit_wigner::BreitWigner;
pub use exponential::Exponential;
pub use flat::Flat;
pub use gaussian::Gaussian;
pub use polynomial::Polynomial;

/// A normalised density on a range, with parameters that may float in fits.
pub trait Shape: std::fmt::Debug + Send + Sync {
    /// Names of the parameters, in the order used by every `params` slice.
    fn parameter_names(&self) -> Vec<String>;

    /// The parameter values given in the scenario.
    fn nominal_parameters(&self) -> Vec<f64>;

    /// Fraction of the density (normalised on `[edges[0], edges[last]]`) inside
    /// each bin `[edges[i], edges[i + 1]]`, written to `fractions` (length
    /// `edges.len() - 1`). The fractions sum to one.
    fn bin_fractions(&self, params: &[f64], edges: &[f64], fractions: &mut [f64]);

    /// Bin fractions and their derivatives in each parameter:
    /// `gradient[k * bins + i]` = d fraction_i / d params[k].
    ///
    /// The default uses central finite differences of [`Shape::bin_fractions`];
    /// shapes whose parameters commonly float override it analytically.
    fn bin_fractions_with_gradient(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &mut [f64],
        gradient: &mut [f64],
    ) {
        let bins = fractions.len();
        self.bin_fractions(params, edges, fractions);
        let mut shifted = params.to_vec();
        let mut upper = vec![0.0; bins];
        let mut lower = vec![0.0; bins];
        for k in 0..params.len() {
            let step = 1e-6 * params[k].abs().max(1e-3);
            shifted[k] = params[k] + step;
            self.bin_fractions(&shifted, edges, &mut upper);
            shifted[k] = params[k] - step;
            self.bin_fractions(&shifted, edges, &mut lower);
            shifted[k] = params[k];
            for i in 0..bins {
                gradient[k * bins + i] = (upper[i] - lower[i]) / (2.0 * step);
            }
        }
    }

    /// The normalised density at `x` on the range `[low, high]` (per unit of the observable).
    fn density(&self, params: &[f64], low: f64, high: f64, x: f64) -> f64;
}
