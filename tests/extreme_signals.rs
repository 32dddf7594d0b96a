//! Signals far larger and far smaller than their backgrounds, through the
//! binary: a huge signal reaches its targets and its exclusion within the
//! first fraction of a day, solved there rather than clipped to the grid,
//! with a limit on mu far below 1; a vanishing one is never seen and has no
//! limit worth reporting; neither stops the run.
//!
//! The outside reference is the closed form of one counting window with a
//! known background b and signal s: Z_A = sqrt(2((s+b) ln(1+s/b) - s))
//! (Cowan, Cranmer, Gross, Vitells, EPJC 71 (2011) 1554, eq. 97), and the
//! median expected CLs limit mu_up = sigma_A Phi^-1(1 - alpha/2), 1.96
//! sigma_A at 95% CL (ibid., eqs. 88-89), with sigma_A^2 = mu^2 / q_mu,A
//! (eqs. 30-32), so that q_mu,A = 1.96^2 at mu_up, where on the
//! background-only Asimov dataset q_mu,A = 2 (mu s - b ln(1 + mu s/b))
//! (eq. 12 with n = b).

mod common;

use common::Scratch;
use serde_json::Value;
use std::fs;

/// Phi^-1(0.975), the 95% CL median limit in units of sigma_A (standard
/// normal table).
const MEDIAN_LEVEL: f64 = 1.959_963_984_540_054;

/// A shipped demo with `from` replaced by `to`, written into `scratch` as
/// `edited.yaml`.
fn edited_demo(scratch: &Scratch, demo: &str, from: &str, to: &str) {
    let text = fs::read_to_string(format!("{}/scenarios/{demo}", env!("CARGO_MANIFEST_DIR")))
        .expect("demo scenario");
    assert!(text.contains(from), "{from:?} not in {demo}");
    fs::write(scratch.path.join("edited.yaml"), text.replacen(from, to, 1)).unwrap();
}

/// Runs the binary with `args` in `scratch`, asserting success; returns stdout.
fn run_ok(scratch: &Scratch, args: &[&str]) -> String {
    let output = scratch.run(args);
    assert!(
        output.status.success(),
        "runcast {args:?}: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// `project --asimov-only` of `edited.yaml` into `directory` with `extra`
/// options; returns the summary and the parsed `projection.json`.
fn project(scratch: &Scratch, directory: &str, extra: &[&str]) -> (String, Value) {
    let mut args = vec![
        "project",
        "edited.yaml",
        "--out",
        directory,
        "--asimov-only",
        "--quiet",
    ];
    args.extend_from_slice(extra);
    let summary = run_ok(scratch, &args);
    let bytes = fs::read(scratch.path.join(directory).join("projection.json")).unwrap();
    (summary, serde_json::from_slice(&bytes).unwrap())
}

fn number(value: &Value) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("expected a number, got {value}"))
}

fn close(value: f64, expected: f64, relative: f64) -> bool {
    (value - expected).abs() <= relative * expected.abs()
}

/// The number of days printed after `prefix` in `text` ("3 sigma: 8.46e-6 d").
fn printed_days(text: &str, prefix: &str) -> f64 {
    text.split(prefix)
        .nth(1)
        .and_then(|rest| rest.split(" d").next())
        .and_then(|days| days.parse().ok())
        .unwrap_or_else(|| panic!("no days after {prefix:?} in:\n{text}"))
}

/// Days are printed rounded up to three significant digits below a tenth of
/// a day: at or above the value, by less than 1%.
fn assert_printed_rounded_up(printed: f64, days: f64) {
    assert!(
        printed >= days && printed <= days * 1.01,
        "printed {printed} d for {days} d"
    );
}

/// Eq. 97 per live day of a window with `s` signal and `b` background events
/// per live day.
fn z_asimov_per_live_day(s: f64, b: f64) -> f64 {
    (2.0 * ((s + b) * (s / b).ln_1p() - s)).sqrt()
}

