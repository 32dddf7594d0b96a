//! How a run's files reach the output directory, run as a user runs it: the
//! set appears whole or not at all, an interrupted run leaves no temporary
//! file and no mix of two runs, and files of the set left from an earlier run
//! go away while everything else stays.

mod common;

use common::Scratch;
use std::collections::BTreeMap;
use std::fs;
use std::os::unix::process::ExitStatusExt;
use std::path::Path;
use std::process::{Command, Stdio};

/// Every entry of `dir`, hidden ones included, with its bytes (empty for a
/// directory).
fn contents(dir: &Path) -> BTreeMap<String, Vec<u8>> {
    fs::read_dir(dir)
        .unwrap_or_else(|error| panic!("read {}: {error}", dir.display()))
        .map(|entry| {
            let entry = entry.unwrap();
            let bytes = fs::read(entry.path()).unwrap_or_default();
            (entry.file_name().to_string_lossy().into_owned(), bytes)
        })
        .collect()
}

fn hidden_entries(dir: &Path) -> Vec<String> {
    contents(dir)
        .into_keys()
        .filter(|name| name.starts_with('.'))
        .collect()
}

fn copy_demo(scratch: &Scratch, name: &str) {
    let source = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("scenarios")
        .join(name);
    fs::copy(source, scratch.path.join(name)).expect("copy demo");
}

