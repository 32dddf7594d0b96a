//! Sharded projections merged: the same bytes as the unsharded run, on every
//! shipped demo, and shards that do not belong together refused.
//!
//! The claim checked is exact equality (each toy has its own random stream,
//! and a shard runs a fixed range of toy indices), so the comparison is of
//! the rendered files, byte for byte.

mod common;

use common::Scratch;
use runcast::model::Model;
use runcast::projection::{
    ProjectionSettings, ShardError, ShardRun, ShardSpec, merge_shards, project, run_shard,
};
use runcast::provenance::{Provenance, ScenarioFile};
use runcast::report::{Report, render_all};
use runcast::scenario::Scenario;
use std::fs;
use std::path::{Path, PathBuf};

const DEMOS: [&str; 5] = [
    "counting_window.yaml",
    "faint_line.yaml",
    "narrow_peak.yaml",
    "off_source_control.yaml",
    "unknown_line.yaml",
];

/// Few toys, so the suite stays fast; 12 and 30 are not multiples of 7.
const TOYS: usize = 12;
const CALIBRATION_TOYS: usize = 30;
/// Background-only scans of the demo with a scan; 9 is not a multiple of 2 or 7.
const LOOK_ELSEWHERE_TOYS: usize = 9;

fn demo(name: &str) -> (Scenario, String) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(name);
    let text = fs::read_to_string(&path).expect("read demo");
    (Scenario::from_yaml(&text).expect("valid demo"), text)
}

fn settings(scenario: &Scenario, seed: u64, calibration_toys: usize) -> ProjectionSettings {
    ProjectionSettings {
        title: scenario.title.clone(),
        days: scenario.plan.days.days(),
        day_spacing: scenario.plan.days.axis_spacing(),
        detector_mass_kg: scenario.detector_mass_kg(),
        at_days: Vec::new(),
        toys: TOYS,
        seed,
        targets: scenario.plan.targets.clone(),
        cl: Some(scenario.plan.cl),
        calibration_toys,
        scan: scenario.signal_scan(),
        look_elsewhere_toys: if scenario.signal_scan().is_some() {
            LOOK_ELSEWHERE_TOYS
        } else {
            0
        },
    }
}

fn run_shards(scenario: &Scenario, run: &ShardRun, count: usize, directory: &Path) -> Vec<PathBuf> {
    let model = Model::from_scenario(scenario);
    (1..=count)
        .map(|index| {
            run_shard(&model, run, ShardSpec { index, count }, directory, &|_| {})
                .expect("shard runs")
        })
        .collect()
}

fn rendered(projection: &runcast::projection::Projection, provenance: &Provenance) -> Vec<Report> {
    render_all(projection, provenance).expect("renders")
}

#[test]
fn merged_shards_give_the_unsharded_bytes_on_every_demo() {
    let scratch = Scratch::new("merge-every-demo");
    for name in DEMOS {
        let (scenario, text) = demo(name);
        // Without and with calibration toys and `--at` days (their own
        // points, run after the grid's).
        for (calibration_toys, at_days) in [(0, vec![]), (CALIBRATION_TOYS, vec![45.5, 200.0])] {
            let settings = ProjectionSettings {
                at_days,
                ..settings(&scenario, 11, calibration_toys)
            };
            let model = Model::from_scenario(&scenario);
            // The provenance `runcast project` records: file name, SHA-256, options.
            let provenance = settings.provenance(ScenarioFile::new(name, &text));
            let unsharded = rendered(
                &project(&model, &settings, &|_| {}).expect("projects"),
                &provenance,
            );
            let run = ShardRun::new(name.into(), text.clone(), Vec::new(), settings);
            for count in [1, 2, 3, 7] {
                let directory = scratch
                    .path
                    .join(format!("{name}-{calibration_toys}-{count}"));
                run_shards(&scenario, &run, count, &directory);
                let (merged_run, merged) = merge_shards(&directory).expect("merges");
                assert_eq!(merged_run, run);
                assert_eq!(merged_run.provenance(), provenance);
                let merged = rendered(&merged, &merged_run.provenance());
                assert_eq!(merged.len(), unsharded.len());
                for (merged, unsharded) in merged.iter().zip(&unsharded) {
                    assert_eq!(merged.name, unsharded.name);
                    assert!(
                        merged.bytes == unsharded.bytes,
                        "{name}, --calibrate {calibration_toys}, {count} shards: {} differs",
                        merged.name
                    );
                }
            }
        }
    }
}

#[test]
fn a_rerun_shard_is_the_same_file() {
    let scratch = Scratch::new("rerun-shard");
    let (scenario, text) = demo("narrow_peak.yaml");
    let run = ShardRun::new(
        "narrow_peak.yaml".into(),
        text,
        Vec::new(),
        settings(&scenario, 3, 30),
    );
    let first = run_shards(&scenario, &run, 3, &scratch.path);
    let bytes: Vec<Vec<u8>> = first.iter().map(|path| fs::read(path).unwrap()).collect();
    let again = run_shards(&scenario, &run, 3, &scratch.path);
    assert_eq!(first, again);
    for (path, bytes) in again.iter().zip(&bytes) {
        assert_eq!(&fs::read(path).unwrap(), bytes);
    }
    let names: Vec<_> = fs::read_dir(&scratch.path).unwrap().collect();
    assert_eq!(names.len(), 3, "no temporary file left");
}

