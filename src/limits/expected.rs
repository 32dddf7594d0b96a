//! Expected upper limits at one exposure.

use super::{
    UncertainYield, exclusion_threshold, expected_limit_significance, poisson_upper_limit,
    quadrature_nodes_for, standard_normal_nodes,
};
use crate::ensemble::{EnsembleOutcome, EnsemblePlan, Family, Generator, run_ensemble};
use crate::likelihood::{Dataset, FitFailure, Likelihood, UpperLimitTest};
use crate::model::{Constraint, Model, SIGNAL_STRENGTH};
use crate::numeric::{solve_increasing_with_slope, square_root_with_slope};

/// The bands of expected limits, in the order of every `*_band` field.
pub const BAND_SIGMAS: [f64; 4] = [-2.0, -1.0, 1.0, 2.0];

/// Asymptotic expected CLs limits on mu at one exposure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AsymptoticLimits {
    /// Median expected upper limit on mu; infinite when there is none (see
    /// [`asymptotic_limits`]).
    pub median: f64,
    /// Expected limits at -2, -1, +1, +2 sigma; infinite where there is none.
    pub band: [f64; 4],
    /// sigma_A = mu / sqrt(q~_mu,A) at the median limit (Cowan et al. 2011, eq. 31).
    pub sigma: f64,
}

/// The expected limits from the background-only Asimov dataset: for each band
/// N, the mu where sqrt(q~_mu,A) = Phi^-1(1 - alpha Phi(N)) + N, which is
/// mu_up(N) = sigma_A (Phi^-1(1 - alpha Phi(N)) + N) with sigma_A evaluated at
/// that mu (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554,
/// eqs. 29-31 and 88-89).
///
/// Each root is found by Newton's method from a guess, or where that does
/// not converge bracketed by doubling or halving from it, within 2^60 times
/// that guess either way ([`solve_increasing_with_slope`]). The median is searched from the nominal
/// signal (mu = 1) or, when the signal is so large that its limit lies far
/// below it, from its counting estimate 1.96 sqrt(b)/s (eq. 89 with sigma_A
/// of one count, `Model::counting_sigma`), so a limit of 1e-20 is found as
/// surely as one of 0.1; each band is searched from the
/// median's sigma_A times its own level (eq. 89), close to its root. Starting
/// near the root also keeps each conditional fit close to the last one,
/// which it starts from: a band searched from mu = 1 after a median of 1e-4
/// can leave the fit of a huge signal in a spurious minimum at a parameter
/// bound, where q~_mu no longer falls to 0 at mu = 0.
///
/// A limit is infinite (reported as absent) when q~_mu stays below its level
/// up to 2^60 times the guess (no mu is excluded: a signal at most 2^-60 of
/// what the limit would need has no limit worth reporting), and also when no
/// crossing can be bracketed (q~_mu stays above the level down to 2^-60
/// times the guess, or jumps across it): the fits converge there, but give
/// no limit to report.
pub fn asymptotic_limits(
    likelihood: &Likelihood,
    live_days: f64,
    alpha: f64,
) -> Result<AsymptoticLimits, FitFailure> {
    let mut search = ExpectedLimitSearch::new(likelihood, live_days, alpha);
    let median = search.median()?;
    let sigma = median / search.level(0.0);
    let mut band = [f64::INFINITY; 4];
    for (limit, n_sigma) in band.iter_mut().zip(BAND_SIGMAS) {
        let guess = if sigma.is_finite() {
            sigma * search.level(n_sigma)
        } else {
            search.median_guess()
        };
        *limit = search.limit(n_sigma, guess)?;
    }
    Ok(AsymptoticLimits {
        median,
        band,
        sigma,
    })
}

/// The median expected limit alone, as [`asymptotic_limits`] finds it
/// (no bands searched).
pub fn asymptotic_median_limit(
    likelihood: &Likelihood,
    live_days: f64,
    alpha: f64,
) -> Result<f64, FitFailure> {
    ExpectedLimitSearch::new(likelihood, live_days, alpha).median()
}

/// q~_mu of the background-only Asimov dataset at one exposure, and the
/// searches for the mu where its square root reaches each band's level,
/// by Newton's method with the derivative of q~_mu
/// ([`UpperLimitTest::q_tilde_with_slope`], [`solve_increasing_with_slope`]).
/// The dataset's free fit is its generating point, mu = 0.
struct ExpectedLimitSearch<'l, 'm> {
    likelihood: &'l Likelihood<'m>,
    test: UpperLimitTest<'l, 'm>,
    data: Dataset,
    live_days: f64,
    alpha: f64,
}

