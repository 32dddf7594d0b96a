//! `runcast levers` run as a user would: each lever's days against `runcast
//! project --asimov-only` on the rewritten scenario, the small-signal
//! elasticities of a counting window, a control-region background against
//! Cowan's closed form, saturation, a break, and usage errors.

mod common;

use common::Scratch;
use serde_json::Value;
use std::collections::BTreeMap;
use std::fs;

/// Runs the binary and returns its stdout, failing the test on a non-zero exit.
fn run_ok(scratch: &Scratch, args: &[&str]) -> String {
    let output = scratch.run(args);
    assert!(
        output.status.success(),
        "runcast {args:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).expect("UTF-8 stdout")
}

fn read_json(scratch: &Scratch, file: &str) -> Value {
    let bytes = fs::read(scratch.path.join(file)).unwrap_or_else(|e| panic!("{file}: {e}"));
    serde_json::from_slice(&bytes).expect("JSON")
}

/// `runcast levers FILE` with `extra` options into `out`, and its levers.json.
fn levers(scratch: &Scratch, file: &str, extra: &[&str]) -> (String, Value) {
    let mut args = vec!["levers", file, "--quiet", "--out", "levers-out"];
    args.extend(extra);
    let stdout = run_ok(scratch, &args);
    (stdout, read_json(scratch, "levers-out/levers.json"))
}

/// The lever of `input` in a levers.json.
fn lever<'a>(document: &'a Value, input: &str) -> &'a Value {
    document["levers"]
        .as_array()
        .unwrap()
        .iter()
        .find(|lever| lever["input"] == input)
        .unwrap_or_else(|| panic!("no lever {input}"))
}

fn number(value: &Value) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("{value} is not a number"))
}

/// A peak on a continuum with an input of every single-channel kind: signal
/// rate, yield uncertainty and width, a constrained background, one measured
/// in a control region, a shared uncertainty, the live fraction, a period
/// at half rate and a break; `values` replaces any of them by input name.
fn every_kind_of_input(values: &BTreeMap<String, f64>) -> String {
    let value = |name: &str, nominal: f64| values.get(name).copied().unwrap_or(nominal);
    let break_days = value("schedule.breaks[0].days", 14.0);
    format!(
        "title: every kind of input\n\
         shared_uncertainties: {{calibration: {}}}\n\
         observable: {{name: energy, unit: keV, range: [0.0, 100.0], bin_width: 2.0}}\n\
         signal:\n  events_per_day: {}\n  yield_uncertainty: {}\n  shared: [calibration]\n  shape: {{gaussian: {{mean: 50.0, sigma: {}}}}}\n\
         backgrounds:\n\
         \x20 - {{name: continuum, events_per_day: {}, norm_uncertainty: {}, shape: {{exponential: {{slope: -0.02}}}}}}\n\
         \x20 - {{name: flat, events_per_day: {}, control: {{ratio: {}}}, shape: {{flat: {{}}}}}}\n\
         schedule:\n  live_fraction: {}\n  start: 2027-01-01\n  periods: [{{days: {}, rate_scale: 0.5}}]\n  breaks: [{{from: 2027-03-01, to: 2027-03-{:02}}}]\n\
         plan: {{days: {{first: 2, last: 3000, points: 14, spacing: log}}, toys: 1, seed: 1, targets: [3, 5]}}\n",
        value("shared_uncertainties.calibration", 0.02),
        value("signal.events_per_day", 1.5),
        value("signal.yield_uncertainty", 0.1),
        value("signal.shape.gaussian.sigma", 2.0),
        value("backgrounds.continuum.events_per_day", 40.0),
        value("backgrounds.continuum.norm_uncertainty", 0.05),
        value("backgrounds.flat.events_per_day", 10.0),
        value("backgrounds.flat.control.ratio", 3.0),
        value("schedule.live_fraction", 0.9),
        value("schedule.periods[0].days", 20.0),
        break_days as u32,
    )
}

/// Asimov days of a `project --asimov-only` projection.json: per target,
/// per target in global significance (null without a scan), and to exclusion.
fn project_days(projection: &Value) -> (Vec<Value>, Vec<Value>, Value) {
    let rows = projection["days_to_target"].as_array().unwrap();
    let column = |key: &str| rows.iter().map(|row| row[key].clone()).collect();
    (
        column("asimov_days"),
        column("global_asimov_days"),
        projection["days_to_exclusion"]["asimov_days"].clone(),
    )
}

