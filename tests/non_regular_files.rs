//! Input files that are not regular files: a FIFO where a scenario, a table
//! or a shard is read is refused at once, named, instead of waited on (its
//! open would wait for a writer that never comes). A run still going after
//! a minute is killed and fails the test, so a regression cannot hang the
//! suite.

mod common;

use common::Scratch;
use std::fs;
use std::path::Path;
use std::process::{Command, Output, Stdio};
use std::thread::sleep;
use std::time::{Duration, Instant};

/// Past this a run is taken to hang on its input.
const HANG: Duration = Duration::from_secs(60);

/// A one-bin scenario whose background shape is read from `table`.
fn scenario_with_table(table: &str) -> String {
    format!(
        "title: table from a file (invented)
observable: {{name: x, unit: keV, range: [0.0, 4.0], bin_width: 1.0}}
signal: {{events_per_day: 2.0, shape: {{flat: {{}}}}}}
backgrounds:
  - {{name: b, events_per_day: 10.0, shape: {{table: {{file: {table}}}}}}}
plan: {{days: {{first: 1, last: 100, points: 3, spacing: log}}, toys: 5, seed: 1, targets: [3, 5]}}
"
    )
}

fn make_fifo(path: &Path) {
    let status = Command::new("mkfifo")
        .arg(path)
        .status()
        .expect("run mkfifo");
    assert!(status.success(), "mkfifo {}", path.display());
}

/// Runs the binary in `scratch` with `args`, killed if it has not ended
/// after [`HANG`].
fn run_or_kill(scratch: &Scratch, args: &[&str]) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_runcast"))
        .args(args)
        .current_dir(&scratch.path)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run the runcast binary");
    let started = Instant::now();
    while child.try_wait().expect("wait for runcast").is_none() {
        if started.elapsed() > HANG {
            child.kill().expect("kill runcast");
            child.wait().expect("reap runcast");
            panic!("runcast {args:?} still waiting after {HANG:?}");
        }
        sleep(Duration::from_millis(20));
    }
    child.wait_with_output().expect("collect the output")
}

/// Exit 1 and one line naming `name` as a FIFO.
fn refused_as_fifo(output: &Output, name: &str) {
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    assert_eq!(stderr.lines().count(), 1, "{stderr}");
    assert!(
        stderr.contains(name) && stderr.contains("FIFO") && stderr.contains("not a regular file"),
        "{stderr}"
    );
}

#[test]
fn a_fifo_as_a_table_file_is_refused_at_once() {
    let scratch = Scratch::new("fifo-table");
    make_fifo(&scratch.path.join("rows.csv"));
    fs::write(scratch.path.join("s.yaml"), scenario_with_table("rows.csv")).unwrap();
    refused_as_fifo(&run_or_kill(&scratch, &["check", "s.yaml"]), "rows.csv");
    let output = run_or_kill(&scratch, &["project", "s.yaml", "--out", "out", "--quiet"]);
    refused_as_fifo(&output, "rows.csv");
    assert!(!scratch.path.join("out").exists());
}

#[test]
fn a_fifo_as_the_scenario_file_is_refused_at_once() {
    let scratch = Scratch::new("fifo-scenario");
    make_fifo(&scratch.path.join("s.yaml"));
    refused_as_fifo(&run_or_kill(&scratch, &["check", "s.yaml"]), "s.yaml");
}

#[test]
fn a_fifo_among_the_shards_is_refused_at_once() {
    let scratch = Scratch::new("fifo-shard");
    let table = "low,high,value\n0,2,1\n2,4,3\n";
    fs::write(scratch.path.join("rows.csv"), table).unwrap();
    fs::write(scratch.path.join("s.yaml"), scenario_with_table("rows.csv")).unwrap();
    let output = run_or_kill(
        &scratch,
        &[
            "project", "s.yaml", "--shard", "1/2", "--out", "shards", "--quiet",
        ],
    );
    assert!(output.status.success(), "{output:?}");
    make_fifo(&scratch.path.join("shards").join("zz-2-of-2.runcast-shard"));
    refused_as_fifo(
        &run_or_kill(&scratch, &["merge", "shards"]),
        "zz-2-of-2.runcast-shard",
    );
}
