//! Sharded runs of a scenario whose background is a table in a file
//! (`shape: {table: {file: continuum.csv}}`), run as a user runs them: the
//! shards carry the file, the merge reads it from them (not from disk) and
//! gives the unsharded bytes, shards carrying different files are refused
//! naming the file, and every output's provenance names the file and its
//! SHA-256 (FIPS 180-4, recomputed here with the `sha2` crate).

mod common;

use common::Scratch;
use sha2::{Digest, Sha256};
use std::fs;
use std::path::Path;
use std::process::Output;

const SCENARIO: &str = "table_peak.yaml";
const TABLE: &str = "continuum.csv";

/// An invented peak on an invented falling continuum given as rows.
const YAML: &str = "title: peak on a tabulated continuum (invented numbers)\n\
     observable: {name: energy, unit: keV, range: [0.0, 20.0], bin_width: 1.0}\n\
     signal: {events_per_day: 2.0, shape: {gaussian: {mean: 10.0, sigma: 1.0}}}\n\
     backgrounds:\n  - {name: continuum, events_per_day: 40.0, shape: {table: {file: continuum.csv}}, norm_uncertainty: 0.05}\n\
     plan: {days: {first: 1, last: 30, points: 4, spacing: log}, toys: 5, seed: 3, targets: [3, 5]}\n";

/// Invented rows over the observable's range.
const ROWS: &str = "low,high,value\n0,5,8\n5,10,5\n10,15,3\n15,20,2\n";

/// Few toys; 13 and 29 are not multiples of 3.
const PLAN: [&str; 6] = ["--toys", "13", "--calibrate", "29", "--seed", "8"];

fn setup(label: &str, rows: &str) -> Scratch {
    let scratch = Scratch::new(label);
    fs::write(scratch.path.join(SCENARIO), YAML).unwrap();
    fs::write(scratch.path.join(TABLE), rows).unwrap();
    scratch
}

fn succeeded(output: Output) -> String {
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).expect("UTF-8 stdout")
}

fn failed(output: Output) -> String {
    assert!(!output.status.success(), "succeeded");
    let stderr = String::from_utf8(output.stderr).expect("UTF-8 stderr");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    stderr
}

fn run_shard(scratch: &Scratch, out: &str, shard: &str) {
    let mut args = vec![
        "project", SCENARIO, "--shard", shard, "--out", out, "--quiet",
    ];
    args.extend_from_slice(&PLAN);
    succeeded(scratch.run(&args));
}

fn sorted_names(directory: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(directory)
        .expect("read directory")
        .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|byte| format!("{byte:02x}"))
        .collect()
}

#[test]
fn merged_shards_of_a_table_file_scenario_give_the_unsharded_bytes() {
    let scratch = setup("table-merge", ROWS);
    let mut args = vec!["project", SCENARIO, "--out", "single", "--quiet"];
    args.extend_from_slice(&PLAN);
    succeeded(scratch.run(&args));
    for index in 1..=3 {
        run_shard(&scratch, "sharded", &format!("{index}/3"));
    }
    // The merge reads the rows from the shards: the file is gone by then.
    fs::remove_file(scratch.path.join(TABLE)).unwrap();
    succeeded(scratch.run(&["merge", "sharded"]));
    let names = sorted_names(&scratch.path.join("single"));
    assert!(names.contains(&"projection.json".to_string()), "{names:?}");
    for name in names {
        let single = fs::read(scratch.path.join("single").join(&name)).unwrap();
        let merged = fs::read(scratch.path.join("sharded").join(&name)).unwrap();
        assert!(single == merged, "{name} differs");
    }
}

#[test]
fn provenance_names_the_table_file_and_its_sha256() {
    let scratch = setup("table-provenance", ROWS);
    let mut args = vec![
        "project",
        SCENARIO,
        "--out",
        "out",
        "--quiet",
        "--asimov-only",
    ];
    args.extend_from_slice(&PLAN[4..]);
    succeeded(scratch.run(&args));
    let json: serde_json::Value =
        serde_json::from_slice(&fs::read(scratch.path.join("out/projection.json")).unwrap())
            .unwrap();
    let scenario = &json["provenance"]["scenarios"][0];
    assert_eq!(scenario["file"], SCENARIO);
    assert_eq!(scenario["sha256"], sha256_hex(YAML.as_bytes()));
    assert_eq!(scenario["tables"][0]["file"], TABLE);
    assert_eq!(scenario["tables"][0]["sha256"], sha256_hex(ROWS.as_bytes()));
    assert_eq!(scenario["tables"].as_array().unwrap().len(), 1);
}

#[test]
fn shards_carrying_different_table_files_are_refused_naming_the_file() {
    let scratch = setup("table-mixed", ROWS);
    run_shard(&scratch, "sharded", "1/2");
    // The same scenario text, another table beside it.
    fs::write(scratch.path.join(TABLE), ROWS.replace("0,5,8", "0,5,9")).unwrap();
    run_shard(&scratch, "sharded", "2/2");
    let directory = scratch.path.join("sharded");
    let shards = sorted_names(&directory);
    assert_eq!(shards.len(), 2, "{shards:?}");
    let stderr = failed(scratch.run(&["merge", "sharded"]));
    assert!(
        stderr.contains("another run") && stderr.contains(&format!("table file `{TABLE}`")),
        "{stderr}"
    );
    assert_eq!(sorted_names(&directory), shards, "nothing written");
}

#[test]
fn an_unreadable_table_file_fails_the_shard_and_the_slurm_scripts_at_once() {
    let scratch = setup("table-missing", ROWS);
    fs::remove_file(scratch.path.join(TABLE)).unwrap();
    let mut args = vec!["project", SCENARIO, "--shard", "1/2", "--out", "sharded"];
    args.extend_from_slice(&PLAN);
    let stderr = failed(scratch.run(&args));
    assert!(stderr.contains(TABLE), "{stderr}");
    assert!(!scratch.path.join("sharded").exists());

    let mut args = vec!["slurm", SCENARIO, "--tasks", "2", "--out", "cluster"];
    args.extend_from_slice(&PLAN);
    let stderr = failed(scratch.run(&args));
    assert!(stderr.contains(TABLE), "{stderr}");
    assert!(!scratch.path.join("cluster").exists());
}

#[test]
fn a_shard_file_of_an_earlier_format_is_named_as_such() {
    let scratch = setup("table-old-format", ROWS);
    let directory = scratch.path.join("old");
    fs::create_dir(&directory).unwrap();
    let mut bytes = b"runcast-shard 3\n".to_vec();
    bytes.extend_from_slice(&[0u8; 64]);
    fs::write(directory.join("shard-0-1-of-1.runcast-shard"), bytes).unwrap();
    let stderr = failed(scratch.run(&["merge", "old"]));
    assert!(
        stderr.contains("format 3") && stderr.contains("reads format 6"),
        "{stderr}"
    );
}
