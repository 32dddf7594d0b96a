//! Mutated scenarios, run as a user would: the shipped demos with numbers set
//! to extremes, lines dropped or repeated, text cut short, shapes swapped and
//! keys added, through `check`, `project --asimov-only` and, for some, a
//! projection with a few pseudo-experiments, `binning` and `spectrum`. Every
//! run must end in time with either one located error and no file written, or
//! success with outputs that hold no NaN (a null in `projection.json` only
//! where the schema allows one, none in `binning.json`).
//!
//! The mutations come from a fixed seed, so a failure repeats; its message
//! shows the mutated scenario.

mod common;

use common::Scratch;
use serde_json::Value;
use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

/// Mutated scenarios per run of the test.
const MUTANTS: usize = 240;
/// Every this many mutants also run a projection with pseudo-experiments,
/// `binning` and `spectrum`.
const WITH_TOYS_EVERY: usize = 4;
/// Far beyond the fraction of a second a demo takes: a run still going then
/// hangs or runs away with the request.
const TIMEOUT: Duration = Duration::from_secs(120);
/// Fixed seed of the mutations.
const SEED: u64 = 20_261_202;

/// Numbers a mutation puts in place of one in the text.
const EXTREMES: [&str; 18] = [
    "0",
    "-1",
    "1e-300",
    "1e-7",
    "0.5",
    "2",
    "1e+308",
    "-1e+308",
    "1.7976931348623157e+308",
    ".nan",
    "nan",
    ".inf",
    "-.inf",
    "100000",
    "1000000000000",
    "9223372036854775807",
    "18446744073709551615",
    "99999999999999999999999",
];

/// Shapes a mutation swaps in for one in the text.
const SHAPES: [&str; 7] = [
    "{flat: {}}",
    "{gaussian: {mean: 42.0, sigma: 0.6}}",
    "{gaussian: {mean: 1e+300, sigma: 1e-300}}",
    "{exponential: {slope: -0.03}}",
    "{polynomial: {coefficients: [1.0, 0.01]}}",
    "{polynomial: {coefficients: [5.25e-8, -5e-4, 1]}}",
    "{breit_wigner: {mean: 50.0, width: 2.0}}",
];

/// Keys of `projection.json` that may hold null (see `src/projection/result.rs`;
/// each `..._date` key stands beside its `..._days` key, null with it).
const NULLABLE: [&str; 31] = [
    "cl",
    "z_median",
    "z_band",
    "limit_median",
    "limit_band",
    "limit_asimov",
    "limit_asimov_band",
    "calibration",
    "p_toys",
    "z_toys",
    "asimov_days",
    "median_days",
    "toys",
    "p50_days",
    "p90_days",
    "saturation_z",
    "z_global_asimov",
    "z_global_median",
    "look_elsewhere",
    "global_asimov_days",
    "global_median_days",
    "asimov_date",
    "median_date",
    "p50_date",
    "p90_date",
    "global_asimov_date",
    "global_median_date",
    "mean_upcrossings",
    "mean_upcrossings_error",
    "direct_global_p",
    "trials_factor",
];

/// SplitMix64 (Steele, Lea and Flood, OOPSLA 2014): a small seeded generator.
struct Mixer(u64);

impl Mixer {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    /// A whole number below `n` (n > 0).
    fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }

    fn pick<'a, T>(&mut self, items: &'a [T]) -> &'a T {
        &items[self.below(items.len())]
    }
}

/// Byte spans of the numbers in `text` (digits with an optional sign,
/// decimal point and exponent, not part of a word).
fn number_spans(text: &str) -> Vec<(usize, usize)> {
    let bytes = text.as_bytes();
    let mut spans = Vec::new();
    let mut i = 0;
    while i < bytes.len() {
        let starts = bytes[i].is_ascii_digit()
            && (i == 0 || !(bytes[i - 1].is_ascii_alphanumeric() || bytes[i - 1] == b'_'));
        if !starts {
            i += 1;
            continue;
        }
        let start = if i > 0 && bytes[i - 1] == b'-' {
            i - 1
        } else {
            i
        };
        let mut end = i;
        while end < bytes.len()
            && (bytes[end].is_ascii_digit()
                || bytes[end] == b'.'
                || ((bytes[end] == b'e' || bytes[end] == b'E')
                    && end + 1 < bytes.len()
                    && (bytes[end + 1].is_ascii_digit()
                        || bytes[end + 1] == b'-'
                        || bytes[end + 1] == b'+'))
                || ((bytes[end] == b'-' || bytes[end] == b'+')
                    && (bytes[end - 1] == b'e' || bytes[end - 1] == b'E')))
        {
            end += 1;
        }
        spans.push((start, end));
        i = end;
    }
    spans
}

