//! `runcast project`, `check` and `new`, run as a user runs them: the built
//! binary, real scenario files in a fresh temporary directory, real outputs.

mod common;

use common::Scratch;
use serde_json::Value;
use statrs::distribution::{ContinuousCDF, Normal};
use std::collections::BTreeMap;
use std::fs;
use std::path::Path;

/// The five files every projection writes (limits included), sorted by name.
const REPORT_FILES: [&str; 5] = [
    "limits.svg",
    "probability.svg",
    "projection.csv",
    "projection.json",
    "projection.svg",
];

impl Scratch {
    /// Copies a shipped demo scenario into the directory; returns its file name.
    fn copy_demo(&self, name: &str) -> String {
        let source = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("scenarios")
            .join(name);
        fs::copy(&source, self.path.join(name))
            .unwrap_or_else(|error| panic!("copy {}: {error}", source.display()));
        name.to_string()
    }

    /// Writes `text` to `name` inside the directory; returns the name.
    fn write(&self, name: &str, text: &str) -> String {
        fs::write(self.path.join(name), text).expect("write scenario");
        name.to_string()
    }

    /// Runs `args` and asserts a successful exit with nothing on stderr (no
    /// warning, no progress bar); returns stdout.
    fn run_ok(&self, args: &[&str]) -> String {
        let output = self.run(args);
        assert!(
            output.status.success() && output.stderr.is_empty(),
            "runcast {args:?}: {}, stderr: {}",
            output.status,
            String::from_utf8_lossy(&output.stderr)
        );
        String::from_utf8(output.stdout).expect("UTF-8 stdout")
    }

    /// Sorted names of the entries of a subdirectory, hidden ones included.
    fn entries(&self, directory: &str) -> Vec<String> {
        let mut names: Vec<String> = fs::read_dir(self.path.join(directory))
            .unwrap_or_else(|error| panic!("read {directory}: {error}"))
            .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }

    fn read(&self, path: &str) -> Vec<u8> {
        fs::read(self.path.join(path)).unwrap_or_else(|error| panic!("read {path}: {error}"))
    }

    fn json(&self, directory: &str) -> Value {
        let bytes = self.read(&format!("{directory}/projection.json"));
        serde_json::from_slice(&bytes).expect("projection.json is JSON")
    }
}

/// A projection with `toys` pseudo-experiments per point and `extra` arguments,
/// written to `out`, without progress bar; returns stdout.
fn project(scratch: &Scratch, scenario: &str, out: &str, toys: usize, extra: &[&str]) -> String {
    let toys = toys.to_string();
    let mut args = vec![
        "project", scenario, "--out", out, "--toys", &toys, "--quiet",
    ];
    args.extend_from_slice(extra);
    scratch.run_ok(&args)
}

fn number(value: &Value) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("expected a number, got {value}"))
}

fn sorted_keys(value: &Value) -> Vec<&str> {
    let mut keys: Vec<&str> = value
        .as_object()
        .unwrap_or_else(|| panic!("expected an object, got {value}"))
        .keys()
        .map(String::as_str)
        .collect();
    keys.sort_unstable();
    keys
}

fn points(json: &Value) -> &Vec<Value> {
    json["points"].as_array().expect("points is an array")
}

/// Reads a demo scenario as plain YAML, independently of runcast's own parser.
fn demo_yaml(name: &str) -> serde_yaml::Value {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(name);
    serde_yaml::from_str(&fs::read_to_string(path).unwrap()).unwrap()
}

fn yaml_number(value: &serde_yaml::Value) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("expected a number, got {value:?}"))
}

