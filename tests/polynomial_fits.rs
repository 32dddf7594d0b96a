//! Fits with floated polynomial backgrounds, and the fits that once failed on
//! legal scenarios: checked against an independent minimisation written here.

mod common;

use common::model;
use runcast::asymptotic::AsimovSignificance;
use runcast::ensemble::{EnsemblePlan, discovery_ensemble};
use runcast::likelihood::{Dataset, Likelihood, UpperLimitTest};
use runcast::limits::{asymptotic_limits, toy_limit_ensemble};
use statrs::distribution::{ContinuousCDF, Normal};

/// A Gaussian signal of `signal` events per day at 260 (sigma 2) on one
/// background of 25 per day with a free normalisation and the polynomial
/// `coefficients` floated, over [200, 300] in bins of 2.
fn floated_polynomial(signal: f64, coefficients: &str) -> String {
    format!(
        "title: floated polynomial\n\
         observable: {{name: energy, unit: keV, range: [200.0, 300.0], bin_width: 2.0}}\n\
         signal: {{events_per_day: {signal}, shape: {{gaussian: {{mean: 260.0, sigma: 2.0}}}}}}\n\
         backgrounds:\n  - {{name: continuum, events_per_day: 25.0, shape: {{polynomial: {{coefficients: {coefficients}}}}}, norm_uncertainty: free, float_shape: true}}\n\
         plan: {{days: {{first: 1, last: 30, points: 2, spacing: log}}, toys: 1, seed: 1, targets: [3, 5]}}\n"
    )
}

fn plan(toys: usize) -> EnsemblePlan<'static> {
    EnsemblePlan {
        toys: 0..toys,
        seed: 8,
        progress: &|_| {},
    }
}

/// Discovery and limit toys of a floated background fail in no fit: the
/// target is below 0.1%, so none of 1,000 (at 0.1% the chance of none would
/// be 37%, so a rate at the target is caught two times in three; binomial).
fn assert_no_failed_fits(yaml: &str, live_days: &[f64], toys: usize) {
    let model = model(yaml);
    let likelihood = Likelihood::new(&model);
    for (index, &days) in live_days.iter().enumerate() {
        let limits = asymptotic_limits(&likelihood, days, 0.05).unwrap();
        assert!(limits.median.is_finite() && limits.band.iter().all(|l| l.is_finite()));
        let discovery = discovery_ensemble(&likelihood, days, index, &plan(toys));
        assert_eq!(discovery.failed_fits, 0, "discovery at {days} days");
        let exclusion =
            toy_limit_ensemble(&likelihood, days, index, &plan(toys), 0.05, limits.sigma);
        assert_eq!(exclusion.failed_fits, 0, "limits at {days} days");
    }
}

/// The example of a floated linear background at low counts, where a third
/// of the fits used to fail.
#[test]
fn floated_linear_background_fits_never_fail() {
    assert_no_failed_fits(&floated_polynomial(1.0, "[0.5, 0.004]"), &[1.0, 30.0], 1000);
}

/// A signal of a million events per day: the signal strength's scale is a
/// millionth of the shape coefficients', which once stalled the fits at the
/// iteration limit.
#[test]
fn huge_signal_beside_a_floated_background_fits() {
    assert_no_failed_fits(&floated_polynomial(1e6, "[0.5, 0.004]"), &[1.0], 300);
}

/// Only peaked backgrounds, 400 widths from the signal: their expectation
/// under the signal underflows to zero, where the fits could not start. The
/// background there is zero for all practical purposes, so Z_A is far above
/// any target (it grows without bound as b -> 0 in Cowan et al., EPJC 71
/// (2011) 1554, eq. 97), and finite.
#[test]
fn peaked_backgrounds_far_from_the_signal_fit() {
    let model = model(
        "title: lines\n\
         observable: {name: energy, unit: keV, range: [0.0, 1000.0], bin_width: 1.0}\n\
         signal: {events_per_day: 1.0, shape: {gaussian: {mean: 500.0, sigma: 2.0}}}\n\
         backgrounds:\n  - {name: a, events_per_day: 5.0, shape: {gaussian: {mean: 100.0, sigma: 1.0}}, norm_uncertainty: free}\n  - {name: b, events_per_day: 5.0, shape: {gaussian: {mean: 900.0, sigma: 1.0}}, norm_uncertainty: 0.1}\n\
         plan: {days: {first: 1, last: 30, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3, 5]}\n",
    );
    let likelihood = Likelihood::new(&model);
    let z = AsimovSignificance::new(&likelihood)
        .at_live_days(1.0)
        .unwrap();
    assert!(z.is_finite() && z > 10.0, "{z}");
    let limits = asymptotic_limits(&likelihood, 1.0, 0.05).unwrap();
    assert!(limits.median.is_finite() && limits.median > 0.0);
}

