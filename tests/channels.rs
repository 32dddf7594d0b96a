//! Several channels combined in one likelihood: independent channels adding
//! their Asimov q0, and a factor shared between channels against a direct
//! minimisation of the profile likelihood written out here.

mod common;

use common::model;
use runcast::asymptotic::AsimovSignificance;
use runcast::likelihood::Likelihood;
use runcast::model::Model;

fn asimov_z(model: &Model, live_days: f64) -> f64 {
    let likelihood = Likelihood::new(model);
    AsimovSignificance::new(&likelihood)
        .at_live_days(live_days)
        .unwrap()
}

const PLAN: &str = "plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3, 5]}\n";

/// One list entry: a Gaussian peak on an exponential continuum whose
/// normalisation is known to 5% and whose slope is fitted, over 100 bins.
fn peak_channel(name: &str) -> String {
    format!(
        "  - name: {name}\n\
         \x20   observable: {{name: mass, unit: MeV, range: [0.0, 100.0], bin_width: 1.0}}\n\
         \x20   signal: {{events_per_day: 3.0, shape: {{gaussian: {{mean: 50.0, sigma: 2.0}}}}, yield_uncertainty: 0.1}}\n\
         \x20   backgrounds:\n\
         \x20     - {{name: continuum, events_per_day: 400, shape: {{exponential: {{slope: -0.02}}}}, norm_uncertainty: 0.05, float_shape: true}}\n"
    )
}

/// Two identical channels whose own uncertainties are independent: the
/// likelihood is a product, so -ln L and the Asimov q0 are sums and the
/// combined q0 is exactly twice one channel's, Z_A sqrt(2) times (Cowan,
/// Cranmer, Gross, Vitells, EPJC 71 (2011) 1554, sec. 5.1: q0 from the
/// likelihood ratio; independent channels multiply likelihoods).
#[test]
fn two_identical_independent_channels_give_sqrt_two_times_z() {
    let one = model(&format!(
        "title: one\nchannels:\n{}{PLAN}",
        peak_channel("a")
    ));
    let two = model(&format!(
        "title: two\nchannels:\n{}{}{PLAN}",
        peak_channel("a"),
        peak_channel("b")
    ));
    for live_days in [3.0, 30.0, 300.0] {
        let single = asimov_z(&one, live_days);
        let combined = asimov_z(&two, live_days);
        assert!(
            (combined - std::f64::consts::SQRT_2 * single).abs() < 1e-9,
            "{live_days} live days: one channel {single}, two {combined}"
        );
    }
}

/// Two one-bin channels with signal s_i and background b_i per live day whose
/// background yields share one factor theta, constrained by N(1, width).
struct SharedBackground {
    signal: [f64; 2],
    background: [f64; 2],
    width: f64,
}

impl SharedBackground {
    fn scenario(&self, shared: &str) -> String {
        let channel = |index: usize| {
            format!(
                "  - name: window{index}\n\
                 \x20   observable: {{name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}}\n\
                 \x20   signal: {{events_per_day: {}, shape: {{flat: {{}}}}}}\n\
                 \x20   backgrounds:\n\
                 \x20     - {{name: flat, events_per_day: {}, shape: {{flat: {{}}}}{shared}}}\n",
                self.signal[index], self.background[index]
            )
        };
        format!(
            "title: shared background\nshared_uncertainties: {{calibration: {}}}\nchannels:\n{}{}{PLAN}",
            self.width,
            channel(0),
            channel(1)
        )
    }

    /// Expected (n_i, b_i) events of the two windows on the Asimov dataset
    /// n_i = s_i + b_i after `live_days`.
    fn asimov_counts(&self, live_days: f64) -> [(f64, f64); 2] {
        [0, 1].map(|i| {
            let b = self.background[i] * live_days;
            (self.signal[i] * live_days + b, b)
        })
    }

