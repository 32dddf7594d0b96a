//! Uncertain signal shapes (`signal.position_uncertainty`,
//! `signal.width_uncertainty`): constrained nuisance parameters of the
//! signal's position and width, fitted in every fit.

mod common;

use runcast::asymptotic::AsimovSignificance;
use runcast::ensemble::{EnsemblePlan, background_only_q0_ensemble, discovery_ensemble};
use runcast::likelihood::Likelihood;
use runcast::limits::asymptotic_limits;
use runcast::model::Model;

/// A narrow Gaussian peak (sigma 1 at 50) of 2 events per live day on 100
/// background events per live day falling as exp(-0.02 x) over [0, 100] in
/// 1-wide bins, with `extra` added to the signal; numbers invented for the test.
fn narrow_peak(extra: &str) -> Model {
    common::model(&format!(
        "title: uncertain signal shape test (invented numbers)\n\
         observable: {{name: energy, unit: keV, range: [0.0, 100.0], bin_width: 1.0}}\n\
         signal: {{events_per_day: 2.0, shape: {{gaussian: {{mean: 50.0, sigma: 1.0}}}}{extra}}}\n\
         backgrounds:\n  - {{name: continuum, events_per_day: 100.0, shape: {{exponential: {{slope: -0.02}}}}, norm_uncertainty: 0.05}}\n\
         plan: {{days: {{first: 1, last: 10, points: 2, spacing: log}}, toys: 1, seed: 1, targets: [3]}}\n"
    ))
}

const LIVE_DAYS: f64 = 20.0;

/// 95% CL.
const ALPHA: f64 = 0.05;

fn plan(toys: usize, seed: u64) -> EnsemblePlan<'static> {
    EnsemblePlan {
        toys: 0..toys,
        seed,
        progress: &|_| {},
    }
}

fn asimov_z(model: &Model) -> f64 {
    AsimovSignificance::new(&Likelihood::new(model))
        .at_live_days(LIVE_DAYS)
        .expect("Asimov fits converge")
}

fn median_limit(model: &Model) -> f64 {
    asymptotic_limits(&Likelihood::new(model), LIVE_DAYS, ALPHA)
        .expect("Asimov fits converge")
        .median
}

/// As the constraint widths u tend to 0, each constrained parameter is
/// pinned to its auxiliary measurement, within a few u of its nominal value,
/// and the likelihood becomes the fixed-shape one (a Gaussian constraint of
/// width u on a nuisance parameter; Cowan et al., EPJC 71 (2011) 1554,
/// sec. 2). With u = 1e-12 every pseudo-experiment's Z = sqrt(q0) (the same
/// counts: the extra global observables are drawn after all others), the
/// Asimov Z_A and the expected limit agree with the fixed shape's to 1e-9.
#[test]
fn uncertainties_tending_to_zero_reproduce_the_fixed_shape() {
    let fixed = narrow_peak("");
    let pinned = narrow_peak(", position_uncertainty: 1e-12, width_uncertainty: 1e-12");
    assert_eq!(pinned.parameters.len(), fixed.parameters.len() + 2);
    let toys = |model: &Model| {
        let outcome = discovery_ensemble(&Likelihood::new(model), LIVE_DAYS, 0, &plan(200, 77));
        assert_eq!(outcome.failed_fits, 0);
        outcome.values
    };
    let (fixed_z, pinned_z) = (toys(&fixed), toys(&pinned));
    assert_eq!(fixed_z.len(), pinned_z.len());
    for (toy, (a, b)) in fixed_z.iter().zip(&pinned_z).enumerate() {
        assert!((a - b).abs() < 1e-9, "toy {toy}: {a} fixed, {b} pinned");
    }
    assert!((asimov_z(&fixed) - asimov_z(&pinned)).abs() < 1e-9);
    assert!((median_limit(&fixed) - median_limit(&pinned)).abs() < 1e-9);
}

/// On the Asimov dataset every estimator equals its true value (Cowan et
/// al., EPJC 71 (2011) 1554, sec. 3.1): the free fit sits at the nominal
/// position and width, and the fit at mu = 0 has no signal left for them to
/// act on, so each stays at its auxiliary measurement at no cost. Z_A is
/// that of the fixed shape, however uncertain the shape; the uncertainty
/// shows in the pseudo-experiments (below).
#[test]
fn asimov_significance_is_that_of_the_fixed_shape() {
    let fixed = asimov_z(&narrow_peak(""));
    let uncertain = asimov_z(&narrow_peak(
        ", position_uncertainty: 1.0, width_uncertainty: 0.3",
    ));
    assert!(fixed > 3.0, "a test with some significance: {fixed}");
    assert!((fixed - uncertain).abs() < 1e-9, "{fixed} vs {uncertain}");
}

/// With a fixed shape, q0 of background-only pseudo-experiments follows
/// ½δ(0) + ½χ²₁, so P(q0 >= 1) = 0.15866 (Wilks 1938; Chernoff 1954; Cowan
/// et al. 2011). A position fitted within ±1 sigma of the peak is a
/// parameter present only under the signal hypothesis: the fit picks the
/// largest fluctuation within its reach and the tail grows (Davies,
/// Biometrika 74 (1987) 33; Gross and Vitells, EPJC 70 (2010) 525), so a
/// given q0 means less: the calibrated significance falls. 4,000 toys
/// resolve the fraction to sqrt(0.16 × 0.84 / 4000) = 0.0058; the fixed
/// shape must lie within 4 of these of 0.15866, the uncertain one above
/// 0.15866 + 4 × 0.0058.
#[test]
fn a_large_position_uncertainty_inflates_the_background_only_tail() {
    let toys = 4000;
    let tail = |model: &Model| {
        let outcome =
            background_only_q0_ensemble(&Likelihood::new(model), LIVE_DAYS, 0, &plan(toys, 5));
        assert!(
            outcome.failed_fits * 200 < toys,
            "{} failed",
            outcome.failed_fits
        );
        let above = outcome.values.iter().filter(|&&q0| q0 >= 1.0).count();
        above as f64 / outcome.values.len() as f64
    };
    let wilks = 0.15866;
    let resolution = (wilks * (1.0 - wilks) / toys as f64).sqrt();
    let fixed = tail(&narrow_peak(""));
    assert!((fixed - wilks).abs() < 4.0 * resolution, "fixed: {fixed}");
    let uncertain = tail(&narrow_peak(", position_uncertainty: 1.0"));
    assert!(
        uncertain > wilks + 4.0 * resolution,
        "uncertain: {uncertain}"
    );
}

/// Profiling one more nuisance parameter can only lower q~_mu on the same
/// data (the conditional maximum over a larger set is at least as high;
/// Cowan et al., EPJC 71 (2011) 1554, sec. 2), so the expected limit can
/// only rise; a resolution known to 30% lets a wider, flatter signal hide in
/// the background-only Asimov spectrum, visibly (here by over 1%).
#[test]
fn a_width_uncertainty_weakens_the_expected_limit() {
    let fixed = median_limit(&narrow_peak(""));
    let uncertain = median_limit(&narrow_peak(", width_uncertainty: 0.3"));
    assert!(uncertain > 1.01 * fixed, "{uncertain} vs {fixed}");
}
