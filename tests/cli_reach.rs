//! `runcast reach` through the binary: its three files and their schema,
//! the same bytes for the same seed, usage errors and a scenario without a
//! scan refused with nothing written; and `project --asimov-only` keeping the
//! global significance from the asymptotic upcrossings.

mod common;

use common::Scratch;
use serde_json::Value;
use std::fs;
use std::process::Command;

const SCANNED: &str = "\
title: cli reach test (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 60.0], bin_width: 1.0}
signal:
  events_per_day: 1.0
  shape: {gaussian: {mean: 30.0, sigma: 1.5}}
  scan: {from: 10.0, to: 50.0, step: 2.0, width_at_to: 2.5}
backgrounds:
  - {name: continuum, events_per_day: 50, shape: {exponential: {slope: -0.02}}, norm_uncertainty: 0.1}
plan:
  days: {first: 1, last: 100, points: 3, spacing: log}
  toys: 10
  seed: 3
  targets: [3, 5]
";

fn runcast(args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_runcast"))
        .args(args)
        .output()
        .unwrap()
}

/// The three files and nothing else, the documented JSON keys, one CSV row
/// per exposure and position, toy limits with `--toys`, and the same bytes
/// for the same seed on 1 and 2 threads (the toys' streams do not depend on
/// the threads).
#[test]
fn reach_writes_its_files_with_the_schema() {
    let scratch = Scratch::new("reach");
    let scenario = scratch.path.join("scan.yaml");
    fs::write(&scenario, SCANNED).unwrap();
    let out = scratch.path.join("out");
    let run = |threads: &str, out: &std::path::Path| {
        let output = runcast(&[
            "reach",
            scenario.to_str().unwrap(),
            "--days",
            "10",
            "--days",
            "100",
            "--toys",
            "40",
            "--threads",
            threads,
            "--quiet",
            "--out",
            out.to_str().unwrap(),
        ]);
        assert!(
            output.status.success(),
            "{}",
            String::from_utf8_lossy(&output.stderr)
        );
        String::from_utf8(output.stdout).unwrap()
    };
    let summary = run("1", &out);
    assert!(summary.contains("Reach over 21 positions"), "{summary}");
    let mut names: Vec<String> = fs::read_dir(&out)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .collect();
    names.sort();
    assert_eq!(names, ["reach.csv", "reach.json", "reach.svg"]);
    let json: Value = serde_json::from_slice(&fs::read(out.join("reach.json")).unwrap()).unwrap();
    let keys =
        |value: &Value| -> Vec<String> { value.as_object().unwrap().keys().cloned().collect() };
    assert_eq!(
        keys(&json),
        [
            "provenance",
            "title",
            "seed",
            "cl",
            "targets",
            "rate_unit",
            "exposures"
        ]
    );
    assert_eq!(json["rate_unit"], "events per live day");
    assert_eq!(json["provenance"]["options"]["seed"], json["seed"]);
    let exposure = &json["exposures"][0];
    assert_eq!(
        keys(exposure),
        ["days", "live_days", "look_elsewhere", "positions"]
    );
    assert_eq!(
        keys(&exposure["look_elsewhere"]),
        [
            "reference_level",
            "mean_upcrossings",
            "mean_upcrossings_error",
            "toys",
            "direct_global_p",
            "trials_factor",
            "mean_upcrossings_asimov"
        ]
    );
    let position = &exposure["positions"][0];
    assert_eq!(
        keys(position),
        [
            "position",
            "width",
            "limit_rate_asimov",
            "limit_rate_asimov_band",
            "limit_rate_median",
            "limit_rate_band",
            "discovery_rate_local",
            "discovery_rate_global"
        ]
    );
    assert_eq!(exposure["positions"].as_array().unwrap().len(), 21);
    assert_eq!(position["width"], 1.5);
    assert!(position["limit_rate_median"].is_number());
    assert_eq!(
        position["discovery_rate_global"].as_array().unwrap().len(),
        2
    );
    let csv = fs::read_to_string(out.join("reach.csv")).unwrap();
    // The provenance comment, the header, two rows per position.
    assert!(csv.starts_with("# provenance: {"));
    assert_eq!(csv.lines().count(), 2 + 2 * 21);
    let header = csv.lines().nth(1).unwrap();
    assert!(header.ends_with(",rate_unit"), "{header}");
    assert!(
        csv.lines()
            .nth(2)
            .unwrap()
            .ends_with(",events per live day")
    );
    let again = scratch.path.join("again");
    run("2", &again);
    for name in ["reach.csv", "reach.json", "reach.svg"] {
        assert_eq!(
            fs::read(out.join(name)).unwrap(),
            fs::read(again.join(name)).unwrap(),
            "{name}"
        );
    }
}