fn assert_same_day(lever_day: &Value, project_day: &Value, what: &str) {
    match (lever_day.as_f64(), project_day.as_f64()) {
        (Some(lever), Some(project)) => assert!(
            (lever - project).abs() <= 1e-9 * project.abs().max(1.0),
            "{what}: levers {lever}, project {project}"
        ),
        (None, None) => {}
        _ => panic!("{what}: levers {lever_day}, project {project_day}"),
    }
}

/// `runcast project FILE --asimov-only` into `out`, and its Asimov days.
fn project_asimov(scratch: &Scratch, file: &str, out: &str) -> (Vec<Value>, Vec<Value>, Value) {
    run_ok(
        scratch,
        &["project", file, "--asimov-only", "--quiet", "--out", out],
    );
    project_days(&read_json(scratch, &format!("{out}/projection.json")))
}

/// The claim of the command, on the file `scenario` writes (each input at
/// its nominal value unless `values` names it): its inputs are `expected`,
/// and every lever's days, local, global and to exclusion, are those of
/// `runcast project --asimov-only` on the file with that one input changed
/// (the same code path, so to 1e-9); a side levers finds not valid is
/// refused by `project` as well. Returns the levers summary and document.
fn assert_levers_are_project_on_the_changed_file(
    scratch: &Scratch,
    scenario: impl Fn(&BTreeMap<String, f64>) -> String,
    expected: &[&str],
) -> (String, Value) {
    fs::write(scratch.path.join("plan.yaml"), scenario(&BTreeMap::new())).unwrap();
    let (stdout, document) = levers(scratch, "plan.yaml", &[]);
    let names: Vec<&str> = document["levers"]
        .as_array()
        .unwrap()
        .iter()
        .map(|lever| lever["input"].as_str().unwrap())
        .collect();
    let mut found = names.clone();
    let mut expected = expected.to_vec();
    found.sort_unstable();
    expected.sort_unstable();
    assert_eq!(found, expected);

    let (targets, global, exclusion) = project_asimov(scratch, "plan.yaml", "nominal");
    let baseline = &document["baseline"];
    for index in 0..targets.len() {
        assert_same_day(&baseline["asimov_days"][index], &targets[index], "baseline");
        let what = "baseline global";
        assert_same_day(&baseline["global_asimov_days"][index], &global[index], what);
    }
    assert_same_day(
        &baseline["exclusion_days"],
        &exclusion,
        "baseline exclusion",
    );

    for name in names {
        let lever = lever(&document, name);
        for side in ["improved", "worsened"] {
            let values = BTreeMap::from([(name.to_string(), number(&lever[side]))]);
            fs::write(scratch.path.join("changed.yaml"), scenario(&values)).unwrap();
            let what = format!("{name} {side}");
            if lever["reasons"][side].is_string() {
                let refused = scratch.run(&["project", "changed.yaml", "--asimov-only", "--quiet"]);
                assert_eq!(refused.status.code(), Some(1), "{what} runs in project");
                continue;
            }
            let (targets, global, exclusion) = project_asimov(scratch, "changed.yaml", "changed");
            for index in 0..targets.len() {
                let days = &lever[format!("asimov_days_{side}")][index];
                assert_same_day(days, &targets[index], &what);
                let days = &lever[format!("global_asimov_days_{side}")][index];
                assert_same_day(days, &global[index], &format!("{what} global"));
            }
            assert_same_day(&lever[format!("exclusion_days_{side}")], &exclusion, &what);
        }
    }
    (stdout, document)
}

#[test]
fn every_lever_gives_the_days_of_project_asimov_only_on_the_changed_scenario() {
    let scratch = Scratch::new("levers-rewrite");
    assert_levers_are_project_on_the_changed_file(
        &scratch,
        every_kind_of_input,
        &[
            "signal.events_per_day",
            "signal.yield_uncertainty",
            "signal.shape.gaussian.sigma",
            "backgrounds.continuum.events_per_day",
            "backgrounds.continuum.norm_uncertainty",
            "backgrounds.flat.events_per_day",
            "backgrounds.flat.control.ratio",
            "shared_uncertainties.calibration",
            "schedule.live_fraction",
            "schedule.periods[0].days",
            "schedule.breaks[0].days",
        ],
    );
}