    /// -2 ln L of the background-only hypothesis on the windows `counts`,
    /// their background scaled by theta, relative to the saturated fit:
    ///   sum_i 2 [b_i theta - n_i + n_i ln(n_i / (b_i theta))] + (theta - 1)^2 / width^2
    /// (Poisson deviance plus the Gaussian constraint term with g = 1).
    fn minus_two_ln_l(&self, counts: &[(f64, f64)], theta: f64) -> f64 {
        let poisson: f64 = counts
            .iter()
            .map(|&(n, b)| 2.0 * (b * theta - n + n * (n / (b * theta)).ln()))
            .sum();
        poisson + ((theta - 1.0) / self.width).powi(2)
    }

    /// q0 on the Asimov dataset, written out: the unconditional fit is
    /// mu = 1 with every factor at 1 and -2 ln L at its saturated value, so
    /// q0 is the minimum over the factors of [`Self::minus_two_ln_l`] at mu = 0
    /// (Cowan et al., EPJC 71 (2011) 1554, eqs. 12 and 26). With one shared
    /// factor that is one minimisation over both windows; with one factor per
    /// window the terms separate and q0 is the sum of two minimisations.
    /// Each by golden-section search (Kiefer, Proc. AMS 4 (1953) 502) over
    /// theta in (0, 3], where the function is convex.
    fn direct_q0(&self, live_days: f64, shared: bool) -> f64 {
        let counts = self.asimov_counts(live_days);
        let minimum = |windows: &[(f64, f64)]| {
            golden_section_minimum(|theta| self.minus_two_ln_l(windows, theta), 1e-6, 3.0)
        };
        if shared {
            minimum(&counts)
        } else {
            counts
                .iter()
                .map(|window| minimum(std::slice::from_ref(window)))
                .sum()
        }
    }
}

/// The minimum of a unimodal function on [low, high] by golden-section
/// search, bracketed down to a width of 1e-13 relative.
fn golden_section_minimum(f: impl Fn(f64) -> f64, mut low: f64, mut high: f64) -> f64 {
    let ratio = (5f64.sqrt() - 1.0) / 2.0;
    let mut left = high - ratio * (high - low);
    let mut right = low + ratio * (high - low);
    let (mut f_left, mut f_right) = (f(left), f(right));
    while high - low > 1e-13 * high.abs() {
        if f_left < f_right {
            high = right;
            right = left;
            f_right = f_left;
            left = high - ratio * (high - low);
            f_left = f(left);
        } else {
            low = left;
            left = right;
            f_left = f_right;
            right = low + ratio * (high - low);
            f_right = f(right);
        }
    }
    f(0.5 * (low + high))
}

const SETUP: SharedBackground = SharedBackground {
    signal: [2.0, 0.5],
    background: [20.0, 40.0],
    width: 0.08,
};

#[test]
fn a_shared_background_factor_matches_a_direct_minimisation() {
    let shared = model(&SETUP.scenario(", shared: [calibration]"));
    for live_days in [1.0, 10.0, 100.0] {
        let z = asimov_z(&shared, live_days);
        let direct = SETUP.direct_q0(live_days, true).sqrt();
        // Both minimise the same smooth function to near machine precision
        // (the golden section brackets theta to 1e-13, and q0 is flat at its
        // minimum), so they agree far below 1e-7.
        assert!(
            (z - direct).abs() < 1e-7 * direct,
            "{live_days} live days: runcast {z}, direct {direct}"
        );
    }
}

#[test]
fn own_factors_stay_independent_and_differ_from_a_shared_one() {
    let own = model(&SETUP.scenario(&format!(", norm_uncertainty: {}", SETUP.width)));
    let live_days = 100.0;
    let z = asimov_z(&own, live_days);
    let independent = SETUP.direct_q0(live_days, false).sqrt();
    assert!(
        (z - independent).abs() < 1e-7 * independent,
        "runcast {z}, independent factors {independent}"
    );
    // A shared factor is measured by both windows together: the result must
    // differ from independent factors well beyond the agreement above.
    let shared = SETUP.direct_q0(live_days, true).sqrt();
    assert!(
        (shared - independent).abs() > 1e-2 * independent,
        "shared {shared}, independent {independent}"
    );
}
