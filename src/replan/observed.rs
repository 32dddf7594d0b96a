//! What the data taken so far say: the fit of the scenario's model to them,
//! the observed significance and limit, each background's fitted rate
//! against the plan, and the goodness of fit.

use super::ReplanError;
use crate::ensemble::{EnsembleOutcome, EnsemblePlan, Family, Generator, run_ensemble};
use crate::likelihood::{Dataset, DiscoveryTest, Fitter, Likelihood, UpperLimitTest};
use crate::limits::{asymptotic_limit_of, asymptotic_limits};
use crate::look_elsewhere::{REFERENCE_LEVEL, global_significance};
use crate::model::{Model, SIGNAL_STRENGTH};
use crate::projection::ProjectionSettings;
use crate::scenario::SignalScan;
use crate::upcrossings::scan_geometry_of;
use std::ops::Range;

/// A background's pull within this many standard deviations reads "as planned".
pub const AS_PLANNED_WITHIN: f64 = 1.0;

/// The fit of the data taken.
#[derive(Debug, Clone, PartialEq)]
pub struct ObservedFit {
    /// Live days of the data taken.
    pub live_days: f64,
    /// The free fit's signal strength mu-hat (at least 0).
    pub fitted_mu: f64,
    /// Its standard deviation from the curvature of -ln L at the minimum.
    pub fitted_mu_error: Option<f64>,
    /// The observed q0 and local Z = sqrt(q0) at the scenario's signal.
    pub q0: f64,
    pub z_local: f64,
    /// Every parameter at the free fit, with its nominal value.
    pub parameters: Vec<FittedParameter>,
    /// Each background's rate per live day, fitted and planned.
    pub backgrounds: Vec<BackgroundRate>,
    /// With `signal.scan`: the best position and the global Z.
    pub scan: Option<ObservedScan>,
    /// The observed CLs upper limit on mu (asymptotic), when the plan has a CL.
    pub limit: Option<ObservedLimit>,
    pub goodness_of_fit: GoodnessOfFit,
}

#[derive(Debug, Clone, PartialEq)]
pub struct FittedParameter {
    pub name: String,
    pub nominal: f64,
    pub fitted: f64,
}

/// One background's rate in events per live day over its channel's range.
#[derive(Debug, Clone, PartialEq)]
pub struct BackgroundRate {
    pub channel: String,
    pub name: String,
    pub planned_per_day: f64,
    pub fitted_per_day: f64,
    /// The standard deviation of the fitted rate (curvature of -ln L); None
    /// for a background known exactly, whose rate is not fitted.
    pub fitted_error: Option<f64>,
    /// (fitted - planned) / its standard deviation.
    pub pull: Option<f64>,
}

impl BackgroundRate {
    /// Within [`AS_PLANNED_WITHIN`] standard deviations of the plan, or fixed.
    pub fn as_planned(&self) -> bool {
        self.pull.is_none_or(|pull| pull.abs() <= AS_PLANNED_WITHIN)
    }
}

/// The scan of the signal position on the data taken.
#[derive(Debug, Clone, PartialEq)]
pub struct ObservedScan {
    pub best_position: f64,
    /// sqrt(q0) at the best position.
    pub z_local: f64,
    /// Mean upcrossings of q0 = u0 from the Asimov geometry at the live days
    /// taken (the scenario's look-elsewhere estimate); None where degenerate.
    pub upcrossings: Option<f64>,
    pub z_global: Option<f64>,
}

/// The observed CLs limit on mu.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ObservedLimit {
    pub cl: f64,
    /// None when no mu can be excluded.
    pub mu: Option<f64>,
    /// The median expected limit at the live days taken, for comparison.
    pub expected_mu: Option<f64>,
    /// The limit from pseudo-experiments (toy CLs), when asked for;
    /// None also when the search brackets no crossing.
    pub toys_mu: Option<f64>,
    /// Pseudo-experiments per hypothesis and tested mu of `toys_mu`; 0 for none.
    pub toys: usize,
}

/// The saturated-model deviance D = 2 sum_j [nu_j - n_j + n_j ln(n_j/nu_j)]
/// at the free fit (Baker and Cousins, Nucl. Instrum. Meth. 221 (1984) 437,
/// eq. 9 for Poisson counts), with its p-value from datasets drawn at the
/// fit and fitted again, since bins of few counts leave D far from chi-square.
#[derive(Debug, Clone, PartialEq)]
pub struct GoodnessOfFit {
    pub deviance: f64,
    pub bins: usize,
    /// Fraction of converged toys with a deviance at or above the data's;
    /// None without toys.
    pub p_value: Option<f64>,
    pub toys: usize,
    pub failed_fits: usize,
}