/// Asserts the keys and value types of `projection.json` (the schema of the
/// output format) for a run with pseudo-experiments.
fn assert_schema(json: &Value) {
    assert_eq!(
        sorted_keys(json),
        [
            "at",
            "calibration_toys",
            "cl",
            "days_to_exclusion",
            "days_to_target",
            "points",
            "provenance",
            "seed",
            "solving_points",
            "targets",
            "title",
            "toys"
        ]
    );
    assert_eq!(
        json["provenance"]["runcast_version"],
        env!("CARGO_PKG_VERSION")
    );
    assert_eq!(json["provenance"]["options"]["seed"], json["seed"]);
    assert_eq!(json["provenance"]["options"]["toys"], json["toys"]);
    assert!(json["title"].is_string() && json["seed"].is_u64() && json["toys"].is_u64());
    let targets: Vec<f64> = json["targets"]
        .as_array()
        .expect("targets is an array")
        .iter()
        .map(number)
        .collect();
    assert!(!targets.is_empty());
    for point in points(json) {
        assert_eq!(
            sorted_keys(point),
            [
                "background",
                "calibration",
                "days",
                "failed_fits",
                "limit_asimov",
                "limit_asimov_band",
                "limit_band",
                "limit_failed_fits",
                "limit_median",
                "live_days",
                "probability",
                "signal",
                "z_asimov",
                "z_asimov_band",
                "z_band",
                "z_median"
            ]
        );
        for key in [
            "days",
            "live_days",
            "signal",
            "background",
            "z_asimov",
            "z_median",
        ] {
            number(&point[key]);
        }
        assert!(point["failed_fits"].is_u64(), "{point}");
        // The asymptotic band: sqrt(q0) is about normal with unit width around
        // Z_A, and q0 is 0 for a negative fitted signal, so Z_A - 2, Z_A - 1,
        // Z_A + 1, Z_A + 2 floored at 0 (Cowan et al., EPJC 71 (2011) 1554,
        // eqs. 52-53, sec. 5.1).
        let z_asimov = number(&point["z_asimov"]);
        let asimov_band: Vec<f64> = point["z_asimov_band"]
            .as_array()
            .expect("z_asimov_band is an array")
            .iter()
            .map(number)
            .collect();
        let expected = [-2.0, -1.0, 1.0, 2.0].map(|shift: f64| (z_asimov + shift).max(0.0));
        // serde_json reads decimals to within an ulp or so, not exactly.
        for (value, expected) in asimov_band.iter().zip(expected) {
            assert!((value - expected).abs() <= 1e-12, "{point}");
        }
        let band: Vec<f64> = point["z_band"]
            .as_array()
            .expect("z_band is an array")
            .iter()
            .map(number)
            .collect();
        assert_eq!(band.len(), 4, "{point}");
        // Quantiles 2.3%, 15.9%, 84.1%, 97.7% of one sample cannot decrease.
        assert!(band.windows(2).all(|pair| pair[0] <= pair[1]), "{band:?}");
        // Expected limits on mu: positive numbers, bands ordered.
        for key in ["limit_median", "limit_asimov"] {
            assert!(number(&point[key]) > 0.0, "{key}: {point}");
        }
        for key in ["limit_band", "limit_asimov_band"] {
            let band: Vec<f64> = point[key]
                .as_array()
                .expect("an array")
                .iter()
                .map(number)
                .collect();
            assert_eq!(band.len(), 4, "{key}: {point}");
            assert!(
                band.windows(2).all(|pair| pair[0] <= pair[1]),
                "{key}: {band:?}"
            );
        }
        assert!(
            point["limit_failed_fits"].is_u64() && point["calibration"].is_null(),
            "{point}"
        );
        let probabilities = point["probability"].as_array().expect("an array");
        assert_eq!(probabilities.len(), targets.len());
        for (probability, &target) in probabilities.iter().zip(&targets) {
            assert_eq!(sorted_keys(probability), ["asimov", "target", "toys"]);
            assert_eq!(number(&probability["target"]), target);
            for key in ["toys", "asimov"] {
                let p = number(&probability[key]);
                assert!((0.0..=1.0).contains(&p), "{key} = {p}");
            }
        }
    }
    assert_eq!(
        sorted_keys(&json["days_to_exclusion"]),
        ["asimov_days", "median_days"]
    );
    let rows = json["days_to_target"].as_array().expect("an array");
    assert_eq!(rows.len(), targets.len());
    for (row, &target) in rows.iter().zip(&targets) {
        assert_eq!(
            sorted_keys(row),
            [
                "asimov_days",
                "median_days",
                "p50_days",
                "p90_days",
                "saturation_z",
                "target"
            ]
        );
        assert_eq!(number(&row["target"]), target);
        for key in [
            "asimov_days",
            "median_days",
            "p50_days",
            "p90_days",
            "saturation_z",
        ] {
            assert!(row[key].is_null() || row[key].is_f64(), "{key}: {row}");
        }
    }
}

/// Live days at calendar day `days` by the definition of the scenario format:
/// live_fraction x the integral over [0, days] of the rate scale, which is each
/// period's `rate_scale` during the leading `schedule.periods` and 1 after them.
fn live_days_by_definition(yaml: &serde_yaml::Value, days: f64) -> f64 {
    let schedule = &yaml["schedule"];
    let live_fraction = schedule.get("live_fraction").map_or(1.0, yaml_number);
    let mut start = 0.0;
    let mut scaled_days = 0.0;
    for period in schedule["periods"].as_sequence().into_iter().flatten() {
        let end = start + yaml_number(&period["days"]);
        scaled_days += (days.min(end) - start).max(0.0) * yaml_number(&period["rate_scale"]);
        start = end;
    }
    live_fraction * (scaled_days + (days - start).max(0.0))
}

