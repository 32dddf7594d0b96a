//! `runcast compare` run as a user would: the built binary on the demo run
//! plans, its numbers against `runcast project` on each file.

mod common;

use common::Scratch;
use serde_json::Value;
use std::fs;
use std::path::{Path, PathBuf};

fn demo(name: &str) -> String {
    let path: PathBuf = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(name);
    path.to_str().unwrap().to_string()
}

fn succeeds(scratch: &Scratch, args: &[&str]) -> String {
    let output = scratch.run(args);
    assert!(
        output.status.success(),
        "runcast {args:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

fn json(path: PathBuf) -> Value {
    serde_json::from_str(&fs::read_to_string(path).unwrap()).unwrap()
}

/// Per-plan days in compare.json are those of projection.json from `runcast
/// project` on each file with the same options (toys, seed), to the bit.
fn same_numbers_as_project(scratch: &Scratch, options: &[&str]) {
    let plans = [demo("narrow_peak.yaml"), demo("narrow_peak_upgrade.yaml")];
    let mut compare = vec!["compare", &plans[0], &plans[1], "--out", "compared"];
    compare.extend_from_slice(options);
    compare.push("--quiet");
    let table = succeeds(scratch, &compare);
    let compared = json(scratch.path.join("compared/compare.json"));
    for (index, plan) in plans.iter().enumerate() {
        let out = format!("project-{index}");
        let mut project = vec!["project", plan, "--out", &out, "--quiet"];
        project.extend_from_slice(options);
        succeeds(scratch, &project);
        let projected = json(scratch.path.join(&out).join("projection.json"));
        let entry = &compared["plans"][index];
        assert_eq!(entry["file"], Value::from(plan.as_str()));
        assert_eq!(entry["title"], projected["title"]);
        assert_eq!(entry["days_to_target"], projected["days_to_target"]);
        assert_eq!(entry["days_to_exclusion"], projected["days_to_exclusion"]);
        assert_eq!(compared["targets"], projected["targets"]);
        assert_eq!(compared["cl"], projected["cl"]);
        let title = projected["title"].as_str().unwrap();
        let row = table.lines().find(|line| line.starts_with(title));
        assert!(row.is_some(), "a row for {title} in {table}");
    }
}

#[test]
fn asimov_only_numbers_are_those_of_project() {
    let scratch = Scratch::new("asimov");
    same_numbers_as_project(&scratch, &["--asimov-only"]);
    let mut names: Vec<String> = fs::read_dir(scratch.path.join("compared"))
        .unwrap()
        .map(|entry| entry.unwrap().file_name().into_string().unwrap())
        .collect();
    names.sort();
    assert_eq!(
        names,
        [
            "compare-limits.svg",
            "compare-probability.svg",
            "compare.csv",
            "compare.json",
            "compare.svg"
        ]
    );
}

#[test]
fn toy_numbers_are_those_of_project() {
    let scratch = Scratch::new("toys");
    same_numbers_as_project(&scratch, &["--toys", "40", "--seed", "7", "--no-limits"]);
    let compared = json(scratch.path.join("compared/compare.json"));
    let median = &compared["plans"][0]["days_to_target"][0]["median_days"];
    assert!(median.is_f64(), "the toy median reaches 3σ: {median}");
    let table = fs::read_to_string(scratch.path.join("compared/compare.csv")).unwrap();
    assert!(!table.contains("days_to_exclusion"), "{table}");
}

#[test]
fn plans_with_other_targets_are_refused_naming_the_field() {
    let scratch = Scratch::new("targets");
    let original = fs::read_to_string(demo("narrow_peak.yaml")).unwrap();
    let changed = original.replace("targets: [3, 5]", "targets: [3, 4]");
    assert_ne!(changed, original);
    fs::write(scratch.path.join("other.yaml"), changed).unwrap();
    let first = demo("narrow_peak.yaml");
    let output = scratch.run(&[
        "compare",
        &first,
        "other.yaml",
        "--asimov-only",
        "--out",
        "out",
    ]);
    assert!(!output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(
        stderr.contains("other.yaml: plan.targets [3, 4] differs from [3, 5]"),
        "{stderr}"
    );
    assert!(!scratch.path.join("out").exists());

    let output = scratch.run(&["compare", &first, &first, "--label", "one", "--out", "out"]);
    assert!(!output.status.success());
    assert!(String::from_utf8_lossy(&output.stderr).contains("--label"));
    assert!(!scratch.path.join("out").exists());
}

/// The number in a CSV cell, None for an empty one.
fn cell(text: &str) -> Option<f64> {
    (!text.is_empty()).then(|| text.parse().unwrap())
}

/// `--reach-days`: each plan's limit and global discovery rates at every
/// position are those of `runcast reach --days D` on its file, to the bit;
/// each ratio is the plan's rate over the first plan's at the same position;
/// and the days in global significance of the scan plans (table and
/// compare.csv) are those of `runcast project --asimov-only`.
#[test]
fn reach_of_scan_plans_is_that_of_reach_with_ratios_to_the_first() {
    let scratch = Scratch::new("reach");
    let plans = [
        demo("two_volume_line.yaml"),
        demo("two_volume_line_inner.yaml"),
    ];
    let table = succeeds(
        &scratch,
        &[
            "compare",
            &plans[0],
            &plans[1],
            "--asimov-only",
            "--reach-days",
            "30",
            "--label",
            "both",
            "--label",
            "inner",
            "--out",
            "compared",
            "--quiet",
        ],
    );
    assert!(table.contains("global 5σ Asimov"), "{table}");
    assert!(table.contains("Reach after 30 d"), "{table}");
    let compared = json(scratch.path.join("compared/compare-reach.json"));
    let rates = |plan: &Value, position: usize| -> Vec<Value> {
        let point = &plan["positions"][position];
        let mut rates = vec![point["limit_rate_asimov"].clone()];
        rates.extend(point["discovery_rate_global"].as_array().unwrap().clone());
        rates
    };
    for (index, plan) in plans.iter().enumerate() {
        let out = format!("reach-{index}");
        succeeds(
            &scratch,
            &["reach", plan, "--days", "30", "--out", &out, "--quiet"],
        );
        let reached = json(scratch.path.join(&out).join("reach.json"));
        let exposure = &reached["exposures"][0];
        let entry = &compared["plans"][index];
        assert_eq!(entry["file"], Value::from(plan.as_str()));
        assert_eq!(entry["live_days"], exposure["live_days"]);
        let positions = exposure["positions"].as_array().unwrap();
        assert_eq!(positions.len(), 351);
        for (slot, point) in positions.iter().enumerate() {
            assert_eq!(entry["positions"][slot]["position"], point["position"]);
            assert_eq!(rates(entry, slot)[0], point["limit_rate_asimov"]);
            assert_eq!(
                rates(entry, slot)[1..],
                point["discovery_rate_global"].as_array().unwrap()[..]
            );
            let first = rates(&compared["plans"][0], slot);
            let mut ratios = vec![entry["positions"][slot]["limit_rate_asimov_to_first"].clone()];
            ratios.extend(
                entry["positions"][slot]["discovery_rate_global_to_first"]
                    .as_array()
                    .unwrap()
                    .clone(),
            );
            for ((rate, first), ratio) in rates(entry, slot).iter().zip(&first).zip(&ratios) {
                // To the rounding of reading the JSON numbers back.
                let expected = rate.as_f64().unwrap() / first.as_f64().unwrap();
                let ratio = ratio.as_f64().unwrap();
                assert!(
                    (ratio - expected).abs() <= 4.0 * f64::EPSILON * expected,
                    "position {slot}: {ratio} against {expected}"
                );
            }
        }
    }
    // Dropping the outer volume needs a larger rate everywhere.
    let inner = &compared["plans"][1]["positions"];
    assert!(
        inner
            .as_array()
            .unwrap()
            .iter()
            .all(|point| point["limit_rate_asimov_to_first"].as_f64().unwrap() > 1.0)
    );

    succeeds(
        &scratch,
        &[
            "project",
            &plans[0],
            "--asimov-only",
            "--out",
            "projected",
            "--quiet",
        ],
    );
    let projected = json(scratch.path.join("projected/projection.json"));
    let text = fs::read_to_string(scratch.path.join("compared/compare.csv")).unwrap();
    let global: Vec<Vec<&str>> = text
        .lines()
        .map(|line| line.split(',').collect::<Vec<&str>>())
        .filter(|row| row[0] == "both" && row[2] == "global_days_to_target")
        .collect();
    assert_eq!(global.len(), 2, "{text}");
    for (row, days) in global
        .iter()
        .zip(projected["days_to_target"].as_array().unwrap())
    {
        assert_eq!(cell(row[4]), days["global_asimov_days"].as_f64(), "{row:?}");
    }
}

/// Plans whose reach cannot be compared position by position are refused:
/// the error names the plan file, the field and both values, and nothing
/// is written.
#[test]
fn plans_scanning_other_positions_or_in_other_units_are_refused() {
    let scratch = Scratch::new("reach-refused");
    let first = demo("two_volume_line.yaml");
    let inner = fs::read_to_string(demo("two_volume_line_inner.yaml")).unwrap();
    let moved = inner.replace("scan: {from: 200.0,", "scan: {from: 250.0,");
    let per_day = inner
        .replace("events_per_kg_day: 0.02", "events_per_day: 0.09")
        .replace("    detector: {mass_kg: 5}\n", "")
        .replace("events_per_kg_day: 2.0", "events_per_day: 10.0");
    for (name, text) in [("moved.yaml", &moved), ("per_day.yaml", &per_day)] {
        assert_ne!(text, &inner);
        fs::write(scratch.path.join(name), text).unwrap();
    }
    let narrow = demo("narrow_peak.yaml");
    for (plan, expected) in [
        (
            "moved.yaml",
            format!("--reach-days: moved.yaml: signal.scan.from 250 differs from 200 in {first}"),
        ),
        (
            "per_day.yaml",
            format!(
                "--reach-days: per_day.yaml: the signal rate's unit \"events per live day\" differs from \"events per kg·day\" in {first}"
            ),
        ),
        (
            narrow.as_str(),
            format!("--reach-days: {narrow}: signal.scan: missing"),
        ),
    ] {
        let output = scratch.run(&[
            "compare",
            &first,
            plan,
            "--asimov-only",
            "--reach-days",
            "30",
            "--out",
            "out",
        ]);
        assert_eq!(output.status.code(), Some(2), "{plan}");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(stderr.contains(&expected), "{expected} in {stderr}");
        assert!(!scratch.path.join("out").exists());
    }
}

/// `--lee-toys` sets the look-elsewhere pseudo-experiments of each plan with
/// a scan, as `runcast project --lee-toys` does (its global days, to the
/// bit), and leaves a plan without a scan alone; asked of plans none of
/// which scans, it is a usage error and nothing is written.
#[test]
fn lee_toys_apply_to_the_plans_with_a_scan() {
    let scratch = Scratch::new("lee-toys");
    let (scanned, known) = (demo("unknown_line.yaml"), demo("narrow_peak.yaml"));
    let options = ["--toys", "30", "--lee-toys", "30", "--no-limits", "--quiet"];
    let mut compare = vec!["compare", &scanned, &known, "--out", "compared"];
    compare.extend_from_slice(&options);
    succeeds(&scratch, &compare);
    let mut project = vec!["project", &scanned, "--out", "projected"];
    project.extend_from_slice(&options);
    succeeds(&scratch, &project);
    let compared = json(scratch.path.join("compared/compare.json"));
    let projected = json(scratch.path.join("projected/projection.json"));
    let plans = &compared["provenance"]["options"]["plans"];
    assert_eq!(plans[0]["look_elsewhere_toys"], Value::from(30));
    assert!(plans[1].get("look_elsewhere_toys").is_none(), "{plans}");
    for (compared, projected) in compared["plans"][0]["days_to_target"]
        .as_array()
        .unwrap()
        .iter()
        .zip(projected["days_to_target"].as_array().unwrap())
    {
        assert!(compared["global_median_days"].is_f64(), "{compared}");
        assert_eq!(
            compared["global_median_days"],
            projected["global_median_days"]
        );
    }

    let unscanned = demo("narrow_peak_upgrade.yaml");
    let output = scratch.run(&[
        "compare",
        &known,
        &unscanned,
        "--lee-toys",
        "30",
        "--out",
        "refused",
    ]);
    assert_eq!(output.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("--lee-toys: no plan has a signal.scan"),
        "{stderr}"
    );
    assert!(!scratch.path.join("refused").exists());
}