/// The fit of `data` (the data taken, after `live_days`) with `model`; the
/// observed limit at `plan.cl` (also from `plan.toys` pseudo-experiments
/// per tested mu from `plan.seed` when `toy_limit_wanted`); the goodness of
/// fit's deviance, whose p-value [`GoodnessOfFit::with_toys`] adds.
pub fn observed_fit(
    model: &Model,
    scan: Option<&SignalScan>,
    data: &Dataset,
    live_days: f64,
    plan: &ProjectionSettings,
    toy_limit_wanted: bool,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<ObservedFit, ReplanError> {
    let likelihood = Likelihood::new(model);
    let failed = |what: &'static str| move |failure| ReplanError::Fit { what, failure };
    let mut test = DiscoveryTest::new(&likelihood);
    let discovery = test
        .fit(live_days, data)
        .map_err(failed("fit of the data taken"))?;
    let mut fitter = Fitter::new(&likelihood);
    fitter
        .minimise(live_days, data, None, test.free_parameters())
        .map_err(failed("fit of the data taken"))?;
    fitter.polish(live_days, data, None);
    let fitted = fitter.parameters().to_vec();
    let covariance = likelihood.covariance(&fitted, live_days, data);
    let error = |p: usize| covariance.as_ref().map(|c| c[p * fitted.len() + p].sqrt());
    let parameters = model
        .parameters
        .iter()
        .zip(&fitted)
        .map(|(parameter, &value)| FittedParameter {
            name: parameter.name.clone(),
            nominal: parameter.nominal,
            fitted: value,
        })
        .collect();
    let backgrounds = background_rates(model, &fitted, covariance.as_deref());
    let scan = scan
        .map(|scan| observed_scan(&likelihood, scan, data, live_days))
        .transpose()?;
    let limit = plan
        .cl
        .map(|cl| {
            let toys = if toy_limit_wanted { plan.toys } else { 0 };
            observed_limit(
                &likelihood,
                data,
                live_days,
                cl,
                (toys, plan.seed, progress),
            )
        })
        .transpose()?;
    let goodness_of_fit = GoodnessOfFit {
        deviance: likelihood.saturated_deviance(
            &fitted,
            live_days,
            &data.counts,
            &mut likelihood.workspace(),
        ),
        bins: data.counts.len(),
        p_value: None,
        toys: 0,
        failed_fits: 0,
    };
    Ok(ObservedFit {
        live_days,
        fitted_mu: fitted[SIGNAL_STRENGTH],
        fitted_mu_error: error(SIGNAL_STRENGTH),
        q0: discovery.q0,
        z_local: discovery.q0.sqrt(),
        parameters,
        backgrounds,
        scan,
        limit,
        goodness_of_fit,
    })
}

/// Each background's rate per live day at nominal and fitted yield factors,
/// its standard deviation by the propagation of the covariance through the
/// product of its factors (d rate / d theta_p = rate / theta_p).
fn background_rates(
    model: &Model,
    fitted: &[f64],
    covariance: Option<&[f64]>,
) -> Vec<BackgroundRate> {
    let nominal = model.nominal_parameters();
    let n = fitted.len();
    let mut rates = Vec::new();
    for channel in &model.channels {
        for component in channel.components.iter().filter(|c| !c.is_signal) {
            let rate = |theta: &[f64]| -> f64 {
                component.events_per_live_day
                    * component
                        .yield_parameters
                        .iter()
                        .map(|&p| theta[p])
                        .product::<f64>()
            };
            let planned = rate(&nominal);
            let fitted_rate = rate(fitted);
            let factors = &component.yield_parameters;
            let fitted_error = covariance.filter(|_| !factors.is_empty()).map(|c| {
                let gradient = |p: usize| {
                    component.events_per_live_day
                        * factors
                            .iter()
                            .filter(|&&q| q != p)
                            .map(|&q| fitted[q])
                            .product::<f64>()
                };
                let mut variance = 0.0;
                for &a in factors {
                    for &b in factors {
                        variance += gradient(a) * c[a * n + b] * gradient(b);
                    }
                }
                variance.max(0.0).sqrt()
            });
            rates.push(BackgroundRate {
                channel: channel.name.clone(),
                name: component.name.clone(),
                planned_per_day: planned,
                fitted_per_day: fitted_rate,
                pull: fitted_error
                    .filter(|&error| error > 0.0)
                    .map(|error| (fitted_rate - planned) / error),
                fitted_error,
            });
        }
    }
    rates
}

/// The best position of the scan on the data and its global significance,
/// through the Asimov geometry's upcrossings at the live days taken (Gross
/// and Vitells, Eur. Phys. J. C 70 (2010) 525, eq. 5), as the projection
/// estimates the look-elsewhere effect.
fn observed_scan(
    likelihood: &Likelihood,
    scan: &SignalScan,
    data: &Dataset,
    live_days: f64,
) -> Result<ObservedScan, ReplanError> {
    use crate::ensemble::{PositionScan, ScanPlacements};
    let placements = ScanPlacements::new(likelihood, scan);
    let mut scanner = PositionScan::new(likelihood, &placements);
    let mut q0 = Vec::with_capacity(scan.len());
    scanner
        .scan(live_days, data, |value| q0.push(value))
        .map_err(|failure| ReplanError::Fit {
            what: "scan of the signal position over the data taken",
            failure,
        })?;
    let (best, &best_q0) = q0
        .iter()
        .enumerate()
        .max_by(|a, b| a.1.total_cmp(b.1).then(b.0.cmp(&a.0)))
        .expect("a scan has positions");
    let z_local = best_q0.sqrt();
    let upcrossings = scan_geometry_of(likelihood, scan, live_days)
        .ok()
        .map(|geometry| geometry.reference_upcrossings());
    Ok(ObservedScan {
        best_position: scan.position(best),
        z_local,
        upcrossings,
        z_global: upcrossings
            .map(|n| global_significance(z_local, REFERENCE_LEVEL, n))
            .filter(|z| z.is_finite()),
    })
}

/// The observed CLs limit with the asymptotic formulae and sigma_A of the
/// background-only Asimov dataset at the same live days (Cowan, Cranmer,
/// Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, eqs. 65-66 and 31), and
/// with `toys` above 0 also from pseudo-experiments ([`toy_limit`]).
fn observed_limit(
    likelihood: &Likelihood,
    data: &Dataset,
    live_days: f64,
    cl: f64,
    toys: (usize, u64, &(dyn Fn(u64) + Sync)),
) -> Result<ObservedLimit, ReplanError> {
    let alpha = 1.0 - cl;
    let expected =
        asymptotic_limits(likelihood, live_days, alpha).map_err(|failure| ReplanError::Fit {
            what: "background-only Asimov fit for the expected limit",
            failure,
        })?;
    let mu = if expected.sigma.is_finite() {
        asymptotic_limit_of(likelihood, live_days, data, alpha, expected.sigma).map_err(
            |failure| ReplanError::Fit {
                what: "limit fits of the data taken",
                failure,
            },
        )?
    } else {
        f64::INFINITY
    };
    let mu = Some(mu).filter(|mu| mu.is_finite());
    let toys_mu = match (toys.0, mu) {
        (0, _) | (_, None) => None,
        (count, Some(guess)) => toy_limit(
            likelihood,
            data,
            live_days,
            alpha,
            guess,
            (count, toys.1, toys.2),
        )?,
    };
    Ok(ObservedLimit {
        cl,
        mu,
        expected_mu: Some(expected.median).filter(|mu| mu.is_finite()),
        toys_mu,
        toys: toys.0,
    })
}

/// Halvings of the bracket of a toy limit, in log mu: 8 narrow a factor 4
/// to 0.5%, below the spread of CLs from a few thousand toys.
const TOY_LIMIT_HALVINGS: usize = 8;

/// The observed CLs limit from pseudo-experiments: at each tested mu,
/// CLs = p_mu / (1 - p_b), with p_mu the fraction of datasets drawn at mu
/// (the other parameters fitted to the data with mu held there) and 1 - p_b
/// the fraction of those drawn without signal (likewise) whose q~_mu is at
/// least the data's (A. L. Read, J. Phys. G 28 (2002) 2693; the generation
/// at profiled parameters as in Cowan et al. 2011, sec. 2); the limit is
/// the mu where CLs falls to `alpha`, bracketed from the asymptotic limit
/// `guess` and narrowed by bisection in log mu. Each tested mu draws from
/// streams keyed by its value, so the same seed gives the same limit.
fn toy_limit(
    likelihood: &Likelihood,
    data: &Dataset,
    live_days: f64,
    alpha: f64,
    guess: f64,
    (toys, seed, progress): (usize, u64, &(dyn Fn(u64) + Sync)),
) -> Result<Option<f64>, ReplanError> {
    let failed = |failure| ReplanError::Fit {
        what: "toy limit fits of the data taken",
        failure,
    };
    let mut observed = UpperLimitTest::new(likelihood);
    observed.fit_free(live_days, data).map_err(failed)?;
    let mut fitter = Fitter::new(likelihood);
    let plan = EnsemblePlan {
        toys: 0..toys,
        seed,
        progress,
    };
    let mut cls = |mu: f64| -> Result<f64, ReplanError> {
        let q_observed = observed.q_tilde(live_days, data, mu).map_err(failed)?;
        let index = (crate::ensemble::splitmix64(mu.to_bits()) & 0x7fff_ffff) as usize;
        let mut fractions = [0.0; 2];
        for (fraction, (tested, family)) in fractions.iter_mut().zip([
            (mu, Family::ObservedLimitSignal),
            (0.0, Family::ObservedLimitBackground),
        ]) {
            let mut start = likelihood.model().nominal_parameters();
            start[SIGNAL_STRENGTH] = tested;
            fitter
                .minimise(live_days, data, Some(tested), &start)
                .map_err(failed)?;
            let generator = Generator::new(likelihood, fitter.parameters(), live_days);
            let outcome = run_ensemble(
                &generator,
                family.stream_index(index),
                &plan,
                || UpperLimitTest::new(likelihood),
                |test, toy| {
                    test.fit_free(live_days, toy).ok()?;
                    test.q_tilde(live_days, toy, mu).ok()
                },
            );
            let converged = outcome.values.len().max(1) as f64;
            let above = outcome.values.iter().filter(|&&q| q >= q_observed).count();
            *fraction = above as f64 / converged;
        }
        let [p_mu, one_minus_p_b] = fractions;
        Ok(if one_minus_p_b > 0.0 {
            p_mu / one_minus_p_b
        } else {
            1.0
        })
    };
    let (mut low, mut high) = (0.5 * guess, 2.0 * guess);
    let mut widened = 0;
    while cls(high)? > alpha {
        (low, high) = (high, 2.0 * high);
        widened += 1;
        if widened > 6 {
            return Ok(None);
        }
    }
    while cls(low)? <= alpha {
        (low, high) = (0.5 * low, low);
        widened += 1;
        if widened > 6 {
            return Ok(None);
        }
    }
    for _ in 0..TOY_LIMIT_HALVINGS {
        let middle = (low * high).sqrt();
        if cls(middle)? > alpha {
            low = middle;
        } else {
            high = middle;
        }
    }
    Ok(Some((low * high).sqrt()))
}

impl ObservedFit {
    /// The parameters of the free fit, in the model's order.
    pub fn fitted_parameters(&self) -> Vec<f64> {
        self.parameters.iter().map(|p| p.fitted).collect()
    }
}

impl GoodnessOfFit {
    /// With the p-value from `outcome`, the deviances of the datasets
    /// drawn at the free fit ([`GoodnessOfFitToys`]): the fraction of the
    /// converged ones at least as large as the data's.
    pub fn with_toys(self, outcome: &EnsembleOutcome) -> GoodnessOfFit {
        let converged = outcome.values.len();
        GoodnessOfFit {
            p_value: (converged > 0).then(|| {
                outcome
                    .values
                    .iter()
                    .filter(|&&d| d >= self.deviance)
                    .count() as f64
                    / converged as f64
            }),
            toys: converged,
            failed_fits: outcome.failed_fits,
            ..self
        }
    }
}

/// The goodness of fit's pseudo-experiments: datasets (bins and global
/// observables) drawn at the free fit `fitted` and fitted again, each
/// giving its own deviance; toy i on its own stream, so any split of the
/// indices gives the same values.
pub struct GoodnessOfFitToys<'l, 'm> {
    pub likelihood: &'l Likelihood<'m>,
    pub fitted: &'l [f64],
    pub live_days: f64,
    pub seed: u64,
    /// The toys of the whole ensemble.
    pub toys: usize,
}

impl GoodnessOfFitToys<'_, '_> {
    /// The deviances of the toys `indices`, in order, with the failed fits.
    pub fn run(&self, indices: Range<usize>, progress: &(dyn Fn(u64) + Sync)) -> EnsembleOutcome {
        let (likelihood, live_days, fitted) = (self.likelihood, self.live_days, self.fitted);
        let generator = Generator::new(likelihood, fitted, live_days);
        let plan = EnsemblePlan {
            toys: indices,
            seed: self.seed,
            progress,
        };
        run_ensemble(
            &generator,
            Family::GoodnessOfFit.stream_index(0),
            &plan,
            || Fitter::new(likelihood),
            |fitter, toy| {
                fitter.minimise(live_days, toy, None, fitted).ok()?;
                let theta = fitter.parameters().to_vec();
                Some(likelihood.saturated_deviance(
                    &theta,
                    live_days,
                    &toy.counts,
                    fitter.workspace(),
                ))
            },
        )
    }
}