#[test]
fn narrow_peak_demo_writes_five_files_with_the_documented_schema() {
    let yaml = demo_yaml("narrow_peak.yaml");
    let scratch = Scratch::new("narrow-peak");
    let scenario = scratch.copy_demo("narrow_peak.yaml");
    let stdout = project(&scratch, &scenario, "out", 200, &[]);
    // Only the five reports: no temporary file of the atomic writes is left behind.
    assert_eq!(scratch.entries("out"), REPORT_FILES);
    assert_eq!(scratch.entries("."), ["narrow_peak.yaml", "out"]);

    let json = scratch.json("out");
    assert_schema(&json);
    assert_eq!(json["toys"], 200, "--toys overrides the file");
    let seed = yaml["plan"]["seed"].as_u64().unwrap();
    assert_eq!(json["seed"], seed, "the seed of the file");
    let targets: Vec<f64> = yaml["plan"]["targets"]
        .as_sequence()
        .unwrap()
        .iter()
        .map(yaml_number)
        .collect();
    assert_eq!(json["targets"], serde_json::json!(targets));

    // The days grid of the file, first and last day included.
    let grid = &yaml["plan"]["days"];
    let points = points(&json);
    assert_eq!(points.len() as u64, grid["points"].as_u64().unwrap());
    let first = number(&points[0]["days"]);
    let last = number(&points[points.len() - 1]["days"]);
    assert!((first - yaml_number(&grid["first"])).abs() < 1e-9);
    assert!((last - yaml_number(&grid["last"])).abs() < 1e-9);

    // Live days follow the schedule; expected events grow with them at the
    // rates of the file (each over the whole range).
    let signal_rate = yaml_number(&yaml["signal"]["events_per_day"]);
    let background_rate: f64 = yaml["backgrounds"]
        .as_sequence()
        .unwrap()
        .iter()
        .map(|background| yaml_number(&background["events_per_day"]))
        .sum();
    for point in points {
        let live_days = number(&point["live_days"]);
        let expected = live_days_by_definition(&yaml, number(&point["days"]));
        assert!((live_days - expected).abs() < 1e-9 * expected, "{point}");
        let signal = number(&point["signal"]);
        assert!((signal - signal_rate * live_days).abs() < 1e-9 * signal);
        let background = number(&point["background"]);
        assert!((background - background_rate * live_days).abs() < 1e-9 * background);
    }

    // P(Z >= target) = Phi(Z_A - target) asymptotically (Cowan, Cranmer, Gross,
    // Vitells, EPJC 71 (2011) 1554, sec. 5.1; Phi from statrs).
    let phi = Normal::standard();
    for point in points {
        let z_asimov = number(&point["z_asimov"]);
        for probability in point["probability"].as_array().unwrap() {
            let target = number(&probability["target"]);
            let expected = phi.cdf(z_asimov - target);
            let asimov = number(&probability["asimov"]);
            assert!((asimov - expected).abs() < 1e-12, "{asimov} vs {expected}");
        }
    }

    // The demo is set up so that the Asimov curve reaches every target inside its grid.
    for row in json["days_to_target"].as_array().unwrap() {
        let days = number(&row["asimov_days"]);
        assert!(days > first && days < last, "{row}");
    }

    // The summary names each target.
    for target in &targets {
        let label = format!("{target}σ");
        assert!(
            stdout.lines().any(|line| line.starts_with(&label)),
            "{label} missing from:\n{stdout}"
        );
    }
    assert!(stdout.contains(&format!(
        "200 pseudo-experiments per exposure point, seed {seed}"
    )));
}

