//! `runcast spectrum` and `runcast binning` run as a user would: the built
//! binary on the demo scenarios, writing into a scratch directory.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

const DEMOS: [&str; 4] = [
    "narrow_peak.yaml",
    "faint_line.yaml",
    "counting_window.yaml",
    "off_source_control.yaml",
];

fn demo(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(name)
}

/// A fresh directory path under the system temporary directory (not created).
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!(
        "runcast-spectrum-binning-{name}-{}",
        std::process::id()
    ));
    let _ = fs::remove_dir_all(&dir);
    dir
}

fn runcast(arguments: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_runcast"))
        .args(arguments)
        .output()
        .expect("the runcast binary runs")
}

fn succeeds(arguments: &[&str]) -> String {
    let output = runcast(arguments);
    assert!(
        output.status.success(),
        "runcast {arguments:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// Fails with a one-line error naming `expected`, and writes nothing.
fn fails_writing_nothing(arguments: &[&str], out: &Path, expected: &str) {
    let output = runcast(arguments);
    assert!(!output.status.success(), "runcast {arguments:?} succeeded");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains(expected), "{arguments:?}: {stderr}");
    assert!(!out.exists(), "{arguments:?} wrote {}", out.display());
}

/// The rows of a CSV file, without its provenance comment line.
fn csv_rows(path: &Path) -> Vec<Vec<String>> {
    fs::read_to_string(path)
        .unwrap()
        .lines()
        .filter(|line| !line.starts_with('#'))
        .map(|line| line.split(',').map(str::to_string).collect())
        .collect()
}

#[test]
fn same_seed_gives_the_same_spectrum_bytes() {
    let scenario = demo("narrow_peak.yaml");
    let scenario = scenario.to_str().unwrap();
    let first = scratch("seed-first");
    let second = scratch("seed-second");
    let other = scratch("seed-other");
    for (out, seed) in [(&first, "5"), (&second, "5"), (&other, "6")] {
        let out = out.to_str().unwrap();
        succeeds(&[
            "spectrum", scenario, "--days", "30", "--seed", seed, "--out", out,
        ]);
    }
    let read = |dir: &Path, name: &str| fs::read(dir.join(name)).unwrap();
    for name in ["spectrum-30d.csv", "spectrum-30d.svg"] {
        assert_eq!(read(&first, name), read(&second, name), "{name}");
    }
    assert_ne!(
        read(&first, "spectrum-30d.csv"),
        read(&other, "spectrum-30d.csv")
    );
    for dir in [first, second, other] {
        fs::remove_dir_all(dir).unwrap();
    }
}

/// narrow_peak.yaml: 800 + 60 background events per live day, 2.4 signal;
/// live fraction 0.8 and 20 commissioning days at half rate give
/// 0.8 (20 x 0.5 + 10) = 16 live days at day 30 and 0.8 (10 + 345) = 284 at
/// day 365 (the scenario's definitions). The expected columns add up to
/// rate x live days.
#[test]
fn several_exposures_share_one_figure_and_one_table() {
    let out = scratch("several");
    let scenario = demo("narrow_peak.yaml");
    let stdout = succeeds(&[
        "spectrum",
        scenario.to_str().unwrap(),
        "--days",
        "30",
        "--days",
        "365",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(stdout.contains("spectrum-30d-365d.svg"), "{stdout}");
    let svg = fs::read_to_string(out.join("spectrum-30d-365d.svg")).unwrap();
    assert!(
        svg.contains("After 30 d (16 live days)") && svg.contains("After 365 d (284 live days)")
    );

    let rows = csv_rows(&out.join("spectrum-30d-365d.csv"));
    assert_eq!(
        rows[0],
        [
            "days",
            "live_days",
            "low",
            "high",
            "counts",
            "background",
            "signal_plus_background",
            "error_low",
            "error_high",
            "fitted",
            "fitted_signal_strength",
            "local_z"
        ]
    );
    // Each exposure's pseudo-dataset is fitted: its fitted signal strength
    // and local significance are stated once under the figure's title, and
    // each panel gives its own expected signal and background.
    assert!(svg.contains("Fit of the pseudo-data") && svg.matches("local Z = ").count() == 2);
    assert_eq!(svg.matches("expected s = ").count(), 2);
    // 200 bins of 0.5 MeV over [10, 110] for each exposure.
    assert_eq!(rows.len(), 1 + 2 * 200);
    for (days, live_days) in [("30", 16.0), ("365", 284.0)] {
        let exposure: Vec<&Vec<String>> = rows[1..].iter().filter(|row| row[0] == days).collect();
        assert_eq!(exposure.len(), 200);
        let column = |index: usize| -> f64 {
            exposure
                .iter()
                .map(|row| row[index].parse::<f64>().unwrap())
                .sum()
        };
        let background = column(5);
        let signal = column(6) - background;
        assert!(
            (background - 860.0 * live_days).abs() < 1e-9 * background,
            "{background}"
        );
        assert!((signal - 2.4 * live_days).abs() < 1e-6 * signal, "{signal}");
    }
    fs::remove_dir_all(out).unwrap();
}

/// Error bars in the table: the exact central 68.27% interval for small counts,
/// e.g. 0 -> [0, 1.841] (Garwood, Biometrika 28 (1936) 437), and ±sqrt(n) from
/// 1000 counts on.
#[test]
fn table_error_bars_follow_the_counts() {
    let out = scratch("bars");
    let scenario = demo("faint_line.yaml");
    succeeds(&[
        "spectrum",
        scenario.to_str().unwrap(),
        "--days",
        "10",
        "--out",
        out.to_str().unwrap(),
    ]);
    let rows = csv_rows(&out.join("spectrum-10d.csv"));
    let empty = rows[1..]
        .iter()
        .find(|row| row[4] == "0")
        .expect("an empty bin after 10 days");
    assert_eq!(empty[7], "0");
    assert!((empty[8].parse::<f64>().unwrap() - 1.841).abs() < 5e-4);
    fs::remove_dir_all(&out).unwrap();

    let scenario = demo("counting_window.yaml");
    succeeds(&[
        "spectrum",
        scenario.to_str().unwrap(),
        "--days",
        "30",
        "--out",
        out.to_str().unwrap(),
    ]);
    let rows = csv_rows(&out.join("spectrum-30d.csv"));
    let counts: f64 = rows[1][4].parse().unwrap();
    assert!(counts >= 1000.0, "one bin of about 2800 events");
    assert_eq!(rows[1][7].parse::<f64>().unwrap(), counts.sqrt());
    assert_eq!(rows[1][8].parse::<f64>().unwrap(), counts.sqrt());
    fs::remove_dir_all(out).unwrap();
}

#[test]
fn bad_days_are_refused_before_anything_is_written() {
    let scenario = demo("narrow_peak.yaml");
    let scenario = scenario.to_str().unwrap();
    let out = scratch("refused");
    let dir = out.to_str().unwrap();
    fails_writing_nothing(
        &["spectrum", scenario, "--days", "0", "--out", dir],
        &out,
        "--days 0",
    );
    fails_writing_nothing(
        &[
            "spectrum", scenario, "--days", "30", "--days", "-2", "--out", dir,
        ],
        &out,
        "--days -2",
    );
    fails_writing_nothing(
        &[
            "spectrum", scenario, "--days", "30", "--days", "30", "--out", dir,
        ],
        &out,
        "more than once",
    );
    fails_writing_nothing(&["spectrum", scenario, "--out", dir], &out, "--days");
    fails_writing_nothing(
        &["binning", scenario, "--days", "-1", "--out", dir],
        &out,
        "--days -1",
    );
    fails_writing_nothing(
        &["binning", scenario, "--days", "inf", "--out", dir],
        &out,
        "'inf' for '--days <D>'",
    );
    fails_writing_nothing(&["binning", scenario, "--out", dir], &out, "--days");
}

#[test]
fn binning_json_follows_its_schema_and_recommendation() {
    let out = scratch("binning");
    let scenario = demo("narrow_peak.yaml");
    let stdout = succeeds(&[
        "binning",
        scenario.to_str().unwrap(),
        "--days",
        "100",
        "--out",
        out.to_str().unwrap(),
    ]);
    let text = fs::read_to_string(out.join("binning.json")).unwrap();
    let json: serde_json::Value = serde_json::from_str(&text).unwrap();
    let object = json.as_object().unwrap();
    let mut keys: Vec<&str> = object.keys().map(String::as_str).collect();
    keys.sort_unstable();
    assert_eq!(
        keys,
        [
            "best_window",
            "bin_widths",
            "days",
            "provenance",
            "recommended_bin_width",
            "window_background",
            "windows"
        ]
    );
    assert_eq!(json["days"], 100.0);
    assert_eq!(json["provenance"]["options"]["days"], 100.0);
    assert_eq!(
        json["provenance"]["scenarios"][0]["file"],
        "narrow_peak.yaml"
    );

    let number = |value: &serde_json::Value| value.as_f64().unwrap();
    let widths: Vec<(f64, f64)> = json["bin_widths"]
        .as_array()
        .unwrap()
        .iter()
        .map(|point| (number(&point["width"]), number(&point["z_asimov"])))
        .collect();
    // From a tenth of the signal sigma (0.6 MeV) to five times it, dividing 100 MeV.
    for &(width, _) in &widths {
        assert!((0.06..=3.0).contains(&width), "{width}");
        let bins = 100.0 / width;
        assert!((bins - bins.round()).abs() < 1e-9, "{width}");
    }
    let best = widths.iter().map(|&(_, z)| z).fold(0.0, f64::max);
    let recommended = number(&json["recommended_bin_width"]);
    let coarsest_within_one_percent = widths
        .iter()
        .filter(|&&(_, z)| z >= 0.99 * best)
        .map(|&(width, _)| width)
        .fold(0.0, f64::max);
    assert_eq!(recommended, coarsest_within_one_percent);
    assert!(
        stdout.contains(&format!("Recommended bin width: {recommended} MeV")),
        "{stdout}"
    );

    let windows = json["windows"].as_array().unwrap();
    let best_window = &json["best_window"];
    let best_z = windows
        .iter()
        .map(|w| number(&w["z_asimov"]))
        .fold(0.0, f64::max);
    assert_eq!(number(&best_window["z_asimov"]), best_z);
    for key in ["low", "high", "signal_fraction", "z_asimov"] {
        assert!(best_window[key].is_f64(), "best_window.{key}");
    }
    // Windows centred on the 42 MeV peak.
    for window in windows {
        let centre = 0.5 * (number(&window["low"]) + number(&window["high"]));
        assert!((centre - 42.0).abs() < 1e-9);
    }
    assert!(out.join("binning.svg").exists());
    fs::remove_dir_all(out).unwrap();
}

#[test]
fn both_commands_work_on_every_demo_scenario() {
    for name in DEMOS {
        let out = scratch(&format!("demo-{name}"));
        let scenario = demo(name);
        let (scenario, dir) = (scenario.to_str().unwrap(), out.to_str().unwrap());
        succeeds(&[
            "spectrum", scenario, "--days", "3", "--days", "30", "--days", "365", "--out", dir,
        ]);
        let table = succeeds(&["binning", scenario, "--days", "100", "--out", dir]);
        assert!(table.contains("Best window:"), "{name}: {table}");
        for file in [
            "spectrum-3d-30d-365d.svg",
            "spectrum-3d-30d-365d.csv",
            "binning.svg",
            "binning.json",
        ] {
            let bytes = fs::read(out.join(file)).unwrap();
            assert!(!bytes.is_empty(), "{name}: {file}");
        }
        fs::remove_dir_all(out).unwrap();
    }
}

#[test]
fn many_long_days_give_a_short_file_name() {
    // Eight days of six characters each would make a 72-byte stem; beyond 64
    // bytes the name is `spectrum-<count>-exposures-<hash>` (docs/scenario.md, Limits on the input).
    let out = scratch("long-names");
    let scenario = demo("narrow_peak.yaml");
    let days: Vec<String> = (1..=8).map(|i| format!("{i}0.125")).collect();
    let mut arguments = vec!["spectrum", scenario.to_str().unwrap()];
    for day in &days {
        arguments.extend(["--days", day.as_str()]);
    }
    arguments.extend(["--out", out.to_str().unwrap()]);
    succeeds(&arguments);
    let mut names: Vec<String> = fs::read_dir(&out)
        .unwrap()
        .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    assert_eq!(names.len(), 2, "{names:?}");
    for (name, extension) in names.iter().zip([".csv", ".svg"]) {
        let stem = name.strip_suffix(extension).expect("csv and svg");
        assert!(stem.starts_with("spectrum-8-exposures-"), "{name}");
        assert!(stem.len() <= 64, "{name}");
    }
    fs::remove_dir_all(&out).unwrap();
}

/// `--window LO:HI` chooses the signal region drawn beside the full range:
/// the narrow-peak demo (pair mass 10 to 110 MeV, 0.5 MeV bins) zoomed on
/// 30.2:39.9 MeV shows 30 to 40 MeV (widened to whole bins), a negative LO
/// is read as a number, and the CSV keeps the full range, byte for byte.
#[test]
fn a_chosen_window_is_drawn_and_leaves_the_table_alone() {
    let scenario = demo("narrow_peak.yaml");
    let scenario = scenario.to_str().unwrap();
    let default = scratch("window-default");
    let chosen = scratch("window-chosen");
    for (out, window) in [(&default, None), (&chosen, Some("30.2:39.9"))] {
        let mut arguments = vec!["spectrum", scenario, "--days", "30"];
        arguments.extend(
            window
                .map(|window| ["--window", window])
                .into_iter()
                .flatten(),
        );
        arguments.extend(["--out", out.to_str().unwrap()]);
        succeeds(&arguments);
    }
    let read = |dir: &Path, name: &str| fs::read(dir.join(name)).unwrap();
    assert_eq!(
        read(&default, "spectrum-30d.csv"),
        read(&chosen, "spectrum-30d.csv")
    );
    let svg = |dir: &Path| String::from_utf8(read(dir, "spectrum-30d.svg")).unwrap();
    // The default region: 42 ± 5 × 0.6 MeV, 39 to 45 MeV.
    assert!(svg(&default).contains("Signal region: 39 to 45 MeV"));
    assert!(svg(&chosen).contains("Signal region: 30 to 40 MeV"));

    let negative = scratch("window-negative");
    fails_writing_nothing(
        &[
            "spectrum",
            scenario,
            "--days",
            "30",
            "--window",
            "-5:20",
            "--out",
            negative.to_str().unwrap(),
        ],
        &negative,
        "--window -5:20: expected a region inside the range of e+e- pair mass, 10 to 110 MeV",
    );
    for dir in [default, chosen] {
        fs::remove_dir_all(dir).unwrap();
    }
}

/// A window that is no LO:HI, is empty or reversed, or leaves the range is a
/// usage error (exit 2) naming `--window`, with nothing written.
#[test]
fn bad_windows_are_refused_before_anything_is_written() {
    let scenario = demo("faint_line.yaml");
    let scenario = scenario.to_str().unwrap();
    let out = scratch("window-refused");
    let dir = out.to_str().unwrap();
    for (window, expected) in [
        (
            "790",
            "invalid value '790' for '--window <LO:HI>': expected LO:HI",
        ),
        ("790:x", "invalid value '790:x' for '--window <LO:HI>'"),
        ("790:inf", "invalid value '790:inf' for '--window <LO:HI>'"),
        ("790:780", "LO is not below HI"),
        ("790:790", "LO is not below HI"),
        (
            "600:700",
            "--window 600:700: expected a region inside the range",
        ),
        (
            "900:1000",
            "--window 900:1000: expected a region inside the range",
        ),
    ] {
        let arguments = [
            "spectrum", scenario, "--days", "30", "--window", window, "--out", dir,
        ];
        fails_writing_nothing(&arguments, &out, expected);
        assert_eq!(runcast(&arguments).status.code(), Some(2), "{window}");
    }
}