/// The mu where q_mu,A = 2 (mu s - b ln(1 + mu s/b)) reaches MEDIAN_LEVEL^2,
/// by bisection in log mu (q_mu,A grows with mu).
fn median_limit(s: f64, b: f64) -> f64 {
    let q = |mu: f64| 2.0 * (mu * s - b * (mu * s / b).ln_1p());
    let (mut low, mut high) = (1e-300_f64, 1e300_f64);
    while high / low > 1.0 + 1e-12 {
        let middle = (low * high).sqrt();
        if q(middle) < MEDIAN_LEVEL * MEDIAN_LEVEL {
            low = middle;
        } else {
            high = middle;
        }
    }
    low
}

/// One bin, 10^5 signal and 100 background events per live day, the
/// background known exactly, 90% of calendar time live (invented numbers).
const HUGE_SIGNAL_WINDOW: &str = "\
title: Huge signal in one counting window (invented numbers)
observable: {name: energy, unit: keV, range: [20.0, 60.0], bin_width: 40.0}
signal: {events_per_day: 1.0e5, shape: {flat: {}}}
backgrounds:
  - {name: flat, events_per_day: 100.0, shape: {flat: {}}}
schedule: {live_fraction: 0.9}
plan:
  days: {first: 1, last: 100, points: 5, spacing: log}
  toys: 100
  seed: 19
  targets: [3, 5]
";

#[test]
fn a_huge_counting_signal_gives_the_closed_form_days_and_limits() {
    let (s, b, live_fraction) = (1e5, 100.0, 0.9);
    // Z_A^2 of eq. 97 grows in proportion to the live days when s and b do.
    let z_per_live_day = z_asimov_per_live_day(s, b);
    let days_to = |target: f64| (target / z_per_live_day).powi(2) / live_fraction;
    // mu_up = 1 when q_1,A = 1.96^2 (eqs. 12, 88-89): after
    // 1.96^2 / (2 (s - b ln(1 + s/b))) live days.
    let exclusion_days =
        MEDIAN_LEVEL * MEDIAN_LEVEL / (2.0 * (s - b * (s / b).ln_1p())) / live_fraction;

    let scratch = Scratch::new("huge-window");
    fs::write(scratch.path.join("edited.yaml"), HUGE_SIGNAL_WINDOW).unwrap();
    let (_, json) = project(&scratch, "out", &[]);
    let first_day = number(&json["points"][0]["days"]);
    let check = run_ok(&scratch, &["check", "edited.yaml"]);
    for (row, target) in json["days_to_target"]
        .as_array()
        .unwrap()
        .iter()
        .zip([3.0, 5.0])
    {
        let expected = days_to(target);
        assert!(expected < 1e-4 * first_day, "{expected} d");
        // Root finding stops at a relative width of 1e-7.
        let days = number(&row["asimov_days"]);
        assert!(
            close(days, expected, 1e-6),
            "{target}σ: {days} d, eq. 97 {expected} d"
        );
        assert_printed_rounded_up(printed_days(&check, &format!("{target} sigma: ")), days);
    }
    let days = number(&json["days_to_exclusion"]["asimov_days"]);
    assert!(
        close(days, exclusion_days, 1e-6),
        "excluded after {days} d, eqs. 88-89 {exclusion_days} d"
    );
    assert_printed_rounded_up(printed_days(&check, "(median expected CLs limit): "), days);
    // At every grid point the median limit is a tiny mu, found to the
    // precision of its root finding (1e-7).
    for point in json["points"].as_array().unwrap() {
        let live_days = number(&point["live_days"]);
        let expected = median_limit(s * live_days, b * live_days);
        let limit = number(&point["limit_asimov"]);
        assert!(expected < 1e-3, "{expected}");
        assert!(
            close(limit, expected, 1e-6),
            "mu_up {limit}, eq. 89 {expected}"
        );
    }
}

