//! The test statistic for upper limits, q~_mu, from profile-likelihood fits.

use super::{Dataset, FitFailure, FitPath, Fitter, Likelihood};
use crate::model::SIGNAL_STRENGTH;

/// q~_mu from the two minima of -ln L:
///
///   q~_mu = 2 [min_theta (-ln L | mu) - min_{mu' >= 0, theta} (-ln L)]  for fitted mu <= mu,
///   q~_mu = 0                                                        for fitted mu > mu
///
/// (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, eq. 16).
/// Bounding the fitted mu at zero gives the tilde form, where L(0) replaces
/// L(mu-hat) when mu-hat would be negative. Rounding below zero is clipped.
pub fn q_tilde_from_fits(
    conditional_nll: f64,
    free_nll: f64,
    fitted_mu: f64,
    tested_mu: f64,
) -> f64 {
    if fitted_mu > tested_mu {
        0.0
    } else {
        (2.0 * (conditional_nll - free_nll)).max(0.0)
    }
}

/// q~_mu of one dataset at any tested mu: the free fit is done once, then one
/// conditional fit per tested value, each started where the last two
/// conditional fits predict its minimum ([`FitPath`]; the tested values of a
/// search for a limit close in on each other), or from the free fit for the
/// first.
#[derive(Debug)]
pub struct UpperLimitTest<'l, 'm> {
    likelihood: &'l Likelihood<'m>,
    fitter: Fitter<'l, 'm>,
    nominal: Vec<f64>,
    free_parameters: Vec<f64>,
    free_nll: f64,
    fitted_mu: f64,
    /// Starts of the conditional fits, along the tested mu.
    conditional_fits: FitPath,
}

impl<'l, 'm> UpperLimitTest<'l, 'm> {
    pub fn new(likelihood: &'l Likelihood<'m>) -> UpperLimitTest<'l, 'm> {
        let nominal = likelihood.model().nominal_parameters();
        UpperLimitTest {
            likelihood,
            fitter: Fitter::new(likelihood),
            free_parameters: nominal.clone(),
            conditional_fits: FitPath::new(&nominal),
            nominal,
            free_nll: f64::NAN,
            fitted_mu: f64::NAN,
        }
    }

    /// The free fit of `data` (mu >= 0); returns the fitted mu.
    pub fn fit_free(&mut self, live_days: f64, data: &Dataset) -> Result<f64, FitFailure> {
        self.free_nll = self.fitter.minimise(live_days, data, None, &self.nominal)?;
        self.free_parameters
            .copy_from_slice(self.fitter.parameters());
        self.fitted_mu = self.free_parameters[SIGNAL_STRENGTH];
        self.conditional_fits = FitPath::new(&self.free_parameters);
        Ok(self.fitted_mu)
    }

    /// The free fit of `data`, the Asimov dataset of `theta`, without
    /// fitting: theta itself, where every term of -ln L vanishes (see
    /// [`super::AsimovDiscovery`]); returns the fitted mu.
    pub fn free_at_generating_point(
        &mut self,
        live_days: f64,
        data: &Dataset,
        theta: &[f64],
    ) -> f64 {
        self.free_nll = self.likelihood.negative_log_likelihood(
            theta,
            live_days,
            data,
            self.fitter.workspace(),
        );
        self.free_parameters.copy_from_slice(theta);
        self.fitted_mu = theta[SIGNAL_STRENGTH];
        self.conditional_fits = FitPath::new(theta);
        self.fitted_mu
    }

    /// q~_mu of the dataset last given to [`UpperLimitTest::fit_free`] and
    /// its derivative in mu: by the envelope theorem, 2 d(-ln L)/d mu at the
    /// conditional fit, the fitted nuisance parameters' own dependence on mu
    /// dropping out (0 where q~_mu is 0).
    pub fn q_tilde_with_slope(
        &mut self,
        live_days: f64,
        data: &Dataset,
        tested_mu: f64,
    ) -> Result<(f64, f64), FitFailure> {
        let q = self.q_tilde(live_days, data, tested_mu)?;
        if self.fitted_mu > tested_mu {
            return Ok((q, 0.0));
        }
        Ok((q, 2.0 * self.fitter.signal_strength_gradient(live_days)))
    }

    /// q~_mu of the dataset last given to [`UpperLimitTest::fit_free`].
    pub fn q_tilde(
        &mut self,
        live_days: f64,
        data: &Dataset,
        tested_mu: f64,
    ) -> Result<f64, FitFailure> {
        if self.fitted_mu > tested_mu {
            return Ok(0.0);
        }
        let start = self.conditional_fits.start_for(tested_mu);
        let conditional = self
            .fitter
            .minimise(live_days, data, Some(tested_mu), start)?;
        self.conditional_fits
            .record(tested_mu, self.fitter.parameters());
        Ok(q_tilde_from_fits(
            conditional,
            self.free_nll,
            self.fitted_mu,
            tested_mu,
        ))
    }
}
