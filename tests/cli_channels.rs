//! Scenarios with a `channels` list, run as a user would: a single channel
//! written either way gives the same bytes; several channels give each
//! channel's own outputs; bad channel input is refused with one located line
//! and nothing written.

mod common;

use common::Scratch;
use std::fs;
use std::path::Path;

/// One channel, at the top level; numbers invented for the test.
const SINGLE: &str = "\
title: Channel syntax test (invented numbers)
shared_uncertainties: {scale: 0.04}
observable: {name: energy, unit: keV, range: [0.0, 60.0], bin_width: 2.0}
signal:
  events_per_day: 3.0
  shape: {gaussian: {mean: 30.0, sigma: 1.5}}
  shared: [scale]
backgrounds:
  - name: continuum
    events_per_day: 50.0
    shape: {exponential: {slope: -0.02}}
    norm_uncertainty: 0.05
    shared: [scale]
plan:
  days: {first: 1, last: 60, points: 4, spacing: log}
  toys: 30
  seed: 5
  targets: [3]
";

/// `text` with its top-level blocks `keys` (each a key and the indented
/// lines under it) moved, in that order, into a one-entry `channels` list
/// named after the observable, `energy`, written before `plan:`.
fn one_entry_list(text: &str, keys: &[&str]) -> String {
    let mut rest = text.to_string();
    let mut entry = String::new();
    for key in keys {
        let start = rest.find(&format!("\n{key}:")).expect("a top-level key") + 1;
        let length = rest[start..]
            .match_indices('\n')
            .map(|(at, _)| at + 1)
            .find(|&at| !rest[start + at..].starts_with(' '))
            .expect("a top-level key after it");
        let block: String = rest.drain(start..start + length).collect();
        entry.extend(block.lines().map(|line| format!("    {line}\n")));
    }
    let entry = entry.replacen("    observable:", "  - name: energy\n    observable:", 1);
    let plan = rest.find("plan:").expect("a plan");
    rest.insert_str(plan, &format!("channels:\n{entry}"));
    rest
}

/// `SINGLE` written as a one-entry `channels` list, named after its observable.
fn listed_single() -> String {
    one_entry_list(SINGLE, &["observable", "signal", "backgrounds"])
}

/// Every file of `directory`, by name, with its bytes.
fn files(directory: &Path) -> Vec<(String, Vec<u8>)> {
    let mut files: Vec<(String, Vec<u8>)> = fs::read_dir(directory)
        .expect("output directory")
        .map(|entry| {
            let path = entry.unwrap().path();
            let name = path.file_name().unwrap().to_string_lossy().into_owned();
            (name, fs::read(&path).unwrap())
        })
        .collect();
    files.sort();
    files
}

/// The files with every line naming the scenario's SHA-256 (its provenance) left out.
fn without_provenance(files: Vec<(String, Vec<u8>)>) -> Vec<(String, Vec<u8>)> {
    files
        .into_iter()
        .map(|(name, bytes)| {
            let kept = bytes
                .split(|&byte| byte == b'\n')
                .filter(|line| !line.windows(6).any(|window| window == b"sha256"))
                .collect::<Vec<_>>()
                .join(&b'\n');
            (name, kept)
        })
        .collect()
}

/// Runs `args` (the scenario file given as `scenario.yaml`) on `text` in a
/// fresh directory; the outputs go to `out/`.
fn run_on(label: &str, text: &str, args: &[&str]) -> (Scratch, std::process::Output) {
    let scratch = Scratch::new(label);
    fs::write(scratch.path.join("scenario.yaml"), text).unwrap();
    let output = scratch.run(args);
    (scratch, output)
}

/// One channel at the top level and as a one-entry list are one scenario
/// (definition of the syntax): every output byte-identical.
#[test]
fn a_single_channel_and_a_one_entry_list_give_the_same_bytes() {
    let listed = listed_single();
    assert!(
        listed.contains("channels:\n  - name: energy\n    observable:"),
        "{listed}"
    );
    let commands: [&[&str]; 3] = [
        &["project", "scenario.yaml", "--out", "out"],
        &[
            "spectrum",
            "scenario.yaml",
            "--days",
            "5",
            "--days",
            "50",
            "--out",
            "out",
        ],
        &["binning", "scenario.yaml", "--days", "20", "--out", "out"],
    ];
    for (index, args) in commands.iter().enumerate() {
        let (single, single_run) = run_on(&format!("single-{index}"), SINGLE, args);
        let (list, list_run) = run_on(&format!("list-{index}"), &listed, args);
        assert!(single_run.status.success(), "{:?}", single_run);
        assert!(list_run.status.success(), "{:?}", list_run);
        assert_eq!(single_run.stdout, list_run.stdout, "{args:?} stdout");
        let single_files = files(&single.path.join("out"));
        assert!(!single_files.is_empty());
        // The provenance records the scenario file's SHA-256, which differs
        // between the two texts; every other byte must agree.
        assert!(
            without_provenance(single_files) == without_provenance(files(&list.path.join("out"))),
            "{args:?}: outputs differ"
        );
    }
}

