//! `runcast replan` through the binary: the fit of the data taken against
//! closed forms, the conditional projection against its limits (nothing
//! left to draw; data at their expectation), the same bytes for any thread
//! count, and bad data files refused, located, with nothing written.

mod common;

use common::Scratch;
use serde_json::Value;
use std::fs;
use std::path::{Path, PathBuf};

/// One bin, a flat signal of 5 and a background of 100 events per live day
/// known exactly; 10 calendar days, all live.
const COUNTING: &str = "\
title: replan counting window (invented numbers)
observable: {name: x, unit: a.u., range: [0.0, 1.0], bin_width: 1.0}
signal: {events_per_day: 5.0, shape: {flat: {}}}
backgrounds:
  - {name: flat, events_per_day: 100.0, shape: {flat: {}}}
plan: {days: [10, 20, 40], toys: 200, seed: 5, targets: [3, 5]}
";

/// A peak on a flat background of free normalisation, 10 bins; the live
/// fraction 0.8.
const FREE_FLAT: &str = "\
title: replan free flat background (invented numbers)
observable: {name: m, unit: MeV, range: [0.0, 10.0], bin_width: 1.0}
signal: {events_per_day: 3.0, shape: {gaussian: {mean: 5.0, sigma: 0.5}}}
backgrounds:
  - {name: flat, events_per_day: 40.0, shape: {flat: {}}, norm_uncertainty: free}
schedule: {live_fraction: 0.8}
plan: {days: [20, 40, 80], toys: 50, seed: 9, targets: [3, 5]}
";

/// A peak of many events on a constrained falling background: Z of tens
/// of sigma, where the median of Z is close to Z_A.
const LARGE_COUNTS: &str = "\
title: replan large counts (invented numbers)
observable: {name: m, unit: MeV, range: [0.0, 20.0], bin_width: 1.0}
signal: {events_per_day: 400.0, shape: {gaussian: {mean: 10.0, sigma: 1.0}}}
backgrounds:
  - {name: continuum, events_per_day: 20000.0, shape: {exponential: {slope: -0.05}}, norm_uncertainty: 0.02}
plan: {days: [10, 20, 40, 80], toys: 400, seed: 11, targets: [3, 5]}
";

fn write(scratch: &Scratch, name: &str, text: &str) -> PathBuf {
    let path = scratch.path.join(name);
    fs::write(&path, text).unwrap();
    path
}

fn text(path: &Path) -> &str {
    path.to_str().unwrap()
}

/// Runs `replan` and returns its JSON document; panics with stderr on failure.
fn replan(scratch: &Scratch, args: &[&str]) -> Value {
    let out = scratch.path.join("out");
    let mut all = vec!["replan"];
    all.extend_from_slice(args);
    all.extend(["--quiet", "--out", text(&out)]);
    let output = scratch.run(&all);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&fs::read(out.join("replan.json")).unwrap()).unwrap()
}

/// `replan SCENARIO --data DATA --taken TAKEN --toys TOYS` through [`replan`].
fn replan_taken(scratch: &Scratch, scenario: &Path, data: &Path, taken: &str, toys: &str) -> Value {
    replan(
        scratch,
        &[
            text(scenario),
            "--data",
            text(data),
            "--taken",
            taken,
            "--toys",
            toys,
        ],
    )
}

fn number(value: &Value) -> f64 {
    value
        .as_f64()
        .unwrap_or_else(|| panic!("not a number: {value}"))
}

