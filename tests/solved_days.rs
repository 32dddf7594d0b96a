//! The headline days never depend on the figure's grid: every toy day is
//! solved with pseudo-experiments at exposures inside the grid interval that
//! brackets it (between no live time and the first point when it comes
//! first), and the global Asimov days are root-found, so a coarse grid, a
//! one-point grid and a dense grid give the same days within the toys'
//! standard error.

mod common;

use common::Scratch;
use serde_json::Value;
use std::fs;

/// A single counting window with s = 4 and b = 100 events per live day and
/// a 1% Gaussian uncertainty on b: the significance saturates at
/// s/(δ b) = 4σ (common practice), so Z² is far from linear in exposure
/// and a crossing extrapolated as Z² ∝ days from a late grid lands far off.
fn capped_window(days: &str) -> String {
    format!(
        "title: capped counting window\n\
         observable: {{name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}}\n\
         signal: {{events_per_day: 4.0, shape: {{flat: {{}}}}}}\n\
         backgrounds:\n  - {{name: flat, events_per_day: 100.0, shape: {{flat: {{}}}}, norm_uncertainty: 0.01}}\n\
         plan: {{days: {days}, toys: 1000, seed: 9, targets: [3]}}\n"
    )
}

/// `runcast project` on `text` written as `name`, with `args`; its JSON.
fn project(scratch: &Scratch, name: &str, text: &str, args: &[&str]) -> Value {
    fs::write(scratch.path.join(name), text).unwrap();
    let out = format!("out-{name}");
    let mut all = vec!["project", name, "--quiet", "--out", &out];
    all.extend_from_slice(args);
    let output = scratch.run(&all);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let json = fs::read_to_string(scratch.path.join(out).join("projection.json")).unwrap();
    serde_json::from_str(&json).unwrap()
}

fn number(value: &Value) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("expected a number, found {value}"))
}

/// The standard error of a toy-median day, from the dense grid: the median
/// of N toys has a standard error of about 1.2533 s/√N for a spread s
/// (the half-width of the 68% band; common practice), turned into days
/// with the local slope of the Asimov curve d(days)/d(value) between the
/// grid points that bracket `day`.
fn day_error(dense: &Value, day: f64, value: &str, band: &str) -> f64 {
    let points = dense["points"].as_array().unwrap();
    let above = points
        .iter()
        .position(|p| number(&p["days"]) >= day)
        .expect("the dense grid holds the day");
    let (low, high) = (&points[above - 1], &points[above]);
    let slope = (number(&high[value]) - number(&low[value]))
        / (number(&high["days"]) - number(&low["days"]));
    let spread = (number(&high[band][2]) - number(&high[band][1])) / 2.0;
    let toys = number(&dense["toys"]);
    1.2533 * spread / toys.sqrt() / slope.abs()
}

/// Two solved days agree within 3% or three standard errors of their
/// difference (two independent toy estimates: √2 times one's error).
fn assert_same_day(what: &str, coarse: f64, dense: f64, error: f64) {
    let tolerance = (0.03 * dense).max(3.0 * std::f64::consts::SQRT_2 * error);
    assert!(
        (coarse - dense).abs() <= tolerance,
        "{what}: {coarse} against {dense} on the dense grid (tolerance {tolerance})"
    );
}

#[test]
fn a_grid_starting_after_the_crossing_gives_the_dense_grids_days() {
    let scratch = Scratch::new("late-grid");
    let dense = project(
        &scratch,
        "dense.yaml",
        &capped_window("{first: 5, last: 2000, points: 24, spacing: log}"),
        &[],
    );
    let dense_3 = number(&dense["days_to_target"][0]["median_days"]);
    let dense_exclusion = number(&dense["days_to_exclusion"]["median_days"]);
    // The toys agree with the Asimov day (147 d) on the dense grid, as they
    // must with b = 100 per day (asymptotic regime; Cowan et al., EPJC 71
    // (2011) 1554, sec. 5).
    let asimov_3 = number(&dense["days_to_target"][0]["asimov_days"]);
    assert!(
        (dense_3 / asimov_3 - 1.0).abs() < 0.05,
        "{dense_3} {asimov_3}"
    );
    let error_3 = day_error(&dense, dense_3, "z_asimov", "z_band");
    let error_exclusion = day_error(&dense, dense_exclusion, "limit_asimov", "limit_band");
    for (name, days) in [("late.yaml", "[500, 1000, 2000]"), ("one.yaml", "[2000]")] {
        let coarse = project(&scratch, name, &capped_window(days), &[]);
        let row = &coarse["days_to_target"][0];
        assert_same_day(
            &format!("{name} toy median 3σ"),
            number(&row["median_days"]),
            dense_3,
            error_3,
        );
        assert_same_day(
            &format!("{name} 50% of toys at 3σ"),
            number(&row["p50_days"]),
            dense_3,
            error_3,
        );
        assert_same_day(
            &format!("{name} toy median exclusion"),
            number(&coarse["days_to_exclusion"]["median_days"]),
            dense_exclusion,
            error_exclusion,
        );
        assert!(number(&coarse["solving_points"]) > 0.0);
    }
}