/// A scanned line in one channel, written with its own signal: 1.5 events
/// per live day of a 4 kg detector at efficiency 0.75 (0.5 per kg·day), a
/// constant resolution of 1.5 keV and a 10% yield uncertainty.
const PER_CHANNEL_SCAN: &str = "\
title: Detector-level test (invented numbers)
channels:
  - name: volume
    observable: {name: energy, unit: keV, range: [0.0, 60.0], bin_width: 1.0}
    detector: {mass_kg: 4}
    signal:
      events_per_day: 1.5
      shape: {gaussian: {mean: 30.0, sigma: 1.5}}
      scan: {from: 10.0, to: 50.0, step: 2.0}
      yield_uncertainty: 0.1
    backgrounds:
      - {name: continuum, events_per_kg_day: 12.5, shape: {exponential: {slope: -0.02}}, norm_uncertainty: 0.05}
plan:
  days: {first: 1, last: 60, points: 4, spacing: log}
  toys: 20
  seed: 5
  targets: [3]
";

/// `PER_CHANNEL_SCAN` with the signal written at the detector level.
const DETECTOR_LEVEL_SCAN: &str = "\
title: Detector-level test (invented numbers)
signal:
  events_per_kg_day: 0.5
  shape: {gaussian: {mean: 30.0}}
  scan: {from: 10.0, to: 50.0, step: 2.0}
  yield_uncertainty: 0.1
channels:
  - name: volume
    observable: {name: energy, unit: keV, range: [0.0, 60.0], bin_width: 1.0}
    detector: {mass_kg: 4}
    signal_efficiency: 0.75
    resolution: {points: [[0.0, 1.5]]}
    backgrounds:
      - {name: continuum, events_per_kg_day: 12.5, shape: {exponential: {slope: -0.02}}, norm_uncertainty: 0.05}
plan:
  days: {first: 1, last: 60, points: 4, spacing: log}
  toys: 20
  seed: 5
  targets: [3]
";

/// One channel with a detector-level signal (rate × mass × efficiency =
/// 0.5 × 4 × 0.75 = 1.5 per live day, exact in binary; common practice) and the same channel
/// with its own signal are one scenario: `project` (with look-elsewhere
/// toys) and `spectrum` give the same bytes apart from provenance.
#[test]
fn a_detector_level_signal_in_one_channel_gives_the_same_bytes() {
    let commands: [&[&str]; 2] = [
        &["project", "scenario.yaml", "--out", "out"],
        &["spectrum", "scenario.yaml", "--days", "20", "--out", "out"],
    ];
    for (index, args) in commands.iter().enumerate() {
        let (own, own_run) = run_on(&format!("own-{index}"), PER_CHANNEL_SCAN, args);
        let (level, level_run) = run_on(&format!("level-{index}"), DETECTOR_LEVEL_SCAN, args);
        assert!(own_run.status.success(), "{:?}", own_run);
        assert!(level_run.status.success(), "{:?}", level_run);
        assert_eq!(own_run.stdout, level_run.stdout, "{args:?} stdout");
        assert!(
            without_provenance(files(&own.path.join("out")))
                == without_provenance(files(&level.path.join("out"))),
            "{args:?}: outputs differ"
        );
    }
}

/// A scanned line in one channel written at the top level, its width from a
/// top-level `resolution`: sigma(x) = sqrt(a² x + b² x² + c²) (PDG, Review
/// of Particle Physics, "Calorimetry"); numbers invented for the test.
const TOP_LEVEL_RESOLUTION: &str = "\
title: Top-level resolution test (invented numbers)
observable: {name: energy, unit: keV, range: [0.0, 500.0], bin_width: 2.0}
signal:
  events_per_day: 1.5
  shape: {gaussian: {mean: 250.0}}
  scan: {from: 100.0, to: 400.0, step: 10.0}
  yield_uncertainty: 0.1