/// Byte spans of the one-key shape mappings `{kind: {...}}` in `text`.
fn shape_spans(text: &str) -> Vec<(usize, usize)> {
    let kinds = [
        "{flat:",
        "{gaussian:",
        "{exponential:",
        "{polynomial:",
        "{breit_wigner:",
    ];
    let mut spans = Vec::new();
    for kind in kinds {
        for (start, _) in text.match_indices(kind) {
            let mut depth = 0usize;
            for (offset, byte) in text[start..].bytes().enumerate() {
                match byte {
                    b'{' => depth += 1,
                    b'}' => {
                        depth -= 1;
                        if depth == 0 {
                            spans.push((start, start + offset + 1));
                            break;
                        }
                    }
                    _ => {}
                }
            }
        }
    }
    spans
}

/// One random change to `text`.
fn mutate(text: &str, mixer: &mut Mixer) -> String {
    let lines: Vec<&str> = text.lines().collect();
    let numbers = number_spans(text);
    if numbers.is_empty() {
        return text.to_string();
    }
    match mixer.below(7) {
        0..=2 => {
            let (start, end) = *mixer.pick(&numbers);
            format!(
                "{}{}{}",
                &text[..start],
                mixer.pick(&EXTREMES),
                &text[end..]
            )
        }
        3 => {
            let dropped = mixer.below(lines.len());
            lines
                .iter()
                .enumerate()
                .filter(|&(index, _)| index != dropped)
                .map(|(_, line)| format!("{line}\n"))
                .collect()
        }
        4 => {
            let repeated = mixer.below(lines.len());
            lines
                .iter()
                .enumerate()
                .flat_map(|(index, line)| {
                    let copies = if index == repeated { 2 } else { 1 };
                    std::iter::repeat_n(format!("{line}\n"), copies)
                })
                .collect()
        }
        5 => {
            let mut cut = mixer.below(text.len());
            while !text.is_char_boundary(cut) {
                cut -= 1;
            }
            text[..cut].to_string()
        }
        _ => {
            let spans = shape_spans(text);
            if spans.is_empty() || mixer.below(3) == 0 {
                let extra = *mixer.pick(&["float_shape: true", "norm_uncertainty: free"]);
                text.replace("  - name:", &format!("  - {extra}\n    name:"))
            } else {
                let (start, end) = *mixer.pick(&spans);
                format!("{}{}{}", &text[..start], mixer.pick(&SHAPES), &text[end..])
            }
        }
    }
}

/// Runs the binary in `directory`, killing it after [`TIMEOUT`]; None on a timeout.
fn run_with_timeout(directory: &Path, args: &[&str]) -> Option<Output> {
    let mut child = Command::new(env!("CARGO_BIN_EXE_runcast"))
        .args(args)
        .current_dir(directory)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start runcast");
    // Drain the pipes on threads so a chatty child never blocks on them.
    let mut stdout = child.stdout.take().unwrap();
    let mut stderr = child.stderr.take().unwrap();
    let out = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        std::io::Read::read_to_end(&mut stdout, &mut bytes).map(|_| bytes)
    });
    let err = std::thread::spawn(move || {
        let mut bytes = Vec::new();
        std::io::Read::read_to_end(&mut stderr, &mut bytes).map(|_| bytes)
    });
    let started = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("wait for runcast") {
            break status;
        }
        if started.elapsed() > TIMEOUT {
            let _ = child.kill();
            let _ = child.wait();
            return None;
        }
        std::thread::sleep(Duration::from_millis(5));
    };
    Some(Output {
        status,
        stdout: out.join().unwrap().unwrap_or_default(),
        stderr: err.join().unwrap().unwrap_or_default(),
    })
}

/// Null only under the keys of [`NULLABLE`] (never inside a list of numbers).
fn unexpected_nulls(value: &Value, key: &str, path: &str, found: &mut Vec<String>) {
    match value {
        Value::Null if !NULLABLE.contains(&key) => found.push(path.to_string()),
        Value::Array(items) => {
            for (index, item) in items.iter().enumerate() {
                let child_key = if item.is_object() { key } else { "" };
                unexpected_nulls(item, child_key, &format!("{path}[{index}]"), found);
            }
        }
        Value::Object(fields) => {
            for (name, field) in fields {
                unexpected_nulls(field, name, &format!("{path}.{name}"), found);
            }
        }
        _ => {}
    }
}