fn run_ok(scratch: &Scratch, args: &[&str]) -> String {
    let output = scratch.run(args);
    assert!(
        output.status.success(),
        "runcast {args:?}: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

#[test]
fn a_no_limits_rerun_removes_the_earlier_limits_plot_and_nothing_else() {
    let scratch = Scratch::new("stale-limits");
    copy_demo(&scratch, "counting_window.yaml");
    let first = [
        "project",
        "counting_window.yaml",
        "--asimov-only",
        "--out",
        "out",
    ];
    run_ok(&scratch, &first);
    let out = scratch.path.join("out");
    assert!(out.join("limits.svg").exists());
    fs::write(out.join("notes.txt"), "kept\n").unwrap();
    fs::write(out.join("limits-old.svg"), "kept too\n").unwrap();

    let stdout = run_ok(&scratch, &[&first[..], &["--no-limits"]].concat());
    assert!(
        stdout.contains(&format!(
            "removed {} (left from an earlier run)",
            Path::new("out").join("limits.svg").display()
        )),
        "{stdout}"
    );
    let names: Vec<String> = contents(&out).into_keys().collect();
    assert_eq!(
        names,
        [
            "limits-old.svg",
            "notes.txt",
            "probability.svg",
            "projection.csv",
            "projection.json",
            "projection.svg"
        ]
    );
    assert_eq!(fs::read_to_string(out.join("notes.txt")).unwrap(), "kept\n");
}

#[test]
fn a_target_that_cannot_be_written_keeps_what_was_there() {
    let scratch = Scratch::new("unwritable");
    copy_demo(&scratch, "counting_window.yaml");
    let run = |out: &str, extra: &[&str]| {
        let args = [
            &[
                "project",
                "counting_window.yaml",
                "--asimov-only",
                "--out",
                out,
            ],
            extra,
        ]
        .concat();
        scratch.run(&args)
    };

    // A file where the directory should be.
    fs::write(scratch.path.join("taken"), "a user's file\n").unwrap();
    let output = run("taken/out", &[]);
    assert!(!output.status.success());
    assert_eq!(String::from_utf8_lossy(&output.stderr).lines().count(), 1);
    assert_eq!(
        fs::read_to_string(scratch.path.join("taken")).unwrap(),
        "a user's file\n"
    );
    assert!(hidden_entries(&scratch.path).is_empty());

    // A directory in the way of one file of the set: the earlier set stays whole.
    assert!(run("out", &[]).status.success());
    let out = scratch.path.join("out");
    fs::remove_file(out.join("projection.json")).unwrap();
    fs::create_dir_all(out.join("projection.json").join("a user's folder")).unwrap();
    let before = contents(&out);
    let output = run("out", &["--seed", "7", "--no-limits"]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(!output.status.success());
    assert!(
        stderr.starts_with(&format!(
            "runcast: error: cannot replace {}",
            Path::new("out").join("projection.json").display()
        )),
        "{stderr}"
    );
    assert_eq!(contents(&out), before);
    assert!(out.join("projection.json").join("a user's folder").is_dir());
}

/// A spectrum over 50,000 bins at two exposures: tens of megabytes of SVG, so
/// that writing takes long enough to be interrupted.
const LARGE_SPECTRUM: &str = "title: many bins (invented)\n\
    observable: {name: x, unit: keV, range: [0.0, 1000.0], bin_width: 0.02}\n\
    signal: {events_per_day: 5.0, shape: {gaussian: {mean: 500.0, sigma: 1.0}}}\n\
    backgrounds:\n  - {name: flat, events_per_day: 4000.0, shape: {flat: {}}}\n\
    plan: {days: {first: 1, last: 10, points: 2, spacing: log}, toys: 1, seed: 1, targets: [3]}\n";

/// Interrupts a rerun into a directory holding an earlier run, once the
/// staging folder exists; returns whether the signal was sent while it did.
fn interrupt_rerun(scratch: &Scratch, out: &str, signal: (&str, i32)) -> bool {
    let mut child = Command::new(env!("CARGO_BIN_EXE_runcast"))
        .args(["spectrum", "large.yaml", "--days", "10", "--days", "20"])
        .args(["--seed", "2", "--out", out])
        .current_dir(&scratch.path)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start runcast");
    let dir = scratch.path.join(out);
    let staging = loop {
        if !hidden_entries(&dir).is_empty() {
            // The shell's built-in kill: no separate program needed.
            let kill = format!("kill {} {}", signal.0, child.id());
            let sent = Command::new("sh").args(["-c", &kill]).status();
            break sent.is_ok_and(|status| status.success());
        }
        if child.try_wait().expect("poll runcast").is_some() {
            break false;
        }
    };
    let status = child.wait().expect("wait for runcast");
    assert!(
        status.success() || status.signal() == Some(signal.1),
        "{signal:?}: {status}"
    );
    staging
}

#[test]
fn an_interrupted_run_leaves_the_earlier_set_or_the_new_one_and_no_temporary_file() {
    let scratch = Scratch::new("interrupted");
    fs::write(scratch.path.join("large.yaml"), LARGE_SPECTRUM).unwrap();
    let spectrum = |seed: &str, out: &str| {
        let args = [
            "spectrum",
            "large.yaml",
            "--days",
            "10",
            "--days",
            "20",
            "--seed",
            seed,
            "--out",
            out,
        ];
        run_ok(&scratch, &args);
        contents(&scratch.path.join(out))
    };
    let new_set = spectrum("2", "reference");
    // SIGINT and SIGTERM numbers on Linux (signal(7)).
    for signal in [("-INT", 2), ("-TERM", 15)] {
        let out = format!("out{}", signal.0);
        let old_set = spectrum("1", &out);
        assert_ne!(old_set, new_set);
        let mut caught = 0;
        // The signal may come after the run has finished writing; try until
        // it came while staging (the writing takes a large part of the run).
        for _ in 0..10 {
            if interrupt_rerun(&scratch, &out, signal) {
                caught += 1;
            }
            let now = contents(&scratch.path.join(&out));
            assert!(
                now == old_set || now == new_set,
                "{signal:?}: a mix of two runs"
            );
            assert!(hidden_entries(&scratch.path).is_empty());
            if caught > 0 {
                break;
            }
            // Start again from the earlier set.
            fs::remove_dir_all(scratch.path.join(&out)).unwrap();
            spectrum("1", &out);
        }
        assert!(caught > 0, "{signal:?} never arrived while writing");
    }
}