/// Three shards of one run (narrow-peak demo, seed 5) in `directory`.
fn three_shards(directory: &Path, seed: u64) -> Vec<PathBuf> {
    let (scenario, text) = demo("narrow_peak.yaml");
    let run = ShardRun::new(
        "narrow_peak.yaml".into(),
        text,
        Vec::new(),
        settings(&scenario, seed, 30),
    );
    run_shards(&scenario, &run, 3, directory)
}

fn merge_error(directory: &Path) -> String {
    match merge_shards(directory) {
        Ok(_) => panic!("{} merged", directory.display()),
        Err(error) => error.to_string(),
    }
}

#[test]
fn a_missing_shard_is_named() {
    let scratch = Scratch::new("missing-shard");
    let shards = three_shards(&scratch.path, 5);
    fs::remove_file(&shards[1]).unwrap();
    let message = merge_error(&scratch.path);
    assert!(message.contains("missing shard 2/3"), "{message}");
}

#[test]
fn shards_of_another_seed_are_refused() {
    let scratch = Scratch::new("mixed-seed");
    let shards = three_shards(&scratch.path, 5);
    let other = scratch.path.join("other");
    let others = three_shards(&other, 6);
    fs::remove_file(&shards[2]).unwrap();
    fs::rename(
        &others[2],
        scratch.path.join(others[2].file_name().unwrap()),
    )
    .unwrap();
    let message = merge_error(&scratch.path);
    // Whichever file is read first (names follow the run id), both seeds named.
    assert!(
        message.contains("another run")
            && (message.contains("seed 6 instead of 5") || message.contains("seed 5 instead of 6")),
        "{message}"
    );
}

#[test]
fn shards_of_another_scenario_or_options_are_refused() {
    let scratch = Scratch::new("mixed-options");
    let (scenario, text) = demo("narrow_peak.yaml");
    let base = settings(&scenario, 5, 30);
    let variants = [
        (
            text.replace("INVENTED", "INVENTED "),
            base.clone(),
            "scenario",
        ),
        (
            text.clone(),
            ProjectionSettings {
                calibration_toys: 31,
                ..base.clone()
            },
            "--calibrate",
        ),
        (
            text.clone(),
            ProjectionSettings {
                cl: None,
                ..base.clone()
            },
            "limits",
        ),
    ];
    for (index, (other_text, other_settings, named)) in variants.into_iter().enumerate() {
        let directory = scratch.path.join(index.to_string());
        let run = ShardRun::new(
            "narrow_peak.yaml".into(),
            text.clone(),
            Vec::new(),
            base.clone(),
        );
        let shards = run_shards(&scenario, &run, 2, &directory);
        fs::remove_file(&shards[1]).unwrap();
        let other_scenario = Scenario::from_yaml(&other_text).unwrap();
        let other = ShardRun::new(
            "narrow_peak.yaml".into(),
            other_text,
            Vec::new(),
            other_settings,
        );
        let model = Model::from_scenario(&other_scenario);
        run_shard(
            &model,
            &other,
            ShardSpec { index: 2, count: 2 },
            &directory,
            &|_| {},
        )
        .unwrap();
        let message = merge_error(&directory);
        assert!(message.contains(named), "{named}: {message}");
    }
}

#[test]
fn a_truncated_or_corrupted_shard_is_named() {
    let scratch = Scratch::new("corrupted-shard");
    let shards = three_shards(&scratch.path, 5);
    let bytes = fs::read(&shards[1]).unwrap();
    let name = shards[1]
        .file_name()
        .unwrap()
        .to_string_lossy()
        .into_owned();

    fs::write(&shards[1], &bytes[..bytes.len() - 100]).unwrap();
    let message = merge_error(&scratch.path);
    assert!(
        message.contains(&name) && message.contains("corrupted"),
        "{message}"
    );

    let mut flipped = bytes.clone();
    flipped[bytes.len() / 2] ^= 1;
    fs::write(&shards[1], &flipped).unwrap();
    let message = merge_error(&scratch.path);
    assert!(
        message.contains(&name) && message.contains("corrupted"),
        "{message}"
    );

    fs::write(&shards[1], b"not a shard").unwrap();
    let message = merge_error(&scratch.path);
    assert!(
        message.contains(&name) && message.contains("not a runcast shard"),
        "{message}"
    );
}

#[test]
fn an_empty_directory_has_nothing_to_merge() {
    let scratch = Scratch::new("no-shards");
    assert!(matches!(
        merge_shards(&scratch.path),
        Err(ShardError::NoShards { .. })
    ));
}