/// Bad `--days` are usage errors (exit 2); a scenario without `signal.scan`
/// is refused naming the key (exit 1); nothing is written either way.
#[test]
fn bad_reach_requests_are_refused_with_nothing_written() {
    let scratch = Scratch::new("reach-errors");
    let scanned = scratch.path.join("scan.yaml");
    fs::write(&scanned, SCANNED).unwrap();
    let plain = scratch.path.join("plain.yaml");
    let without_scan = SCANNED.replace(
        "  scan: {from: 10.0, to: 50.0, step: 2.0, width_at_to: 2.5}\n",
        "",
    );
    fs::write(&plain, without_scan).unwrap();
    let out = scratch.path.join("out");
    let out = out.to_str().unwrap();
    for (args, code, needle) in [
        (
            vec![scanned.to_str().unwrap(), "--days", "0"],
            2,
            "--days 0",
        ),
        (
            vec![scanned.to_str().unwrap(), "--days", "5", "--days", "5"],
            2,
            "more than once",
        ),
        (
            vec![plain.to_str().unwrap(), "--days", "5"],
            1,
            "signal.scan",
        ),
    ] {
        let mut full = vec!["reach"];
        full.extend(args);
        full.extend(["--out", out]);
        let output = runcast(&full);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(code), "{stderr}");
        assert!(stderr.contains(needle), "{stderr}");
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(!std::path::Path::new(out).exists());
    }
}

/// `project --asimov-only` on a scanned scenario keeps the global results,
/// from the asymptotic upcrossings: at every point with live time
/// z_global_asimov = Phi^-1(1 - p_global) with p_global = p_local(Z_A²) +
/// N(1) exp(-(Z_A² - 1)/2) (Gross and Vitells, Eur. Phys. J. C 70 (2010)
/// 525; Phi from statrs, reference library), and global days to each target
/// no earlier than the local ones.
#[test]
fn asimov_only_projection_keeps_the_asymptotic_global_significance() {
    use statrs::distribution::{ContinuousCDF, Normal};
    let scratch = Scratch::new("project-asymptotic-global");
    let scenario = scratch.path.join("scan.yaml");
    fs::write(&scenario, SCANNED).unwrap();
    let out = scratch.path.join("out");
    let output = runcast(&[
        "project",
        scenario.to_str().unwrap(),
        "--asimov-only",
        "--quiet",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let summary = String::from_utf8(output.stdout).unwrap();
    assert!(
        summary.contains("asymptotic (used for the global Asimov columns)"),
        "{summary}"
    );
    let json: Value =
        serde_json::from_slice(&fs::read(out.join("projection.json")).unwrap()).unwrap();
    let normal = Normal::standard();
    for point in json["points"].as_array().unwrap() {
        let z = point["z_asimov"].as_f64().unwrap();
        let measured = &point["look_elsewhere"];
        assert_eq!(measured["toys"], 0);
        assert!(measured["mean_upcrossings"].is_null());
        let n = measured["mean_upcrossings_asimov"].as_f64().unwrap();
        assert!(n > 0.0);
        let p = (normal.sf(z) + n * (-(z * z - 1.0) / 2.0).exp()).min(1.0);
        let expected = (-normal.inverse_cdf(p)).max(0.0);
        let global = point["z_global_asimov"].as_f64().unwrap();
        assert!((global - expected).abs() < 1e-9, "{global} vs {expected}");
    }
    for target in json["days_to_target"].as_array().unwrap() {
        let (Some(local), Some(global)) = (
            target["asimov_days"].as_f64(),
            target["global_asimov_days"].as_f64(),
        ) else {
            continue;
        };
        assert!(global >= local, "{target}");
    }
}

/// The invented two-volume demo through the binary: rates per kg·day in the
/// JSON, the CSV and the summary, and every position giving each volume
/// alone (`channels`, in the JSON and as `<name>_...` CSV columns), each
/// alone needing more rate than both together (their Asimov q add; Cowan
/// et al., Eur. Phys. J. C 71 (2011) 1554).
#[test]
fn the_two_volume_demo_reaches_per_kg_day_with_each_channel() {
    let scratch = Scratch::new("reach-two-volumes");
    let scenario = format!(
        "{}/scenarios/two_volume_line.yaml",
        env!("CARGO_MANIFEST_DIR")
    );
    let out = scratch.path.join("out");
    let output = scratch.run(&[
        "reach",
        &scenario,
        "--days",
        "1y",
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ]);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let summary = String::from_utf8(output.stdout).unwrap();
    assert!(
        summary.contains("rates in signal events per kg·day"),
        "{summary}"
    );
    let json: Value = serde_json::from_slice(&fs::read(out.join("reach.json")).unwrap()).unwrap();
    assert_eq!(json["rate_unit"], "events per kg·day");
    for position in json["exposures"][0]["positions"].as_array().unwrap() {
        let combined = position["limit_rate_asimov"].as_f64().unwrap();
        let channels = position["channels"].as_array().unwrap();
        let names: Vec<&str> = channels
            .iter()
            .map(|c| c["name"].as_str().unwrap())
            .collect();
        assert_eq!(names, ["inner", "outer"]);
        for channel in channels {
            assert!(channel["limit_rate_asimov"].as_f64().unwrap() > combined);
        }
    }
    let csv = fs::read_to_string(out.join("reach.csv")).unwrap();
    let header = csv.lines().nth(1).unwrap();
    assert!(
        header.ends_with(
            ",rate_unit,inner_limit_rate_asimov,inner_discovery_rate_local_3sigma,inner_discovery_rate_local_5sigma,\
             outer_limit_rate_asimov,outer_discovery_rate_local_3sigma,outer_discovery_rate_local_5sigma"
        ),
        "{header}"
    );
}