/// Sorted names of the entries of `directory`.
fn entries(directory: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(directory)
        .expect("read directory")
        .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

/// Whether one run succeeded (true) or ended in a located error (false), or
/// what is wrong with it.
fn outcome(directory: &Path, args: &[&str]) -> Result<bool, String> {
    let Some(output) = run_with_timeout(directory, args) else {
        return Err(format!("still running after {TIMEOUT:?}"));
    };
    let stderr = String::from_utf8_lossy(&output.stderr);
    let Some(code) = output.status.code() else {
        return Err(format!("killed by a signal: {stderr}"));
    };
    if code == 101 {
        return Err(format!("panicked: {stderr}"));
    }
    let errors: Vec<&str> = stderr
        .lines()
        .filter(|line| !line.starts_with("runcast: warning: "))
        .collect();
    if code != 0 {
        let located = errors.len() == 1 && errors[0].starts_with("runcast: error: ");
        let files = entries(directory);
        if !located || files != ["scenario.yaml"] {
            return Err(format!("exit {code}, files {files:?}, stderr: {stderr}"));
        }
        return Ok(false);
    }
    if !errors.is_empty() {
        return Err(format!("succeeded with stderr: {stderr}"));
    }
    let written = match args[0] {
        "project" => Some("projection.json"),
        "binning" => Some("binning.json"),
        _ => None,
    };
    if let Some(written) = written {
        let json = directory.join("out").join(written);
        let text = fs::read_to_string(&json).unwrap_or_default();
        let Ok(parsed) = serde_json::from_str::<Value>(&text) else {
            return Err(format!("no readable {}", json.display()));
        };
        let mut nulls = Vec::new();
        unexpected_nulls(&parsed, "", "", &mut nulls);
        if !nulls.is_empty() {
            return Err(format!("null (NaN) at {nulls:?}"));
        }
    }
    let outputs = directory.join("out");
    if outputs.exists() {
        fs::remove_dir_all(outputs).expect("remove outputs");
    }
    Ok(true)
}

/// The shipped demo scenarios.
fn demos() -> Vec<String> {
    let directory = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    let mut paths: Vec<PathBuf> = fs::read_dir(directory)
        .expect("scenarios/")
        .map(|entry| entry.unwrap().path())
        .filter(|path| path.extension().is_some_and(|e| e == "yaml"))
        .collect();
    paths.sort();
    paths
        .iter()
        .map(|path| fs::read_to_string(path).expect("read demo"))
        .collect()
}

#[test]
fn mutated_demos_end_in_a_located_error_or_finite_outputs() {
    let demos = demos();
    let mut mixer = Mixer(SEED);
    let mutants: Vec<(usize, String)> = (0..MUTANTS)
        .map(|index| {
            let mut text = mixer.pick(&demos).clone();
            for _ in 0..=mixer.below(3) {
                text = mutate(&text, &mut mixer);
            }
            (index, text)
        })
        .collect();
    let scratch = Scratch::new("fuzz");
    let failures = std::sync::Mutex::new(Vec::new());
    let (succeeded, refused) = (AtomicUsize::new(0), AtomicUsize::new(0));
    let next = AtomicUsize::new(0);
    std::thread::scope(|scope| {
        for _ in 0..2 {
            scope.spawn(|| {
                loop {
                    let slot = next.fetch_add(1, Ordering::Relaxed);
                    let Some((index, text)) = mutants.get(slot) else {
                        break;
                    };
                    let directory = scratch.path.join(format!("mutant-{index}"));
                    fs::create_dir_all(&directory).unwrap();
                    fs::write(directory.join("scenario.yaml"), text).unwrap();
                    let mut runs: Vec<&[&str]> = vec![
                        &["check", "scenario.yaml"],
                        &["project", "scenario.yaml", "--asimov-only", "--out", "out"],
                    ];
                    if index % WITH_TOYS_EVERY == 0 {
                        // A scan's background-only scans are few too (--lee-toys
                        // is refused without a scan).
                        runs.push(if text.contains("scan:") {
                            &[
                                "project",
                                "scenario.yaml",
                                "--toys",
                                "3",
                                "--lee-toys",
                                "3",
                                "--quiet",
                                "--out",
                                "out",
                            ]
                        } else {
                            &[
                                "project",
                                "scenario.yaml",
                                "--toys",
                                "3",
                                "--quiet",
                                "--out",
                                "out",
                            ]
                        });
                        runs.push(&["binning", "scenario.yaml", "--days", "30", "--out", "out"]);
                        runs.push(&["spectrum", "scenario.yaml", "--days", "30", "--out", "out"]);
                    }
                    for args in runs {
                        match outcome(&directory, args) {
                            Ok(true) => succeeded.fetch_add(1, Ordering::Relaxed),
                            Ok(false) => refused.fetch_add(1, Ordering::Relaxed),
                            Err(problem) => {
                                failures.lock().unwrap().push(format!(
                                    "mutant {index}, {args:?}: {problem}\n--- scenario ---\n{text}\n---"
                                ));
                                0
                            }
                        };
                    }
                }
            });
        }
    });
    let failures = failures.into_inner().unwrap();
    assert!(
        failures.is_empty(),
        "{} failing runs:\n{}",
        failures.len(),
        failures.join("\n")
    );
    // Both ends must be exercised, or the mutations test nothing.
    let (succeeded, refused) = (succeeded.into_inner(), refused.into_inner());
    assert!(
        succeeded >= MUTANTS / 10 && refused >= MUTANTS / 10,
        "{succeeded} runs succeeded, {refused} were refused"
    );
}