/// One bin with n = 1150 events after 10 live days, b = 1000 known exactly
/// and s = 50: mu-hat = (n - b)/s = 3 and q0 = 2[n ln(n/b) - (n - b)]
/// (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, eq. 97
/// with n for s + b), to 1e-8; the background's rate is the scenario's.
#[test]
fn a_single_bin_gives_the_closed_form_q0_and_signal_strength() {
    let scratch = Scratch::new("single-bin");
    let scenario = write(&scratch, "counting.yaml", COUNTING);
    let data = write(&scratch, "data.csv", "low,high,count\n0,1,1150\n");
    let document = replan_taken(&scratch, &scenario, &data, "10", "20");
    let observed = &document["observed"];
    let (n, b, s) = (1150.0_f64, 1000.0_f64, 50.0_f64);
    let q0 = 2.0 * (n * (n / b).ln() - (n - b));
    assert!((number(&observed["q0"]) - q0).abs() < 1e-8, "{observed}");
    assert!((number(&observed["z_local"]) - q0.sqrt()).abs() < 1e-8);
    assert!((number(&observed["fitted_mu"]) - (n - b) / s).abs() < 1e-8);
    let background = &observed["backgrounds"][0];
    assert_eq!(number(&background["fitted_per_day"]), 100.0);
    assert!(background["pull"].is_null());
}

/// A line inside the second of two bins (all but Phi(-10) of it), on a
/// flat background of free normalisation: the first bin is the off count
/// and the second the on count of an on/off measurement of ratio 1, so the
/// fitted background is n_off per bin, mu-hat = (n_on - n_off)/s and
/// q0 = 2[n_on ln(2 n_on/(n_on + n_off)) + n_off ln(2 n_off/(n_on + n_off))]
/// (Li and Ma, Astrophys. J. 272 (1983) 317, eq. 17 with alpha = 1), to 1e-8.
#[test]
fn two_bins_give_the_on_off_closed_forms() {
    const TWO_BINS: &str = "\
title: replan on/off in two bins (invented numbers)
observable: {name: m, unit: MeV, range: [0.0, 2.0], bin_width: 1.0}
signal: {events_per_day: 5.0, shape: {gaussian: {mean: 1.5, sigma: 0.05}}}
backgrounds:
  - {name: flat, events_per_day: 100.0, shape: {flat: {}}, norm_uncertainty: free}
plan: {days: [10, 20], toys: 20, seed: 3, targets: [3, 5]}
";
    let scratch = Scratch::new("on-off");
    let scenario = write(&scratch, "two.yaml", TWO_BINS);
    let data = write(&scratch, "data.csv", "low,high,count\n0,1,1000\n1,2,1120\n");
    let document = replan_taken(&scratch, &scenario, &data, "10", "20");
    let observed = &document["observed"];
    let (off, on, s, live_days) = (1000.0_f64, 1120.0_f64, 50.0_f64, 10.0);
    let total = on + off;
    let q0 = 2.0 * (on * (2.0 * on / total).ln() + off * (2.0 * off / total).ln());
    assert!((number(&observed["q0"]) - q0).abs() < 1e-8, "{observed}");
    assert!((number(&observed["fitted_mu"]) - (on - off) / s).abs() < 1e-8);
    let rate = number(&observed["backgrounds"][0]["fitted_per_day"]);
    assert!((rate - 2.0 * off / live_days).abs() < 1e-8 * rate, "{rate}");
}