impl<'l, 'm> ExpectedLimitSearch<'l, 'm> {
    fn new(likelihood: &'l Likelihood<'m>, live_days: f64, alpha: f64) -> Self {
        let theta = background_only(likelihood);
        let data = likelihood.asimov_dataset(&theta, live_days, &mut likelihood.workspace());
        let mut test = UpperLimitTest::new(likelihood);
        test.free_at_generating_point(live_days, &data, &theta);
        ExpectedLimitSearch {
            likelihood,
            test,
            data,
            live_days,
            alpha,
        }
    }

    /// The level of sqrt(q~_mu) at the band `n_sigma` (eq. 89).
    fn level(&self, n_sigma: f64) -> f64 {
        expected_limit_significance(self.alpha, n_sigma)
    }

    /// The median's search start: the nominal signal, or its counting
    /// estimate where that is smaller (see [`asymptotic_limits`]).
    fn median_guess(&self) -> f64 {
        (self.level(0.0) * self.likelihood.model().counting_sigma(self.live_days)).min(1.0)
    }

    fn median(&mut self) -> Result<f64, FitFailure> {
        self.limit(0.0, self.median_guess())
    }

    /// The expected limit at the band `n_sigma`, searched from `guess`;
    /// infinite where there is none.
    fn limit(&mut self, n_sigma: f64, guess: f64) -> Result<f64, FitFailure> {
        let level = self.level(n_sigma);
        let (test, data, live_days) = (&mut self.test, &self.data, self.live_days);
        let crossing = solve_increasing_with_slope(guess, level, |mu| {
            let (q, slope) = test.q_tilde_with_slope(live_days, data, mu)?;
            Ok(square_root_with_slope(q, slope))
        })?;
        Ok(crossing.root().unwrap_or(f64::INFINITY))
    }
}

fn background_only(likelihood: &Likelihood) -> Vec<f64> {
    let mut theta = likelihood.model().nominal_parameters();
    theta[SIGNAL_STRENGTH] = 0.0;
    theta
}

/// Upper limits on mu of the background-only pseudo-experiments.
///
/// A single counting window whose uncertainties are all Gaussian constraints on
/// yields gets the exact Poisson CLs limit, averaged over those constraints
/// around each pseudo-experiment's global observables (`CountingWindow`).
/// Otherwise each pseudo-experiment's q~_mu comes from profile-likelihood fits,
/// which carry the systematic uncertainties, and its CLs from the asymptotic
/// formulae with sigma = `sigma` (the Asimov sigma_A).
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
    limit_ensemble(
        likelihood, &generator, live_days, streams, plan, alpha, sigma,
    )
}

/// Upper limits on mu of the pseudo-experiments `plan.toys` that `generator`
/// draws after `live_days` from the streams `stream_index`, as
/// [`toy_limit_ensemble`] computes them.
pub fn limit_ensemble(
    likelihood: &Likelihood,
    generator: &Generator,
    live_days: f64,
    streams: u64,
    plan: &EnsemblePlan,
    alpha: f64,
    sigma: f64,
) -> EnsembleOutcome {
    match CountingWindow::of(likelihood.model(), live_days) {
        Some(window) => run_ensemble(
            generator,
            streams,
            plan,
            || (),
            |(), data| window.upper_limit(data, alpha),
        ),
        None => run_ensemble(
            generator,
            streams,
            plan,
            || UpperLimitTest::new(likelihood),
            |test, data| asymptotic_toy_limit(test, live_days, data, alpha, sigma).ok(),
        ),
    }
}

/// A one-bin model whose nuisance parameters are all yield factors with
/// Gaussian constraints: the signal and background expectations after the live
/// days, and which global observable smears each.
#[derive(Debug, Clone)]
struct CountingWindow {
    /// Expected signal events at mu = 1 and unit factors.
    signal: f64,
    /// (constraint index, relative width) of the signal yield factor.
    signal_constraint: Option<(usize, f64)>,
    /// Background events known exactly.
    fixed_background: f64,
    /// (constraint index, relative width, expected events) of each uncertain background.
    uncertain_backgrounds: Vec<(usize, f64, f64)>,
    standard_nodes: Vec<(f64, f64)>,
}

