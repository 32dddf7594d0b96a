//! Shard files changed by hand, their checksum recomputed as a forger would:
//! `merge` refuses each one before believing it, naming the file, the point
//! and the field, with exit 1 (never a panic) and nothing written. Also
//! shards of another build of runcast, which may say the same version.

mod common;

use common::Scratch;
use sha2::{Digest, Sha256};
use std::collections::HashMap;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::Output;

/// A counting window with three grid points (invented numbers).
const COUNTING: &str = "title: forged counting window (invented)
observable: {name: x, unit: keV, range: [0.0, 1.0], bin_width: 1.0}
signal: {events_per_day: 4.0, shape: {flat: {}}}
backgrounds:
  - {name: b, events_per_day: 100.0, shape: {flat: {}}, norm_uncertainty: 0.01}
plan: {days: {first: 10, last: 1000, points: 3, spacing: log}, toys: 5, seed: 4, targets: [3, 5]}
";

/// A Gaussian line scanned over 15 positions on a flat background, two
/// grid points (invented numbers).
const SCANNED: &str = "title: forged scanned line (invented)
observable: {name: x, unit: keV, range: [0.0, 20.0], bin_width: 1.0}
signal: {events_per_day: 2.0, shape: {gaussian: {mean: 10.0, sigma: 1.0}}, scan: {from: 3.0, to: 17.0, step: 1.0}}
backgrounds:
  - {name: b, events_per_day: 20.0, shape: {flat: {}}}
plan: {days: {first: 10, last: 100, points: 2, spacing: log}, toys: 3, seed: 4, targets: [3, 5]}
";

/// Bytes of the SHA-256 that ends a shard file.
const CHECKSUM_BYTES: usize = 32;

/// Writes `scenario` as `s.yaml` and runs its N shards into `out` with `options`.
fn shards(scratch: &Scratch, scenario: &str, out: &str, count: usize, options: &[&str]) {
    fs::write(scratch.path.join("s.yaml"), scenario).unwrap();
    for index in 1..=count {
        let shard = format!("{index}/{count}");
        let mut args = vec![
            "project", "s.yaml", "--shard", &shard, "--out", out, "--quiet",
        ];
        args.extend_from_slice(options);
        let output = scratch.run(&args);
        assert!(output.status.success(), "{}", stderr(&output));
    }
}

fn stderr(output: &Output) -> String {
    String::from_utf8_lossy(&output.stderr).into_owned()
}

/// The shard files of `directory`, in the order of K.
fn shard_files(directory: &Path) -> Vec<PathBuf> {
    let mut paths: Vec<PathBuf> = fs::read_dir(directory)
        .unwrap()
        .map(|entry| entry.unwrap().path())
        .collect();
    paths.sort();
    paths
}

/// `merge` of `directory` refused: exit 1, one line naming the file, each
/// of `named`, and no output written beside the shards.
fn refused(scratch: &Scratch, directory: &str, file: &Path, named: &[&str]) -> String {
    let before = shard_files(&scratch.path.join(directory));
    let output = scratch.run(&["merge", directory]);
    let message = stderr(&output);
    assert_eq!(output.status.code(), Some(1), "{message}");
    assert_eq!(message.lines().count(), 1, "{message}");
    let name = file.file_name().unwrap().to_string_lossy();
    assert!(message.contains(&*name), "{message}");
    for part in named {
        assert!(message.contains(part), "{part} not in: {message}");
    }
    assert_eq!(shard_files(&scratch.path.join(directory)), before);
    message
}

/// A field of a shard file: a number of 8 bytes, or a list of items of
/// so many bytes, its length first.
#[derive(Clone, Copy)]
enum Field {
    Count,
    List(usize),
}

/// A shard file being changed: its bytes and where each field lies.
struct Forgery {
    path: PathBuf,
    bytes: Vec<u8>,
    /// Offsets of the header's fields and of each point's
    /// (`p3.calibration.exceeding`); of a list, of its first item.
    fields: HashMap<String, usize>,
}

