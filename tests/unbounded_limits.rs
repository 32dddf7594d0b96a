//! Scenarios whose expected limits are unbounded at some or all exposures: the
//! projection reports them as absent and the days as beyond the grid, instead
//! of stopping on a number no file can hold.

mod common;

use common::Scratch;
use serde_json::Value;
use std::fs;
use std::process::Output;

/// The counting-window demo with one line replaced, projected with a few toys;
/// returns the parsed `projection.json`.
fn project_demo_with(label: &str, from: &str, to: &str) -> Value {
    run_demo_with(label, from, to).0
}

/// As `project_demo_with`, also returning the summary printed on stdout.
fn run_demo_with(label: &str, from: &str, to: &str) -> (Value, String) {
    run_demo_with_args(label, from, to, &["--toys", "200"])
}

/// As `run_demo_with`, with the options `extra` instead of `--toys 200`.
fn run_demo_with_args(label: &str, from: &str, to: &str, extra: &[&str]) -> (Value, String) {
    let scratch = Scratch::new(label);
    let output = project_edited_demo(&scratch, from, to, extra);
    assert!(
        output.status.success(),
        "{label}: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    let bytes = fs::read(scratch.path.join("out/projection.json")).unwrap();
    let json = serde_json::from_slice(&bytes).expect("projection.json is JSON");
    (json, String::from_utf8(output.stdout).unwrap())
}

/// Writes the counting-window demo with one line replaced into `scratch` and
/// projects it into `out` with the options `extra`.
fn project_edited_demo(scratch: &Scratch, from: &str, to: &str, extra: &[&str]) -> Output {
    let demo = fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/counting_window.yaml"
    ))
    .expect("demo scenario");
    assert!(demo.contains(from), "{from:?} not in the demo");
    fs::write(scratch.path.join("edited.yaml"), demo.replacen(from, to, 1)).unwrap();
    let mut args = vec!["project", "edited.yaml", "--out", "out", "--quiet"];
    args.extend_from_slice(extra);
    scratch.run(&args)
}

fn points(projection: &Value) -> &Vec<Value> {
    projection["points"].as_array().unwrap()
}

const DEMO_SIGNAL: &str = "  shape: {flat: {}}\nbackgrounds:";

/// The demo with a Gaussian signal yield uncertainty `relative`.
fn with_yield_uncertainty(relative: &str) -> String {
    format!("  shape: {{flat: {{}}}}\n  yield_uncertainty: {relative}\nbackgrounds:")
}

#[test]
fn a_signal_yield_uncertainty_above_a_third_is_refused() {
    // The auxiliary measurement of the yield factor is drawn from N(1, delta^2)
    // and lies below zero in Phi(-1/delta) of the pseudo-experiments; above
    // delta = 1/3 that exceeds Phi(-3) = 1.35e-3 (PDG, Review of Particle
    // Physics, statistics section, table of Gaussian tail probabilities).
    for relative in ["0.34", "1.0", "1e6"] {
        let scratch = Scratch::new(&format!("wide-yield-{relative}"));
        let output = project_edited_demo(
            &scratch,
            DEMO_SIGNAL,
            &with_yield_uncertainty(relative),
            &["--toys", "10"],
        );
        assert!(!output.status.success(), "{relative} accepted");
        let stderr = String::from_utf8(output.stderr).unwrap();
        assert!(
            stderr.contains(
                "signal.yield_uncertainty: a Gaussian yield uncertainty above 1/3 puts more than \
                 0.13% of the auxiliary measurements below zero"
            ),
            "{stderr}"
        );
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(
            !scratch.path.join("out").exists(),
            "{relative}: output written"
        );
    }
}

#[test]
fn a_signal_yield_uncertainty_of_0_3_keeps_the_toys_on_asimov() {
    // With delta = 0.3 only Phi(-1/0.3) = 4.3e-4 of the auxiliary measurements
    // fall below zero (PDG statistics review, Gaussian tail table), so the toy
    // median days to 3 sigma agree with the Asimov days. The sample median of
    // N draws of a unit-width Z has standard error sqrt(pi/2) / sqrt(N)
    // (asymptotic variance of the sample median, 1 / (4 N f(m)^2), with
    // f(m) = 1/sqrt(2 pi); common practice); in days that is divided by
    // dZ_A/dt at the crossing. Allowed: 4 standard errors (6e-5 two-sided).
    let toys = 2000.0_f64;
    // Discovery toys only: 2000 make 4 standard errors about 22 d, well
    // below the 75 d offset a width of 1 gave.
    let (projection, _) = run_demo_with_args(
        "yield-0.3",
        DEMO_SIGNAL,
        &with_yield_uncertainty("0.3"),
        &["--toys", "2000", "--no-limits"],
    );
    let row = &projection["days_to_target"][0];
    assert_eq!(row["target"], 3.0);
    let asimov = row["asimov_days"].as_f64().expect("Asimov reaches 3 sigma");
    let median = row["median_days"]
        .as_f64()
        .expect("toy median reaches 3 sigma");
    let grid = points(&projection);
    let above = grid
        .iter()
        .position(|point| point["days"].as_f64().unwrap() > asimov)
        .expect("3 sigma inside the grid");
    let slope_of = |point: &Value, key: &str| point[key].as_f64().unwrap();
    let (before, after) = (&grid[above - 1], &grid[above]);
    let slope = (slope_of(after, "z_asimov") - slope_of(before, "z_asimov"))
        / (slope_of(after, "days") - slope_of(before, "days"));
    let error_days = (std::f64::consts::PI / 2.0).sqrt() / toys.sqrt() / slope;
    assert!(
        (median - asimov).abs() < 4.0 * error_days,
        "toy median {median} d, Asimov {asimov} d, standard error {error_days} d"
    );
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
    // No Asimov limit is bounded (a_vanishing_live_fraction_reaches_nothing),
    // so no limit toy runs at any of the 24 points: once reported as
    // "0 of 4800" failed.
    let (_, summary) = run_demo_with(
        "live-summary",
        "live_fraction: 0.9",
        "live_fraction: 1e-300",
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
