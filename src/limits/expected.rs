//! Expected upper limits at one exposure.

use super::{exclusion_threshold, expected_limit_significance, poisson_upper_limit};
use crate::ensemble::{EnsembleOutcome, EnsemblePlan, Family, Generator, run_ensemble};
use crate::likelihood::{Dataset, FitFailure, Likelihood, UpperLimitTest};
use crate::model::SIGNAL_STRENGTH;
use crate::numeric::solve_increasing;

/// The bands of expected limits, in the order of every `*_band` field.
pub const BAND_SIGMAS: [f64; 4] = [-2.0, -1.0, 1.0, 2.0];

/// Asymptotic expected CLs limits on mu at one exposure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AsymptoticLimits {
    /// Median expected upper limit on mu.
    pub median: f64,
    /// Expected limits at -2, -1, +1, +2 sigma.
    pub band: [f64; 4],
    /// sigma_A = mu / sqrt(q~_mu,A) at the median limit (Cowan et al. 2011, eq. 31).
    pub sigma: f64,
}

/// The expected limits from the background-only Asimov dataset: for each band
/// N, the mu where sqrt(q~_mu,A) = Phi^-1(1 - alpha Phi(N)) + N, which is
/// mu_up(N) = sigma_A (Phi^-1(1 - alpha Phi(N)) + N) with sigma_A evaluated at
/// that mu (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554,
/// eqs. 29-31 and 88-89).
pub fn asymptotic_limits(
    likelihood: &Likelihood,
    live_days: f64,
    alpha: f64,
) -> Result<AsymptoticLimits, FitFailure> {
    let data = background_only_asimov(likelihood, live_days);
    let mut test = UpperLimitTest::new(likelihood);
    test.fit_free(live_days, &data)?;
    let mut limit_at = |n_sigma: f64| -> Result<f64, FitFailure> {
        let level = expected_limit_significance(alpha, n_sigma);
        let limit = solve_increasing(1.0, level, |mu| {
            Ok(test.q_tilde(live_days, &data, mu)?.sqrt())
        })?;
        Ok(limit.unwrap_or(f64::INFINITY))
    };
    let median = limit_at(0.0)?;
    let band = [
        limit_at(BAND_SIGMAS[0])?,
        limit_at(BAND_SIGMAS[1])?,
        limit_at(BAND_SIGMAS[2])?,
        limit_at(BAND_SIGMAS[3])?,
    ];
    Ok(AsymptoticLimits {
        median,
        band,
        sigma: median / expected_limit_significance(alpha, 0.0),
    })
}

/// The Asimov dataset of the background-only hypothesis (mu = 0, nuisance
/// parameters nominal).
fn background_only_asimov(likelihood: &Likelihood, live_days: f64) -> Dataset {
    let theta = background_only(likelihood);
    likelihood.asimov_dataset(&theta, live_days, &mut likelihood.workspace())
}

fn background_only(likelihood: &Likelihood) -> Vec<f64> {
    let mut theta = likelihood.model().nominal_parameters();
    theta[SIGNAL_STRENGTH] = 0.0;
    theta
}

/// Upper limits on mu of `plan.toys` background-only pseudo-experiments.
///
/// A single counting window whose signal and background are known exactly (mu
/// the only parameter) gets the exact Poisson CLs limit. Otherwise each
/// pseudo-experiment's q~_mu comes from profile-likelihood fits, which carry the
/// systematic uncertainties, and its CLs from the asymptotic formulae with
/// sigma = `sigma` (the Asimov sigma_A).
pub fn toy_limit_ensemble(
    likelihood: &Likelihood,
    live_days: f64,
    exposure_index: usize,
    plan: &EnsemblePlan,
    alpha: f64,
    sigma: f64,
) -> EnsembleOutcome {
    let generator = Generator::new(likelihood, &background_only(likelihood), live_days);
    let streams = Family::Exclusion.stream_index(exposure_index);
    if likelihood.bin_count() == 1 && likelihood.parameter_count() == 1 {
        let (signal, background) = single_bin_expectation(likelihood, live_days);
        run_ensemble(
            &generator,
            streams,
            plan,
            || (),
            |(), data| {
                Some(poisson_upper_limit(
                    data.counts[0],
                    signal,
                    background,
                    alpha,
                ))
            },
        )
    } else {
        run_ensemble(
            &generator,
            streams,
            plan,
            || UpperLimitTest::new(likelihood),
            |test, data| asymptotic_toy_limit(test, live_days, data, alpha, sigma).ok(),
        )
    }
}

