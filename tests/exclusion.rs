//! Expected exclusion limits against published values and closed forms.

mod common;

use common::{counting_window, peak_on_continuum};
use runcast::ensemble::EnsemblePlan;
use runcast::likelihood::Likelihood;
use runcast::limits::{asymptotic_limits, expected_limit_significance, toy_limit_ensemble};
use runcast::projection::quantile;

fn plan(toys: usize, seed: u64) -> EnsemblePlan<'static> {
    EnsemblePlan {
        toys: 0..toys,
        seed,
        progress: &|_| {},
    }
}

fn sorted(mut values: Vec<f64>) -> Vec<f64> {
    values.sort_by(f64::total_cmp);
    values
}

#[test]
fn zero_background_expected_limit_is_three_events() {
    // With no background every pseudo-experiment sees n = 0, and the exact CLs
    // limit is the classical 3.00 events at 95% CL (Particle Data Group,
    // statistics review, table of Poisson upper limits, n = 0).
    let model = counting_window(1.0, 1e-9, "");
    let likelihood = Likelihood::new(&model);
    let outcome = toy_limit_ensemble(&likelihood, 1.0, 0, &plan(500, 5), 0.05, 1.0);
    assert_eq!(outcome.failed_fits, 0);
    let median = quantile(&sorted(outcome.values), 0.5);
    // The signal is 1 event per live day, so the limit on mu is in events.
    assert!(
        (median - 3.00).abs() < 0.005,
        "median expected limit {median} events"
    );
}

#[test]
fn asymptotic_median_limit_is_1_96_sigma_with_many_counts() {
    // mu_up = sigma_A Phi^-1(1 - alpha/2) = 1.96 sigma_A (Cowan et al., EPJC 71
    // (2011) 1554, eq. 89), and for one bin with many counts sigma_A = sqrt(b)/s
    // (the Gaussian limit of the Poisson likelihood; common practice).
    let (s, b) = (1000.0, 1e8);
    let model = counting_window(s, b, "");
    let likelihood = Likelihood::new(&model);
    let limits = asymptotic_limits(&likelihood, 1.0, 0.05).unwrap();
    let sigma = b.sqrt() / s;
    assert!(
        (limits.median - 1.959964 * sigma).abs() < 1e-3 * sigma,
        "median {}",
        limits.median
    );
    // The bands: sigma (Phi^-1(1 - alpha Phi(N)) + N) (eq. 88).
    for (band, n_sigma) in limits.band.iter().zip([-2.0, -1.0, 1.0, 2.0]) {
        let expected = sigma * expected_limit_significance(0.05, n_sigma);
        assert!(
            (band - expected).abs() < 2e-3 * sigma,
            "N = {n_sigma}: {band} vs {expected}"
        );
    }
    // By hand: Phi^-1(1 - 0.05 Phi(1)) + 1 = Phi^-1(0.957933) + 1 = 2.7276 (standard normal table).
    assert!((expected_limit_significance(0.05, 1.0) - 2.7276).abs() < 1e-3);
}

#[test]
fn toy_limits_agree_with_asymptotics_with_many_counts() {
    // In the large-sample limit the pseudo-experiment limits follow the
    // asymptotic median and bands (Cowan et al. 2011, sec. 4.3). The median of N
    // toy limits has a statistical error of about 1.25 sigma_A / sqrt(N).
    let model = peak_on_continuum(20.0, 2000.0, ", norm_uncertainty: 0.05, float_shape: true");
    let likelihood = Likelihood::new(&model);
    let live_days = 5.0;
    let limits = asymptotic_limits(&likelihood, live_days, 0.05).unwrap();
    let toys = 2000;
    let outcome = toy_limit_ensemble(
        &likelihood,
        live_days,
        0,
        &plan(toys, 77),
        0.05,
        limits.sigma,
    );
    assert_eq!(outcome.failed_fits, 0);
    let values = sorted(outcome.values);
    let error = 1.25 * limits.sigma / (toys as f64).sqrt();
    let median = quantile(&values, 0.5);
    assert!(
        (median - limits.median).abs() < 4.0 * error,
        "toys {median}, asymptotic {}",
        limits.median
    );
    let upper = quantile(&values, 0.841345);
    assert!(
        (upper - limits.band[2]).abs() < 6.0 * error,
        "toys +1 sigma {upper}, asymptotic {}",
        limits.band[2]
    );
}

#[test]
fn expected_limit_tends_to_fall_as_one_over_square_root_of_exposure() {
    // Without systematic uncertainties q~_mu,A grows in proportion to exposure at
    // fixed mu, and is quadratic in mu once mu s is small against b, so the
    // expected limit approaches a 1/sqrt(exposure) fall (Cowan et al. 2011,
    // eq. 30; common practice): a hundredfold exposure gives a tenth.
    let model = peak_on_continuum(3.0, 400.0, ", norm_uncertainty: free, float_shape: true");
    let likelihood = Likelihood::new(&model);
    let limit = |live_days: f64| {
        asymptotic_limits(&likelihood, live_days, 0.05)
            .unwrap()
            .median
    };
    let early_ratio = limit(1e2) / limit(1e4);
    let late_ratio = limit(1e4) / limit(1e6);
    assert!((late_ratio - 10.0).abs() < 0.02, "late ratio {late_ratio}");
    assert!(
        (late_ratio - 10.0).abs() < (early_ratio - 10.0).abs(),
        "{early_ratio} -> {late_ratio}"
    );
}

#[test]
fn single_window_limits_carry_the_background_uncertainty() {
    // One window, s = 4 and b = 100 per day, background known to 1%, after 2000
    // live days: the limit is dominated by the systematic, sigma_mu ~ delta b / s,
    // so the median expected limit stays near 1.96 * 0.01 * 100 / 4 = 0.49
    // instead of falling as 1.96 sqrt(b)/s (Cowan et al., EPJC 71 (2011) 1554,
    // eq. 89 with the uncertainties added in quadrature; common practice). The
    // exact Poisson CLs of each pseudo-experiment is averaged over the
    // constraint (Cousins and Highland, NIM A 320 (1992) 331) and must agree
    // with the asymptotic median within the toy error.
    let model = counting_window(4.0, 100.0, ", norm_uncertainty: 0.01");
    let likelihood = Likelihood::new(&model);
    let live_days = 2000.0;
    let limits = asymptotic_limits(&likelihood, live_days, 0.05).unwrap();
    let (s, b) = (4.0 * live_days, 100.0 * live_days);
    let sigma = ((0.01 * b).powi(2) + b).sqrt() / s;
    assert!(
        (limits.median - 1.96 * sigma).abs() < 0.02 * limits.median,
        "asymptotic {}",
        limits.median
    );
    let toys = 2000;
    let outcome = toy_limit_ensemble(
        &likelihood,
        live_days,
        0,
        &plan(toys, 4),
        0.05,
        limits.sigma,
    );
    assert_eq!(outcome.failed_fits, 0);
    let median = quantile(&sorted(outcome.values), 0.5);
    let error = 1.25 * limits.sigma / (toys as f64).sqrt();
    assert!(
        (median - limits.median).abs() < 4.0 * error,
        "toys {median}, asymptotic {}",
        limits.median
    );
}