#[test]
fn csv_has_one_row_per_point_matching_the_json() {
    let scratch = Scratch::new("csv");
    let scenario = scratch.copy_demo("faint_line.yaml");
    project(&scratch, &scenario, "out", 200, &[]);
    assert_eq!(scratch.entries("out"), REPORT_FILES);
    let json = scratch.json("out");
    assert_schema(&json);

    let csv = scratch.read("out/projection.csv");
    // The first line is the provenance, a comment.
    assert!(csv.starts_with(b"# provenance: {\"runcast_version\""));
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_reader(csv.as_slice());
    let header: Vec<String> = reader
        .headers()
        .unwrap()
        .iter()
        .map(str::to_string)
        .collect();
    let column = |name: &str| {
        header
            .iter()
            .position(|column| column == name)
            .unwrap_or_else(|| panic!("no column {name} in {header:?}"))
    };
    let rows: Vec<csv::StringRecord> = reader.records().map(Result::unwrap).collect();
    let points = points(&json);
    let grid_points = demo_yaml("faint_line.yaml")["plan"]["days"]["points"].as_u64();
    assert_eq!(Some(points.len() as u64), grid_points);
    assert_eq!(rows.len(), points.len(), "one row per point");
    // The same numbers in both files. serde_json's default parser may round the
    // last binary digit, hence a tolerance of a few units in the last place.
    for (row, point) in rows.iter().zip(points) {
        for key in ["days", "live_days", "z_asimov", "z_median"] {
            let cell: f64 = row[column(key)].parse().unwrap();
            let value = number(&point[key]);
            assert!(
                (cell - value).abs() <= 4.0 * f64::EPSILON * value.abs(),
                "{key}: CSV {cell}, JSON {value}"
            );
        }
        let failed: u64 = row[column("failed_fits")].parse().unwrap();
        assert_eq!(failed, point["failed_fits"].as_u64().unwrap());
    }
}

#[test]
fn the_same_seed_gives_byte_identical_files() {
    let scratch = Scratch::new("same-seed");
    let scenario = scratch.copy_demo("narrow_peak.yaml");
    project(&scratch, &scenario, "first", 200, &[]);
    project(&scratch, &scenario, "second", 200, &[]);
    for file in REPORT_FILES {
        assert!(
            scratch.read(&format!("first/{file}")) == scratch.read(&format!("second/{file}")),
            "{file} differs between two runs with the same seed"
        );
    }
}

#[test]
fn one_and_two_threads_give_byte_identical_json() {
    let scratch = Scratch::new("threads");
    let scenario = scratch.copy_demo("narrow_peak.yaml");
    // 600 toys per point span several work chunks, so two threads really share
    // each exposure point's pseudo-experiments.
    project(&scratch, &scenario, "one", 600, &["--threads", "1"]);
    project(&scratch, &scenario, "two", 600, &["--threads", "2"]);
    assert_eq!(scratch.json("one")["toys"], 600);
    assert!(
        scratch.read("one/projection.json") == scratch.read("two/projection.json"),
        "projection.json differs between 1 and 2 threads"
    );
}

#[test]
fn seed_option_overrides_the_file() {
    let scratch = Scratch::new("seed");
    let scenario = scratch.copy_demo("narrow_peak.yaml");
    project(&scratch, &scenario, "file-seed", 200, &[]);
    project(&scratch, &scenario, "other-seed", 200, &["--seed", "12345"]);
    let file_seed = scratch.json("file-seed");
    let other_seed = scratch.json("other-seed");
    assert_eq!(other_seed["seed"], 12345);
    let pairs = || points(&file_seed).iter().zip(points(&other_seed));
    // The Asimov dataset involves no random numbers: same Z_A for any seed.
    assert!(pairs().all(|(a, b)| a["z_asimov"] == b["z_asimov"]));
    // Other pseudo-experiments: other toy medians.
    assert!(
        pairs().any(|(a, b)| a["z_median"] != b["z_median"]),
        "--seed 12345 left every toy median unchanged"
    );
}

#[test]
fn asimov_only_has_no_toy_values_and_uses_the_default_directory() {
    let scratch = Scratch::new("asimov-only");
    let scenario = scratch.copy_demo("narrow_peak.yaml");
    let stdout = scratch.run_ok(&["project", &scenario, "--asimov-only", "--quiet"]);
    // Without --out: output/<scenario file stem>/.
    assert_eq!(scratch.entries("output/narrow_peak"), REPORT_FILES);
    let json = scratch.json("output/narrow_peak");
    assert_eq!(json["toys"], 0);
    for point in points(&json) {
        assert!(point["z_median"].is_null(), "{point}");
        assert!(point["z_band"].is_null(), "{point}");
        assert_eq!(point["failed_fits"], 0);
        assert!(number(&point["z_asimov"]) >= 0.0);
        for probability in point["probability"].as_array().unwrap() {
            assert!(probability["toys"].is_null(), "{probability}");
        }
    }
    for row in json["days_to_target"].as_array().unwrap() {
        for key in ["median_days", "p50_days", "p90_days"] {
            assert!(row[key].is_null(), "{key}: {row}");
        }
        assert!(row["asimov_days"].is_f64(), "{row}");
    }
    assert!(stdout.contains("Asimov only"), "{stdout}");
}