impl Forgery {
    /// Reads the file at `path`, following the layout of format 6
    /// (`src/projection/shard/`): the magic line, then little-endian
    /// fields, texts and lists with their length first, then per point a
    /// presence byte and the fields of each ensemble.
    fn open(path: &Path) -> Forgery {
        let bytes = fs::read(path).unwrap();
        assert_eq!(&bytes[..16], b"runcast-shard 6\n");
        let body = bytes.len() - CHECKSUM_BYTES;
        let mut fields = HashMap::new();
        let mut at = 16;
        let mut field = |at: &mut usize, name: &str, kind: Field| {
            let size = match kind {
                Field::Count => 8,
                Field::List(item) => read_u64(&bytes, at) as usize * item,
            };
            fields.insert(name.to_string(), *at);
            *at += size;
        };
        for name in [
            "version",
            "build",
            "command",
            "inputs",
            "scenario_name",
            "scenario_hash",
            "scenario",
        ] {
            field(&mut at, name, Field::List(1));
        }
        for table in 0..read_u64(&bytes, &mut at) {
            for part in ["name", "hash", "text"] {
                field(&mut at, &format!("table{table}.{part}"), Field::List(1));
            }
        }
        field(&mut at, "title", Field::List(1));
        field(&mut at, "days", Field::List(8));
        field(&mut at, "at_days", Field::List(8));
        field(&mut at, "toys", Field::Count);
        field(&mut at, "seed", Field::Count);
        field(&mut at, "targets", Field::List(8));
        take_flag(&bytes, &mut at);
        for name in ["cl", "calibration_toys", "look_elsewhere_toys", "k", "n"] {
            field(&mut at, name, Field::Count);
        }
        let mut point = 0;
        while at < body {
            point += 1;
            for ensemble in ["discovery", "limits"] {
                if take_flag(&bytes, &mut at) {
                    field(
                        &mut at,
                        &format!("p{point}.{ensemble}.failed_fits"),
                        Field::Count,
                    );
                    field(
                        &mut at,
                        &format!("p{point}.{ensemble}.values"),
                        Field::List(8),
                    );
                }
            }
            let counts: [(&str, &[&str]); 2] = [
                ("calibration", &["converged", "exceeding", "failed_fits"]),
                (
                    "look_elsewhere",
                    &[
                        "converged",
                        "upcrossings",
                        "upcrossings_squared",
                        "exceeding",
                        "failed_fits",
                    ],
                ),
            ];
            for (ensemble, names) in counts {
                if take_flag(&bytes, &mut at) {
                    for name in names {
                        field(
                            &mut at,
                            &format!("p{point}.{ensemble}.{name}"),
                            Field::Count,
                        );
                    }
                }
            }
        }
        assert_eq!(at, body, "the layout read up to the checksum");
        Forgery {
            path: path.to_path_buf(),
            bytes,
            fields,
        }
    }

    fn offset(&self, field: &str) -> usize {
        *self
            .fields
            .get(field)
            .unwrap_or_else(|| panic!("no field {field}"))
    }

    fn count(&self, field: &str) -> u64 {
        let at = self.offset(field);
        u64::from_le_bytes(self.bytes[at..at + 8].try_into().unwrap())
    }

    fn set_count(&mut self, field: &str, value: u64) -> &mut Forgery {
        let at = self.offset(field);
        self.bytes[at..at + 8].copy_from_slice(&value.to_le_bytes());
        self
    }

    /// Sets the first number of the list `field` (a list of floats).
    fn set_first_float(&mut self, field: &str, value: f64) -> &mut Forgery {
        let at = self.offset(field);
        self.bytes[at..at + 8].copy_from_slice(&value.to_bits().to_le_bytes());
        self
    }

    /// Writes the file with its checksum recomputed: the SHA-256 of every
    /// byte before it.
    fn seal(&mut self) {
        let body = self.bytes.len() - CHECKSUM_BYTES;
        let checksum = Sha256::digest(&self.bytes[..body]);
        self.bytes[body..].copy_from_slice(&checksum);
        fs::write(&self.path, &self.bytes).unwrap();
    }
}