/// The cubic 1 + (x - 250)^3 / 250000 on [200, 300] (rising, Bernstein
/// coefficients [0.5, 1.5, 0.5, 1.5] by hand) fitted to data from the falling
/// line 2 - x/250, whose x coefficient has the other sign than the cubic's
/// (0.75): q~_mu from the engine against an independent minimisation over the
/// same family of shapes, and the asymptotic median limit against one found
/// from that minimisation.
#[test]
fn floated_cubic_agrees_with_an_independent_minimisation() {
    let coefficients = "[-61.5, 0.75, -0.003, 4e-6]";
    let model = model(&floated_polynomial(1.0, coefficients));
    let likelihood = Likelihood::new(&model);
    let live_days = 30.0;
    let reference = Reference::new(live_days);

    let falling: Vec<f64> = reference
        .bins
        .iter()
        .map(|&(a, b)| 25.0 * live_days * ((2.0 * (b - a) - (b * b - a * a) / 500.0) / 100.0))
        .collect();
    let data = Dataset {
        counts: falling.iter().map(|nu| nu.round()).collect(),
        global_observables: Vec::new(),
    };
    let mut test = UpperLimitTest::new(&likelihood);
    test.fit_free(live_days, &data).unwrap();
    let free = reference.minimum(&data.counts, None);
    for mu in [0.5, 1.0, 2.0, 4.0] {
        let engine = test.q_tilde(live_days, &data, mu).unwrap();
        let independent = 2.0 * (reference.minimum(&data.counts, Some(mu)) - free);
        // Both minima are converged far below 1e-6 in -ln L (the engine to a
        // Newton decrement of 1e-10, the pattern search to steps of 1e-9 on
        // parameters of order one), so q~ agrees to a few 1e-6.
        assert!(
            (engine - independent.max(0.0)).abs() < 1e-5,
            "mu {mu}: engine {engine} vs independent {independent}"
        );
    }

    let engine_limit = asymptotic_limits(&likelihood, live_days, 0.05)
        .unwrap()
        .median;
    let asimov = reference.expected(0.0, 1.0, &NOMINAL_BERNSTEIN);
    let asimov_free = reference.minimum(&asimov, None);
    // The median expected CLs limit: sqrt(q~_mu,A) = Phi^-1(1 - alpha/2)
    // (Cowan et al., EPJC 71 (2011) 1554, eqs. 88-89 with N = 0).
    let threshold = Normal::standard().inverse_cdf(1.0 - 0.025);
    let independent_limit = bisect(0.1, 10.0, |mu| {
        (2.0 * (reference.minimum(&asimov, Some(mu)) - asimov_free))
            .max(0.0)
            .sqrt()
            - threshold
    });
    // The engine solves to 1e-7, the bisection to 1e-9 relative, and an error
    // of 1e-6 in q~ moves the limit by about 1e-7 of itself (q~ is near
    // 3.84 and grows as mu^2): 1e-5 leaves room for both.
    assert!(
        (engine_limit / independent_limit - 1.0).abs() < 1e-5,
        "engine {engine_limit} vs independent {independent_limit}"
    );
}

/// Bernstein coefficients of the nominal cubic, worked by hand above.
const NOMINAL_BERNSTEIN: [f64; 4] = [0.5, 1.5, 0.5, 1.5];

/// The model of the cubic test computed here without the engine: signal
/// fractions from the normal distribution function (statrs), background
/// fractions from the Bernstein basis b_k(t) = C(3, k) t^k (1 - t)^(3 - k)
/// integrated over each bin by Simpson's rule, exact for cubics (Abramowitz
/// and Stegun 25.4.5), and -ln L = sum_j (nu_j - n_j ln nu_j).
struct Reference {
    bins: Vec<(f64, f64)>,
    signal: Vec<f64>,
    /// Integral of b_k over each bin, divided by its integral over the range (1/4).
    basis: Vec<[f64; 4]>,
    live_days: f64,
}