resolution: {stochastic: 0.1, constant: 0.015, noise: 3.0}
backgrounds:
  - {name: continuum, events_per_day: 50.0, shape: {exponential: {slope: -0.004}}, norm_uncertainty: 0.05}
plan:
  days: {first: 1, last: 60, points: 4, spacing: log}
  toys: 20
  seed: 5
  targets: [3]
";

/// `TOP_LEVEL_RESOLUTION` with its channel, resolution included, in a
/// one-entry `channels` list named after its observable.
fn resolution_in_a_list() -> String {
    one_entry_list(
        TOP_LEVEL_RESOLUTION,
        &["observable", "resolution", "backgrounds"],
    )
}

/// One channel whose resolution is written at the top level and the same
/// channel with it in a one-entry list are one scenario: `project
/// --asimov-only` and `reach` give the same bytes apart from provenance.
#[test]
fn a_top_level_resolution_gives_the_bytes_of_a_one_entry_list() {
    let listed = resolution_in_a_list();
    assert!(
        listed.contains("channels:\n  - name: energy\n    observable:")
            && listed.contains("\n    resolution: {stochastic: 0.1")
            && !listed.contains("\nresolution:"),
        "{listed}"
    );
    let commands: [&[&str]; 2] = [
        &["project", "scenario.yaml", "--asimov-only", "--out", "out"],
        &[
            "reach",
            "scenario.yaml",
            "--days",
            "30",
            "--days",
            "1y",
            "--out",
            "out",
        ],
    ];
    for (index, args) in commands.iter().enumerate() {
        let (top, top_run) = run_on(&format!("top-{index}"), TOP_LEVEL_RESOLUTION, args);
        let (list, list_run) = run_on(&format!("listed-{index}"), &listed, args);
        assert!(top_run.status.success(), "{:?}", top_run);
        assert!(list_run.status.success(), "{:?}", list_run);
        assert_eq!(top_run.stdout, list_run.stdout, "{args:?} stdout");
        let top_files = files(&top.path.join("out"));
        assert!(top_files.len() >= 3, "{top_files:?}");
        assert!(
            without_provenance(top_files) == without_provenance(files(&list.path.join("out"))),
            "{args:?}: outputs differ"
        );
    }
}

/// The width given twice, by sigma and by the top-level resolution, is
/// refused naming both, with nothing written; `scan.width_at_to` with the
/// signal away from `scan.from` is a warning that names `resolution` at
/// the top level as the way out.
#[test]
fn a_top_level_resolution_refuses_a_second_width() {
    let both = TOP_LEVEL_RESOLUTION.replacen("{mean: 250.0}", "{mean: 250.0, sigma: 5.0}", 1);
    let (scratch, output) = run_on(
        "sigma-and-resolution",
        &both,
        &["project", "scenario.yaml", "--out", "out"],
    );
    assert_eq!(output.status.code(), Some(1), "{output:?}");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("signal.shape.gaussian.sigma: ")
            && stderr.contains("by sigma and by the top-level resolution"),
        "{stderr}"
    );
    assert!(!scratch.path.join("out").exists());
    let linear = TOP_LEVEL_RESOLUTION
        .replacen("{mean: 250.0}", "{mean: 250.0, sigma: 5.0}", 1)
        .replacen("step: 10.0}", "step: 10.0, width_at_to: 7.0}", 1)
        .replacen(
            "resolution: {stochastic: 0.1, constant: 0.015, noise: 3.0}\n",
            "",
            1,
        );
    let (_scratch, output) = run_on("width-at-to", &linear, &["check", "scenario.yaml"]);
    assert!(output.status.success(), "{output:?}");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(
        stderr.contains("warning: scenario.yaml: signal.scan.width_at_to: ")
            && stderr.contains("`resolution` (at the top level for one channel"),
        "{stderr}"
    );
}

/// A file mixing a detector-level signal with a channel's own refuses the
/// channel's, by name, and writes nothing.
#[test]
fn mixing_the_two_forms_of_signal_is_refused() {
    let mixed = DETECTOR_LEVEL_SCAN.replace(
        "    signal_efficiency: 0.75\n",
        "    signal: {events_per_day: 1.0, shape: {gaussian: {mean: 30.0, sigma: 1.5}}}\n",
    );
    let (scratch, output) = run_on(
        "mixed",
        &mixed,
        &["project", "scenario.yaml", "--out", "out"],
    );
    assert!(!output.status.success());
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("channels[0].signal"), "{stderr}");
    assert!(!scratch.path.join("out").exists());
}

