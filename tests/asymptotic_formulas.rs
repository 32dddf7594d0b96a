//! Asimov significances against published closed forms.

mod common;

use common::{counting_window, peak_on_continuum};
use runcast::asymptotic::AsimovSignificance;
use runcast::likelihood::Likelihood;

fn asimov_z(model: &runcast::model::Model, live_days: f64) -> f64 {
    let likelihood = Likelihood::new(model);
    AsimovSignificance::new(&likelihood)
        .at_live_days(live_days)
        .unwrap()
}

/// Z_A = sqrt(2((s+b) ln(1+s/b) - s)) (Cowan, Cranmer, Gross, Vitells, EPJC 71 (2011) 1554, eq. 97).
fn cowan_eq97(s: f64, b: f64) -> f64 {
    (2.0 * ((s + b) * (1.0 + s / b).ln() - s)).sqrt()
}

#[test]
fn one_bin_known_background_matches_eq_97() {
    // Published values: s=10, b=100 -> 0.983992; s=5, b=1 -> 3.391329 (Cowan et al. 2011, eq. 97).
    for (s, b, published) in [(10.0, 100.0, 0.983992), (5.0, 1.0, 3.391329)] {
        let z = asimov_z(&counting_window(s, b, ""), 1.0);
        assert!(
            (z - published).abs() < 1e-5,
            "s={s}, b={b}: Z_A = {z}, published {published}"
        );
        assert!((z - cowan_eq97(s, b)).abs() < 1e-8);
    }
}

/// (s + b) ln(1 + x) - s = b ((1 + x) ln(1 + x) - x) with x = s/b, from the
/// Taylor series (1 + x) ln(1 + x) - x = sum_{k>=2} (-1)^k x^k / (k (k - 1))
/// (ln(1 + x) = sum_{k>=1} (-1)^(k+1) x^k / k; common practice), whose terms
/// neither cancel nor lose precision for small x: the cancellation-free form
/// of eq. 97 of Cowan et al., EPJC 71 (2011) 1554.
fn cowan_eq97_small_signal(s: f64, b: f64) -> f64 {
    let x = s / b;
    let mut sum = 0.0;
    let mut power = x * x;
    for k in 2..40 {
        let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
        sum += sign * power / f64::from(k * (k - 1));
        power *= x;
    }
    (2.0 * b * sum).sqrt()
}

#[test]
fn tiny_signal_on_a_huge_background_matches_eq_97_to_rounding() {
    // s/b from 1e-2 down to 1e-10 on b = 1e9 and 1e3 events (Cowan et al. 2011,
    // eq. 97, in the series form above, valid for x <= 1e-2 where 40 terms
    // leave x^40 behind). s is rounded to a multiple of the spacing of doubles
    // near b, so that the Asimov count b + s is held exactly and the test
    // measures the likelihood alone. Each deviance term is a product of
    // factors exact to rounding, and the fitted mu enters q0 only at second
    // order, so Z_A is exact to a few roundings of 1.1e-16: 1e-14 relative
    // allows about 50.
    for b in [1e9_f64, 1e3] {
        let spacing = b.next_up() - b;
        for decade in 2..=10 {
            let s = (10f64.powi(-decade) * b / spacing).round() * spacing;
            let z = asimov_z(&counting_window(s, b, ""), 1.0);
            let expected = cowan_eq97_small_signal(s, b);
            assert!(
                (z / expected - 1.0).abs() < 1e-14,
                "s/b = 1e-{decade}, b = {b}: Z_A = {z}, eq. 97 gives {expected}"
            );
        }
    }
}

#[test]
fn exposure_scales_counts_in_eq_97() {
    // 2.5 live days of s=4/day, b=40/day is s=10, b=100 (Cowan et al. 2011, eq. 97).
    let z = asimov_z(&counting_window(4.0, 40.0, ""), 2.5);
    assert!((z - 0.983992).abs() < 1e-5, "Z_A = {z}");
}

#[test]
fn statistics_only_significance_grows_as_square_root_of_exposure() {
    // A tenth of the exposure gives Z_A / sqrt(10) when no systematic uncertainty
    // enters (common practice); a free normalisation and a floating slope are
    // statistical, so the scaling is exact.
    let model = peak_on_continuum(3.0, 400.0, ", norm_uncertainty: free, float_shape: true");
    let full = asimov_z(&model, 100.0);
    let tenth = asimov_z(&model, 10.0);
    assert!(full > 1.0);
    assert!(
        (tenth - full / 10f64.sqrt()).abs() < 1e-6 * full,
        "{tenth} vs {full}"
    );
}

#[test]
fn background_normalisation_uncertainty_saturates_at_s_over_delta_b() {
    // Z_A -> s / (delta b) as exposure grows, with s, b per day (follows from
    // Cowan et al. 2011 with a Gaussian constraint; common practice).
    let (s, b, delta) = (3.0, 60.0, 0.012);
    let model = counting_window(s, b, &format!(", norm_uncertainty: {delta}"));
    let likelihood = Likelihood::new(&model);
    let mut asimov = AsimovSignificance::new(&likelihood);
    let limit = asimov
        .limit(365.0)
        .unwrap()
        .expect("a normalisation uncertainty saturates Z_A");
    let expected = s / (delta * b);
    assert!(
        (limit - expected).abs() < 2e-3 * expected,
        "limit {limit}, expected {expected}"
    );
    // And Z_A approaches it from below.
    let late = asimov.at_live_days(1e5).unwrap();
    assert!(
        late < limit && late > 0.95 * limit,
        "Z_A(1e5 days) = {late}"
    );
}

#[test]
fn statistics_limited_significance_has_no_limit() {
    let model = peak_on_continuum(3.0, 400.0, ", norm_uncertainty: 0.05, float_shape: true");
    let likelihood = Likelihood::new(&model);
    assert_eq!(
        AsimovSignificance::new(&likelihood).limit(365.0).unwrap(),
        None
    );
}
