//! Bad input, run as a user would: each case must end with a non-zero exit, one
//! line on stderr naming the field at fault, nothing on stdout, and no output
//! directory or file written.

mod common;

use common::Scratch;
use std::fs;

use std::process::Output;

/// A valid scenario the cases edit; numbers invented for the test. Line numbers
/// matter to the unknown-key cases: `norm_uncertainty` is on line 10.
const BASE: &str = "\
title: Command-line test scenario (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 5.0}
signal:
  events_per_day: 2.0
  shape: {gaussian: {mean: 50.0, sigma: 2.0}}
backgrounds:
  - name: continuum
    events_per_day: 40.0
    shape: {exponential: {slope: -0.02}}
    norm_uncertainty: 0.05
  - name: sloped
    events_per_day: 10.0
    shape: {polynomial: {coefficients: [1.0, 0.01]}}
schedule:
  live_fraction: 0.8
plan:
  days: {first: 1, last: 100, points: 4, spacing: log}
  toys: 100
  seed: 11
  targets: [3, 5]
";

/// The scenario file name inside each scratch directory.
const SCENARIO: &str = "scenario.yaml";

impl Scratch {
    /// Sorted names of everything in the directory, hidden entries included.
    fn entries(&self) -> Vec<String> {
        let mut names: Vec<String> = fs::read_dir(&self.path)
            .expect("read scratch directory")
            .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }
}

/// `BASE` with the single occurrence of `from` replaced by `to`.
fn edited(from: &str, to: &str) -> String {
    assert_eq!(BASE.matches(from).count(), 1, "{from:?} must occur once");
    BASE.replacen(from, to, 1)
}

/// `BASE` with the whole `backgrounds:` list replaced by an empty one.
fn without_backgrounds() -> String {
    let start = BASE.find("backgrounds:").unwrap();
    let end = BASE.find("schedule:").unwrap();
    format!("{}backgrounds: []\n{}", &BASE[..start], &BASE[end..])
}

/// Why a run did not fail the way bad input must, or None when it did: a
/// non-zero exit, nothing on stdout, exactly one stderr line containing each of
/// `expected`, and nothing but the scenario (if any) left in the directory.
fn misbehaviour(
    scratch: &Scratch,
    output: &Output,
    expected: &[&str],
    files_before: &[String],
) -> Option<String> {
    let stderr = String::from_utf8_lossy(&output.stderr);
    let mut problems = Vec::new();
    if output.status.success() {
        problems.push("exit status 0".to_string());
    }
    if !output.stdout.is_empty() {
        problems.push(format!(
            "stdout not empty: {:?}",
            String::from_utf8_lossy(&output.stdout)
        ));
    }
    let lines = stderr.trim_end().lines().count();
    if lines != 1 {
        problems.push(format!("{lines} lines on stderr"));
    }
    if !stderr.starts_with("runcast: error: ") {
        problems.push("stderr does not start with \"runcast: error: \"".to_string());
    }
    for part in expected {
        if !stderr.contains(part) {
            problems.push(format!("stderr lacks {part:?}"));
        }
    }
    let files_after = scratch.entries();
    if files_after != files_before {
        problems.push(format!("files left: {files_after:?}"));
    }
    (!problems.is_empty()).then(|| format!("{}; stderr: {stderr}", problems.join(", ")))
}

/// Runs `runcast project SCENARIO --out out --toys 100 --quiet` and `runcast
/// check SCENARIO` on each bad scenario, in a directory of its own named after
/// `test`; reports every case that misbehaves.
fn assert_rejected(test: &str, cases: &[(&str, String, &[&str])]) {
    let scratch = Scratch::new(test);
    let mut failures = Vec::new();
    for (description, yaml, expected) in cases {
        fs::write(scratch.path.join(SCENARIO), yaml).expect("write scenario");
        let before = scratch.entries();
        let commands: [&[&str]; 2] = [
            &[
                "project", SCENARIO, "--out", "out", "--toys", "100", "--quiet",
            ],
            &["check", SCENARIO],
        ];
        for args in commands {
            let output = scratch.run(args);
            if let Some(problem) = misbehaviour(&scratch, &output, expected, &before) {
                failures.push(format!("{description} ({}): {problem}", args[0]));
            }
        }
    }
    assert!(failures.is_empty(), "\n{}", failures.join("\n"));
}

