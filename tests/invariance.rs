//! Settings that cannot change the physics must not change the numbers.

mod common;

use common::Scratch;
use sha2::{Digest, Sha256};
use std::ffi::OsStr;
use std::fs;
use std::path::Path;

/// The demo's text with `float_shape: true` added to the background whose
/// list entry starts with `name_line` (`  - name: ...`, keys indented by four).
fn with_float_shape(demo: &str, name_line: &str) -> String {
    let text = demo_text(demo);
    let replaced = text.replacen(name_line, &format!("{name_line}\n    float_shape: true"), 1);
    assert_ne!(replaced, text, "{demo} has no line {name_line:?}");
    replaced
}

fn demo_text(demo: &str) -> String {
    fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("scenarios")
            .join(demo),
    )
    .expect("read demo")
}

/// Runs `project` on `yaml` saved as `<dir>/scenario.yaml` (the same file name
/// for both runs, so no output can differ by it); returns stdout.
fn project(scratch: &Scratch, dir: &str, yaml: &str, extra: &[&str]) -> String {
    fs::create_dir_all(scratch.path.join(dir)).unwrap();
    fs::write(scratch.path.join(dir).join("scenario.yaml"), yaml).unwrap();
    let scenario = format!("{dir}/scenario.yaml");
    let out = format!("{dir}/out");
    let mut args = vec!["project", &scenario, "--out", &out, "--quiet"];
    args.extend_from_slice(extra);
    let output = scratch.run(&args);
    assert!(
        output.status.success(),
        "{dir}: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// The bytes of `<dir>/out/<name>` with the SHA-256 of `<dir>/scenario.yaml`
/// (which the provenance records, and which differs between the two texts)
/// replaced by a fixed mark.
fn output_without_scenario_digest(scratch: &Scratch, dir: &str, name: &OsStr) -> Vec<u8> {
    let scenario = fs::read(scratch.path.join(dir).join("scenario.yaml")).unwrap();
    let digest: String = Sha256::digest(&scenario)
        .iter()
        .map(|byte| format!("{byte:02x}"))
        .collect();
    let text = fs::read(scratch.path.join(dir).join("out").join(name)).unwrap();
    match String::from_utf8(text) {
        Ok(text) => {
            assert!(
                !name.to_string_lossy().ends_with(".json") || text.contains(&digest),
                "{name:?} records no scenario digest"
            );
            text.replace(&digest, "<scenario digest>").into_bytes()
        }
        Err(binary) => binary.into_bytes(),
    }
}

/// Asserts that every output file of the two runs has the same bytes, but
/// for the digest of the scenario text in their provenance.
fn assert_same_outputs(scratch: &Scratch, first: &str, second: &str) {
    let mut names: Vec<_> = fs::read_dir(scratch.path.join(first).join("out"))
        .unwrap()
        .map(|entry| entry.unwrap().file_name())
        .collect();
    names.sort();
    assert!(!names.is_empty());
    for name in names {
        let a = output_without_scenario_digest(scratch, first, &name);
        let b = output_without_scenario_digest(scratch, second, &name);
        assert!(a == b, "{name:?} differs between {first} and {second}");
    }
}

/// A flat shape has no parameter (its density is 1/(high - low) by
/// definition), so floating it is the same model: identical outputs.
#[test]
fn float_shape_on_a_flat_counting_window_changes_nothing() {
    let scratch = Scratch::new("float-flat-window");
    let plain = demo_text("counting_window.yaml");
    let floated = with_float_shape("counting_window.yaml", "  - name: residual radioactivity");
    let args = ["--toys", "200"];
    let stdout_plain = project(&scratch, "plain", &plain, &args);
    let stdout_floated = project(&scratch, "floated", &floated, &args);
    assert_same_outputs(&scratch, "plain", "floated");
    assert_eq!(
        stdout_plain.replace("plain/", ""),
        stdout_floated.replace("floated/", "")
    );
}

#[test]
fn float_shape_on_the_flat_background_of_a_peak_search_changes_nothing() {
    let scratch = Scratch::new("float-flat-peak");
    let plain = demo_text("narrow_peak.yaml");
    let floated = with_float_shape("narrow_peak.yaml", "  - name: mis-paired tracks");
    let args = ["--toys", "100"];
    project(&scratch, "plain", &plain, &args);
    project(&scratch, "floated", &floated, &args);
    assert_same_outputs(&scratch, "plain", "floated");
}

/// A polynomial of one term is a constant: its coefficient cancels in the
/// normalisation, so there is nothing to float.
#[test]
fn float_shape_on_a_one_term_polynomial_changes_nothing() {
    let scratch = Scratch::new("float-constant");
    let plain = demo_text("counting_window.yaml").replace(
        "    shape: {flat: {}}\n    norm",
        "    shape: {polynomial: {coefficients: [2.0]}}\n    norm",
    );
    let floated = plain.replacen(
        "  - name: residual radioactivity",
        "  - name: residual radioactivity\n    float_shape: true",
        1,
    );
    assert_ne!(plain, floated);
    let args = ["--asimov-only"];
    project(&scratch, "plain", &plain, &args);
    project(&scratch, "floated", &floated, &args);
    assert_same_outputs(&scratch, "plain", "floated");
}

/// The counting-window demo with its two rate lines replaced.
fn with_rates(signal: &str, background: &str) -> String {
    let text = demo_text("counting_window.yaml");
    let replaced = text
        .replacen("  events_per_day: 4.0", &format!("  {signal}"), 1)
        .replacen("    events_per_day: 100", &format!("    {background}"), 1);
    assert_eq!(replaced.matches("events_per_").count(), 2);
    assert!(!replaced.contains("events_per_day: 4.0"));
    replaced
}

/// Runs both texts through `project` (with an `--at` day) and asserts their
/// outputs and summaries are the same.
fn assert_same_projection(name: &str, first: &str, second: &str) {
    let scratch = Scratch::new(name);
    let args = ["--toys", "200", "--at", "100"];
    let stdout_first = project(&scratch, "first", first, &args);
    let stdout_second = project(&scratch, "second", second, &args);
    assert_same_outputs(&scratch, "first", "second");
    assert_eq!(
        stdout_first.replace("first/", ""),
        stdout_second.replace("second/", "")
    );
}

/// Rates per year are rates per day times 365.25 (the Julian year, common
/// practice): 4 and 100 per day are 1461 and 36525 per year, and the
/// division back is exact in floating point, so the outputs are identical.
#[test]
fn rates_per_year_give_the_outputs_of_rates_per_day() {
    let per_day = demo_text("counting_window.yaml");
    let per_year = with_rates("events_per_year: 1461", "events_per_year: 36525");
    assert_same_projection("rates-per-year", &per_day, &per_year);
}

/// Rates per week are rates per day times 7 (common practice).
#[test]
fn rates_per_week_give_the_outputs_of_rates_per_day() {
    let per_day = demo_text("counting_window.yaml");
    let per_week = with_rates("events_per_week: 28", "events_per_week: 700");
    assert_same_projection("rates-per-week", &per_day, &per_week);
}

/// Rates per kg·day with a detector of M = 8 kg are rates per day of
/// rate × M: 0.5 and 12.5 per kg·day are the demo's 4 and 100 per day (both
/// runs carry the same mass, so their limits per kg·day agree as well).
#[test]
fn rates_per_kg_day_give_the_outputs_of_rates_per_day_times_the_mass() {
    let detector = "detector: {mass_kg: 8}\n";
    let per_day = format!("{detector}{}", demo_text("counting_window.yaml"));
    let per_kg_day = format!(
        "{detector}{}",
        with_rates("events_per_kg_day: 0.5", "events_per_kg_day: 12.5")
    );
    assert_same_projection("rates-per-kg-day", &per_day, &per_kg_day);
}
