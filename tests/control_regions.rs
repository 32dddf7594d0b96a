//! Backgrounds measured in control regions, against published closed forms.

mod common;

use common::on_off;
use runcast::asymptotic::AsimovSignificance;
use runcast::likelihood::{Dataset, DiscoveryTest, Likelihood};

/// Median discovery significance with a background uncertainty sigma_b from an
/// auxiliary Poisson measurement with tau = b / sigma_b^2 (Cowan, Cranmer, Gross,
/// Vitells, EPJC 71 (2011) 1554; G. Cowan, "Discovery sensitivity for a counting
/// experiment with background uncertainty", 2012).
fn cowan_with_uncertainty(s: f64, b: f64, sigma: f64) -> f64 {
    let v = sigma * sigma;
    let first = (s + b) * ((s + b) * (b + v) / (b * b + (s + b) * v)).ln();
    let second = (b * b / v) * (1.0 + v * s / (b * (b + v))).ln();
    (2.0 * (first - second)).sqrt()
}

#[test]
fn control_region_reproduces_median_significance_with_background_uncertainty() {
    // Published: s=10, b=100, sigma_b=10 -> 0.690196; s=20, b=50, sigma_b=5 -> 2.133224.
    for (s, b, sigma, published) in [(10.0, 100.0, 10.0, 0.690196), (20.0, 50.0, 5.0, 2.133224)] {
        let tau = b / (sigma * sigma);
        let model = on_off(s, b, tau);
        let likelihood = Likelihood::new(&model);
        let z = AsimovSignificance::new(&likelihood)
            .at_live_days(1.0)
            .unwrap();
        let closed_form = cowan_with_uncertainty(s, b, sigma);
        assert!(
            (closed_form - published).abs() < 1e-6,
            "closed form {closed_form}"
        );
        assert!(
            (z - closed_form).abs() < 1e-6 * closed_form,
            "s={s}, b={b}: Z_A = {z}, closed form {closed_form}"
        );
    }
}

#[test]
fn on_off_counting_reproduces_li_and_ma_eq_17() {
    // N_on = 120, N_off = 400, alpha = 0.2 gives 3.750628 (Li and Ma, ApJ 272 (1983) 317, eq. 17).
    let (on, off, alpha) = (120.0, 400.0, 0.2);
    let model = on_off(10.0, 80.0, 1.0 / alpha);
    let likelihood = Likelihood::new(&model);
    let data = Dataset {
        counts: vec![on],
        global_observables: vec![off],
    };
    let z = DiscoveryTest::new(&likelihood)
        .fit(1.0, &data)
        .unwrap()
        .q0
        .sqrt();
    let li_ma = {
        let n = on + off;
        let term_on = on * ((1.0 + alpha) / alpha * on / n).ln();
        let term_off = off * ((1.0 + alpha) * off / n).ln();
        (2.0 * (term_on + term_off)).sqrt()
    };
    assert!((li_ma - 3.750628).abs() < 1e-6, "eq. 17 gives {li_ma}");
    assert!((z - 3.750628).abs() < 1e-6 * 3.750628, "Z = {z}");
    // A second published pair: N_on = 100 gives 1.951081.
    let data = Dataset {
        counts: vec![100.0],
        global_observables: vec![off],
    };
    let z = DiscoveryTest::new(&likelihood)
        .fit(1.0, &data)
        .unwrap()
        .q0
        .sqrt();
    assert!((z - 1.951081).abs() < 1e-6 * 1.951081, "Z = {z}");
}