/// A line of unknown position seen by two volumes through one
/// detector-level signal per kg·day, scanned over five positions: the inner
/// volume with resolution terms and a background per kg·day, the outer with
/// resolution points, efficiency 0.95 and a background per day; `values`
/// replaces any input by name (each rate in the unit the file writes it),
/// a resolution's factor multiplying every number of its widths.
fn detector_level_line(values: &BTreeMap<String, f64>) -> String {
    let value = |name: &str, nominal: f64| values.get(name).copied().unwrap_or(nominal);
    let inner = value("channels.inner.resolution", 1.0);
    let outer = value("channels.outer.resolution", 1.0);
    format!(
        "title: detector-level line\n\
         signal:\n  events_per_kg_day: {}\n  yield_uncertainty: {}\n  shape: {{gaussian: {{mean: 100.0}}}}\n  scan: {{from: 60.0, to: 140.0, step: 20.0}}\n\
         channels:\n\
         \x20 - name: inner\n    observable: {{name: energy, unit: keV, range: [0.0, 200.0], bin_width: 2.0}}\n    detector: {{mass_kg: {}}}\n    signal_efficiency: {}\n    resolution: {{stochastic: {}, constant: {}, noise: {}}}\n    backgrounds: [{{name: flat, events_per_kg_day: {}, norm_uncertainty: {}, shape: {{flat: {{}}}}}}]\n\
         \x20 - name: outer\n    observable: {{name: energy, unit: keV, range: [0.0, 200.0], bin_width: 2.0}}\n    detector: {{mass_kg: {}}}\n    signal_efficiency: {}\n    resolution: {{points: [[0.0, {}], [200.0, {}]]}}\n    backgrounds: [{{name: falling, events_per_day: {}, shape: {{exponential: {{slope: -0.01}}}}}}]\n\
         schedule: {{live_fraction: {}}}\n\
         plan: {{days: {{first: 2, last: 3000, points: 14, spacing: log}}, toys: 1, seed: 1, targets: [3, 5]}}\n",
        value("signal.events_per_kg_day", 0.05),
        value("signal.yield_uncertainty", 0.1),
        value("channels.inner.detector.mass_kg", 5.0),
        value("channels.inner.signal_efficiency", 0.8),
        0.3 * inner,
        0.01 * inner,
        1.5 * inner,
        value("channels.inner.backgrounds.flat.events_per_kg_day", 2.0),
        value("channels.inner.backgrounds.flat.norm_uncertainty", 0.05),
        value("channels.outer.detector.mass_kg", 12.0),
        value("channels.outer.signal_efficiency", 0.95),
        2.0 * outer,
        6.0 * outer,
        value("channels.outer.backgrounds.falling.events_per_day", 30.0),
        value("schedule.live_fraction", 0.9),
    )
}

#[test]
fn a_detector_level_signal_has_the_inputs_of_its_file_each_acting_as_the_file_would() {
    // The rate per kg·day acts on both volumes, each volume's efficiency
    // and mass on its own signal (the mass on its background per kg·day
    // too), and a resolution factor on every width the curve gives: at the
    // signal position and along the scan, so the global days move with it.
    let scratch = Scratch::new("levers-detector-level");
    let (stdout, document) = assert_levers_are_project_on_the_changed_file(
        &scratch,
        detector_level_line,
        &[
            "signal.events_per_kg_day",
            "signal.yield_uncertainty",
            "channels.inner.signal_efficiency",
            "channels.inner.resolution",
            "channels.inner.backgrounds.flat.events_per_kg_day",
            "channels.inner.backgrounds.flat.norm_uncertainty",
            "channels.inner.detector.mass_kg",
            "channels.outer.signal_efficiency",
            "channels.outer.resolution",
            "channels.outer.backgrounds.falling.events_per_day",
            "channels.outer.detector.mass_kg",
            "schedule.live_fraction",
        ],
    );
    let background = lever(
        &document,
        "channels.inner.backgrounds.flat.events_per_kg_day",
    );
    assert_eq!(background["unit"], "events per kg·day");
    assert_eq!(number(&background["nominal"]), 2.0);
    let resolution = lever(&document, "channels.inner.resolution");
    assert_eq!(resolution["unit"], "× nominal");
    assert_eq!(
        (
            number(&resolution["nominal"]),
            number(&resolution["improved"])
        ),
        (1.0, 0.9)
    );
    // An efficiency of 0.95 raised by 10% would exceed 1: that side is not
    // a valid scenario, named, and the other side is computed.
    let efficiency = lever(&document, "channels.outer.signal_efficiency");
    let reason = efficiency["reasons"]["improved"].as_str().unwrap();
    assert!(
        reason.contains("channels.outer.signal_efficiency"),
        "{reason}"
    );
    assert!(efficiency["asimov_days_worsened"][0].is_number());
    assert!(
        stdout.contains("channels.outer.signal_efficiency improved to 1.04: not valid"),
        "{stdout}"
    );
}