#[test]
fn a_huge_peak_on_a_fitted_continuum_is_solved_below_the_first_grid_day() {
    // The narrow-peak demo with 10^5 and 10^11 signal events per day, 125
    // and 1.25e11 times its background: Z_A is at least 500 at the first
    // grid day, so the targets and the exclusion fall within its first
    // thousandth. Each root is checked where it was found, with `--at` (a
    // point computed at that day): Z_A there is the target, and the median
    // limit on mu is 1.
    for rate in ["1.0e5", "1.0e11"] {
        huge_peak_is_solved_below_the_first_grid_day(rate);
    }
}

/// The checks of the test above for one signal rate.
fn huge_peak_is_solved_below_the_first_grid_day(rate: &str) {
    let scratch = Scratch::new(&format!("huge-peak-{rate}"));
    edited_demo(
        &scratch,
        "narrow_peak.yaml",
        "events_per_day: 2.4 ",
        &format!("events_per_day: {rate} "),
    );
    let (summary, json) = project(&scratch, "grid", &[]);
    let first_day = number(&json["points"][0]["days"]);
    let targets: Vec<(f64, f64)> = json["days_to_target"]
        .as_array()
        .unwrap()
        .iter()
        .map(|row| (number(&row["target"]), number(&row["asimov_days"])))
        .collect();
    let exclusion = number(&json["days_to_exclusion"]["asimov_days"]);
    for &(target, days) in &targets {
        assert!(days > 0.0 && days < 1e-3 * first_day, "{days} d");
        assert_printed_rounded_up(printed_days(&summary, &format!("{target}σ       ")), days);
    }
    assert!(exclusion > 0.0 && exclusion < 1e-3 * first_day);
    // Every grid point has its limits, ordered from the -2σ band up.
    for point in json["points"].as_array().unwrap() {
        let median = number(&point["limit_asimov"]);
        let band: Vec<f64> = point["limit_asimov_band"]
            .as_array()
            .unwrap_or_else(|| panic!("no band at {point}"))
            .iter()
            .map(number)
            .collect();
        assert!(median < 1e-3, "{median}");
        assert!(
            band[0] < band[1] && band[1] < median && median < band[2] && band[2] < band[3],
            "{band:?} around {median}"
        );
    }

    let at: Vec<String> = targets
        .iter()
        .map(|(_, days)| days.to_string())
        .chain([exclusion.to_string()])
        .collect();
    let (_, at_json) = project(
        &scratch,
        "at",
        &["--at", &at[0], "--at", &at[1], "--at", &at[2]],
    );
    // The `--at` points come in increasing order of their days.
    let at_day = |days: f64| {
        at_json["at"]
            .as_array()
            .unwrap()
            .iter()
            .find(|point| number(&point["days"]) == days)
            .unwrap_or_else(|| panic!("no --at point at {days} d"))
    };
    // Z_A grows about as the square root of the days, so the days' 1e-7 is
    // half that in Z_A.
    for &(target, days) in &targets {
        let z = number(&at_day(days)["z_asimov"]);
        assert!(
            close(z, target, 1e-6),
            "{rate}: Z_A {z} at the {target}σ day"
        );
    }
    let limit = number(&at_day(exclusion)["limit_asimov"]);
    assert!(
        close(limit, 1.0, 1e-6),
        "mu_up {limit} at the exclusion day"
    );
}