#[test]
fn no_limits_skips_exclusion_and_calibrate_adds_toy_p_values() {
    let scratch = Scratch::new("limits-and-calibration");
    let scenario = scratch.copy_demo("narrow_peak.yaml");
    project(&scratch, &scenario, "plain", 100, &["--no-limits"]);
    let plain = scratch.json("plain");
    assert!(!scratch.entries("plain").contains(&"limits.svg".to_string()));
    assert!(plain["cl"].is_null());
    assert!(plain["days_to_exclusion"]["asimov_days"].is_null());
    for point in points(&plain) {
        assert!(
            point["limit_median"].is_null() && point["limit_asimov"].is_null(),
            "{point}"
        );
    }

    let stdout = project(
        &scratch,
        &scenario,
        "calibrated",
        100,
        &["--calibrate", "400"],
    );
    let calibrated = scratch.json("calibrated");
    assert_eq!(calibrated["calibration_toys"], 400);
    assert!(
        stdout.contains("background-only pseudo-experiments"),
        "{stdout}"
    );
    let normal = Normal::standard();
    for point in points(&calibrated) {
        let calibration = &point["calibration"];
        assert_eq!(calibration["converged_toys"], 400, "{point}");
        // The asymptotic p-value of the Asimov q0 is 1 - Phi(Z_A) (Cowan et al.,
        // EPJC 71 (2011) 1554, eq. 52), checked with statrs as reference.
        let z = number(&point["z_asimov"]);
        assert!((number(&calibration["p_asymptotic"]) - normal.sf(z)).abs() < 1e-12);
        // 400 toys resolve p down to 1/400: Z = Phi^-1(1 - 1/400) = 2.807 (standard normal table).
        assert!((number(&calibration["tail_reach_z"]) - 2.807).abs() < 1e-3);
        let exceeding = calibration["exceeding"].as_u64().unwrap();
        match exceeding {
            0 => assert!(calibration["p_toys"].is_null()),
            n => assert!((number(&calibration["p_toys"]) - n as f64 / 400.0).abs() < 1e-12),
        }
    }
}

#[test]
fn counting_window_demo_never_reaches_five_sigma() {
    let yaml = demo_yaml("counting_window.yaml");
    let s = yaml_number(&yaml["signal"]["events_per_day"]);
    let background = &yaml["backgrounds"][0];
    let b = yaml_number(&background["events_per_day"]);
    let delta = yaml_number(&background["norm_uncertainty"]);
    let [low, high] = [0, 1].map(|i| yaml_number(&yaml["observable"]["range"][i]));
    assert_eq!(yaml_number(&yaml["observable"]["bin_width"]), high - low);
    // One bin with a Gaussian-constrained background factor of width delta: Z_A
    // saturates at s / (delta b) as exposure grows (Cowan, Cranmer, Gross, Vitells,
    // EPJC 71 (2011) 1554, with sigma_b = delta b; common practice):
    // 4 / (0.01 x 100) = 4.0 in the demo, between the two targets.
    let limit = s / (delta * b);
    assert!(limit > 3.0 && limit < 5.0, "limit {limit}");

    let scratch = Scratch::new("counting-window");
    let scenario = scratch.copy_demo("counting_window.yaml");
    let stdout = project(&scratch, &scenario, "out", 200, &[]);
    let json = scratch.json("out");
    assert_schema(&json);
    let rows = json["days_to_target"].as_array().unwrap();
    for row in rows {
        let saturation_z = number(&row["saturation_z"]);
        assert!(
            (saturation_z - limit).abs() < 0.01 * limit,
            "saturation_z {saturation_z}, expected {limit}"
        );
    }
    let five = rows.iter().find(|row| row["target"] == 5.0).unwrap();
    for key in ["asimov_days", "median_days", "p50_days", "p90_days"] {
        assert!(five[key].is_null(), "{key}: {five}");
    }
    let three = rows.iter().find(|row| row["target"] == 3.0).unwrap();
    assert!(
        three["asimov_days"].is_f64(),
        "3σ lies below the limit: {three}"
    );

    let row_of = |target: &str| {
        stdout
            .lines()
            .find(|line| line.starts_with(target))
            .unwrap_or_else(|| panic!("no {target} row in:\n{stdout}"))
    };
    assert_eq!(
        row_of("5σ").split_whitespace().collect::<Vec<_>>(),
        ["5σ", "never", "never", "never", "never"]
    );
    assert!(!row_of("3σ").contains("never"), "{stdout}");
    assert!(
        stdout.contains(&format!("saturate at {limit:.2}σ")),
        "{stdout}"
    );
}

