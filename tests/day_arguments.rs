//! Days on the command line as a committee writes them: durations with a
//! unit (`90d`, `26w`, `2y`, a year being 365.25 days) and, with a start
//! date, ISO dates counted from it. Each gives the same run as the calendar
//! days counted by hand.

mod common;

use common::Scratch;
use std::fs;

/// A counting window starting on 1 March 2027 (textbook set-up, invented rates).
const DATED_WINDOW: &str = "title: dated window\n\
     observable: {name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}\n\
     signal: {events_per_day: 2.0, shape: {flat: {}}}\n\
     backgrounds:\n  - {name: flat, events_per_day: 50.0, shape: {flat: {}}}\n\
     schedule: {start: 2027-03-01}\n\
     plan: {days: {first: 10, last: 1000, points: 5, spacing: log}, toys: 10, seed: 1, targets: [3]}\n";

/// `runcast project --asimov-only --at <at>` on the dated window: its at.csv
/// without the provenance line (which records the command line as written).
fn at_table(scratch: &Scratch, at: &str) -> String {
    let out = format!("out-{}", at.replace(['-', '.'], "_"));
    let output = scratch.run(&[
        "project",
        "dated.yaml",
        "--asimov-only",
        "--quiet",
        "--at",
        at,
        "--out",
        &out,
    ]);
    assert!(
        output.status.success(),
        "--at {at}: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    let table = fs::read_to_string(scratch.path.join(out).join("at.csv")).unwrap();
    table
        .lines()
        .filter(|line| !line.starts_with("# provenance"))
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn a_date_is_the_calendar_days_since_the_start() {
    let scratch = Scratch::new("dated-at");
    fs::write(scratch.path.join("dated.yaml"), DATED_WINDOW).unwrap();
    // 2027-03-01 to 2027-09-01: March 31, April 30, May 31, June 30, July 31,
    // August 31 = 184 days (counted by hand from the month lengths).
    assert_eq!(at_table(&scratch, "2027-09-01"), at_table(&scratch, "184"));
    // 2027-03-01 to 2028-03-01 crosses 29 February 2028: 366 days.
    assert_eq!(at_table(&scratch, "2028-03-01"), at_table(&scratch, "366"));
}

#[test]
fn durations_carry_their_unit() {
    let scratch = Scratch::new("durations");
    fs::write(scratch.path.join("dated.yaml"), DATED_WINDOW).unwrap();
    // A year of 365.25 days (the Julian year; common practice): 2y = 730.5 d.
    assert_eq!(at_table(&scratch, "2y"), at_table(&scratch, "730.5"));
    assert_eq!(at_table(&scratch, "26w"), at_table(&scratch, "182"));
    assert_eq!(at_table(&scratch, "90d"), at_table(&scratch, "90"));
}

#[test]
fn a_date_without_a_start_or_before_it_is_refused() {
    let scratch = Scratch::new("undated");
    let undated = DATED_WINDOW.replace("schedule: {start: 2027-03-01}\n", "");
    fs::write(scratch.path.join("undated.yaml"), undated).unwrap();
    fs::write(scratch.path.join("dated.yaml"), DATED_WINDOW).unwrap();
    for (file, at, expected) in [
        (
            "undated.yaml",
            "2027-09-01",
            "--at 2027-09-01 is a date, and the scenario has no schedule.start",
        ),
        (
            "dated.yaml",
            "2027-01-01",
            "--at 2027-01-01 comes before schedule.start (2027-03-01)",
        ),
        (
            "dated.yaml",
            "3m",
            "expected calendar days (90), a duration (90d, 26w, 2y",
        ),
    ] {
        let output = scratch.run(&["project", file, "--asimov-only", "--at", at]);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(2), "{at}: {stderr}");
        assert!(stderr.contains(expected), "{at}: {stderr}");
    }
    assert!(!scratch.path.join("output").exists());
}