impl CountingWindow {
    /// The counting window of `model`, or None when the model has several bins,
    /// a control region, a parameter without a Gaussian constraint, or a
    /// factor shared between yields or a yield with several factors.
    fn of(model: &Model, live_days: f64) -> Option<CountingWindow> {
        let [channel] = model.channels.as_slice() else {
            return None;
        };
        let all_gaussian = model
            .constraints
            .iter()
            .all(|c| matches!(c, Constraint::Gaussian { .. }));
        let one_factor_each = channel.components.iter().all(|component| {
            component
                .yield_parameters
                .iter()
                .filter(|&&p| p != SIGNAL_STRENGTH)
                .count()
                <= 1
        });
        let factors_apart = (1..model.parameters.len()).all(|parameter| {
            channel
                .components
                .iter()
                .filter(|component| component.yield_parameters.contains(&parameter))
                .count()
                <= 1
        });
        if channel.edges.len() != 2
            || !all_gaussian
            || !one_factor_each
            || !factors_apart
            || model.parameters.len() != 1 + model.constraints.len()
        {
            return None;
        }
        let constraint_of = |parameter: usize| {
            model
                .constraints
                .iter()
                .enumerate()
                .find_map(|(index, c)| match *c {
                    Constraint::Gaussian {
                        parameter: p,
                        width,
                    } if p == parameter => Some((index, width)),
                    _ => None,
                })
        };
        let mut window = CountingWindow {
            signal: 0.0,
            signal_constraint: None,
            fixed_background: 0.0,
            uncertain_backgrounds: Vec::new(),
            standard_nodes: Vec::new(),
        };
        for component in &channel.components {
            let events = component.events(live_days);
            let factor = component
                .yield_parameters
                .iter()
                .find(|&&p| p != SIGNAL_STRENGTH)
                .and_then(|&p| constraint_of(p));
            match (component.is_signal, factor) {
                (true, constraint) => {
                    window.signal += events;
                    window.signal_constraint = constraint;
                }
                (false, Some((index, width))) => {
                    window.uncertain_backgrounds.push((index, width, events))
                }
                (false, None) => window.fixed_background += events,
            }
        }
        let background = window.fixed_background
            + window
                .uncertain_backgrounds
                .iter()
                .map(|&(_, _, events)| events)
                .sum::<f64>();
        let widest = window
            .signal_constraint
            .map_or(0.0, |(_, width)| width * window.signal)
            .max(window.background_width());
        window.standard_nodes = standard_normal_nodes(quadrature_nodes_for(widest, background));
        Some(window)
    }

    /// Width of the summed background from its uncertain parts, in quadrature.
    fn background_width(&self) -> f64 {
        self.uncertain_backgrounds
            .iter()
            .map(|&(_, width, events)| (width * events).powi(2))
            .sum::<f64>()
            .sqrt()
    }

    /// The exact CLs limit of one pseudo-experiment, the yields smeared by
    /// their constraints around its global observables; None (a failure) when
    /// no limit is found.
    fn upper_limit(&self, data: &Dataset, alpha: f64) -> Option<f64> {
        let observed = &data.global_observables;
        let signal = match self.signal_constraint {
            Some((index, width)) => UncertainYield::gaussian(
                self.signal * observed[index],
                self.signal * width,
                &self.standard_nodes,
            ),
            None => UncertainYield::known(self.signal),
        };
        let mean = self.fixed_background
            + self
                .uncertain_backgrounds
                .iter()
                .map(|&(index, _, events)| events * observed[index])
                .sum::<f64>();
        let background =
            UncertainYield::gaussian(mean, self.background_width(), &self.standard_nodes);
        poisson_upper_limit(data.counts[0], &signal, &background, alpha)
    }
}

/// The mu where CLs(q~_mu) = alpha for one dataset: the root of
/// g(mu) = sqrt(q~_mu) - t(mu), where t(mu) is the sqrt(q~_mu) at which the
/// asymptotic CLs equals alpha. g is close to linear in mu (sqrt(q~_mu) is about
/// (mu - mu-hat)/sigma), so the Illinois variant of regula falsi (Dowell and
/// Jarratt, BIT 11 (1971) 168) needs few conditional fits; the root is kept to
/// 1e-3 sigma, far below the spread of limits between pseudo-experiments.
/// The CLs upper limit on mu of one dataset (the data taken, say), from
/// q~_mu and the asymptotic formulae with sigma = `sigma` (the Asimov
/// sigma_A), as each background-only pseudo-experiment's limit is found.
pub fn asymptotic_limit_of(
    likelihood: &Likelihood,
    live_days: f64,
    data: &Dataset,
    alpha: f64,
    sigma: f64,
) -> Result<f64, FitFailure> {
    let mut test = UpperLimitTest::new(likelihood);
    asymptotic_toy_limit(&mut test, live_days, data, alpha, sigma)
}

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
