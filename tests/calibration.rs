//! Toy calibration of the discovery p-value against the asymptotic law of q0.

mod common;

use common::{counting_window, peak_on_continuum};
use runcast::asymptotic::{AsimovSignificance, p_value, significance};
use runcast::ensemble::{EnsemblePlan, background_only_q0_ensemble};
use runcast::likelihood::Likelihood;
use runcast::limits::poisson_cdf;

/// Fraction of background-only q0 at or above the Asimov q0, with its binomial error.
fn calibrated_p_value(
    model: &runcast::model::Model,
    live_days: f64,
    toys: usize,
) -> (f64, f64, f64) {
    let likelihood = Likelihood::new(model);
    let z_asimov = AsimovSignificance::new(&likelihood)
        .at_live_days(live_days)
        .unwrap();
    let plan = EnsemblePlan {
        toys: 0..toys,
        seed: 1954,
        progress: &|_| {},
    };
    let outcome = background_only_q0_ensemble(&likelihood, live_days, 0, &plan);
    assert_eq!(outcome.failed_fits, 0);
    let q0_asimov = z_asimov * z_asimov;
    let exceeding = outcome.values.iter().filter(|&&q0| q0 >= q0_asimov).count();
    let p = exceeding as f64 / toys as f64;
    (z_asimov, p, (p * (1.0 - p) / toys as f64).sqrt())
}

#[test]
fn calibrated_and_asymptotic_p_values_agree_with_many_counts() {
    // Under the background, q0 ~ 1/2 delta(0) + 1/2 chi2_1, so P(q0 >= Z_A^2) =
    // 1 - Phi(Z_A) (Wilks 1938; Chernoff 1954; Cowan et al., EPJC 71 (2011) 1554, eq. 49).
    let model = peak_on_continuum(10.0, 2000.0, ", norm_uncertainty: 0.05, float_shape: true");
    let (z_asimov, p, error) = calibrated_p_value(&model, 4.0, 20_000);
    let asymptotic = p_value(z_asimov);
    assert!(z_asimov > 1.5 && z_asimov < 2.5, "Z_A = {z_asimov}");
    assert!(
        (p - asymptotic).abs() < 4.0 * error,
        "toys {p} ± {error}, asymptotic {asymptotic}"
    );
}

#[test]
fn few_counts_make_the_calibrated_significance_exceed_the_asymptotic_one() {
    // One window with b = 0.5 and s = 3 expected: Z_A = 2.7605 from Cowan et al.
    // 2011, eq. 97, so the asymptotic p = 1 - Phi(Z_A) = 2.89e-3. The count is
    // discrete: q0(n) = 2 (n ln(n/b) - n + b) first exceeds Z_A^2 = 7.62 at n = 4,
    // so the exact p = P(n >= 4 | 0.5) = 1.75e-3 (Poisson sums), a larger Z.
    // Documented direction: here the asymptotic formula understates the significance.
    let (s, b) = (3.0, 0.5);
    let model = counting_window(s, b, "");
    let (z_asimov, p, error) = calibrated_p_value(&model, 1.0, 200_000);
    let eq97 = (2.0 * ((s + b) * (1.0 + s / b).ln() - s)).sqrt();
    assert!((z_asimov - eq97).abs() < 1e-6);
    let exact = 1.0 - poisson_cdf(3.0, b);
    assert!((exact - 1.752e-3).abs() < 1e-6, "exact Poisson p {exact}");
    assert!(
        (p - exact).abs() < 4.0 * error,
        "toys {p} ± {error}, exact {exact}"
    );
    assert!(
        significance(p) > z_asimov + 0.1,
        "calibrated Z {} vs Z_A {z_asimov}",
        significance(p)
    );
}