/// The demo's two channels: each channel's own Asimov Z in the JSON and CSV,
/// never above the combined one (the combined -2 ln L adds the other
/// channel's non-negative deviance; Cowan et al., EPJC 71 (2011) 1554), and
/// its rates and spectra per channel.
#[test]
fn several_channels_report_each_channel() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    let scratch = Scratch::new("two-channels");
    for name in [
        "two_channel_detector.yaml",
        "two_channel_outer_background.csv",
    ] {
        fs::copy(demo.join(name), scratch.path.join(name)).unwrap();
    }
    let project = scratch.run(&[
        "project",
        "two_channel_detector.yaml",
        "--asimov-only",
        "--out",
        "out",
    ]);
    assert!(project.status.success(), "{project:?}");
    let json: serde_json::Value =
        serde_json::from_slice(&fs::read(scratch.path.join("out/projection.json")).unwrap())
            .unwrap();
    for point in json["points"].as_array().unwrap() {
        let channels = point["channels"].as_array().unwrap();
        let names: Vec<&str> = channels
            .iter()
            .map(|c| c["name"].as_str().unwrap())
            .collect();
        assert_eq!(names, ["inner", "outer"]);
        let combined = point["z_asimov"].as_f64().unwrap();
        let mut signal = 0.0;
        for channel in channels {
            let z = channel["z_asimov"].as_f64().unwrap();
            assert!(z <= combined + 1e-9, "{point}");
            signal += channel["signal"].as_f64().unwrap();
        }
        let total = point["signal"].as_f64().unwrap();
        assert!((signal - total).abs() <= 1e-12 * total, "{point}");
    }
    let csv = fs::read_to_string(scratch.path.join("out/projection.csv")).unwrap();
    let header = csv.lines().find(|line| !line.starts_with('#')).unwrap();
    assert!(
        header.ends_with(",z_asimov_inner,z_asimov_outer"),
        "{header}"
    );
    let svg = fs::read_to_string(scratch.path.join("out/projection.svg")).unwrap();
    assert!(svg.contains("Asimov Z_A, inner alone") && svg.contains("Asimov Z_A, outer alone"));

    let check = scratch.run(&["check", "two_channel_detector.yaml"]);
    let text = String::from_utf8(check.stdout).unwrap();
    assert!(
        text.contains("  channel inner:\n") && text.contains("  channel outer:\n"),
        "{text}"
    );
    assert_eq!(text.matches("S/B = ").count(), 3, "{text}");

    let spectrum = scratch.run(&[
        "spectrum",
        "two_channel_detector.yaml",
        "--days",
        "30",
        "--out",
        "out",
    ]);
    assert!(spectrum.status.success(), "{spectrum:?}");
    let rows = fs::read_to_string(scratch.path.join("out/spectrum-30d.csv")).unwrap();
    let header = rows.lines().find(|line| !line.starts_with('#')).unwrap();
    assert!(header.starts_with("channel,days,"), "{rows}");
    // 150 bins of 2 keV over [100, 400] keV in each channel.
    for name in ["inner", "outer"] {
        let count = rows
            .lines()
            .filter(|row| row.starts_with(&format!("{name},")))
            .count();
        assert_eq!(count, 150, "{name}");
    }

    let binning = scratch.run(&[
        "binning",
        "two_channel_detector.yaml",
        "--days",
        "30",
        "--channel",
        "outer",
        "--out",
        "binned",
    ]);
    assert!(binning.status.success(), "{binning:?}");
}

/// `binning` on several channels needs `--channel`, naming one of them; the
/// error lists the names (usage error: exit 2) and nothing is written.
#[test]
fn binning_needs_a_channel_name_when_there_are_several() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    let scratch = Scratch::new("binning-channel");
    for name in [
        "two_channel_detector.yaml",
        "two_channel_outer_background.csv",
    ] {
        fs::copy(demo.join(name), scratch.path.join(name)).unwrap();
    }
    for extra in [&[][..], &["--channel", "middle"][..]] {
        let mut args = vec![
            "binning",
            "two_channel_detector.yaml",
            "--days",
            "30",
            "--out",
            "out",
        ];
        args.extend(extra);
        let output = scratch.run(&args);
        assert_eq!(output.status.code(), Some(2), "{output:?}");
        let stderr = String::from_utf8(output.stderr).unwrap();
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(
            stderr.contains("--channel") && stderr.contains("inner, outer"),
            "{stderr}"
        );
        assert!(!scratch.path.join("out").exists());
    }
}

