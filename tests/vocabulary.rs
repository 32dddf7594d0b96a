//! One vocabulary: every CSV column and JSON key the commands write is in
//! the documented list of docs/outputs.md, where each output file has a
//! block of its names (`<target>` and `<channel>` standing for a target and
//! a channel's name; JSON keys as paths, `[]` for the elements of a list).

mod common;

use common::Scratch;
use serde_json::Value;
use std::collections::BTreeMap;
use std::fs;
use std::path::Path;

/// The documented names of each output file, from the ```columns blocks.
fn documented() -> BTreeMap<String, Vec<String>> {
    let text = fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("docs/outputs.md"))
        .expect("docs/outputs.md");
    let mut lists = BTreeMap::new();
    let mut current: Option<(String, Vec<String>)> = None;
    for line in text.lines() {
        if let Some(file) = line.strip_prefix("```columns ") {
            current = Some((file.trim().to_string(), Vec::new()));
        } else if line.starts_with("```") {
            if let Some((file, names)) = current.take() {
                lists.insert(file, names);
            }
        } else if let Some((_, names)) = current.as_mut() {
            names.push(line.trim().to_string());
        }
    }
    lists
}

/// True when `name` is `pattern` with each `<...>` standing for one or
/// more characters of a name (letters, digits, `.`, `_`, `-`).
fn matches(pattern: &str, name: &str) -> bool {
    match pattern.find('<') {
        None => pattern == name,
        Some(open) => {
            let close = pattern[open..]
                .find('>')
                .map(|i| open + i)
                .expect("closing >");
            let (head, tail) = (&pattern[..open], &pattern[close + 1..]);
            let Some(rest) = name.strip_prefix(head) else {
                return false;
            };
            (1..=rest.len()).any(|length| {
                rest.is_char_boundary(length)
                    && rest[..length]
                        .chars()
                        .all(|c| c.is_alphanumeric() || matches!(c, '.' | '_' | '-'))
                    && matches(tail, &rest[length..])
            })
        }
    }
}

/// Every key path of a JSON document, `[]` for list elements; the inside of
/// `provenance` is not part of the list.
fn key_paths(value: &Value, prefix: &str, paths: &mut Vec<String>) {
    match value {
        Value::Object(map) => {
            for (key, inner) in map {
                let path = if prefix.is_empty() {
                    key.clone()
                } else {
                    format!("{prefix}.{key}")
                };
                paths.push(path.clone());
                if path != "provenance" {
                    key_paths(inner, &path, paths);
                }
            }
        }
        Value::Array(items) => {
            for item in items {
                key_paths(item, &format!("{prefix}[]"), paths);
            }
        }
        _ => {}
    }
}

/// The names a written file holds: its CSV header or its JSON key paths.
fn written_names(path: &Path) -> Vec<String> {
    let text = fs::read_to_string(path).unwrap();
    if path.extension().is_some_and(|ext| ext == "json") {
        let mut paths = Vec::new();
        key_paths(&serde_json::from_str(&text).unwrap(), "", &mut paths);
        paths
    } else {
        let header = text.lines().find(|line| !line.starts_with('#')).unwrap();
        header.split(',').map(str::to_string).collect()
    }
}

#[test]
fn every_column_and_key_written_is_documented() {
    let scratch = Scratch::new("vocabulary");
    let demos = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    for entry in fs::read_dir(&demos).unwrap() {
        let entry = entry.unwrap();
        fs::copy(entry.path(), scratch.path.join(entry.file_name())).unwrap();
    }
    let runs: [&[&str]; 11] = [
        &[
            "project",
            "unknown_line.yaml",
            "--toys",
            "40",
            "--lee-toys",
            "20",
            "--calibrate",
            "20",
            "--at",
            "7",
            "--out",
            "scan",
        ],
        &[
            "project",
            "two_channel_detector.yaml",
            "--toys",
            "40",
            "--at",
            "7",
            "--out",
            "channels",
        ],
        &[
            "project",
            "dated_run.yaml",
            "--toys",
            "40",
            "--at",
            "30",
            "--out",
            "dated",
        ],
        &[
            "reach",
            "unknown_line.yaml",
            "--days",
            "10",
            "--toys",
            "5",
            "--out",
            "reach",
        ],
        &[
            "compare",
            "narrow_peak.yaml",
            "narrow_peak_upgrade.yaml",
            "--toys",
            "20",
            "--out",
            "compare",
        ],
        &[
            "spectrum",
            "two_channel_detector.yaml",
            "--days",
            "10",
            "--out",
            "spectrum",
        ],
        &[
            "binning",
            "narrow_peak.yaml",
            "--days",
            "10",
            "--out",
            "binning",
        ],
        &[
            "levers",
            "two_channel_detector.yaml",
            "--toys",
            "20",
            "--out",
            "levers",
        ],
        &[
            "replan",
            "narrow_peak.yaml",
            "--data",
            "narrow_peak_60d.csv",
            "--taken",
            "60",
            "--toys",
            "20",
            "--out",
            "replan",
        ],
        &[
            "reach",
            "two_volume_line.yaml",
            "--days",
            "30",
            "--out",
            "volumes",
        ],
        &[
            "compare",
            "two_volume_line.yaml",
            "two_volume_line_inner.yaml",
            "--asimov-only",
            "--reach-days",
            "30",
            "--out",
            "compare_scans",
        ],
    ];
    for args in runs {
        let output = scratch.run(args);
        assert!(
            output.status.success(),
            "{args:?}: {}",
            String::from_utf8_lossy(&output.stderr)
        );
    }
    let lists = documented();
    let mut checked = 0;
    for folder in [
        "scan",
        "channels",
        "dated",
        "reach",
        "compare",
        "spectrum",
        "binning",
        "levers",
        "volumes",
        "compare_scans",
        "replan",
    ] {
        for entry in fs::read_dir(scratch.path.join(folder)).unwrap() {
            let path = entry.unwrap().path();
            let name = path.file_name().unwrap().to_string_lossy().to_string();
            if !(name.ends_with(".csv") || name.ends_with(".json")) {
                continue;
            }
            let (file, documented) = lists
                .iter()
                .find(|(file, _)| matches(file, &name))
                .unwrap_or_else(|| panic!("{name} has no list in docs/outputs.md"));
            for written in written_names(&path) {
                assert!(
                    documented.iter().any(|pattern| matches(pattern, &written)),
                    "{folder}/{name} writes `{written}`, which docs/outputs.md does not list under {file}"
                );
                checked += 1;
            }
        }
    }
    assert!(checked > 300, "only {checked} names checked");
}

#[test]
fn placeholders_stand_for_one_name() {
    assert!(matches("p_toys_<target>sigma", "p_toys_3sigma"));
    assert!(matches("p_toys_<target>sigma", "p_toys_2.5sigma"));
    assert!(!matches("p_toys_<target>sigma", "p_toys_sigma"));
    assert!(matches("spectrum-<days>.csv", "spectrum-3d-30d.csv"));
    assert!(!matches("z_asimov", "z_asimov_q02_3"));
}