/// The little-endian number at `at`, moving past it.
fn read_u64(bytes: &[u8], at: &mut usize) -> u64 {
    *at += 8;
    u64::from_le_bytes(bytes[*at - 8..*at].try_into().unwrap())
}

fn take_flag(bytes: &[u8], at: &mut usize) -> bool {
    *at += 1;
    match bytes[*at - 1] {
        0 => false,
        1 => true,
        other => panic!("{other} where a flag was expected"),
    }
}

#[test]
fn more_toys_reaching_the_asimov_q0_than_converged_is_refused() {
    let scratch = Scratch::new("forged-exceeding");
    shards(&scratch, COUNTING, "out", 1, &["--calibrate", "7"]);
    let path = &shard_files(&scratch.path.join("out"))[0];
    let mut forgery = Forgery::open(path);
    let converged = forgery.count("p3.calibration.converged");
    forgery
        .set_count("p3.calibration.exceeding", converged + 1)
        .seal();
    refused(
        &scratch,
        "out",
        path,
        &["grid point 3", "calibration.exceeding"],
    );
}

/// Counts near 2^64 whose sums wrap around to the shards' totals: 2^64 − 1
/// converged with 4 failed in shard 1 of 3 toys, 5 converged with 2^64 − 1
/// failed in shard 2 of 4, 3 of them reaching q0: 4 converged, 3 failed and
/// p = 3/4 once wrapped.
#[test]
fn counts_that_wrap_around_past_2_to_the_64_are_refused() {
    let scratch = Scratch::new("forged-wrap");
    shards(&scratch, COUNTING, "out", 2, &["--calibrate", "7"]);
    let paths = shard_files(&scratch.path.join("out"));
    Forgery::open(&paths[0])
        .set_count("p3.calibration.converged", u64::MAX)
        .set_count("p3.calibration.failed_fits", 4)
        .set_count("p3.calibration.exceeding", 0)
        .seal();
    Forgery::open(&paths[1])
        .set_count("p3.calibration.converged", 5)
        .set_count("p3.calibration.failed_fits", u64::MAX)
        .set_count("p3.calibration.exceeding", 3)
        .seal();
    refused(
        &scratch,
        "out",
        &paths[0],
        &[
            "grid point 3",
            "calibration.converged",
            &u64::MAX.to_string(),
        ],
    );
}

/// Significances are Z = sqrt(q0), finite and at least 0; limits on mu are
/// finite and above 0 (a toy without a bounded limit counts as failed), so
/// NaN, infinities, negatives and a zero limit are refused, not dropped.
#[test]
fn values_outside_their_domain_are_refused() {
    let scratch = Scratch::new("forged-values");
    shards(&scratch, COUNTING, "clean", 1, &[]);
    let clean = fs::read(&shard_files(&scratch.path.join("clean"))[0]).unwrap();
    let cases = [
        ("discovery", f64::NAN),
        ("discovery", -1.0),
        ("discovery", f64::INFINITY),
        ("limits", f64::NAN),
        ("limits", 0.0),
        ("limits", -2.0),
        ("limits", f64::INFINITY),
    ];
    for (index, (ensemble, value)) in cases.into_iter().enumerate() {
        let directory = format!("forged{index}");
        fs::create_dir(scratch.path.join(&directory)).unwrap();
        let path = scratch
            .path
            .join(&directory)
            .join("shard-1-of-1.runcast-shard");
        fs::write(&path, &clean).unwrap();
        Forgery::open(&path)
            .set_first_float(&format!("p2.{ensemble}.values"), value)
            .seal();
        refused(
            &scratch,
            &directory,
            &path,
            &["grid point 2", &format!("{ensemble}.values[0]")],
        );
    }
}