/// Expected (signal at mu = 1, background) events in a single-bin model.
fn single_bin_expectation(likelihood: &Likelihood, live_days: f64) -> (f64, f64) {
    let mut work = likelihood.workspace();
    likelihood.expected_counts(
        &likelihood.model().nominal_parameters(),
        live_days,
        &mut work,
    );
    let with_signal = work.expected[0];
    likelihood.expected_counts(&background_only(likelihood), live_days, &mut work);
    (with_signal - work.expected[0], work.expected[0])
}

/// The mu where CLs(q~_mu) = alpha for one dataset: the root of
/// g(mu) = sqrt(q~_mu) - t(mu), where t(mu) is the sqrt(q~_mu) at which the
/// asymptotic CLs equals alpha. g is close to linear in mu (sqrt(q~_mu) is about
/// (mu - mu-hat)/sigma), so the Illinois variant of regula falsi (Dowell and
/// Jarratt, BIT 11 (1971) 168) needs few conditional fits; the root is kept to
/// 1e-3 sigma, far below the spread of limits between pseudo-experiments.
fn asymptotic_toy_limit(
    test: &mut UpperLimitTest,
    live_days: f64,
    data: &Dataset,
    alpha: f64,
    sigma: f64,
) -> Result<f64, FitFailure> {
    let fitted = test.fit_free(live_days, data)?;
    let mut excess = |mu: f64| -> Result<f64, FitFailure> {
        Ok(test.q_tilde(live_days, data, mu)?.sqrt() - exclusion_threshold(mu, sigma, alpha))
    };
    // Low end: at the fitted mu q~ = 0, so g = -t needs no fit, but t grows
    // without bound as mu/sigma -> 0; near zero start half a sigma above instead.
    let (mut low, mut low_value) = if fitted >= 0.5 * sigma {
        (fitted, -exclusion_threshold(fitted, sigma, alpha))
    } else {
        let mut low = fitted + 0.5 * sigma;
        let mut value = excess(low)?;
        while value >= 0.0 && low - fitted > 1e-6 * sigma {
            low = fitted + 0.5 * (low - fitted);
            value = excess(low)?;
        }
        (low, value)
    };
    let mut high = fitted + 2.0 * sigma;
    let mut high_value = excess(high)?;
    while high_value < 0.0 {
        low = high;
        low_value = high_value;
        high += 2.0 * sigma;
        high_value = excess(high)?;
        if high > fitted + 100.0 * sigma {
            return Err(FitFailure::IterationLimit);
        }
    }
    let mut last_replaced = Side::Neither;
    for _ in 0..100 {
        let middle = (low * high_value - high * low_value) / (high_value - low_value);
        if high - low < 1e-3 * sigma {
            return Ok(middle);
        }
        let value = excess(middle)?;
        if value.abs() < 1e-3 {
            return Ok(middle);
        }
        if value < 0.0 {
            low = middle;
            low_value = value;
            if last_replaced == Side::Low {
                high_value /= 2.0;
            }
            last_replaced = Side::Low;
        } else {
            high = middle;
            high_value = value;
            if last_replaced == Side::High {
                low_value /= 2.0;
            }
            last_replaced = Side::High;
        }
    }
    Err(FitFailure::IterationLimit)
}

/// Which end of the bracket the last regula falsi step replaced.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Side {
    Neither,
    Low,
    High,
}
