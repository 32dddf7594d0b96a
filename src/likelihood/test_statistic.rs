//! Test statistics built from pairs of profile-likelihood fits.

use super::{Dataset, FitFailure, Fitter, Likelihood};
use crate::model::SIGNAL_STRENGTH;

/// The discovery test statistic from the two minima of -ln L:
///
///   q0 = -2 ln lambda(0) = 2 [min_{theta} (-ln L | mu = 0) - min_{mu >= 0, theta} (-ln L)]
///
/// and q0 = 0 when the fitted mu is not positive (Cowan, Cranmer, Gross, Vitells,
/// Eur. Phys. J. C 71 (2011) 1554, eq. 12). Since the fit bounds mu >= 0, a
/// fitted mu of zero gives equal minima. Rounding below zero is clipped.
pub fn q0_from_fits(null_nll: f64, free_nll: f64, fitted_mu: f64) -> f64 {
    if fitted_mu > 0.0 {
        (2.0 * (null_nll - free_nll)).max(0.0)
    } else {
        0.0
    }
}

/// Computes q0 for datasets of one model, reusing its fitter.
#[derive(Debug)]
pub struct DiscoveryTest<'l, 'm> {
    fitter: Fitter<'l, 'm>,
    nominal: Vec<f64>,
    null_parameters: Vec<f64>,
    /// The parameters of the last free fit (mu floating).
    free_parameters: Vec<f64>,
}

/// The outcome of the two fits behind one q0.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DiscoveryFit {
    pub q0: f64,
    pub fitted_mu: f64,
}

impl<'l, 'm> DiscoveryTest<'l, 'm> {
    pub fn new(likelihood: &'l Likelihood<'m>) -> DiscoveryTest<'l, 'm> {
        let nominal = likelihood.model().nominal_parameters();
        DiscoveryTest {
            fitter: Fitter::new(likelihood),
            null_parameters: nominal.clone(),
            free_parameters: nominal.clone(),
            nominal,
        }
    }

    /// The parameters of the free fit (mu floating) of the last successful
    /// [`DiscoveryTest::fit`].
    pub fn free_parameters(&self) -> &[f64] {
        &self.free_parameters
    }

    /// The fitter, for fits beyond the discovery pair.
    pub fn fitter(&mut self) -> &mut Fitter<'l, 'm> {
        &mut self.fitter
    }

    /// q0 of `data` after `live_days`. The free fit starts at the generating
    /// values, the background-only fit where the free fit's quadratic
    /// approximation puts the minimum at mu = 0 (see
    /// [`Fitter::conditional_start`]), or at the generating values with mu = 0
    /// when the free fit failed. If the free fit lands above the
    /// background-only minimum (a subset of its parameter space), it is
    /// repeated from the background-only solution.
    pub fn fit(&mut self, live_days: f64, data: &Dataset) -> Result<DiscoveryFit, FitFailure> {
        let first_free = self.fitter.minimise(live_days, data, None, &self.nominal);
        let free_fit = first_free.map(|nll| (nll, self.fitter.parameters()[SIGNAL_STRENGTH]));
        if free_fit.is_ok() {
            self.free_parameters
                .copy_from_slice(self.fitter.parameters());
            self.fitter
                .conditional_start(SIGNAL_STRENGTH, 0.0, &mut self.null_parameters);
        } else {
            self.null_parameters.copy_from_slice(&self.nominal);
        }
        let null_nll = self
            .fitter
            .minimise(live_days, data, Some(0.0), &self.null_parameters)?;
        let (free_nll, fitted_mu) = match free_fit {
            Ok((nll, mu)) if nll <= null_nll => (nll, mu),
            _ => {
                self.null_parameters
                    .copy_from_slice(self.fitter.parameters());
                let nll = self
                    .fitter
                    .minimise(live_days, data, None, &self.null_parameters)?;
                self.free_parameters
                    .copy_from_slice(self.fitter.parameters());
                (nll, self.fitter.parameters()[SIGNAL_STRENGTH])
            }
        };
        Ok(DiscoveryFit {
            q0: q0_from_fits(null_nll, free_nll, fitted_mu),
            fitted_mu,
        })
    }
}
