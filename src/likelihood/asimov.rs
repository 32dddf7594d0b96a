//! The discovery test statistic of the Asimov dataset with one fit, its
//! derivative in the signal strength, and the signal strength where it
//! reaches a significance.
//!
//! The Asimov dataset of parameters theta has n_j = nu_j(theta) and global
//! observables at their expected values, so every deviance term and every
//! constraint term of -ln L vanishes at theta itself: theta is the free
//! minimum, where -ln L = 0, and q0 needs only the background-only fit
//! (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, sec. 3.1
//! and 5.1). The nuisance parameters' nominal values do not move with mu, so
//! nu_j(mu) = b_j + mu s_j and the datasets of all signal strengths at one
//! exposure share b and s.
//!
//! The derivative of q0 along the signal strength mu of the generating point
//! needs no further fit: with n_j(mu) = nu_j(mu, theta0), the envelope
//! theorem removes the fitted parameters' dependence on mu, and
//!
//!   dq0/dmu = 2 sum_j s_j ln(nu_j(mu, theta0) / nu_j(0, theta-hat-0)),  s_j = dnu_j/dmu,
//!
//! since d/dn_j of the deviance n_j ln(n_j/nu_j) - n_j is ln(n_j/nu_j) at
//! the background-only fit, and the term at the generating point is zero for
//! every mu (derivation by hand).

use super::{Dataset, FitFailure, FitPath, Fitter, Likelihood, q0_from_fits};
use crate::model::SIGNAL_STRENGTH;
use crate::numeric::{Crossing, solve_increasing_with_slope, square_root_with_slope};

/// q0 of the Asimov datasets of one likelihood at any signal strength and
/// exposure, the nuisance parameters at their nominal values; each
/// background-only fit starts where the last two fits at the same exposure
/// predict its minimum ([`FitPath`]).
#[derive(Debug)]
pub struct AsimovDiscovery<'l, 'm> {
    likelihood: &'l Likelihood<'m>,
    fitter: Fitter<'l, 'm>,
    /// Starts of the background-only fits, along the generating mu.
    null_fits: FitPath,
    /// The parts of the datasets at the last exposure asked for (at NaN
    /// live days, which no exposure equals, before the first).
    parts: AsimovParts,
    /// The dataset of the last signal strength (its counts rewritten each time).
    data: Dataset,
}

/// What the Asimov datasets of every signal strength share at one exposure:
/// nu_j(mu, theta0) = b_j + mu s_j, and the global observables.
#[derive(Debug)]
struct AsimovParts {
    live_days: f64,
    /// b_j: the expected counts without signal.
    background: Vec<f64>,
    /// s_j = dnu_j/dmu.
    signal: Vec<f64>,
    /// The bins whose signal matters to the derivative: s_j above
    /// [`SIGNAL_FLOOR`] of the largest.
    signal_bins: Vec<usize>,
}

/// Bins whose signal is below this fraction of the largest bin's are left
/// out of dq0/dmu, which only steers the search for a signal strength: the
/// shapes' far tails (down to 1e-100 of a bin) would cost a logarithm each.
const SIGNAL_FLOOR: f64 = 1e-12;

/// q0 of one Asimov dataset and its derivative in the generating signal strength.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AsimovQ0 {
    pub q0: f64,
    pub slope: f64,
}

impl AsimovQ0 {
    /// Z_A = sqrt(q0) and dZ_A/dmu = (dq0/dmu) / (2 Z_A).
    pub fn significance_and_slope(self) -> (f64, f64) {
        square_root_with_slope(self.q0, self.slope)
    }
}

impl<'l, 'm> AsimovDiscovery<'l, 'm> {
    pub fn new(likelihood: &'l Likelihood<'m>) -> AsimovDiscovery<'l, 'm> {
        let mut background_only = likelihood.model().nominal_parameters();
        background_only[SIGNAL_STRENGTH] = 0.0;
        AsimovDiscovery {
            likelihood,
            fitter: Fitter::new(likelihood),
            null_fits: FitPath::new(&background_only),
            parts: AsimovParts {
                live_days: f64::NAN,
                background: Vec::new(),
                signal: Vec::new(),
                signal_bins: Vec::new(),
            },
            data: Dataset {
                counts: vec![0.0; likelihood.bins],
                global_observables: Vec::new(),
            },
        }
    }

    /// q0 of the Asimov dataset of signal strength `mu` after `live_days`,
    /// and dq0/dmu (module docs). The free minimum is the generating point,
    /// where -ln L is zero; q0 is twice the background-only minimum.
    pub fn q0(&mut self, live_days: f64, mu: f64) -> Result<AsimovQ0, FitFailure> {
        self.prepare(live_days);
        let parts = &self.parts;
        for ((n, b), s) in self
            .data
            .counts
            .iter_mut()
            .zip(&parts.background)
            .zip(&parts.signal)
        {
            *n = b + mu * s;
        }
        let start = self.null_fits.start_for(mu);
        let null_nll = self
            .fitter
            .minimise(live_days, &self.data, Some(0.0), start)?;
        self.null_fits.record(mu, self.fitter.parameters());
        let expected = self.fitter.expected_counts();
        let log_ratio: f64 = parts
            .signal_bins
            .iter()
            .map(|&j| parts.signal[j] * (self.data.counts[j] / expected[j]).ln())
            .sum();
        Ok(AsimovQ0 {
            q0: q0_from_fits(null_nll, 0.0, mu),
            slope: 2.0 * log_ratio,
        })
    }

    /// Z_A = sqrt(q0) of the Asimov dataset of signal strength `mu` after `live_days`.
    pub fn significance(&mut self, live_days: f64, mu: f64) -> Result<f64, FitFailure> {
        Ok(self.q0(live_days, mu)?.q0.sqrt())
    }