/// One channel at the top level whose width follows the top-level
/// `resolution`; `values` replaces any input by name, the resolution's
/// factor multiplying its terms.
fn top_level_resolution(values: &BTreeMap<String, f64>) -> String {
    let value = |name: &str, nominal: f64| values.get(name).copied().unwrap_or(nominal);
    let factor = value("resolution", 1.0);
    format!(
        "title: one channel with a resolution\n\
         observable: {{name: energy, unit: keV, range: [0.0, 200.0], bin_width: 2.0}}\n\
         signal: {{events_per_day: {}, shape: {{gaussian: {{mean: 100.0}}}}}}\n\
         resolution: {{stochastic: {}, noise: {}}}\n\
         backgrounds: [{{name: flat, events_per_day: {}, shape: {{flat: {{}}}}}}]\n\
         schedule: {{live_fraction: {}}}\n\
         plan: {{days: {{first: 2, last: 3000, points: 14, spacing: log}}, toys: 1, seed: 1, targets: [3]}}\n",
        value("signal.events_per_day", 0.5),
        0.4 * factor,
        2.0 * factor,
        value("backgrounds.flat.events_per_day", 20.0),
        value("schedule.live_fraction", 0.8),
    )
}

#[test]
fn a_top_level_resolution_is_the_input_resolution() {
    let scratch = Scratch::new("levers-top-level-resolution");
    assert_levers_are_project_on_the_changed_file(
        &scratch,
        top_level_resolution,
        &[
            "signal.events_per_day",
            "resolution",
            "backgrounds.flat.events_per_day",
            "schedule.live_fraction",
        ],
    );
}

/// One counting window: `signal` and `background` events per live day, the
/// background's extra keys verbatim, the targets, a log grid to `last` days.
fn counting_window(signal: f64, background: f64, extra: &str, targets: &str, last: f64) -> String {
    format!(
        "title: counting window\n\
         observable: {{name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}}\n\
         signal: {{events_per_day: {signal}, shape: {{flat: {{}}}}}}\n\
         backgrounds:\n  - {{name: flat, events_per_day: {background}, shape: {{flat: {{}}}}{extra}}}\n\
         plan: {{days: {{first: 1, last: {last}, points: 24, spacing: log}}, toys: 1, seed: 1, targets: {targets}}}\n"
    )
}

#[test]
fn a_small_signal_over_a_known_background_scales_as_b_over_s_squared() {
    // Z ≈ s/√b for s ≪ b (small-signal limit of Cowan, Cranmer, Gross and
    // Vitells, EPJC 71 (2011) 1554, eq. 97); s and b grow with live days, so
    // the days to a fixed Z go as b/s²: elasticity +1 in the background
    // rate, −2 in the signal rate, here to 1% at s/b = 1e-3.
    let scratch = Scratch::new("levers-small-signal");
    fs::write(
        scratch.path.join("window.yaml"),
        counting_window(1.0, 1000.0, "", "[3, 5]", 1e6),
    )
    .unwrap();
    let (_, document) = levers(&scratch, "window.yaml", &[]);
    for index in 0..2 {
        let background =
            number(&lever(&document, "backgrounds.flat.events_per_day")["elasticity"][index]);
        let signal = number(&lever(&document, "signal.events_per_day")["elasticity"][index]);
        assert!(
            (background - 1.0).abs() < 0.01,
            "background elasticity {background}"
        );
        assert!((signal + 2.0).abs() < 0.02, "signal elasticity {signal}");
    }
}