/// A data file beyond the bound of `src/scenario/limits.rs` (64 MiB) is
/// refused naming the bound, before it is read.
#[test]
fn a_data_file_beyond_the_bound_is_refused() {
    let scratch = Scratch::new("too-large");
    let scenario = write(&scratch, "flat.yaml", FREE_FLAT);
    let data = scratch.path.join("huge.csv");
    let file = fs::File::create(&data).unwrap();
    file.set_len((64 << 20) + 1).unwrap();
    let output = scratch.run(&[
        "replan",
        text(&scenario),
        "--data",
        text(&data),
        "--taken",
        "25",
        "--out",
        "out",
    ]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    assert!(
        stderr.contains("huge.csv") && stderr.contains("67108864 bytes"),
        "{stderr}"
    );
    assert!(!scratch.path.join("out").exists());
}

/// With many counts the observed CLs limit from pseudo-experiments (asked
/// for by `--toys`) agrees with the asymptotic one (Cowan et al. 2011,
/// sec. 5: the asymptotic distributions of q~_mu hold for large samples):
/// n = 1030 on b = 1000, within 5%, three standard errors of a limit from
/// 4000 toys per tested value (binomial error of p_mu ~ 7% of CLs, times
/// sigma_mu/2 in the slope of ln CLs, 1.3% of the limit).
#[test]
fn the_toy_limit_of_many_counts_agrees_with_the_asymptotic_one() {
    let scratch = Scratch::new("toy-limit");
    let scenario = write(&scratch, "counting.yaml", COUNTING);
    let data = write(&scratch, "data.csv", "low,high,count\n0,1,1030\n");
    let document = replan_taken(&scratch, &scenario, &data, "10", "4000");
    let limit = &document["observed"]["limit"];
    let (toys, asymptotic) = (number(&limit["mu_toys"]), number(&limit["mu"]));
    assert!((toys / asymptotic - 1.0).abs() < 0.05, "{limit}");
    assert_eq!(number(&limit["toys"]), 4000.0);
}

/// A flat background of free normalisation and counts even across the
/// bins, so that the signal fits at its bound 0: the maximum-likelihood
/// rate is the count over the live days, exactly (the Poisson mean of one
/// count, common practice), 460 events over 0.8 x 25 = 20 live days.
#[test]
fn a_free_flat_background_fits_the_count_over_the_live_days() {
    let scratch = Scratch::new("free-flat");
    let scenario = write(&scratch, "flat.yaml", FREE_FLAT);
    let rows: String = (0..10)
        .map(|bin| format!("{bin},{},46\n", bin + 1))
        .collect();
    let data = write(&scratch, "data.csv", &format!("low,high,count\n{rows}"));
    let document = replan_taken(&scratch, &scenario, &data, "25", "20");
    let observed = &document["observed"];
    assert!(number(&observed["fitted_mu"]) < 1e-12, "{observed}");
    let rate = number(&observed["backgrounds"][0]["fitted_per_day"]);
    assert!((rate - 460.0 / 20.0).abs() <= 1e-12 * 23.0, "{rate}");
}

/// On the day the data stopped nothing is left to draw: every
/// pseudo-experiment of both hypotheses is the data taken, so the
/// conditional median and every quantile are the observed Z, and a target
/// it passes is reached that day.
#[test]
fn with_no_days_left_the_conditional_distribution_is_the_observed_z() {
    let scratch = Scratch::new("no-days-left");
    let scenario = write(&scratch, "counting.yaml", COUNTING);
    let data = write(&scratch, "data.csv", "low,high,count\n0,1,1150\n");
    let document = replan_taken(&scratch, &scenario, &data, "10", "50");
    let observed = number(&document["observed"]["z_local"]);
    assert!(observed > 3.0, "{observed}");
    for hypothesis in document["hypotheses"].as_array().unwrap() {
        let first = &hypothesis["points"][0];
        assert_eq!(number(&first["days"]), 10.0);
        let median = number(&first["z_median"]);
        assert!((median - observed).abs() < 1e-9, "{median} {observed}");
        for quantile in first["z_band"].as_array().unwrap() {
            assert!((number(quantile) - observed).abs() < 1e-9);
        }
        // A target the data taken reach is reached on the day they stopped,
        // never before (no day is solved inside the data taken).
        let three_sigma = &hypothesis["targets"][0];
        assert_eq!(number(&three_sigma["target"]), 3.0);
        assert_eq!(number(&three_sigma["median_days"]), 10.0, "{three_sigma}");
        // Later days do draw: the spread opens.
        let later = &hypothesis["points"][1]["z_band"];
        assert!(number(&later[3]) - number(&later[0]) > 0.1, "{later}");
    }
}

/// Data taken up to the plan's last day leave nothing to project: the
/// summary says so and names the key that would, rather than only printing
/// days not within a grid of one point.
#[test]
fn data_taken_to_the_end_of_the_plan_say_nothing_is_left() {
    let scratch = Scratch::new("plan-ended");
    let scenario = write(&scratch, "counting.yaml", COUNTING);
    let data = write(&scratch, "data.csv", "low,high,count\n0,1,4200\n");
    let summary_when_taken = |taken: &str| {
        succeed(
            &scratch,
            &[
                "replan",
                text(&scenario),
                "--data",
                text(&data),
                "--taken",
                taken,
                "--toys",
                "20",
                "--quiet",
                "--out",
                taken,
            ],
        )
    };
    let ended = summary_when_taken("40");
    assert!(
        ended.contains(
            "No day of the plan comes after the data taken (plan.days ends at 40 d): nothing is left to project; extend plan.days to look further."
        ),
        "{ended}"
    );
    let earlier = summary_when_taken("20");
    assert!(!earlier.contains("No day of the plan"), "{earlier}");
}

/// Data equal to the rounded expectation after 10 days (from `runcast
/// spectrum`'s expected counts) and the future drawn from the scenario: the
/// conditional median Z at each later day agrees with the unconditional
/// Asimov Z_A (the median of Z is Z_A with many counts; Cowan et al. 2011,
/// sec. 3.1) within 1%, which is above three standard errors of a median
/// of 400 toys (1.2533 sigma_Z / sqrt(400), common practice) at Z_A > 15.
#[test]
fn data_at_their_expectation_follow_the_asimov_forecast() {
    let scratch = Scratch::new("asimov");
    let scenario = write(&scratch, "large.yaml", LARGE_COUNTS);
    let spectrum = scratch.run(&[
        "spectrum",
        text(&scenario),
        "--days",
        "10",
        "--out",
        "spectrum",
    ]);
    assert!(spectrum.status.success());
    let csv = fs::read_to_string(scratch.path.join("spectrum/spectrum-10d.csv")).unwrap();
    let mut lines = csv.lines().filter(|line| !line.starts_with('#'));
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let column = |name: &str| header.iter().position(|c| *c == name).unwrap();
    let (low, high, expected) = (
        column("low"),
        column("high"),
        column("signal_plus_background"),
    );
    let mut rows = String::from("low,high,count\n");
    for line in lines {
        let cells: Vec<&str> = line.split(',').collect();
        let count = cells[expected].parse::<f64>().unwrap().round();
        rows += &format!("{},{},{count}\n", cells[low], cells[high]);
    }
    let data = write(&scratch, "data.csv", &rows);
    let document = replan(
        &scratch,
        &[
            text(&scenario),
            "--data",
            text(&data),
            "--taken",
            "10",
            "--future",
            "nominal",
        ],
    );
    let signal = &document["hypotheses"][0];
    assert_eq!(signal["hypothesis"], "signal");
    let points = signal["points"].as_array().unwrap();
    assert_eq!(points.len(), 4);
    for point in &points[1..] {
        let median = number(&point["z_median"]);
        let asimov = number(&point["z_asimov_forecast"]);
        assert!(asimov > 15.0, "{asimov}");
        assert!((median / asimov - 1.0).abs() < 0.01, "{point}");
    }
}

/// The same seed and data give the same bytes on 1, 2 and 3 threads, the
/// toy limit of `--toys` included: each pseudo-experiment has its own
/// stream (see DEVELOPERS.md).
#[test]
fn the_same_seed_gives_the_same_bytes_for_any_thread_count() {
    let scratch = Scratch::new("threads");
    let scenario = write(&scratch, "flat.yaml", FREE_FLAT);
    let rows: String = (0..10)
        .map(|bin| format!("{bin},{},{}\n", bin + 1, 40 + (bin * 7) % 11))
        .collect();
    let data = write(&scratch, "data.csv", &format!("low,high,count\n{rows}"));
    let files = |threads: &str| {
        let out = format!("out-{threads}");
        let output = scratch.run(&[
            "replan",
            text(&scenario),
            "--data",
            text(&data),
            "--taken",
            "25",
            "--toys",
            "30",
            "--threads",
            threads,
            "--quiet",
            "--out",
            &out,
        ]);
        assert!(
            output.status.success(),
            "{}",
            String::from_utf8_lossy(&output.stderr)
        );
        ["replan.svg", "replan.csv", "replan.json"]
            .map(|name| fs::read(scratch.path.join(&out).join(name)).unwrap())
    };
    let one = files("1");
    assert_eq!(one, files("2"));
    assert_eq!(one, files("3"));
}

/// Event values binned by runcast give the fit of the same counts written
/// as rows.
#[test]
fn event_values_are_binned_on_the_channels_bins() {
    let scratch = Scratch::new("events");
    let scenario = write(&scratch, "flat.yaml", FREE_FLAT);
    let counts = [3, 5, 4, 6, 9, 12, 5, 4, 3, 2];
    let rows: String = counts
        .iter()
        .enumerate()
        .map(|(bin, count)| format!("{bin},{},{count}\n", bin + 1))
        .collect();
    let binned = write(&scratch, "binned.csv", &format!("low,high,count\n{rows}"));
    let values: String = counts
        .iter()
        .enumerate()
        .flat_map(|(bin, &count)| {
            (0..count).map(move |k| format!("{}\n", bin as f64 + 0.05 * k as f64))
        })
        .collect();
    let events = write(&scratch, "events.txt", &format!("# invented\nm\n{values}"));
    let fit = |data: &Path| {
        let document = replan_taken(&scratch, &scenario, data, "5", "10");
        document["observed"].clone()
    };
    let from_events = fit(&events);
    assert_eq!(fit(&binned)["q0"], from_events["q0"]);
    assert!(number(&from_events["q0"]) > 0.0);
}

/// Bad data are refused with exit status 1 (2 for a command-line value),
/// one line naming the file, line and column, the value and what was
/// expected, and nothing written.
#[test]
fn bad_data_files_are_refused_where_they_are_wrong() {
    let scratch = Scratch::new("bad-data");
    let scenario = write(&scratch, "flat.yaml", FREE_FLAT);
    let good: String = (0..10)
        .map(|bin| format!("{bin},{},46\n", bin + 1))
        .collect();
    let cases: [(&str, String, &[&str]); 6] = [
        (
            "edges.csv",
            format!("low,high,count\n{}", good.replacen("0,1,46", "0,1.5,46", 1)),
            &["line 2, column high", "1.5", "expected its edge 1"],
        ),
        (
            "negative.csv",
            format!("low,high,count\n{}", good.replacen("3,4,46", "3,4,-2", 1)),
            &["line 5, column count", "-2", "a whole number of events"],
        ),
        (
            "fraction.csv",
            format!("low,high,count\n{}", good.replacen("3,4,46", "3,4,4.5", 1)),
            &["line 5, column count", "4.5"],
        ),
        (
            "rows.csv",
            format!("low,high,count\n{}", good.replacen("9,10,46\n", "", 1)),
            &["9 rows", "expected one per bin of the channel, 10"],
        ),
        (
            "header.csv",
            format!("lo,hi,n\n{good}"),
            &["line 1, column header", "expected low,high,count"],
        ),
        (
            "outside.txt",
            "m\n1.5\n12.5\n".to_string(),
            &[
                "line 3, column value",
                "12.5",
                "outside the channel's range",
            ],
        ),
    ];
    let out = scratch.path.join("out");
    for (name, contents, expected) in cases {
        let data = write(&scratch, name, &contents);
        let output = scratch.run(&[
            "replan",
            text(&scenario),
            "--data",
            text(&data),
            "--taken",
            "25",
            "--out",
            text(&out),
        ]);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(1), "{name}: {stderr}");
        assert_eq!(stderr.lines().count(), 1, "{stderr}");
        assert!(stderr.contains(name), "{stderr}");
        for part in expected {
            assert!(stderr.contains(part), "{name}: {part} not in {stderr}");
        }
        assert!(!out.exists(), "{name}");
    }
    let data = write(&scratch, "good.csv", &format!("low,high,count\n{good}"));
    let usage: [(&[&str], &str); 3] = [
        (
            &["--data", "muon=good.csv"],
            "no channel muon; its channels are m",
        ),
        (
            &["--data", "good.csv", "--taken", "2030-01-01"],
            "schedule.start",
        ),
        (&["--data", "good.csv", "--toys", "0"], "--toys"),
    ];
    for (args, expected) in usage {
        let mut all = vec!["replan", text(&scenario)];
        all.extend_from_slice(args);
        if !args.contains(&"--taken") {
            all.extend(["--taken", "25"]);
        }
        all.extend(["--out", text(&out)]);
        let output = scratch.run(&all);
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(2), "{stderr}");
        assert!(stderr.contains(expected), "{expected} not in {stderr}");
        assert!(!out.exists());
    }
    assert!(data.exists());
}

