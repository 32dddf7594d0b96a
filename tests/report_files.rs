//! How a run's files reach the output directory, run as a user runs it: the
//! set appears whole or not at all, an interrupted run leaves no temporary
//! file and no mix of two runs, a killed one (SIGKILL, sent by strace at each
//! rename and removal in turn) the old set or the new one and a staging
//! folder the next run clears, and files of the set left from an earlier run
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

/// Interrupts a rerun into a directory holding an earlier run, once a
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
        // Beside the directory (replaced whole) or inside it (file by file).
        if !hidden_entries(&scratch.path).is_empty() || !hidden_entries(&dir).is_empty() {
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

/// The system calls at which a rerun is killed, each call in turn: renaming
/// (the exchange of the old and the new directory, and the moves of files
/// one by one) and removing (the old directory after the exchange, the
/// staging folder after the moves). A leading `?` lets strace skip a name
/// the machine's architecture lacks.
const KILL_POINTS: [&str; 6] = [
    "?rename",
    "?renameat",
    "?renameat2",
    "?unlink",
    "?unlinkat",
    "?rmdir",
];

/// Runs runcast with `args` under strace, which kills it with SIGKILL on
/// entering the `n`th call of `syscall` (strace(1), `-e inject`); returns
/// whether it was killed (false: the run made fewer such calls and ended).
fn killed_at(scratch: &Scratch, args: &[&str], syscall: &str, n: usize) -> bool {
    ensure_strace();
    let status = Command::new("strace")
        .args(["-f", "-qq", "-o", "/dev/null", "-e"])
        .arg(format!("inject={syscall}:signal=SIGKILL:when={n}"))
        .arg(env!("CARGO_BIN_EXE_runcast"))
        .args(args)
        .current_dir(&scratch.path)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .expect("run strace (Debian: apt-get install strace)");
    if status.success() {
        return false;
    }
    // strace ends itself with the signal that killed the traced process.
    assert_eq!(status.signal(), Some(9), "{syscall} #{n}: {status}");
    true
}

/// Makes sure strace is on the PATH: on a fresh Debian machine where the
/// tests run as root (as in CI), installs it with apt-get once, so that the
/// README's test command needs nothing installed beforehand; elsewhere the
/// test fails saying what to install.
fn ensure_strace() {
    static INSTALL: std::sync::Once = std::sync::Once::new();
    INSTALL.call_once(|| {
        let present = |program: &str| {
            Command::new("sh")
                .args(["-c", &format!("command -v {program}")])
                .stdout(Stdio::null())
                .status()
                .is_ok_and(|status| status.success())
        };
        if present("strace") {
            return;
        }
        let root = Command::new("id")
            .arg("-u")
            .output()
            .is_ok_and(|output| output.stdout == b"0\n");
        assert!(
            root && present("apt-get"),
            "the kill tests need strace (Debian: apt-get install strace)"
        );
        let installed = Command::new("sh")
            .args(["-c", "apt-get update -qq && apt-get install -y -qq strace"])
            .stdout(Stdio::null())
            .status()
            .is_ok_and(|status| status.success());
        assert!(installed, "apt-get could not install strace");
    });
}

/// Runs `args` to the end; returns its stderr.
fn run_ok_stderr(scratch: &Scratch, args: &[&str]) -> String {
    let output = scratch.run(args);
    let stderr = String::from_utf8(output.stderr).unwrap();
    assert!(output.status.success(), "runcast {args:?}: {stderr}");
    stderr
}

/// The earlier run (with limits) and the rerun (another seed, without
/// limits, so its set has one file fewer) of the counting-window demo.
fn earlier_and_rerun(out: &str) -> (Vec<&str>, Vec<&str>) {
    let earlier = vec![
        "project",
        "counting_window.yaml",
        "--asimov-only",
        "--quiet",
        "--out",
        out,
    ];
    let rerun = [&earlier[..], &["--seed", "7", "--no-limits"]].concat();
    (earlier, rerun)
}

const CLEARED: &str = "an earlier run was killed while writing here";

#[test]
fn a_rerun_killed_at_any_step_leaves_the_old_set_or_the_new_one_and_the_next_run_clears_up() {
    let scratch = Scratch::new("killed");
    copy_demo(&scratch, "counting_window.yaml");
    let out = scratch.path.join("out");
    let (earlier, rerun) = earlier_and_rerun("out");
    run_ok(&scratch, &rerun);
    fs::write(out.join("notes.txt"), "the user's own\n").unwrap();
    let new_set = contents(&out);
    run_ok(&scratch, &earlier);
    let old_set = contents(&out);
    assert_ne!(old_set, new_set);
    assert!(old_set.contains_key("limits.svg") && old_set.contains_key("notes.txt"));

    let (mut old_seen, mut new_seen) = (0, 0);
    for syscall in KILL_POINTS {
        for n in 1.. {
            if !killed_at(&scratch, &rerun, syscall, n) {
                break;
            }
            let now = contents(&out);
            assert!(
                now == old_set || now == new_set,
                "killed at {syscall} #{n}: {:?}",
                now.keys()
            );
            old_seen += usize::from(now == old_set);
            new_seen += usize::from(now == new_set);
            let stderr = run_ok_stderr(&scratch, &earlier);
            assert!(stderr.contains(CLEARED), "{syscall} #{n}: {stderr}");
            assert_eq!(contents(&out), old_set, "{syscall} #{n}");
            assert!(hidden_entries(&scratch.path).is_empty(), "{syscall} #{n}");
        }
        run_ok(&scratch, &earlier);
    }
    // Killed before the exchange, and after it while removing the old one.
    assert!(old_seen > 0 && new_seen > 0, "{old_seen} {new_seen}");
}

#[test]
fn a_rerun_killed_while_moving_files_one_by_one_is_completed_by_the_next_run() {
    let scratch = Scratch::new("killed-file-by-file");
    copy_demo(&scratch, "counting_window.yaml");
    let out = scratch.path.join("out");
    // A folder of the user's inside: the set is moved in file by file.
    fs::create_dir_all(out.join("runs")).unwrap();
    fs::write(out.join("runs").join("first.txt"), "kept\n").unwrap();
    let (earlier, rerun) = earlier_and_rerun("out");
    run_ok(&scratch, &rerun);
    let new_set = contents(&out);
    run_ok(&scratch, &earlier);
    let old_set = contents(&out);
    assert_ne!(old_set, new_set);
    // Another product written into the same directory clears what a killed
    // run left, before writing its own files.
    let spectrum = [
        "spectrum",
        "counting_window.yaml",
        "--days",
        "30",
        "--out",
        "out",
    ];
    let spectrum_files = ["spectrum-30d.csv", "spectrum-30d.svg"];

    let mut moves_cut = 0;
    for syscall in KILL_POINTS {
        for n in 1.. {
            if !killed_at(&scratch, &rerun, syscall, n) {
                break;
            }
            let killed = contents(&out);
            moves_cut += usize::from(killed != old_set && killed != new_set);
            let stderr = run_ok_stderr(&scratch, &spectrum);
            assert!(stderr.contains(CLEARED), "{syscall} #{n}: {stderr}");
            let mut now = contents(&out);
            for name in spectrum_files {
                assert!(now.remove(name).is_some(), "{syscall} #{n}: no {name}");
            }
            assert!(
                now == old_set || now == new_set,
                "{syscall} #{n}: {:?}",
                now.keys()
            );
            for name in spectrum_files {
                fs::remove_file(out.join(name)).unwrap();
            }
            run_ok(&scratch, &earlier);
        }
        run_ok(&scratch, &earlier);
    }
    // Some kills did cut the moves short, leaving a mix the next run completed.
    assert!(moves_cut > 0);
    assert_eq!(
        fs::read_to_string(out.join("runs").join("first.txt")).unwrap(),
        "kept\n"
    );
}