    /// The signal strength whose Asimov dataset after `live_days` gives
    /// Z_A = `z`, searched from `guess` by Newton's method on Z_A with its
    /// derivative ([`solve_increasing_with_slope`]).
    pub fn strength_for(
        &mut self,
        live_days: f64,
        z: f64,
        guess: f64,
    ) -> Result<Crossing, FitFailure> {
        solve_increasing_with_slope(guess, z, |mu| {
            Ok(self.q0(live_days, mu)?.significance_and_slope())
        })
    }

    /// The background, signal and global observables of the datasets after
    /// `live_days`, unless they are those of the last exposure.
    fn prepare(&mut self, live_days: f64) {
        if self.parts.live_days == live_days {
            return;
        }
        let likelihood = self.likelihood;
        let mut theta = likelihood.model().nominal_parameters();
        theta[SIGNAL_STRENGTH] = 0.0;
        let without_signal = likelihood.asimov_dataset(&theta, live_days, self.fitter.workspace());
        let mut signal = vec![0.0; likelihood.bins];
        theta[SIGNAL_STRENGTH] = 1.0;
        likelihood.signal_per_unit_strength(
            &theta,
            live_days,
            self.fitter.workspace(),
            &mut signal,
        );
        let largest = signal.iter().copied().fold(0.0, f64::max);
        let signal_bins = (0..signal.len())
            .filter(|&j| signal[j] > SIGNAL_FLOOR * largest)
            .collect();
        self.data.global_observables = without_signal.global_observables;
        self.parts = AsimovParts {
            live_days,
            background: without_signal.counts,
            signal,
            signal_bins,
        };
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::likelihood::DiscoveryTest;
    use crate::model::Model;
    use crate::scenario::Scenario;

    fn model(text: &str) -> Model {
        Model::from_scenario(&Scenario::from_yaml(text).unwrap())
    }

    /// A counting window with a known background: q0 = 2[(s + b) ln(1 + s/b) - s]
    /// (Cowan et al., EPJC 71 (2011) 1554, eq. 97) and its derivative in mu,
    /// dq0/dmu = 2 s ln(1 + mu s/b) (by hand), at s = 10 mu, b = 40.
    #[test]
    fn one_bin_matches_the_closed_form_and_its_derivative() {
        let model = model(
            "title: window\nobservable: {name: m, unit: GeV, range: [0.0, 1.0], bin_width: 1.0}\n\
             signal: {events_per_day: 1.0, shape: {flat: {}}}\n\
             backgrounds: [{name: b, events_per_day: 4.0, shape: {flat: {}}}]\n\
             plan: {days: [10], toys: 10, seed: 1, targets: [3]}\n",
        );
        let likelihood = Likelihood::new(&model);
        let mut asimov = AsimovDiscovery::new(&likelihood);
        for mu in [0.3, 1.0, 4.0] {
            let (s, b) = (10.0 * mu, 40.0);
            let found = asimov.q0(10.0, mu).unwrap();
            let q0 = 2.0 * ((s + b) * (1.0 + s / b).ln() - s);
            let slope = 2.0 * 10.0 * (1.0 + s / b).ln();
            assert!(
                (found.q0 / q0 - 1.0).abs() < 1e-12,
                "{mu}: {found:?} vs {q0}"
            );
            assert!(
                (found.slope / slope - 1.0).abs() < 1e-12,
                "{mu}: {found:?} vs {slope}"
            );
        }
    }

    /// With a constrained background and a floating shape the one-fit q0
    /// equals the two-fit q0 of the discovery test, and its derivative equals
    /// the difference quotient of q0 (central, step 1e-4 of mu) to 1e-4: the
    /// derivative is first order in the fitted parameters, which the fit's
    /// convergence on -ln L gives to about 1e-5, where q0 is second order.
    #[test]
    fn agrees_with_two_fits_and_with_its_difference_quotient() {
        let model = model(
            "title: peak\nobservable: {name: m, unit: GeV, range: [0.0, 10.0], bin_width: 0.25}\n\
             signal: {events_per_day: 0.5, shape: {gaussian: {mean: 5.0, sigma: 0.4}}, yield_uncertainty: 0.1}\n\
             backgrounds: [{name: b, events_per_day: 20.0, shape: {exponential: {slope: -0.2}}, norm_uncertainty: 0.1, float_shape: true}]\n\
             plan: {days: [10], toys: 10, seed: 1, targets: [3]}\n",
        );
        let likelihood = Likelihood::new(&model);
        let mut asimov = AsimovDiscovery::new(&likelihood);
        let mut two_fits = DiscoveryTest::new(&likelihood);
        for (live_days, mu) in [(30.0, 1.0), (300.0, 0.2), (5.0, 3.0)] {
            let found = asimov.q0(live_days, mu).unwrap();
            let mut theta = model.nominal_parameters();
            theta[SIGNAL_STRENGTH] = mu;
            let data = likelihood.asimov_dataset(&theta, live_days, two_fits.fitter().workspace());
            let reference = two_fits.fit(live_days, &data).unwrap().q0;
            assert!(
                (found.q0 / reference - 1.0).abs() < 1e-9,
                "{found:?} vs {reference}"
            );
            let h = 1e-4 * mu;
            let quotient = (asimov.q0(live_days, mu + h).unwrap().q0
                - asimov.q0(live_days, mu - h).unwrap().q0)
                / (2.0 * h);
            assert!(
                (found.slope / quotient - 1.0).abs() < 1e-4,
                "{found:?} vs {quotient}"
            );
        }
    }
}