/// A FIFO as the data file is refused at once, named as a FIFO, instead of
/// waited on.
#[cfg(unix)]
#[test]
fn a_fifo_as_data_is_refused() {
    let scratch = Scratch::new("fifo");
    let scenario = write(&scratch, "flat.yaml", FREE_FLAT);
    let fifo = scratch.path.join("data.csv");
    let made = std::process::Command::new("mkfifo")
        .arg(&fifo)
        .status()
        .unwrap();
    assert!(made.success());
    let output = scratch.run(&[
        "replan",
        text(&scenario),
        "--data",
        text(&fifo),
        "--taken",
        "25",
        "--out",
        "out",
    ]);
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(output.status.code(), Some(1), "{stderr}");
    assert!(
        stderr.contains("FIFO") && stderr.contains("data.csv"),
        "{stderr}"
    );
    assert!(!scratch.path.join("out").exists());
}

/// Copies the narrow-peak demo and its 60 days of data into `scratch`.
fn narrow_peak_demo(scratch: &Scratch) {
    let demos = Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios");
    for name in ["narrow_peak.yaml", "narrow_peak_60d.csv"] {
        fs::copy(demos.join(name), scratch.path.join(name)).unwrap();
    }
}

/// Runs the command `args` in `scratch`; returns its stdout, panicking with
/// stderr on failure.
fn succeed(scratch: &Scratch, args: &[&str]) -> String {
    let output = scratch.run(args);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).unwrap()
}

