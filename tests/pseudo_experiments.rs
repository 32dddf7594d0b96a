//! Pseudo-experiments against the statistics they must follow.

mod common;

use common::{counting_window, peak_on_continuum};
use runcast::asymptotic::AsimovSignificance;
use runcast::ensemble::{EnsemblePlan, Generator, discovery_ensemble, toy_stream};
use runcast::likelihood::{DiscoveryTest, Likelihood};
use runcast::model::SIGNAL_STRENGTH;
use runcast::projection::quantile;

fn plan(toys: usize, seed: u64) -> EnsemblePlan<'static> {
    EnsemblePlan {
        toys: 0..toys,
        seed,
        progress: &|_| {},
    }
}

#[test]
fn generated_counts_fluctuate_as_poisson() {
    // A bin expecting 30 events has mean 30 and standard deviation sqrt(30) = 5.477 (common practice).
    let model = counting_window(10.0, 20.0, "");
    let likelihood = Likelihood::new(&model);
    let generator = Generator::new(&likelihood, &model.nominal_parameters(), 1.0);
    let mut data = generator.empty_dataset();
    let toys = 40_000;
    let counts: Vec<f64> = (0..toys)
        .map(|toy| {
            generator.draw(&mut toy_stream(7, 0, toy), &mut data);
            data.counts[0]
        })
        .collect();
    let mean = counts.iter().sum::<f64>() / toys as f64;
    let variance = counts.iter().map(|c| (c - mean).powi(2)).sum::<f64>() / (toys - 1) as f64;
    // Errors: sqrt(30/N) = 0.027 on the mean; sigma/sqrt(2N) = 0.019 on the standard deviation.
    assert!((mean - 30.0).abs() < 4.0 * 0.027, "mean {mean}");
    assert!(
        (variance.sqrt() - 30f64.sqrt()).abs() < 4.0 * 0.019,
        "sd {}",
        variance.sqrt()
    );
    assert!(counts.iter().all(|c| c.fract() == 0.0 && *c >= 0.0));
}

#[test]
fn background_only_q0_follows_half_chi_square() {
    // Under mu = 0, q0 ~ 1/2 delta(0) + 1/2 chi2_1, so P(q0 > 1) = 1/2 P(chi2_1 > 1)
    // = 0.15866 (Wilks 1938; Chernoff 1954; Cowan et al. 2011, eq. 49).
    let model = peak_on_continuum(5.0, 2000.0, ", norm_uncertainty: 0.05, float_shape: true");
    let likelihood = Likelihood::new(&model);
    let mut background_only = model.nominal_parameters();
    background_only[SIGNAL_STRENGTH] = 0.0;
    let live_days = 10.0;
    let generator = Generator::new(&likelihood, &background_only, live_days);
    let mut test = DiscoveryTest::new(&likelihood);
    let mut data = generator.empty_dataset();
    let toys = 20_000;
    let mut above = 0;
    let mut zero = 0;
    for toy in 0..toys {
        generator.draw(&mut toy_stream(11, 0, toy), &mut data);
        let q0 = test.fit(live_days, &data).expect("fit converges").q0;
        above += usize::from(q0 > 1.0);
        zero += usize::from(q0 == 0.0);
    }
    let fraction = above as f64 / toys as f64;
    // Binomial error sqrt(p(1-p)/N) = 0.0026.
    assert!(
        (fraction - 0.15866).abs() < 4.0 * 0.0026,
        "P(q0 > 1) = {fraction}"
    );
    let zero_fraction = zero as f64 / toys as f64;
    assert!(
        (zero_fraction - 0.5).abs() < 4.0 * 0.0036,
        "P(q0 = 0) = {zero_fraction}"
    );
}

#[test]
fn toy_median_equals_asimov_significance_with_many_counts() {
    // With many counts Z = sqrt(q0) ~ N(Z_A, 1), so the toy median is Z_A (Cowan et
    // al. 2011, sec. 5.1); the median of N toys has error 1.2533/sqrt(N).
    let model = peak_on_continuum(20.0, 2000.0, ", norm_uncertainty: 0.05, float_shape: true");
    let likelihood = Likelihood::new(&model);
    let live_days = 20.0;
    let z_asimov = AsimovSignificance::new(&likelihood)
        .at_live_days(live_days)
        .unwrap();
    let toys = 4000;
    let outcome = discovery_ensemble(&likelihood, live_days, 0, &plan(toys, 2026));
    assert_eq!(outcome.failed_fits, 0);
    let mut z = outcome.values;
    z.sort_by(f64::total_cmp);
    let median = quantile(&z, 0.5);
    let error = 1.2533 / (toys as f64).sqrt();
    assert!(
        (median - z_asimov).abs() < 4.0 * error,
        "median {median}, Z_A {z_asimov}"
    );
    // The 15.9% and 84.1% quantiles sit one unit either side (normal distribution; common practice).
    let spread = quantile(&z, 0.841345) - quantile(&z, 0.158655);
    assert!((spread - 2.0).abs() < 0.15, "central 68% width {spread}");
}

#[test]
fn results_do_not_depend_on_thread_count() {
    let model = peak_on_continuum(5.0, 500.0, ", norm_uncertainty: 0.1, float_shape: true");
    let likelihood = Likelihood::new(&model);
    let run = |threads| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| discovery_ensemble(&likelihood, 5.0, 3, &plan(1500, 99)))
    };
    assert_eq!(run(1), run(2));
}
