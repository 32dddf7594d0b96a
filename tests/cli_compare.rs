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
        stderr.contains("other.yaml: plan.targets [3.0, 4.0] differs from [3.0, 5.0]"),
        "{stderr}"
    );
    assert!(!scratch.path.join("out").exists());

    let output = scratch.run(&["compare", &first, &first, "--label", "one", "--out", "out"]);
    assert!(!output.status.success());
    assert!(String::from_utf8_lossy(&output.stderr).contains("--label"));
    assert!(!scratch.path.join("out").exists());
}