/// Z_A = sqrt(2((s+b) ln(1+s/b) - s)) for one bin with known background
/// (Cowan, Cranmer, Gross, Vitells, EPJC 71 (2011) 1554, eq. 97).
fn cowan_eq97(s: f64, b: f64) -> f64 {
    (2.0 * ((s + b) * (1.0 + s / b).ln() - s)).sqrt()
}

/// One bin, 10 signal and 100 background events per live day known exactly,
/// half of calendar time live. Numbers invented for the test.
const KNOWN_BACKGROUND_WINDOW: &str = "\
title: Counting window with known background (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 10.0], bin_width: 10.0}
signal: {events_per_day: 10.0, shape: {flat: {}}}
backgrounds:
  - {name: flat, events_per_day: 100.0, shape: {flat: {}}}
schedule: {live_fraction: 0.5}
plan:
  days: {first: 1, last: 100, points: 5, spacing: log}
  toys: 100
  seed: 3
  targets: [3, 5]
";

#[test]
fn check_prints_rates_and_asymptotic_days_from_equation_97() {
    // Published value: s=10, b=100 gives Z_A = 0.983992 (Cowan et al. 2011, eq. 97).
    let per_live_day = cowan_eq97(10.0, 100.0);
    assert!((per_live_day - 0.983992).abs() < 1e-6);
    // Eq. 97 scales as sqrt(exposure) when s and b both do (common practice), so
    // Z reaches t after (t / Z_1)^2 live days, twice as many calendar days.
    let calendar_days = |target: f64| 2.0 * (target / per_live_day).powi(2);

    let scratch = Scratch::new("check");
    let scenario = scratch.write("window.yaml", KNOWN_BACKGROUND_WINDOW);
    let stdout = scratch.run_ok(&["check", &scenario]);
    assert!(stdout.contains("valid"), "{stdout}");
    assert!(
        stdout.contains("signal: 10 events per live day"),
        "{stdout}"
    );
    assert!(
        stdout.contains("background total: 100 events per live day"),
        "{stdout}"
    );
    for target in [3.0, 5.0] {
        // Rounded up to whole days from 10 days on, as `project` rounds them.
        let line = format!("{target} sigma: {} d", calendar_days(target).ceil());
        assert!(stdout.contains(&line), "{line:?} missing from:\n{stdout}");
    }
    // `check` writes nothing.
    assert_eq!(scratch.entries("."), ["window.yaml"]);

    // The root-found days of the projection, to the precision of its bisection.
    scratch.run_ok(&[
        "project",
        &scenario,
        "--out",
        "out",
        "--asimov-only",
        "--quiet",
    ]);
    let json = scratch.json("out");
    for row in json["days_to_target"].as_array().unwrap() {
        let expected = calendar_days(number(&row["target"]));
        let days = number(&row["asimov_days"]);
        assert!(
            (days - expected).abs() < 1e-5 * expected,
            "{days} vs {expected}"
        );
        assert!(
            row["saturation_z"].is_null(),
            "statistics only: no saturation, {row}"
        );
    }
}

/// The known-background window with its rates written per kg·day (with a
/// 4 kg detector: 2.5 × 4 = 10) and per year (36525 / 365.25 = 100, the
/// Julian year, common practice): `check` prints the same rates per live day
/// and days (Cowan et al. 2011, eq. 97), and says how each rate was written.
#[test]
fn check_prints_rates_per_live_day_with_the_unit_they_were_written_in() {
    let per_day = {
        let scratch = Scratch::new("check-per-day");
        let scenario = scratch.write("window.yaml", KNOWN_BACKGROUND_WINDOW);
        scratch.run_ok(&["check", &scenario])
    };
    let text = format!(
        "detector: {{mass_kg: 4}}\n{}",
        KNOWN_BACKGROUND_WINDOW
            .replacen("events_per_day: 10.0", "events_per_kg_day: 2.5", 1)
            .replacen("events_per_day: 100.0", "events_per_year: 36525", 1)
    );
    let scratch = Scratch::new("check-units");
    let scenario = scratch.write("window.yaml", &text);
    let stdout = scratch.run_ok(&["check", &scenario]);
    assert!(
        stdout.contains("signal: 10 events per live day (written per kg·day, detector mass 4 kg)"),
        "{stdout}"
    );
    assert!(
        stdout.contains(
            "background flat: 100 events per live day (written per year of 365.25 live days)"
        ),
        "{stdout}"
    );
    let without_units = stdout
        .replace(" (written per kg·day, detector mass 4 kg)", "")
        .replace(" (written per year of 365.25 live days)", "");
    assert_eq!(without_units, per_day);
}