#[test]
fn a_day_before_the_first_point_is_where_the_toys_reach_the_target() {
    // s = 40, b = 100 per live day, b known: Z_A^2 = 2((s+b) ln(1+s/b) - s)
    // per live day = 14.21 (Cowan et al., EPJC 71 (2011) 1554, eq. 97), so
    // 3σ comes after about 0.63 d, far before the first grid point at 5 d.
    let scratch = Scratch::new("early-crossing");
    let text = "title: strong window\n\
         observable: {name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}\n\
         signal: {events_per_day: 40.0, shape: {flat: {}}}\n\
         backgrounds:\n  - {name: flat, events_per_day: 100.0, shape: {flat: {}}}\n\
         plan: {days: {first: 5, last: 50, points: 4, spacing: log}, toys: 1000, seed: 3, targets: [3]}\n";
    let first = project(&scratch, "strong.yaml", text, &["--no-limits"]);
    let day = number(&first["days_to_target"][0]["median_days"]);
    let asimov = 9.0 / (2.0 * (140.0 * (1.4f64).ln() - 40.0));
    assert!((day / asimov - 1.0).abs() < 0.1, "{day} against {asimov}");
    // The toys computed at the reported day, 10% before and 10% after it:
    // the median is below 3σ before and at or above it after.
    let before = format!("{}", day * 0.9);
    let after = format!("{}", day * 1.1);
    let checked = project(
        &scratch,
        "strong.yaml",
        text,
        &["--no-limits", "--at", &before, "--at", &after],
    );
    let at = checked["at"].as_array().unwrap();
    assert!(number(&at[0]["z_median"]) < 3.0, "{}", at[0]["z_median"]);
    assert!(number(&at[1]["z_median"]) >= 3.0, "{}", at[1]["z_median"]);
}

/// A Gaussian line of width 2 on a flat background, searched for anywhere
/// from 20 to 80 (a scan of 61 positions): the global days follow the
/// look-elsewhere effect (Gross and Vitells, EPJC 70 (2010) 525).
fn scanned_line(days: &str) -> String {
    format!(
        "title: scanned line\n\
         observable: {{name: energy, unit: keV, range: [0.0, 100.0], bin_width: 1.0}}\n\
         signal:\n  events_per_day: 3.0\n  shape: {{gaussian: {{mean: 50.0, sigma: 2.0}}}}\n  scan: {{from: 20.0, to: 80.0, step: 1.0}}\n\
         backgrounds:\n  - {{name: flat, events_per_day: 100.0, shape: {{flat: {{}}}}}}\n\
         plan: {{days: {days}, toys: 10, seed: 5, targets: [3, 5]}}\n"
    )
}

#[test]
fn global_asimov_days_are_solved_not_interpolated() {
    let scratch = Scratch::new("global-asimov");
    let global =
        |json: &Value, index: usize| number(&json["days_to_target"][index]["global_asimov_days"]);
    let two = project(
        &scratch,
        "two.yaml",
        &scanned_line("[2, 400]"),
        &["--asimov-only"],
    );
    let dense = project(
        &scratch,
        "dense.yaml",
        &scanned_line("{first: 2, last: 400, points: 24, spacing: log}"),
        &["--asimov-only"],
    );
    for index in 0..2 {
        let (coarse, fine) = (global(&two, index), global(&dense, index));
        assert!(
            (coarse / fine - 1.0).abs() < 1e-4,
            "target {index}: {coarse} on two points against {fine} on 24"
        );
        // The global day comes after the local one.
        assert!(fine > number(&dense["days_to_target"][index]["asimov_days"]));
    }
}

/// Toy days of three shipped demos on their own grids and on a grid of three
/// points agree within the toys' standard error.
#[test]
fn shipped_demos_give_their_toy_days_on_a_coarse_grid() {
    let scratch = Scratch::new("coarse-demos");
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    for (demo, coarse_days) in [
        ("counting_window.yaml", "[20, 400, 2000]"),
        ("narrow_peak.yaml", "[2, 30, 365]"),
        ("faint_line.yaml", "[3, 40, 200]"),
    ] {
        let text = fs::read_to_string(root.join(demo)).unwrap();
        let grid = text
            .lines()
            .find(|line| line.trim_start().starts_with("days: {first"))
            .expect("the demo's grid line");
        let coarse_text = text.replace(grid, &format!("  days: {coarse_days}"));
        let dense = project(&scratch, demo, &text, &["--toys", "500"]);
        let coarse = project(
            &scratch,
            &format!("coarse-{demo}"),
            &coarse_text,
            &["--toys", "500"],
        );
        for (index, row) in dense["days_to_target"]
            .as_array()
            .unwrap()
            .iter()
            .enumerate()
        {
            let Some(day) = row["median_days"].as_f64() else {
                continue;
            };
            let error = day_error(&dense, day, "z_asimov", "z_band");
            let coarse_day = number(&coarse["days_to_target"][index]["median_days"]);
            assert_same_day(&format!("{demo} target {index}"), coarse_day, day, error);
        }
    }
}