/// The demo's re-plan with `extra` arguments, as shard `shard` into `out`.
fn demo_shard(scratch: &Scratch, shard: &str, out: &str, extra: &[&str]) {
    let mut args = vec![
        "replan",
        "narrow_peak.yaml",
        "--data",
        "narrow_peak_60d.csv",
        "--taken",
        "60",
        "--toys",
        "200",
        "--quiet",
        "--out",
        out,
        "--shard",
        shard,
    ];
    args.extend_from_slice(extra);
    succeed(scratch, &args);
}

/// The summary without the lines naming where it came from and went.
fn summary_lines(stdout: &str) -> Vec<&str> {
    stdout
        .lines()
        .filter(|line| !line.starts_with("wrote ") && !line.starts_with("merged the shards"))
        .collect()
}

/// Three shards of the demo's re-plan (goodness of fit, both conditional
/// projections, toy limit) merged give the unsharded files, byte for byte,
/// and the same summary: every toy has its own stream, the rest is
/// recomputed by the same code.
#[test]
fn merged_replan_shards_give_the_unsharded_bytes() {
    let scratch = Scratch::new("replan-shards");
    narrow_peak_demo(&scratch);
    let whole = succeed(
        &scratch,
        &[
            "replan",
            "narrow_peak.yaml",
            "--data",
            "narrow_peak_60d.csv",
            "--taken",
            "60",
            "--toys",
            "200",
            "--quiet",
            "--out",
            "whole",
        ],
    );
    for shard in ["1/3", "2/3", "3/3"] {
        demo_shard(&scratch, shard, "shards", &[]);
    }
    let merged = succeed(&scratch, &["merge", "shards"]);
    for name in ["replan.svg", "replan.csv", "replan.json"] {
        let read = |folder: &str| fs::read(scratch.path.join(folder).join(name)).unwrap();
        assert!(read("whole") == read("shards"), "{name} differs");
    }
    assert_eq!(summary_lines(&whole), summary_lines(&merged));
    assert!(summary_lines(&merged).len() > 10, "{merged}");
}