/// Median discovery significance of a count over a background measured in a
/// control region, σ_b² = b/τ (G. Cowan, "Discovery sensitivity for a
/// counting experiment with background uncertainty", 2012; Cowan et al.,
/// EPJC 71 (2011) 1554): Z_A = sqrt(2[(s+b) ln((s+b)(b+σ²)/(b²+(s+b)σ²)) −
/// (b²/σ²) ln(1 + σ² s/(b(b+σ²)))]).
fn cowan_2012(s: f64, b: f64, sigma_b: f64) -> f64 {
    let variance = sigma_b * sigma_b;
    let first = (s + b) * ((s + b) * (b + variance) / (b * b + (s + b) * variance)).ln();
    let second = b * b / variance * (1.0 + variance * s / (b * (b + variance))).ln();
    (2.0 * (first - second)).sqrt()
}

/// Live days for `cowan_2012` to reach `target` with rates `s`, `b` per day
/// and a control region of ratio `tau` (σ_b² = b t/τ), by bisection in log t.
fn cowan_days(s: f64, b: f64, tau: f64, target: f64) -> f64 {
    let z = |t: f64| cowan_2012(s * t, b * t, (b * t / tau).sqrt());
    let (mut low, mut high): (f64, f64) = (1e-3, 1e7);
    while high / low > 1.0 + 1e-13 {
        let middle = (low * high).sqrt();
        if z(middle) >= target {
            high = middle;
        } else {
            low = middle;
        }
    }
    (low * high).sqrt()
}

#[test]
fn a_control_region_lever_follows_cowans_closed_form() {
    // The control-region likelihood is the one Cowan 2012's closed form
    // belongs to (a Poisson auxiliary count, τ = b/σ_b²); the elasticity over
    // the two changed ratios against the closed form at those two ratios, to 1e-4.
    let (s, b, tau) = (2.0, 20.0, 1.5);
    let scratch = Scratch::new("levers-control");
    let extra = format!(", control: {{ratio: {tau}}}");
    fs::write(
        scratch.path.join("on_off.yaml"),
        counting_window(s, b, &extra, "[3, 5]", 1e4),
    )
    .unwrap();
    let (_, document) = levers(&scratch, "on_off.yaml", &[]);
    let lever = lever(&document, "backgrounds.flat.control.ratio");
    let (improved, worsened) = (number(&lever["improved"]), number(&lever["worsened"]));
    assert!((improved - 1.1 * tau).abs() < 1e-12 && (worsened - 0.9 * tau).abs() < 1e-12);
    for (index, target) in [3.0, 5.0].into_iter().enumerate() {
        let days_improved = cowan_days(s, b, improved, target);
        let days_worsened = cowan_days(s, b, worsened, target);
        let listed = number(&lever["asimov_days_improved"][index]);
        assert!(
            (listed / days_improved - 1.0).abs() < 1e-5,
            "{listed} vs {days_improved}"
        );
        let closed = (days_worsened / days_improved).ln() / (worsened / improved).ln();
        let elasticity = number(&lever["elasticity"][index]);
        assert!(
            (elasticity - closed).abs() < 1e-4,
            "{elasticity} vs {closed}"
        );
        assert!(
            closed < 0.0,
            "a better measured background shortens the run"
        );
    }
}