impl Reference {
    fn new(live_days: f64) -> Reference {
        let bins: Vec<(f64, f64)> = (0..50)
            .map(|i| (200.0 + 2.0 * i as f64, 202.0 + 2.0 * i as f64))
            .collect();
        let normal = Normal::new(260.0, 2.0).unwrap();
        let inside = normal.cdf(300.0) - normal.cdf(200.0);
        let signal = bins
            .iter()
            .map(|&(a, b)| (normal.cdf(b) - normal.cdf(a)) / inside)
            .collect();
        let bernstein = |k: usize, x: f64| {
            let t = (x - 200.0) / 100.0;
            [1.0, 3.0, 3.0, 1.0][k] * t.powi(k as i32) * (1.0 - t).powi(3 - k as i32)
        };
        let basis = bins
            .iter()
            .map(|&(a, b)| {
                std::array::from_fn(|k| {
                    let simpson = (b - a) / 6.0
                        * (bernstein(k, a) + 4.0 * bernstein(k, 0.5 * (a + b)) + bernstein(k, b));
                    simpson / 100.0 * 4.0
                })
            })
            .collect();
        Reference {
            bins,
            signal,
            basis,
            live_days,
        }
    }

    fn expected(&self, mu: f64, norm: f64, beta: &[f64; 4]) -> Vec<f64> {
        let total: f64 = beta.iter().sum();
        self.signal
            .iter()
            .zip(&self.basis)
            .map(|(s, integrals)| {
                let fraction: f64 =
                    beta.iter().zip(integrals).map(|(b, i)| b * i).sum::<f64>() / total;
                self.live_days * (mu * s + norm * 25.0 * fraction)
            })
            .collect()
    }

    fn negative_log_likelihood(&self, counts: &[f64], mu: f64, norm: f64, beta: &[f64; 4]) -> f64 {
        self.expected(mu, norm, beta)
            .iter()
            .zip(counts)
            .map(|(nu, n)| if *n > 0.0 { nu - n * nu.ln() } else { *nu })
            .sum()
    }

    /// min over (mu >= 0 unless fixed, norm >= 0, beta_k >= 0) of -ln L, by
    /// a pattern search (Hooke and Jeeves, J. ACM 8 (1961) 212): try a step
    /// up and down in each coordinate, keep what lowers the function, halve
    /// the steps when nothing does, stop below 1e-9.
    fn minimum(&self, counts: &[f64], fixed_mu: Option<f64>) -> f64 {
        // x = [mu, norm, beta_0..beta_3]
        let mut x = [fixed_mu.unwrap_or(1.0), 1.0, 0.5, 1.5, 0.5, 1.5];
        let value = |x: &[f64; 6]| {
            let beta = [x[2], x[3], x[4], x[5]];
            if x.iter().any(|&v| v < 0.0) || beta.iter().sum::<f64>() <= 0.0 {
                return f64::INFINITY;
            }
            self.negative_log_likelihood(counts, x[0], x[1], &beta)
        };
        let mut best = value(&x);
        let mut step = 0.25;
        let first = usize::from(fixed_mu.is_some());
        while step > 1e-9 {
            let mut improved = false;
            for coordinate in first..6 {
                for direction in [1.0, -1.0] {
                    let mut trial = x;
                    trial[coordinate] += direction * step;
                    let trial_value = value(&trial);
                    if trial_value < best {
                        // Keep going in the direction that worked.
                        let mut further = trial;
                        further[coordinate] += direction * step;
                        let further_value = value(&further);
                        (x, best) = if further_value < trial_value {
                            (further, further_value)
                        } else {
                            (trial, trial_value)
                        };
                        improved = true;
                        break;
                    }
                }
            }
            if !improved {
                step *= 0.5;
            }
        }
        best
    }
}

/// Root of an increasing function between `low` and `high` by bisection, to
/// 1e-9 relative.
fn bisect(mut low: f64, mut high: f64, f: impl Fn(f64) -> f64) -> f64 {
    while high - low > 1e-9 * low {
        let middle = 0.5 * (low + high);
        if f(middle) < 0.0 {
            low = middle;
        } else {
            high = middle;
        }
    }
    0.5 * (low + high)
}