/// Runs `merge DIR`, expecting a refusal; returns its one line and checks
/// that nothing was written.
fn refused_merge(scratch: &Scratch, directory: &str) -> String {
    let output = scratch.run(&["merge", directory]);
    assert_eq!(output.status.code(), Some(1));
    assert!(!scratch.path.join(directory).join("replan.json").exists());
    assert!(
        !scratch
            .path
            .join(directory)
            .join("projection.json")
            .exists()
    );
    String::from_utf8(output.stderr).unwrap()
}

/// A shard of other data or of another day taken among the demo's is
/// refused at merge, naming the file and what differs.
#[test]
fn shards_of_other_data_or_another_day_are_refused_at_merge() {
    let scratch = Scratch::new("replan-shards-mixed");
    narrow_peak_demo(&scratch);
    let other: String = fs::read_to_string(scratch.path.join("narrow_peak_60d.csv"))
        .unwrap()
        .replacen("# ", "# changed: ", 1);
    fs::write(scratch.path.join("narrow_peak_60d_b.csv"), other).unwrap();
    demo_shard(&scratch, "1/2", "data", &[]);
    succeed(
        &scratch,
        &[
            "replan",
            "narrow_peak.yaml",
            "--data",
            "narrow_peak_60d_b.csv",
            "--taken",
            "60",
            "--toys",
            "200",
            "--quiet",
            "--out",
            "data",
            "--shard",
            "2/2",
        ],
    );
    let error = refused_merge(&scratch, "data");
    assert!(
        error.contains("2-of-2.runcast-shard")
            && error.contains("data of channel")
            && error.contains("narrow_peak_60d_b.csv"),
        "{error}"
    );

    demo_shard(&scratch, "1/2", "taken", &[]);
    succeed(
        &scratch,
        &[
            "replan",
            "narrow_peak.yaml",
            "--data",
            "narrow_peak_60d.csv",
            "--taken",
            "61",
            "--toys",
            "200",
            "--quiet",
            "--out",
            "taken",
            "--shard",
            "2/2",
        ],
    );
    let error = refused_merge(&scratch, "taken");
    assert!(
        error.contains("2-of-2.runcast-shard")
            && (error.contains("--taken 61 instead of 60")
                || error.contains("--taken 60 instead of 61")),
        "{error}"
    );
}

/// A projection shard and a re-plan shard of the same scenario are never
/// merged together.
#[test]
fn a_project_shard_beside_a_replan_shard_is_refused() {
    let scratch = Scratch::new("replan-project-shards");
    narrow_peak_demo(&scratch);
    demo_shard(&scratch, "1/2", "mixed", &[]);
    succeed(
        &scratch,
        &[
            "project",
            "narrow_peak.yaml",
            "--toys",
            "20",
            "--quiet",
            "--out",
            "mixed",
            "--shard",
            "2/2",
        ],
    );
    let error = refused_merge(&scratch, "mixed");
    assert!(error.contains("a shard of runcast"), "{error}");
    assert!(
        error.contains("project") && error.contains("replan"),
        "{error}"
    );
}