#[test]
fn near_saturation_a_lever_says_when_a_target_becomes_reachable_or_not() {
    // With a relative normalisation uncertainty δ, Z_A saturates at s/(δ b)
    // (common practice; follows from Cowan et al. 2011). s/b = 0.1:
    // δ = 1/29 saturates at 2.9σ, never reaching 3σ, and 10% less (δ =
    // 0.031) saturates at 3.22σ; δ = 1/31 saturates at 3.1σ and 10% more at 2.82σ.
    let scratch = Scratch::new("levers-saturation");
    for (file, delta) in [("below.yaml", 1.0 / 29.0), ("above.yaml", 1.0 / 31.0)] {
        let extra = format!(", norm_uncertainty: {delta}");
        fs::write(
            scratch.path.join(file),
            counting_window(1.0, 10.0, &extra, "[3]", 1e5),
        )
        .unwrap();
    }
    let (stdout, below) = levers(&scratch, "below.yaml", &[]);
    assert!(below["baseline"]["asimov_days"][0].is_null());
    assert!(
        below["baseline"]["reasons"]["3σ"]
            .as_str()
            .unwrap()
            .starts_with("never")
    );
    let delta = lever(&below, "backgrounds.flat.norm_uncertainty");
    assert!(delta["asimov_days_improved"][0].is_number());
    assert!(delta["days_saved"][0].is_null());
    assert_eq!(
        delta["reasons"]["days_saved[0]"],
        "reachable only if improved"
    );
    assert!(stdout.contains("reachable only if improved"), "{stdout}");

    let (stdout, above) = levers(&scratch, "above.yaml", &[]);
    let delta = lever(&above, "backgrounds.flat.norm_uncertainty");
    assert!(above["baseline"]["asimov_days"][0].is_number());
    assert!(delta["asimov_days_worsened"][0].is_null());
    assert!(
        delta["reasons"]["asimov_days_worsened[0]"]
            .as_str()
            .unwrap()
            .starts_with("never")
    );
    assert_eq!(delta["reasons"]["days_lost[0]"], "unreachable if worsened");
    assert!(stdout.contains("unreachable if worsened"), "{stdout}");
}

#[test]
fn shortening_a_break_by_k_days_saves_k_days_after_it() {
    // A break stops data-taking: every day after it moves by the days it
    // lasts (elementary). 28 days shortened by 10%: 3 days, saved exactly
    // (to the root finder's 1e-7 of a day's relative precision).
    let scratch = Scratch::new("levers-break");
    let text = counting_window(1.0, 10.0, "", "[3, 5]", 2000.0).replace(
        "plan:",
        "schedule: {start: 2027-01-01, breaks: [{from: 2027-01-11, to: 2027-02-07}]}\nplan:",
    );
    fs::write(scratch.path.join("pause.yaml"), text).unwrap();
    let (_, document) = levers(&scratch, "pause.yaml", &[]);
    let pause = lever(&document, "schedule.breaks[0].days");
    assert_eq!(
        (number(&pause["nominal"]), number(&pause["improved"])),
        (28.0, 25.0)
    );
    let break_end = 10.0 + 28.0;
    let mut after = 0;
    for index in 0..2 {
        let nominal = number(&document["baseline"]["asimov_days"][index]);
        assert!(
            nominal > break_end,
            "3σ and 5σ come after the break: {nominal}"
        );
        for key in ["days_saved", "days_lost"] {
            let days = number(&pause[key][index]);
            assert!((days - 3.0).abs() < 1e-7 * nominal, "{key} {days}");
        }
        after += 1;
    }
    assert_eq!(after, 2);
}

#[test]
fn an_invalid_change_is_reported_and_the_other_side_still_computed() {
    // A live fraction of 1 cannot be raised: the improved side is refused by
    // the scenario's own validation, named, and the worsened one computed.
    let scratch = Scratch::new("levers-invalid");
    fs::write(
        scratch.path.join("window.yaml"),
        counting_window(1.0, 10.0, "", "[3]", 1e4),
    )
    .unwrap();
    let (stdout, document) = levers(&scratch, "window.yaml", &[]);
    let live = lever(&document, "schedule.live_fraction");
    let reason = live["reasons"]["improved"].as_str().unwrap();
    assert!(reason.contains("schedule.live_fraction"), "{reason}");
    assert!(live["asimov_days_worsened"][0].is_number());
    // One-sided: days ∝ 1/live fraction, so the elasticity is −1 exactly
    // (up to the root finder's precision).
    assert!((number(&live["elasticity"][0]) + 1.0).abs() < 1e-5);
    assert!(
        stdout.contains("schedule.live_fraction improved to 1.1: not valid"),
        "{stdout}"
    );
}