/// Each bad channel input: exit 1, one stderr line naming the field, nothing
/// on stdout, no output directory.
#[test]
fn bad_channel_input_is_refused_by_name_with_nothing_written() {
    let listed = listed_single();
    let two = {
        let start = listed.find("  - name: energy").unwrap();
        let end = listed.find("plan:").unwrap();
        let second = listed[start..end].replacen("name: energy", "name: second", 1);
        format!("{}{second}{}", &listed[..end], &listed[end..])
    };
    let cases = [
        (
            two.replacen("name: second", "name: energy", 1),
            "channels[1].name",
        ),
        (
            listed.replacen("shared: [scale]", "shared: [scail]", 1),
            "channels[0].signal.shared[0]",
        ),
        (
            two.replacen("events_per_day: 50.0", "events_per_day: -1", 2)
                .replacen("events_per_day: -1", "events_per_day: 50.0", 1),
            "channels[1].backgrounds[0].events_per_day",
        ),
        (
            format!("{SINGLE}channels: []\n"),
            "observable: a channels list replaces",
        ),
        (
            SINGLE.replacen("{scale: 0.04}", "{scale: 0}", 1),
            "shared_uncertainties.scale",
        ),
    ];
    for (index, (text, field)) in cases.iter().enumerate() {
        for command in ["check", "project"] {
            let (scratch, output) = run_on(
                &format!("bad-{index}-{command}"),
                text,
                &[command, "scenario.yaml", "--out", "out"]
                    [..if command == "check" { 2 } else { 4 }],
            );
            assert_eq!(output.status.code(), Some(1), "{field}: {output:?}");
            let stderr = String::from_utf8(output.stderr).unwrap();
            assert_eq!(stderr.lines().count(), 1, "{stderr}");
            assert!(stderr.contains(field), "{field}: {stderr}");
            assert!(output.stdout.is_empty());
            assert!(!scratch.path.join("out").exists());
        }
    }
}

/// A declared shared uncertainty no yield names is a warning, not an error.
#[test]
fn an_unused_shared_uncertainty_is_a_warning() {
    let text = SINGLE.replacen("{scale: 0.04}", "{scale: 0.04, spare: 0.1}", 1);
    let (_scratch, output) = run_on("unused-shared", &text, &["check", "scenario.yaml"]);
    assert!(output.status.success(), "{output:?}");
    let stderr = String::from_utf8(output.stderr).unwrap();
    assert!(
        stderr.contains("warning: scenario.yaml: shared_uncertainties.spare: "),
        "{stderr}"
    );
}

/// Two channels sharded and merged: the files of the unsharded run, byte for
/// byte (exact equality is the claim of `merge`, so no tolerance).
#[test]
fn two_channels_merged_from_shards_equal_the_unsharded_run() {
    let listed = listed_single();
    let start = listed.find("  - name: energy").unwrap();
    let end = listed.find("plan:").unwrap();
    let second = listed[start..end].replacen("name: energy", "name: second", 1);
    let two = format!("{}{second}{}", &listed[..end], &listed[end..]);
    let (scratch, single) = run_on(
        "two-channel-shards",
        &two,
        &["project", "scenario.yaml", "--out", "single", "--quiet"],
    );
    assert!(single.status.success(), "{single:?}");
    for shard in ["1/2", "2/2"] {
        let output = scratch.run(&[
            "project",
            "scenario.yaml",
            "--shard",
            shard,
            "--out",
            "sharded",
            "--quiet",
        ]);
        assert!(output.status.success(), "{output:?}");
    }
    let merged = scratch.run(&["merge", "sharded"]);
    assert!(merged.status.success(), "{merged:?}");
    let single_files = files(&scratch.path.join("single"));
    let json = &single_files
        .iter()
        .find(|(name, _)| name == "projection.json")
        .unwrap()
        .1;
    assert!(String::from_utf8_lossy(json).contains("\"name\": \"second\""));
    let merged_files = files(&scratch.path.join("sharded"));
    for (name, bytes) in &single_files {
        let other = merged_files.iter().find(|(other, _)| other == name);
        assert!(
            other.is_some_and(|(_, merged)| merged == bytes),
            "{name} differs"
        );
    }
}