#[test]
fn check_reports_signal_within_two_widths_of_the_peak() {
    let yaml = demo_yaml("narrow_peak.yaml");
    let rate = yaml_number(&yaml["signal"]["events_per_day"]);
    // 95.45% of a normal distribution lies within ±2 sigma (Particle Data Group
    // statistics review: two-sided 2σ <-> 0.0455); the peak lies far from the edges.
    let expected = rate * (1.0 - 0.0455);
    let scratch = Scratch::new("check-window");
    let scenario = scratch.copy_demo("narrow_peak.yaml");
    let stdout = scratch.run_ok(&["check", &scenario]);
    let shown: f64 = stdout
        .split("S = ")
        .nth(1)
        .and_then(|rest| rest.split(',').next())
        .unwrap_or_else(|| panic!("no S = in:\n{stdout}"))
        .parse()
        .unwrap();
    // `check` prints three significant digits: off by at most half the last one.
    let half_last_digit = 0.5 * 10f64.powf(expected.log10().floor() - 2.0);
    assert!(
        (shown - expected).abs() <= half_last_digit,
        "S = {shown}, expected {expected}"
    );
    for target in ["3 sigma: ", "5 sigma: "] {
        assert!(stdout.contains(target), "{target} missing from:\n{stdout}");
    }
}

/// A peak at 42 MeV whose only background is a Gaussian bump at 100 MeV
/// (invented numbers).
const PEAK_AWAY_FROM_ITS_BACKGROUND: &str = "\
title: Peak away from its background (invented numbers)
observable: {name: mass, unit: MeV, range: [10.0, 110.0], bin_width: 0.5}
signal: {events_per_day: 2.4, shape: {gaussian: {mean: 42.0, sigma: 0.6}}}
backgrounds:
  - {name: far bump, events_per_day: 800, shape: {gaussian: {mean: 100.0, sigma: 1.0}}}
plan:
  days: {first: 1, last: 365, points: 8, spacing: log}
  toys: 100
  seed: 1
  targets: [3, 5]
";

#[test]
fn check_says_when_no_background_lies_near_the_peak() {
    // The bump puts a fraction of about Phi(-55) = 1e-660 of itself within
    // ±2 widths of the peak (55 of its own widths below its centre), which
    // is 0 in double precision: there is no S/B to print (once "S/B = inf").
    let scratch = Scratch::new("check-no-background");
    let scenario = scratch.write("far.yaml", PEAK_AWAY_FROM_ITS_BACKGROUND);
    let stdout = scratch.run_ok(&["check", &scenario]);
    assert!(
        stdout.contains(
            "within [40.8, 43.2] MeV: S = 2.29, B = 0 per live day, \
             no background within ±2 widths of the peak, so no S/B\n"
        ),
        "{stdout}"
    );
    assert!(!stdout.contains("inf"), "{stdout}");
}

/// The counting-window demo starting on 9999-06-01, 213 days before the
/// last date of the calendar, 9999-12-31 (ISO 8601 has four-digit years):
/// the grid's later days are dated "after 9999-12-31" in the summary, the
/// CSV and the JSON, not left without a date.
#[test]
fn days_past_the_last_calendar_date_say_so() {
    let scratch = Scratch::new("late-start");
    let demo = String::from_utf8(scratch.read(&scratch.copy_demo("counting_window.yaml"))).unwrap();
    let late = demo.replacen(
        "  live_fraction: 0.9\n",
        "  live_fraction: 0.9\n  start: 9999-06-01\n",
        1,
    );
    assert_ne!(late, demo);
    let scenario = scratch.write("late.yaml", &late);
    let summary = scratch.run_ok(&[
        "project",
        &scenario,
        "--out",
        "out",
        "--asimov-only",
        "--quiet",
    ]);
    // Grid days 5 and 2000: 1 June + 5 days is 6 June; 2000 days is past the calendar.
    assert!(
        summary.contains("grid 5 d (9999-06-06) to 2000 d (after 9999-12-31)"),
        "{summary}"
    );
    let csv = String::from_utf8(scratch.read("out/projection.csv")).unwrap();
    let last_row = csv.lines().last().unwrap();
    assert!(last_row.starts_with("2000,after 9999-12-31,"), "{last_row}");
    let json = scratch.json("out");
    let last = points(&json).last().unwrap();
    assert_eq!(last["date"], "after 9999-12-31");
    assert_eq!(points(&json)[0]["date"], "9999-06-06");
}