#[test]
fn set_and_step_change_one_input_as_asked() {
    let scratch = Scratch::new("levers-set");
    fs::write(
        scratch.path.join("window.yaml"),
        counting_window(1.0, 10.0, "", "[3]", 1e4),
    )
    .unwrap();
    let (_, document) = levers(
        &scratch,
        "window.yaml",
        &[
            "--step",
            "20%",
            "--set",
            "backgrounds.flat.events_per_day=4",
            "--step",
            "signal.events_per_day=0.25",
        ],
    );
    assert_eq!(document["step"], "20%");
    let background = lever(&document, "backgrounds.flat.events_per_day");
    assert_eq!(
        (
            number(&background["improved"]),
            number(&background["worsened"])
        ),
        (4.0, 16.0)
    );
    let signal = lever(&document, "signal.events_per_day");
    assert_eq!(
        (number(&signal["improved"]), number(&signal["worsened"])),
        (1.25, 0.75)
    );
    let live = lever(&document, "schedule.live_fraction");
    assert_eq!(number(&live["worsened"]), 0.8);
}

#[test]
fn bad_steps_and_unknown_inputs_are_usage_errors_that_write_nothing() {
    let scratch = Scratch::new("levers-usage");
    fs::write(
        scratch.path.join("window.yaml"),
        counting_window(1.0, 10.0, "", "[3]", 1e4),
    )
    .unwrap();
    for (args, expected) in [
        (
            vec!["--set", "backgrounds.radon.events_per_day=2"],
            "the inputs are: signal.events_per_day, backgrounds.flat.events_per_day, schedule.live_fraction",
        ),
        (
            vec!["--set", "signal.events_per_day=fast"],
            "\"fast\" is not a finite number",
        ),
        (vec!["--step", "150%"], "above 0% and below 100%"),
        (vec!["--step", "ten"], "expected a percentage"),
        (vec!["--target", "-1"], "--target [-1]"),
    ] {
        let stderr = usage_error(&scratch, &args);
        assert!(stderr.contains(expected), "{args:?}: {stderr}");
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
    }
}

#[test]
fn the_two_channel_demo_names_inputs_by_channel_and_writes_its_three_files() {
    let scratch = Scratch::new("levers-channels");
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/two_channel_detector.yaml"
    );
    let (stdout, document) = levers(&scratch, demo, &[]);
    for name in [
        "channels.inner.signal.events_per_day",
        "channels.outer.backgrounds.outer continuum (simulated).norm_uncertainty",
        "shared_uncertainties.exposure_scale",
    ] {
        lever(&document, name);
        assert!(stdout.contains(name), "{name} missing from the summary");
    }
    let mut files: Vec<String> = fs::read_dir(scratch.path.join("levers-out"))
        .unwrap()
        .map(|entry| entry.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    files.sort();
    assert_eq!(files, ["levers.csv", "levers.json", "levers.svg"]);
    // Sorted by days saved at the first target, most first.
    let saved: Vec<f64> = document["levers"]
        .as_array()
        .unwrap()
        .iter()
        .map(|lever| number(&lever["days_saved"][0]))
        .collect();
    assert!(saved.windows(2).all(|pair| pair[0] >= pair[1]), "{saved:?}");
    let csv = fs::read_to_string(scratch.path.join("levers-out/levers.csv")).unwrap();
    assert_eq!(
        csv.lines().count(),
        2 + saved.len(),
        "provenance, header, one row per lever"
    );
}

/// Toy-median days of a `project` projection.json: per target, and to exclusion.
fn project_toy_days(projection: &Value) -> (Vec<Value>, Value) {
    let targets = projection["days_to_target"]
        .as_array()
        .unwrap()
        .iter()
        .map(|row| row["median_days"].clone())
        .collect();
    (
        targets,
        projection["days_to_exclusion"]["median_days"].clone(),
    )
}