#[test]
fn a_vanishing_signal_in_a_counting_window_is_never_seen_and_has_no_limit() {
    // The counting-window demo (b = 100 per live day known to 1%) with
    // s = 1e-30 per live day: Z_A saturates at s / (delta b) = 1e-30 (common
    // practice; the demo's own comment), so every target is never reached,
    // and the median limit even without the uncertainty (which only widens
    // it) is about 1.96 sqrt(b) / s, far beyond 2^60 times the signal: left
    // empty.
    let (s, b, relative) = (1e-30, 100.0, 0.01);
    let scratch = Scratch::new("vanishing-window");
    edited_demo(
        &scratch,
        "counting_window.yaml",
        "events_per_day: 4.0",
        "events_per_day: 1.0e-30",
    );
    let (summary, json) = project(&scratch, "out", &[]);
    for row in json["days_to_target"].as_array().unwrap() {
        assert_eq!(row["asimov_days"], Value::Null, "{row}");
        let saturation = number(&row["saturation_z"]);
        assert!((saturation - s / (relative * b)).abs() < 1e-20, "{row}");
    }
    assert!(summary.contains("3σ       never"), "{summary}");
    assert!(summary.contains("5σ       never"), "{summary}");
    assert!(
        summary.contains("the signal is too small to change any fit"),
        "{summary}"
    );
    for point in json["points"].as_array().unwrap() {
        let live_days = number(&point["live_days"]);
        assert!(median_limit(s * live_days, b * live_days) > 2f64.powi(60));
        assert_eq!(point["limit_asimov"], Value::Null, "{point}");
    }
    assert_eq!(json["days_to_exclusion"]["asimov_days"], Value::Null);
    let check = run_ok(&scratch, &["check", "edited.yaml"]);
    assert!(
        check.contains("3 sigma: never: Z_A stays 0, the signal is too small to change any fit"),
        "{check}"
    );
}

#[test]
fn a_vanishing_line_in_a_position_scan_is_never_seen() {
    // The scan demo with a line of 1e-30 events per day over 500 of
    // background: Z_A and its global significance are 0 to rounding.
    let scratch = Scratch::new("vanishing-line");
    edited_demo(
        &scratch,
        "unknown_line.yaml",
        "events_per_day: 4.0 ",
        "events_per_day: 1.0e-30 ",
    );
    let (summary, json) = project(&scratch, "out", &[]);
    for row in json["days_to_target"].as_array().unwrap() {
        for key in ["asimov_days", "global_asimov_days"] {
            assert_eq!(row[key], Value::Null, "{key} in {row}");
        }
        assert_eq!(number(&row["saturation_z"]), 0.0, "{row}");
    }
    for point in json["points"].as_array().unwrap() {
        assert_eq!(number(&point["z_asimov"]), 0.0, "{point}");
        assert_eq!(point["limit_asimov"], Value::Null, "{point}");
    }
    assert!(summary.contains("3σ       never"), "{summary}");
}

#[test]
fn a_huge_line_has_the_reach_of_an_ordinary_one() {
    // The likelihood depends on the signal only through mu times its rate,
    // so the rates that `reach` reports (limits and discovery rates in
    // events per day) are the same whatever rate the scenario names: the
    // scan demo's 4 per day and 10^10 per day give them to the precision
    // of the root finding (1e-7).
    let reach_of = |rate: &str| {
        let scratch = Scratch::new(&format!("reach-{rate}"));
        edited_demo(
            &scratch,
            "unknown_line.yaml",
            "events_per_day: 4.0 ",
            &format!("events_per_day: {rate} "),
        );
        run_ok(
            &scratch,
            &[
                "reach",
                "edited.yaml",
                "--days",
                "100",
                "--out",
                "out",
                "--quiet",
            ],
        );
        let bytes = fs::read(scratch.path.join("out/reach.json")).unwrap();
        serde_json::from_slice::<Value>(&bytes).unwrap()["exposures"][0]["positions"].clone()
    };
    let ordinary = reach_of("4.0");
    let huge = reach_of("1.0e10");
    let numbers = |position: &Value| -> Vec<f64> {
        let mut values = vec![number(&position["limit_rate_asimov"])];
        for key in [
            "limit_rate_asimov_band",
            "discovery_rate_local",
            "discovery_rate_global",
        ] {
            values.extend(position[key].as_array().unwrap().iter().map(number));
        }
        values
    };
    let positions = ordinary.as_array().unwrap();
    assert_eq!(positions.len(), huge.as_array().unwrap().len());
    for (ordinary, huge) in positions.iter().zip(huge.as_array().unwrap()) {
        for (a, b) in numbers(ordinary).into_iter().zip(numbers(huge)) {
            assert!(close(b, a, 1e-6), "at {}: {b} vs {a}", ordinary["position"]);
        }
    }
}