#[test]
fn new_writes_a_template_that_check_accepts_and_never_overwrites() {
    let scratch = Scratch::new("new");
    let stdout = scratch.run_ok(&["new", "mine.yaml"]);
    assert!(stdout.contains("mine.yaml"), "{stdout}");
    let template = scratch.read("mine.yaml");
    assert!(String::from_utf8_lossy(&template).contains("INVENTED"));
    let checked = scratch.run_ok(&["check", "mine.yaml"]);
    assert!(checked.contains("mine.yaml: valid"), "{checked}");

    // A second `new` on the template, and one on a file of the user's own.
    scratch.write("own.yaml", "title: my own notes\n");
    let mut before = BTreeMap::new();
    for name in ["mine.yaml", "own.yaml"] {
        before.insert(name, scratch.read(name));
        let refused = scratch.run(&["new", name]);
        assert!(!refused.status.success(), "new {name} overwrote it");
        let stderr = String::from_utf8_lossy(&refused.stderr);
        assert!(stderr.contains("already exists"), "{stderr}");
        assert_eq!(stderr.trim_end().lines().count(), 1, "{stderr}");
    }
    for (name, bytes) in before {
        assert!(scratch.read(name) == bytes, "{name} changed");
    }
    // No temporary file left beside them.
    assert_eq!(scratch.entries("."), ["mine.yaml", "own.yaml"]);
}

/// Provenance: the runcast version, the scenario's file name and SHA-256
/// (FIPS 180-4, computed here with the `sha2` crate), and the options that
/// change numbers, the same in every file; equivalent runs into other
/// folders, from another working directory, give the same bytes.
#[test]
fn provenance_is_recorded_and_equivalent_runs_give_the_same_bytes() {
    use sha2::{Digest, Sha256};
    let scratch = Scratch::new("provenance");
    let scenario = scratch.copy_demo("faint_line.yaml");
    fs::create_dir_all(scratch.path.join("nested")).unwrap();
    let at = ["--at", "182", "--at", "30.5", "--seed", "5"];
    project(&scratch, &scenario, "first", 40, &at);
    project(&scratch, &scenario, "nested/second", 40, &at);
    // The same run from inside `nested`, reaching the scenario by another path.
    let output = std::process::Command::new(env!("CARGO_BIN_EXE_runcast"))
        .args([
            "project",
            "../faint_line.yaml",
            "--out",
            "third",
            "--toys",
            "40",
        ])
        .args(at)
        .arg("--quiet")
        .current_dir(scratch.path.join("nested"))
        .output()
        .unwrap();
    assert!(output.status.success());
    let files = scratch.entries("first");
    assert!(files.contains(&"at.csv".to_string()), "{files:?}");
    for name in &files {
        let first = scratch.read(&format!("first/{name}"));
        for other in ["nested/second", "nested/third"] {
            assert!(
                first == scratch.read(&format!("{other}/{name}")),
                "{other}/{name} differs"
            );
        }
    }
    let json = scratch.json("first");
    let provenance = &json["provenance"];
    let hash: String = Sha256::digest(scratch.read(&scenario))
        .iter()
        .map(|byte| format!("{byte:02x}"))
        .collect();
    assert_eq!(
        provenance["scenarios"],
        serde_json::json!([{"file": "faint_line.yaml", "sha256": hash}])
    );
    assert_eq!(
        provenance["options"],
        serde_json::json!({"seed": 5, "toys": 40, "calibration_toys": 0, "cl": 0.95, "at_days": [30.5, 182.0]})
    );
    // Each CSV's first line is the same provenance, as one line of JSON.
    for table in ["projection.csv", "at.csv"] {
        let text = String::from_utf8(scratch.read(&format!("first/{table}"))).unwrap();
        let line = text.lines().next().unwrap();
        let stamped: Value =
            serde_json::from_str(line.strip_prefix("# provenance: ").unwrap()).unwrap();
        assert_eq!(&stamped, provenance, "{table}");
    }
    // The at list: the days asked for, in increasing order.
    let days: Vec<f64> = json["at"]
        .as_array()
        .unwrap()
        .iter()
        .map(|at| number(&at["days"]))
        .collect();
    assert_eq!(days, [30.5, 182.0]);
}