/// Each scan of 15 positions has at most 7 upcrossings (each needs a
/// position below the level before one at or above it), and the sum S of
/// the squares of whole numbers adding up to U lies between max(U, U²/n)
/// and 7 U.
#[test]
fn look_elsewhere_counts_no_scans_can_give_are_refused() {
    let scratch = Scratch::new("forged-scans");
    shards(&scratch, SCANNED, "clean", 1, &["--lee-toys", "4"]);
    let clean = fs::read(&shard_files(&scratch.path.join("clean"))[0]).unwrap();
    let converged = Forgery::open(&shard_files(&scratch.path.join("clean"))[0])
        .count("p1.look_elsewhere.converged");
    assert_eq!(converged, 4, "no scan of this line fails");
    let cases: [(&[(&str, u64)], &str); 4] = [
        (&[("exceeding", 5)], "look_elsewhere.exceeding"),
        (
            &[("upcrossings", 29), ("upcrossings_squared", 29 * 7)],
            "look_elsewhere.upcrossings",
        ),
        (
            &[("upcrossings", 6), ("upcrossings_squared", 5)],
            "look_elsewhere.upcrossings_squared",
        ),
        (
            &[("upcrossings", 8), ("upcrossings_squared", 15)],
            "look_elsewhere.upcrossings_squared",
        ),
    ];
    for (index, (changes, named)) in cases.into_iter().enumerate() {
        let directory = format!("forged{index}");
        fs::create_dir(scratch.path.join(&directory)).unwrap();
        let path = scratch
            .path
            .join(&directory)
            .join("shard-1-of-1.runcast-shard");
        fs::write(&path, &clean).unwrap();
        let mut forgery = Forgery::open(&path);
        for (field, value) in changes {
            forgery.set_count(&format!("p1.look_elsewhere.{field}"), *value);
        }
        forgery.seal();
        refused(&scratch, &directory, &path, &["grid point 1", named]);
    }
}

/// Settings the scenario does not give or `project` never accepts: an
/// `--at` day that is not a number.
#[test]
fn settings_no_run_can_have_are_refused() {
    let scratch = Scratch::new("forged-settings");
    shards(&scratch, COUNTING, "out", 1, &["--at", "45"]);
    let path = &shard_files(&scratch.path.join("out"))[0];
    Forgery::open(path)
        .set_first_float("at_days", f64::NAN)
        .seal();
    refused(&scratch, "out", path, &["--at day 1", "NaN"]);
}

/// Two builds may say the same version and compute other numbers: a shard
/// carries the build identifier that `runcast --version` shows, and `merge`
/// takes only its own.
#[test]
fn a_shard_of_another_build_is_refused() {
    let scratch = Scratch::new("forged-build");
    let version = String::from_utf8(scratch.run(&["--version"]).stdout).unwrap();
    let build = version
        .trim()
        .strip_suffix(')')
        .and_then(|rest| rest.split_once("(build "))
        .map(|(_, build)| build.to_string())
        .unwrap_or_else(|| panic!("no build identifier in {version}"));
    let other: String = build
        .chars()
        .map(|digit| if digit == '0' { '1' } else { '0' })
        .collect();
    shards(&scratch, COUNTING, "out", 2, &[]);
    let paths = shard_files(&scratch.path.join("out"));
    let mut forgery = Forgery::open(&paths[1]);
    let at = forgery.offset("build");
    assert_eq!(&forgery.bytes[at..at + build.len()], build.as_bytes());
    forgery.bytes[at..at + build.len()].copy_from_slice(other.as_bytes());
    forgery.seal();
    let message = refused(&scratch, "out", &paths[1], &[&other, &build]);
    assert!(message.contains("build"), "{message}");
}

/// A run split into a million shards with one of them present: the
/// message names the first missing ones and counts the rest, instead of
/// listing a million.
#[test]
fn a_huge_number_of_missing_shards_is_counted_not_listed() {
    let scratch = Scratch::new("missing-many");
    fs::write(scratch.path.join("s.yaml"), COUNTING).unwrap();
    let output = scratch.run(&[
        "project",
        "s.yaml",
        "--shard",
        "2/1000000",
        "--out",
        "out",
        "--quiet",
    ]);
    assert!(output.status.success(), "{}", stderr(&output));
    let output = scratch.run(&["merge", "out"]);
    let message = stderr(&output);
    assert_eq!(output.status.code(), Some(1));
    assert!(message.len() < 400, "{} bytes", message.len());
    assert!(
        message.contains("missing shards 1/1000000, 3/1000000, ")
            && message.contains("and 999989 more"),
        "{message}"
    );
}