#[test]
fn base_scenario_is_accepted() {
    // Without this, every rejection below could come from a broken base.
    let scratch = Scratch::new("base");
    fs::write(scratch.path.join(SCENARIO), BASE).unwrap();
    let output = scratch.run(&["project", SCENARIO, "--out", "out", "--quiet"]);
    assert!(
        output.status.success() && output.stderr.is_empty(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    assert!(scratch.path.join("out").join("projection.json").is_file());
}

#[test]
fn missing_unknown_and_mistyped_keys_are_named() {
    let cases: [(&str, String, &[&str]); 6] = [
        (
            "missing key",
            edited("  seed: 11\n", ""),
            &["plan: missing field `seed`"],
        ),
        (
            "missing top-level key",
            edited("title: Command-line test scenario (invented numbers)\n", ""),
            &["missing field `title`"],
        ),
        (
            "unknown key",
            edited("    norm_uncertainty: 0.05", "    norm_uncertainties: 0.05"),
            &["line 10,", "unknown field `norm_uncertainties`"],
        ),
        (
            "misspelt shape",
            edited(
                "{exponential: {slope: -0.02}}",
                "{exponentail: {slope: -0.02}}",
            ),
            &["line 9,", "unknown field `exponentail`"],
        ),
        (
            "wrong type, text for a number",
            edited("events_per_day: 2.0", "events_per_day: two"),
            &["line 4,", "signal.events_per_day: invalid type"],
        ),
        (
            "wrong type, fraction for a count",
            edited("toys: 100", "toys: 1.5"),
            &["line 18,", "plan.toys: invalid type"],
        ),
    ];
    assert_rejected("missing-unknown-and-mistyped-keys-are-named", &cases);
}

#[test]
fn non_finite_numbers_are_named() {
    let cases: [(&str, String, &[&str]); 6] = [
        (
            "NaN signal rate",
            edited("events_per_day: 2.0", "events_per_day: .nan"),
            &["signal.events_per_day: "],
        ),
        (
            "NaN peak mean",
            edited("mean: 50.0", "mean: .nan"),
            &["signal.shape.gaussian.mean: "],
        ),
        (
            "NaN live fraction",
            edited("live_fraction: 0.8", "live_fraction: .nan"),
            &["schedule.live_fraction: "],
        ),
        (
            "infinite sigma",
            edited("sigma: 2.0", "sigma: .inf"),
            &["signal.shape.gaussian.sigma: "],
        ),
        (
            "infinite background rate",
            edited("events_per_day: 40.0", "events_per_day: .inf"),
            &["backgrounds[0].events_per_day: "],
        ),
        (
            "infinite range edge",
            edited("range: [0.0, 100.0]", "range: [-.inf, 100.0]"),
            &["observable.range: "],
        ),
    ];
    assert_rejected("non-finite-numbers-are-named", &cases);
}

#[test]
fn values_outside_their_physical_domain_are_named() {
    let cases: [(&str, String, &[&str]); 13] = [
        (
            "zero signal rate",
            edited("events_per_day: 2.0", "events_per_day: 0"),
            &["signal.events_per_day: "],
        ),
        (
            "negative signal rate",
            edited("events_per_day: 2.0", "events_per_day: -2.0"),
            &["signal.events_per_day: ", "-2"],
        ),
        (
            "zero background rate",
            edited("events_per_day: 40.0", "events_per_day: 0"),
            &["backgrounds[0].events_per_day: "],
        ),
        (
            "negative background rate",
            edited("events_per_day: 10.0", "events_per_day: -10.0"),
            &["backgrounds[1].events_per_day: ", "-10"],
        ),
        (
            "zero sigma",
            edited("sigma: 2.0", "sigma: 0"),
            &["signal.shape.gaussian.sigma: "],
        ),
        (
            "negative sigma",
            edited("sigma: 2.0", "sigma: -2.0"),
            &["signal.shape.gaussian.sigma: "],
        ),
        (
            "zero width",
            edited(
                "{gaussian: {mean: 50.0, sigma: 2.0}}",
                "{breit_wigner: {mean: 50.0, width: 0}}",
            ),
            &["signal.shape.breit_wigner.width: "],
        ),
        (
            "negative width",
            edited(
                "{gaussian: {mean: 50.0, sigma: 2.0}}",
                "{breit_wigner: {mean: 50.0, width: -1.5}}",
            ),
            &["signal.shape.breit_wigner.width: "],
        ),
        (
            "range low above high",
            edited("range: [0.0, 100.0]", "range: [100.0, 0.0]"),
            &["observable.range: "],
        ),
        (
            "range low equal to high",
            edited("range: [0.0, 100.0]", "range: [50.0, 50.0]"),
            &["observable.range: "],
        ),
        (
            "bin width not dividing the range",
            edited("bin_width: 5.0", "bin_width: 3.0"),
            &["observable.bin_width: "],
        ),
        (
            "polynomial negative on the range",
            // 1 - 0.02 x is negative above x = 50.
            edited("coefficients: [1.0, 0.01]", "coefficients: [1.0, -0.02]"),
            &["backgrounds[1].shape.polynomial.coefficients: "],
        ),
        (
            "empty background list",
            without_backgrounds(),
            &["backgrounds: "],
        ),
    ];
    assert_rejected("values-outside-their-physical-domain-are-named", &cases);
}

#[test]
fn bad_schedule_and_plan_values_are_named() {
    let cases: [(&str, String, &[&str]); 9] = [
        (
            "live fraction 0",
            edited("live_fraction: 0.8", "live_fraction: 0"),
            &["schedule.live_fraction: "],
        ),
        (
            "live fraction 1.5",
            edited("live_fraction: 0.8", "live_fraction: 1.5"),
            &["schedule.live_fraction: ", "1.5"],
        ),
        (
            "zero toys",
            edited("toys: 100", "toys: 0"),
            &["plan.toys: "],
        ),
        (
            "first day 0 with log spacing",
            edited("first: 1,", "first: 0,"),
            &["plan.days.first: "],
        ),
        (
            "last day before the first",
            edited("first: 1, last: 100", "first: 50, last: 10"),
            &["plan.days.last: "],
        ),
        (
            "no grid points",
            edited("points: 4", "points: 0"),
            &["plan.days.points: "],
        ),
        (
            "zero target",
            edited("targets: [3, 5]", "targets: [0, 5]"),
            &["plan.targets[0]: "],
        ),
        (
            "negative target",
            edited("targets: [3, 5]", "targets: [3, -5]"),
            &["plan.targets[1]: "],
        ),
        (
            "no targets",
            edited("targets: [3, 5]", "targets: []"),
            &["plan.targets: "],
        ),
    ];
    assert_rejected("bad-schedule-and-plan-values-are-named", &cases);
}

#[test]
fn bad_command_line_values_are_named() {
    let scratch = Scratch::new("command-line");
    fs::write(scratch.path.join(SCENARIO), BASE).unwrap();
    let before = scratch.entries();
    let cases: [(&[&str], &[&str]); 4] = [
        (
            &["project", SCENARIO, "--out", "out", "--toys", "0"],
            &["--toys"],
        ),
        (
            &["project", SCENARIO, "--out", "out", "--calibrate", "0"],
            &["--calibrate"],
        ),
        (
            &["project", SCENARIO, "--out", "out", "--threads", "0"],
            &["--threads"],
        ),
        (
            &["project", "missing.yaml", "--out", "out", "--toys", "100"],
            &["cannot read scenario file missing.yaml"],
        ),
    ];
    let failures: Vec<String> = cases
        .iter()
        .filter_map(|(args, expected)| {
            let output = scratch.run(args);
            misbehaviour(&scratch, &output, expected, &before)
                .map(|problem| format!("{args:?}: {problem}"))
        })
        .collect();
    assert!(failures.is_empty(), "\n{}", failures.join("\n"));
}

#[test]
fn a_signal_peak_outside_the_range_is_only_a_warning() {
    let scratch = Scratch::new("warning");
    fs::write(
        scratch.path.join(SCENARIO),
        edited("mean: 50.0", "mean: 101.0"),
    )
    .unwrap();
    let output = scratch.run(&["project", SCENARIO, "--out", "out", "--quiet"]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(output.status.success(), "{stderr}");
    assert!(stderr.contains("warning"), "{stderr}");
    assert!(stderr.contains("signal.shape.gaussian.mean"), "{stderr}");
    assert!(scratch.path.join("out").join("projection.json").is_file());
}
