//! Scenarios whose expected limits are unbounded at some or all exposures: the
//! projection reports them as absent and the days as beyond the grid, instead
//! of stopping on a number no file can hold.

mod common;

use common::Scratch;
use serde_json::Value;
use std::fs;

/// The counting-window demo with one line replaced, projected with a few toys;
/// returns the parsed `projection.json`.
fn project_demo_with(label: &str, from: &str, to: &str) -> Value {
    run_demo_with(label, from, to).0
}

/// As `project_demo_with`, also returning the summary printed on stdout.
fn run_demo_with(label: &str, from: &str, to: &str) -> (Value, String) {
    let demo = fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/counting_window.yaml"
    ))
    .expect("demo scenario");
    assert!(demo.contains(from), "{from:?} not in the demo");
    let scratch = Scratch::new(label);
    fs::write(scratch.path.join("edited.yaml"), demo.replacen(from, to, 1)).unwrap();
    let output = scratch.run(&[
        "project",
        "edited.yaml",
        "--out",
        "out",
        "--toys",
        "200",
        "--quiet",
    ]);
    assert!(
        output.status.success(),
        "{label}: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    let bytes = fs::read(scratch.path.join("out/projection.json")).unwrap();
    let json = serde_json::from_slice(&bytes).expect("projection.json is JSON");
    (json, String::from_utf8(output.stdout).unwrap())
}

fn points(projection: &Value) -> &Vec<Value> {
    projection["points"].as_array().unwrap()
}

#[test]
fn a_huge_signal_yield_uncertainty_excludes_nothing() {
    // With a Gaussian constraint (theta - 1)^2 / (2 delta^2) on the signal
    // yield factor, the fit can scale the signal to nothing at a cost of
    // 1/(2 delta^2) in -ln L, so sqrt(q~_mu) stays below 1/delta = 1e-6 at any
    // mu, far below the 1.96 a 95% CL limit needs (Cowan et al., EPJC 71
    // (2011) 1554, eqs. 88-89; the bound follows from the constraint term).
    let projection = project_demo_with(
        "yield",
        "  shape: {flat: {}}\nbackgrounds:",
        "  shape: {flat: {}}\n  yield_uncertainty: 1e6\nbackgrounds:",
    );
    for point in points(&projection) {
        assert_eq!(point["limit_asimov"], Value::Null);
        assert_eq!(point["limit_median"], Value::Null);
    }
    assert_eq!(projection["days_to_exclusion"]["asimov_days"], Value::Null);
    assert_eq!(projection["days_to_exclusion"]["median_days"], Value::Null);
}

#[test]
fn a_vanishing_live_fraction_reaches_nothing() {
    // 1e-300 of each day is live: 4e-297 signal events over the whole grid, so
    // Z_A is 0 to rounding and no mu below 2^60 is excluded (the 95% CL
    // limit needs 3 signal events even without background; Particle Data
    // Group, table of Poisson limits, n = 0).
    let projection = project_demo_with("live", "live_fraction: 0.9", "live_fraction: 1e-300");
    for point in points(&projection) {
        assert!(point["z_asimov"].as_f64().unwrap() < 1e-100);
        assert_eq!(point["limit_asimov"], Value::Null);
    }
    for row in projection["days_to_target"].as_array().unwrap() {
        assert_eq!(row["asimov_days"], Value::Null);
        assert_eq!(row["median_days"], Value::Null);
    }
    assert_eq!(projection["days_to_exclusion"]["asimov_days"], Value::Null);
}

#[test]
fn a_vanishing_first_day_only_loses_its_own_point() {
    // The first grid point at 1e-300 days has no limit (as above); the last
    // does, and the days to exclusion are those of the demo itself, whose grid
    // starts at day 5: the root does not depend on the grid around it.
    let projection = project_demo_with("first", "first: 5,", "first: 1e-300,");
    let demo = project_demo_with("demo", "first: 5,", "first: 5,");
    assert_eq!(points(&projection)[0]["limit_asimov"], Value::Null);
    assert!(points(&projection).last().unwrap()["limit_asimov"].is_number());
    let days = |projection: &Value, key: &str| {
        projection["days_to_exclusion"][key]
            .as_f64()
            .unwrap_or_else(|| panic!("{key} within the grid"))
    };
    let asimov = days(&projection, "asimov_days");
    // Root finding stops at a relative width of 1e-7.
    assert!((asimov / days(&demo, "asimov_days") - 1.0).abs() < 1e-6);
    days(&projection, "median_days");
    // And no earlier than without the 1% background uncertainty: s = 4,
    // b = 100 per live day at 0.9 live reach q_1,A = 1.96^2 after
    // 1.96^2 / (2 (s - b ln(1 + s/b))) live days (Cowan et al. 2011, eq. 12
    // with n = b, and eq. 89; an uncertainty only widens the limit).
    let (s, b) = (4.0_f64, 100.0_f64);
    let level = 1.959964_f64; // Phi^-1(0.975), standard normal table
    let without_uncertainty = level * level / (2.0 * (s - b * (s / b).ln_1p())) / 0.9;
    assert!(
        asimov > without_uncertainty,
        "{asimov} d, below {without_uncertainty} d without the uncertainty"
    );
}

#[test]
fn limit_toys_that_never_ran_are_not_counted() {
    // No Asimov limit is bounded (a_huge_signal_yield_uncertainty_excludes_nothing),
    // so no limit toy runs at any of the 24 points: once reported as
    // "0 of 4800" failed.
    let (_, summary) = run_demo_with(
        "yield-summary",
        "  shape: {flat: {}}\nbackgrounds:",
        "  shape: {flat: {}}\n  yield_uncertainty: 1e6\nbackgrounds:",
    );
    assert!(
        summary.contains(
            "Failed fits (limits): none run (no live time, or no bounded Asimov limit \
             at any of the 24 points).\n"
        ),
        "{summary}"
    );
}

#[test]
fn toys_before_any_live_time_are_not_counted() {
    // A first period of 10 days at rate 0: the grid days 5, 6.5 and 8.4 (24
    // points from 5 to 2000, even in ratio) have no live time, so toys run
    // at 21 points only, 200 each.
    let (projection, summary) = run_demo_with(
        "dark-start",
        "live_fraction: 0.9",
        "live_fraction: 0.9\n  periods: [{days: 10, rate_scale: 0}]",
    );
    let dark = points(&projection)
        .iter()
        .filter(|point| point["live_days"] == 0.0)
        .count();
    assert_eq!(dark, 3);
    assert!(
        summary.contains(
            "Failed fits: 0 of 4200 pseudo-experiments (0.00%), excluded from the quantiles; \
             none ran at 3 of 24 points (no live time).\n"
        ),
        "{summary}"
    );
    assert!(
        summary.contains("Failed fits (limits): 0 of 4200 background-only pseudo-experiments"),
        "{summary}"
    );
}