#[test]
fn toy_medians_are_those_of_project_with_the_same_toys_and_seed() {
    // `--toys` projects the nominal plan and both sides of the three levers
    // that save most days at the first target as `runcast project --toys N
    // --seed S` does on the changed scenario: the same code, the same
    // seeded streams (keyed by seed, ensemble and exposure, never by the
    // plan's place among the levers) and the same day solver, so the
    // numbers are equal, not merely close.
    let scratch = Scratch::new("levers-toys");
    fs::write(
        scratch.path.join("plan.yaml"),
        every_kind_of_input(&BTreeMap::new()),
    )
    .unwrap();
    let toys = ["--toys", "30", "--seed", "11"];
    let (stdout, document) = levers(&scratch, "plan.yaml", &toys);
    let inputs: Vec<&str> = document["toys"]["inputs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|input| input.as_str().unwrap())
        .collect();
    let first_three: Vec<&str> = document["levers"].as_array().unwrap()[..3]
        .iter()
        .map(|lever| lever["input"].as_str().unwrap())
        .collect();
    assert_eq!(inputs, first_three);
    assert!(
        stdout.contains(&format!("Toy-median days for: {}", inputs.join(", "))),
        "{stdout}"
    );
    let project = |file: &str| {
        let mut args = vec!["project", file, "--quiet", "--out", "projected"];
        args.extend(toys);
        run_ok(&scratch, &args);
        project_toy_days(&read_json(&scratch, "projected/projection.json"))
    };
    let (targets, exclusion) = project("plan.yaml");
    assert_eq!(document["toys"]["median_days"], Value::Array(targets));
    assert_eq!(document["toys"]["exclusion_median_days"], exclusion);
    for name in inputs {
        let lever = lever(&document, name);
        for side in ["improved", "worsened"] {
            let values = BTreeMap::from([(name.to_string(), number(&lever[side]))]);
            fs::write(
                scratch.path.join("changed.yaml"),
                every_kind_of_input(&values),
            )
            .unwrap();
            let (targets, exclusion) = project("changed.yaml");
            let what = format!("{name} {side}");
            assert!(targets.iter().all(Value::is_number), "{what}: {targets:?}");
            assert_eq!(
                lever[format!("toy_median_days_{side}")],
                Value::Array(targets),
                "{what}"
            );
            assert_eq!(
                lever[format!("exclusion_toy_median_days_{side}")],
                exclusion,
                "{what}"
            );
        }
    }
    // The levers below the first three have no toy-median days.
    let fourth = &document["levers"][3];
    assert!(fourth.get("toy_median_days_improved").is_none(), "{fourth}");
}

#[test]
fn toy_medians_give_the_same_bytes_on_one_and_two_threads() {
    let scratch = Scratch::new("levers-toy-threads");
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scenarios/two_channel_detector.yaml"
    );
    for threads in ["1", "2"] {
        let out = format!("threads-{threads}");
        run_ok(
            &scratch,
            &[
                "levers",
                demo,
                "--toys",
                "40",
                "--seed",
                "3",
                "--threads",
                threads,
                "--quiet",
                "--out",
                &out,
            ],
        );
    }
    for file in ["levers.csv", "levers.json", "levers.svg"] {
        let one = fs::read(scratch.path.join("threads-1").join(file)).unwrap();
        let two = fs::read(scratch.path.join("threads-2").join(file)).unwrap();
        assert!(one == two, "{file} differs between 1 and 2 threads");
    }
    let csv = fs::read_to_string(scratch.path.join("threads-1/levers.csv")).unwrap();
    let header = csv.lines().nth(1).unwrap();
    assert!(header.contains("toy_median_days_saved_3sigma"), "{header}");
}

#[test]
fn toys_without_a_number_or_a_seed_without_toys_are_usage_errors() {
    let scratch = Scratch::new("levers-toy-usage");
    fs::write(
        scratch.path.join("window.yaml"),
        counting_window(1.0, 10.0, "", "[3]", 1e4),
    )
    .unwrap();
    for (args, expected) in [
        (vec!["--toys", "0"], "--toys: must be at least 1"),
        (vec!["--seed", "4"], "--toys"),
        (vec!["--toys", "20000000"], "pseudo-experiments per point"),
    ] {
        let stderr = usage_error(&scratch, &args);
        assert!(stderr.contains(expected), "{args:?}: {stderr}");
    }
}

/// `levers window.yaml ARGS` in `scratch`: a usage error (exit 2) that
/// wrote nothing; its stderr.
fn usage_error(scratch: &Scratch, args: &[&str]) -> String {
    let mut all = vec!["levers", "window.yaml", "--quiet", "--out", "out"];
    all.extend(args);
    let output = scratch.run(&all);
    let stderr = String::from_utf8_lossy(&output.stderr).into_owned();
    assert_eq!(output.status.code(), Some(2), "{args:?}: {stderr}");
    assert!(!scratch.path.join("out").exists(), "{args:?} wrote files");
    stderr
}
