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
    let with_no_files: Vec<_> = cases
        .iter()
        .map(|(description, yaml, expected)| (*description, yaml.clone(), "", *expected))
        .collect();
    assert_rejected_beside(test, &with_no_files);
}

/// As [`assert_rejected`], each scenario written beside a file `continuum.csv`
/// holding the case's text (none when it is empty).
fn assert_rejected_beside(test: &str, cases: &[(&str, String, &str, &[&str])]) {
    let scratch = Scratch::new(test);
    let mut failures = Vec::new();
    for (description, yaml, csv, expected) in cases {
        fs::write(scratch.path.join(SCENARIO), yaml).expect("write scenario");
        let table = scratch.path.join("continuum.csv");
        match csv.is_empty() {
            true => drop(fs::remove_file(&table)),
            false => fs::write(&table, csv).expect("write table"),
        }
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
    let cases: [(&[&str], &[&str]); 9] = [
        (
            &["project", SCENARIO, "--out", "out", "--toys", "0"],
            &["--toys"],
        ),
        (
            &["project", SCENARIO, "--out", "out", "--at", "0"],
            &["--at 0", "above 0"],
        ),
        (
            &["project", SCENARIO, "--out", "out", "--at", "inf"],
            &["'inf' for '--at <D>'", "expected calendar days"],
        ),
        (
            &["project", SCENARIO, "--at", "30", "--at", "9", "--at", "30"],
            &["--at 30", "more than once"],
        ),
        (
            &["project", SCENARIO, "--out", "out", "--toys", "abc"],
            &["--toys", "abc"],
        ),
        (
            // One toy cannot resolve any tail: p = 1/N must be below
            // 1 - Phi(1) = 0.1587 (standard normal table; common practice).
            &["project", SCENARIO, "--out", "out", "--calibrate", "1"],
            &["--calibrate 1", "at least 7"],
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
fn a_signal_peak_outside_the_range_is_an_error() {
    let scratch = Scratch::new("peak-outside");
    fs::write(
        scratch.path.join(SCENARIO),
        edited("mean: 50.0", "mean: 101.0"),
    )
    .unwrap();
    let output = scratch.run(&["project", SCENARIO, "--out", "out", "--quiet"]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(!output.status.success(), "{stderr}");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(stderr.contains("signal.shape.gaussian.mean"), "{stderr}");
    assert!(!scratch.path.join("out").exists());
}

#[test]
fn requests_beyond_the_documented_limits_are_named() {
    // The limits are listed in docs/scenario.md ("Limits on the input") and src/scenario/limits.rs.
    let deep = format!(
        "{}\nextra: {}{}\n",
        BASE,
        "[".repeat(100_000),
        "]".repeat(100_000)
    );
    let cases: [(&str, String, &[&str]); 11] = [
        (
            "grid points near 2^63",
            edited("points: 4", "points: 9223372036854775000"),
            &["plan.days.points: ", "10000"],
        ),
        (
            "a million grid points",
            edited("points: 4", "points: 1000000"),
            &["plan.days.points: ", "10000"],
        ),
        (
            "toys at 2^64 - 1",
            edited("toys: 100", "toys: 18446744073709551615"),
            &["plan.toys: ", "10000000"],
        ),
        (
            "toys at 10^12",
            edited("toys: 100", "toys: 1000000000000"),
            &["plan.toys: ", "10000000"],
        ),
        (
            "toys times points beyond the total",
            edited("toys: 100", "toys: 9000000").replace("points: 4", "points: 100"),
            &["plan.toys: ", "1000000000"],
        ),
        (
            "a target of 1.7e308 sigma",
            edited("targets: [3, 5]", "targets: [3, 1.7e+308]"),
            &["plan.targets[1]: ", "100 sigma"],
        ),
        (
            "seventeen targets",
            edited("targets: [3, 5]", &format!("targets: {:?}", [3.0; 17])),
            &["plan.targets: ", "16"],
        ),
        (
            "a unit of 65,530 characters",
            edited("unit: keV", &format!("unit: {}", "k".repeat(65_530))),
            &["observable.unit: ", "200 characters"],
        ),
        (
            "a background name of 201 characters",
            edited(
                "  - name: continuum",
                &format!("  - name: {}", "x".repeat(201)),
            ),
            &["backgrounds[0].name: ", "200 characters"],
        ),
        (
            "a tiny range the bin width does not divide",
            edited(
                "range: [0.0, 100.0], bin_width: 5.0",
                "range: [1000000.0, 1000000.000001], bin_width: 1e-7",
            ),
            // 10.0000076 bins, not "10 bins".
            &["observable.bin_width: ", "(10.0001 bins)"],
        ),
        (
            "100,000 nested brackets",
            deep,
            &["line 22: ", "nested 100000 deep", "32 levels"],
        ),
    ];
    assert_rejected("requests-beyond-the-documented-limits-are-named", &cases);
}

#[test]
fn control_characters_in_text_are_named() {
    // They would go raw into the SVG text and break the XML (XML 1.0, sec. 2.2:
    // no control characters other than tab and line breaks; common practice).
    let cases: [(&str, String, &[&str]); 3] = [
        (
            "escape in the title",
            edited(
                "title: Command-line test scenario (invented numbers)",
                "title: \"Command-line test\\e scenario\"",
            ),
            &["title: ", "control characters"],
        ),
        (
            "bell in a background name",
            edited("  - name: continuum", "  - name: \"contin\\auum\""),
            &["backgrounds[0].name: ", "control characters"],
        ),
        (
            "line break in the unit",
            edited("unit: keV", "unit: \"k\\neV\""),
            &["observable.unit: ", "control characters"],
        ),
    ];
    assert_rejected("control-characters-in-text-are-named", &cases);
}

#[test]
fn command_line_requests_beyond_the_limits_are_named() {
    let scratch = Scratch::new("command-line-limits");
    fs::write(scratch.path.join(SCENARIO), BASE).unwrap();
    fs::write(
        scratch.path.join("big.yaml"),
        edited("first: 1, last: 100", "first: 1, last: 1e+18"),
    )
    .unwrap();
    // One byte past the 1 MiB a scenario file may have.
    let padding = "#".repeat(1_048_576 - BASE.len());
    fs::write(scratch.path.join("long.yaml"), format!("{BASE}{padding}\n")).unwrap();
    let before = scratch.entries();
    let project = |extra: &'static [&'static str]| -> Vec<&'static str> {
        [&["project", SCENARIO, "--out", "out", "--quiet"], extra].concat()
    };
    let many_days: Vec<String> = (1..=9).map(|day| day.to_string()).collect();
    let mut spectrum_nine = vec!["spectrum", SCENARIO, "--out", "out"];
    for day in &many_days {
        spectrum_nine.extend(["--days", day.as_str()]);
    }
    let at_days: Vec<String> = (1..=65).map(|day| day.to_string()).collect();
    let mut many_at = project(&["--asimov-only"]);
    for day in &at_days {
        many_at.extend(["--at", day.as_str()]);
    }
    let cases: Vec<(Vec<&str>, &[&str])> = vec![
        (
            project(&["--toys", "18446744073709551615"]),
            &["--toys 18446744073709551615", "10000000"],
        ),
        (
            project(&["--toys", "1000000000000"]),
            &["--toys 1000000000000", "10000000"],
        ),
        (
            project(&["--calibrate", "18446744073709551615"]),
            &["--calibrate 18446744073709551615", "10000000"],
        ),
        (
            project(&["--asimov-only", "--threads", "10000"]),
            &["--threads 10000", "1024"],
        ),
        (spectrum_nine, &["--days", "at most 8 exposures"]),
        (many_at, &["--at", "at most 64 days"]),
        (
            // 40 events per live day over 20 bins for 1e18 days, with toys.
            project(&["--toys", "3", "--at", "1e18"]),
            &["--at 1e18", "9.007199254740992e15"],
        ),
        (
            // 40 events per live day in 20 bins for 1e300 days.
            vec!["spectrum", SCENARIO, "--out", "out", "--days", "1e300"],
            &["--days 1e300", "9.007199254740992e15"],
        ),
        (vec!["check", "long.yaml"], &["long.yaml", "1048576 bytes"]),
        (
            vec!["check", "/dev/zero"],
            &["/dev/zero", "a device, not a regular file"],
        ),
        (
            // 40 events per live day over 20 bins for 1e18 days, with toys.
            vec!["project", "big.yaml", "--out", "out", "--toys", "3"],
            &["big.yaml: plan.days.last: ", "9.007199254740992e15"],
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
fn binning_recommends_only_widths_that_check_accepts() {
    // A peak of sigma 0.002 on a range of 100: the round candidates from 0.1
    // sigma would give up to 500,000 bins, beyond the 100,000 a scenario
    // allows; they are skipped, so the recommendation is always a valid width.
    let scratch = Scratch::new("binning-limit");
    let narrow = edited("sigma: 2.0", "sigma: 0.002");
    fs::write(scratch.path.join(SCENARIO), &narrow).unwrap();
    let output = scratch.run(&["binning", SCENARIO, "--days", "10", "--out", "out"]);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let json = fs::read_to_string(scratch.path.join("out").join("binning.json")).unwrap();
    let scan: serde_json::Value = serde_json::from_str(&json).unwrap();
    let recommended = scan["recommended_bin_width"].as_f64().unwrap();
    for point in scan["bin_widths"].as_array().unwrap() {
        let width = point["width"].as_f64().unwrap();
        assert!(100.0 / width <= 100_000.0 * (1.0 + 1e-9), "width {width}");
    }
    let rebinned = narrow.replace("bin_width: 5.0", &format!("bin_width: {recommended:e}"));
    fs::write(scratch.path.join(SCENARIO), rebinned).unwrap();
    let check = scratch.run(&["check", SCENARIO]);
    assert!(
        check.status.success(),
        "recommended {recommended}: {}",
        String::from_utf8_lossy(&check.stderr)
    );

    // A peak of sigma 1e-7 asked for 10^10 bins (80 GB) before the limit; now
    // the scan keeps to the scenario's width and windows of 2e-9.
    let scratch = Scratch::new("binning-narrow");
    fs::write(
        scratch.path.join(SCENARIO),
        edited("sigma: 2.0", "sigma: 1e-7"),
    )
    .unwrap();
    let output = scratch.run(&["binning", SCENARIO, "--days", "10", "--out", "out"]);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );

    let scratch = Scratch::new("binning-too-narrow");
    fs::write(
        scratch.path.join(SCENARIO),
        edited("sigma: 2.0", "sigma: 1e-300"),
    )
    .unwrap();
    let before = scratch.entries();
    let output = scratch.run(&["binning", SCENARIO, "--days", "10", "--out", "out"]);
    if let Some(problem) = misbehaviour(&scratch, &output, &["signal.shape", "too narrow"], &before)
    {
        panic!("{problem}");
    }
}

#[test]
fn usage_errors_exit_2_and_other_errors_exit_1() {
    // The convention of README ("Commands"): a refused command-line value exits
    // 2, whether the argument parser or the command refuses it; a bad scenario,
    // a failed fit or an unwritable file exits 1.
    let scratch = Scratch::new("exit-codes");
    fs::write(scratch.path.join(SCENARIO), BASE).unwrap();
    fs::write(
        scratch.path.join("bad.yaml"),
        edited("toys: 100", "toys: 0"),
    )
    .unwrap();
    let cases: [(&[&str], i32); 8] = [
        (&["project", SCENARIO, "--toys", "abc"], 2),
        (&["project", SCENARIO, "--toys", "0"], 2),
        (&["project", SCENARIO, "--calibrate", "3"], 2),
        (&["project", SCENARIO, "--threads", "0"], 2),
        (&["spectrum", SCENARIO, "--days", "0"], 2),
        (&["project", SCENARIO, "--no-such-flag"], 2),
        (&["check", "bad.yaml"], 1),
        (&["check", "missing.yaml"], 1),
    ];
    for (args, expected) in cases {
        let output = scratch.run(args);
        assert_eq!(
            output.status.code(),
            Some(expected),
            "{args:?}: {}",
            String::from_utf8_lossy(&output.stderr)
        );
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert!(
            stderr.starts_with("runcast: error: ") && stderr.trim_end().lines().count() == 1,
            "{args:?}: {stderr}"
        );
    }
}

#[test]
fn a_closed_stdout_pipe_is_a_normal_end() {
    // `runcast check FILE | head -1`: the reader closes the pipe before the
    // check prints (it first runs an Asimov projection), so every write meets
    // a broken pipe; that ends the output, with exit 0 and nothing on stderr.
    let scratch = Scratch::new("broken-pipe");
    fs::write(scratch.path.join(SCENARIO), BASE).unwrap();
    for args in [
        &["check", SCENARIO][..],
        &["project", SCENARIO, "--asimov-only", "--out", "out"][..],
    ] {
        let mut child = std::process::Command::new(env!("CARGO_BIN_EXE_runcast"))
            .args(args)
            .current_dir(&scratch.path)
            .stdout(std::process::Stdio::piped())
            .stderr(std::process::Stdio::piped())
            .spawn()
            .expect("start runcast");
        drop(child.stdout.take());
        let output = child.wait_with_output().expect("wait for runcast");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(0), "{args:?}: {stderr}");
        assert!(stderr.is_empty(), "{args:?}: {stderr}");
    }
}

/// A tabulated continuum over the range [0, 100] in place of the exponential,
/// written as `shape` (inline or naming `continuum.csv`).
fn with_table(shape: &str) -> String {
    edited("{exponential: {slope: -0.02}}", shape)
}

#[test]
fn bad_tables_are_named_by_file_row_and_column() {
    let file = "{table: {file: continuum.csv}}";
    let cases: [(&str, String, &str, &[&str]); 12] = [
        (
            "inline negative value",
            with_table("{table: {edges: [0, 50, 100], values: [3, -1]}}"),
            "",
            &["backgrounds[0].shape.table.values[1]: ", "-1"],
        ),
        (
            "inline edges not increasing",
            with_table("{table: {edges: [0, 60, 50, 100], values: [1, 1, 1]}}"),
            "",
            &["backgrounds[0].shape.table.edges[2]: "],
        ),
        (
            "both a file and values",
            with_table("{table: {file: continuum.csv, edges: [0, 100], values: [1]}}"),
            "low,high,value\n0,100,1\n",
            &["line 9,", "either `file` or `edges` and `values`"],
        ),
        (
            "negative value in the file",
            with_table(file),
            "low,high,value\n0,50,3\n50,100,-2\n",
            &[
                "backgrounds[0].shape.table.file: ",
                "continuum.csv, row 2 (line 3), column `value`",
                "-2",
            ],
        ),
        (
            "non-finite value in the file",
            with_table(file),
            "low,high,value\n0,50,NaN\n50,100,2\n",
            &["continuum.csv, row 1 (line 2), column `value`", "NaN"],
        ),
        (
            "rows overlapping",
            with_table(file),
            "low,high,value\n0,60,3\n50,100,2\n",
            &["continuum.csv, row 2 (line 3), column `low`", "overlap"],
        ),
        (
            "a gap between rows",
            with_table(file),
            "low,high,value\n0,40,3\n50,100,2\n",
            &["continuum.csv, row 2 (line 3), column `low`", "gap"],
        ),
        (
            "rows not covering the range",
            with_table(file),
            "low,high,value\n0,50,3\n50,90,2\n",
            &["backgrounds[0].shape.table.file: continuum.csv: ", "cover"],
        ),
        (
            "an all-zero table",
            with_table(file),
            "low,high,value\n0,50,0\n50,100,0\n",
            &[
                "backgrounds[0].shape.table.file: continuum.csv: ",
                "every value there is 0",
            ],
        ),
        (
            "float_shape on a table",
            with_table(file).replace("norm_uncertainty: 0.05", "float_shape: true"),
            "low,high,value\n0,100,1\n",
            &["backgrounds[0].float_shape: ", "table"],
        ),
        (
            "a word for a number",
            with_table(file),
            "low,high,value\n0,50,3\n50,100,many\n",
            &["continuum.csv, row 2 (line 3), column `value`: expected a number"],
        ),
        (
            "a missing file",
            with_table(file),
            "",
            &[
                "backgrounds[0].shape.table.file: ",
                "continuum.csv: cannot read the file",
            ],
        ),
    ];
    assert_rejected_beside("bad-tables-are-named", &cases);
}

/// A scenario may name any file as a table, also one its user would not
/// show: errors show no more of the file than the one cell at fault,
/// escaped (a terminal escape sequence written out, not acted on) and cut
/// to 40 characters with an ellipsis; a file that is no table of three
/// columns, none of it.
#[test]
fn table_errors_show_no_more_of_a_file_than_the_cell_at_fault() {
    let scratch = Scratch::new("table-file-contents");
    fs::write(
        scratch.path.join(SCENARIO),
        with_table("{table: {file: continuum.csv}}"),
    )
    .unwrap();
    let secret = "alice:hunter2:1000:1000:Alice:/home/alice:/bin/sh";
    // 30 digits, a terminal escape clearing the screen, 30 letters: the
    // first 40 characters end after six of the letters.
    let long = format!("{}\u{1b}[2J{}", "9".repeat(30), "x".repeat(30));
    let cases: [(&str, String, &[&str]); 3] = [
        (
            "a file that is no table",
            format!("{secret}\n{secret}\n"),
            &["continuum.csv, line 1: ", "got 1 column"],
        ),
        (
            "a header cell",
            format!("low,{long},value\n0,100,1\n"),
            &["line 1, column 2: ", "\\u{1b}[2Jxxxxxx…` for `high`"],
        ),
        (
            "a value cell",
            format!("low,high,value\n0,100,{long}\n"),
            &["row 1 (line 2), column `value`: ", "\\u{1b}[2Jxxxxxx…`"],
        ),
    ];
    for (description, csv, expected) in cases {
        fs::write(scratch.path.join("continuum.csv"), &csv).unwrap();
        let before = scratch.entries();
        let output = scratch.run(&["check", SCENARIO]);
        if let Some(problem) = misbehaviour(&scratch, &output, expected, &before) {
            panic!("{description}: {problem}");
        }
        let stderr = String::from_utf8_lossy(&output.stderr);
        for shown in ["hunter2", "\u{1b}", "xxxxxxx"] {
            assert!(!stderr.contains(shown), "{description}: {stderr}");
        }
    }
}

#[test]
fn bad_signal_shape_uncertainties_are_named() {
    let signal_with = |extra: &str| {
        edited(
            "  events_per_day: 2.0\n",
            &format!("  events_per_day: 2.0\n{extra}"),
        )
    };
    let cases: [(&str, String, &[&str]); 6] = [
        (
            "negative position uncertainty",
            signal_with("  position_uncertainty: -0.5\n"),
            &["signal.position_uncertainty: ", "-0.5"],
        ),
        (
            "NaN width uncertainty",
            signal_with("  width_uncertainty: .nan\n"),
            &["signal.width_uncertainty: ", "NaN"],
        ),
        (
            // Φ(−3) = 0.13% below zero width (PDG statistics review).
            "width uncertainty above 1/3",
            signal_with("  width_uncertainty: 0.5\n"),
            &["signal.width_uncertainty: ", "at most 0.333"],
        ),
        (
            "position uncertainty beyond the peak width",
            signal_with("  position_uncertainty: 2.5\n"),
            &["signal.position_uncertainty: ", "signal.scan", "2.5"],
        ),
        (
            "position uncertainty on a shape without a position",
            signal_with("  position_uncertainty: 0.5\n").replace(
                "{gaussian: {mean: 50.0, sigma: 2.0}}",
                "{exponential: {slope: -0.01}}",
            ),
            &[
                "signal.position_uncertainty: ",
                "this signal's shape is exponential",
            ],
        ),
        (
            "width uncertainty beside a scan",
            signal_with("  width_uncertainty: 0.1\n  scan: {from: 30.0, to: 70.0}\n"),
            &["signal.width_uncertainty: ", "signal.scan"],
        ),
    ];
    assert_rejected("bad-signal-shape-uncertainties-are-named", &cases);
}

/// `BASE` with `signal.scan` set to `scan`.
fn with_scan(scan: &str) -> String {
    edited(
        "  shape: {gaussian: {mean: 50.0, sigma: 2.0}}\n",
        &format!("  shape: {{gaussian: {{mean: 50.0, sigma: 2.0}}}}\n  scan: {scan}\n"),
    )
}

#[test]
fn bad_scans_are_named_and_write_nothing() {
    assert_rejected(
        "bad-scans",
        &[
            (
                "from above to",
                with_scan("{from: 60.0, to: 40.0}"),
                &["signal.scan", "from must be below to"],
            ),
            (
                "outside the range",
                with_scan("{from: 10.0, to: 120.0}"),
                &["signal.scan.to", "inside the observable range"],
            ),
            (
                "zero step",
                with_scan("{from: 10.0, to: 90.0, step: 0}"),
                &["signal.scan.step"],
            ),
            (
                "too many positions",
                with_scan("{from: 10.0, to: 90.0, step: 0.0001}"),
                &["signal.scan.step", "100000 allowed"],
            ),
            (
                "two positions",
                with_scan("{from: 10.0, to: 90.0, step: 60}"),
                &["signal.scan.step", "fewer than the 3 needed"],
            ),
            (
                "not a peak",
                with_scan("{from: 10.0, to: 90.0}").replace(
                    "{gaussian: {mean: 50.0, sigma: 2.0}}",
                    "{exponential: {slope: -0.1}}",
                ),
                &["signal.scan", "gaussian and breit_wigner"],
            ),
        ],
    );
}

#[test]
fn lee_toys_without_a_scan_is_a_usage_error() {
    let scratch = Scratch::new("lee-toys-without-scan");
    fs::write(scratch.path.join(SCENARIO), BASE).unwrap();
    let before = scratch.entries();
    let output = scratch.run(&["project", SCENARIO, "--out", "out", "--lee-toys", "50"]);
    assert_eq!(output.status.code(), Some(2));
    let problem = misbehaviour(
        &scratch,
        &output,
        &["--lee-toys", "no signal.scan"],
        &before,
    );
    assert_eq!(problem, None);
}

#[test]
fn bad_rate_units_and_detector_masses_are_named() {
    let per_kg = edited("events_per_day: 2.0", "events_per_kg_day: 0.5");
    let with_mass = |mass: &str| format!("detector: {{mass_kg: {mass}}}\n{per_kg}");
    let cases: [(&str, String, &[&str]); 7] = [
        (
            "two rate keys",
            edited(
                "events_per_day: 2.0",
                "events_per_day: 2.0\n  events_per_year: 730.5",
            ),
            &[
                "signal.events_per_year: ",
                "events_per_day is already given",
            ],
        ),
        (
            "no rate key",
            edited("  events_per_day: 2.0\n", ""),
            &["signal.events_per_day: ", "exactly one of"],
        ),
        (
            "per kg·day without a mass",
            per_kg.clone(),
            &["signal.events_per_kg_day: ", "detector mass"],
        ),
        ("zero mass", with_mass("0"), &["detector.mass_kg: "]),
        ("negative mass", with_mass("-2.5"), &["detector.mass_kg: "]),
        ("infinite mass", with_mass(".inf"), &["detector.mass_kg: "]),
        (
            "negative rate per week",
            edited("events_per_day: 10.0", "events_per_week: -70"),
            &["backgrounds[1].events_per_week: "],
        ),
    ];
    assert_rejected("bad-rate-units-and-detector-masses-are-named", &cases);
}
