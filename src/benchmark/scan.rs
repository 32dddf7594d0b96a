//! The look-elsewhere rows: background-only scan pseudo-experiments (one
//! background-only fit and one signal fit per position each) on the 200-bin
//! model and on a detector of two channels of 100 bins fitted jointly, their
//! rate on two threads, and the peak memory of scans over more positions and
//! more toys, each in a child process; then `reach` at full size and
//! `levers` on the shipped scan demos, as whole processes.

use super::memory::{current_program, peak_resident_bytes};
use super::{BenchmarkError, Length, SEED, Timing, models};
use crate::ensemble::{EnsemblePlan, look_elsewhere_ensemble};
use crate::likelihood::Likelihood;
use crate::look_elsewhere::REFERENCE_LEVEL;
use crate::model::Model;
use crate::scenario::Scenario;
use std::process::Command;
use std::time::Instant;

/// The hidden flag of a child process measuring the memory of one scan ensemble.
pub const SCAN_PROBE_FLAG: &str = "--scan-memory-probe";

/// Positions of the measured scan.
pub const POSITIONS: usize = 100;

/// What the scan rows measured.
#[derive(Debug, Clone, PartialEq)]
pub struct ScanBenchmark {
    pub positions: usize,
    /// Scan pseudo-experiments on two threads, the fastest run.
    pub two_threads: Timing,
    /// Scans with a failed fit.
    pub failed_fits: usize,
    /// The same on the two-channel detector (`two_channel_scan_scenario`).
    pub two_channels: Timing,
    pub two_channel_failed_fits: usize,
    /// Peak resident memory of one scan ensemble in a child process.
    pub memory: Vec<ScanMemoryProbe>,
    /// Wall-clock seconds of `runcast reach` on two volumes of 700 bins over
    /// 1,400 positions at 3 exposures as a whole process, each run.
    pub reach_process_seconds: Vec<f64>,
    /// Wall-clock seconds of `runcast levers` (Asimov only) on each of
    /// `LEVERS_DEMOS` as a whole process, each run.
    pub levers_process_seconds: Vec<(&'static str, Vec<f64>)>,
}

/// The shipped scan demos whose levers the benchmark times: (file name, text).
pub const LEVERS_DEMOS: [(&str, &str); 2] = [
    (
        "two_volume_line.yaml",
        include_str!("../../scenarios/two_volume_line.yaml"),
    ),
    (
        "unknown_line.yaml",
        include_str!("../../scenarios/unknown_line.yaml"),
    ),
];

/// Peak resident memory of one ensemble of `toys` scans over `positions`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScanMemoryProbe {
    pub positions: usize,
    pub toys: usize,
    pub peak_bytes: u64,
}

impl Length {
    /// Scan pseudo-experiments of the rate measurement.
    fn scan_toys(self) -> usize {
        match self {
            Length::Quick => 1_000,
            Length::Full => 10_000,
        }
    }

    /// Scan pseudo-experiments of the smaller memory probes (the larger has ten times more).
    fn scan_memory_toys(self) -> usize {
        match self {
            Length::Quick => 100,
            Length::Full => 1_000,
        }
    }
}

/// The 200-bin benchmark model with its signal scanned over [10, 90] at
/// `positions` evenly spaced positions.
fn scan_scenario(positions: usize) -> Result<Scenario, BenchmarkError> {
    let step = 80.0 / (positions - 1) as f64;
    let text = models::scenario_text(200, 2).replace(
        "shape: {gaussian: {mean: 50.0, sigma: 2.0}}}",
        &format!(
            "shape: {{gaussian: {{mean: 50.0, sigma: 2.0}}}}, scan: {{from: 10.0, to: 90.0, step: {step}}}}}"
        ),
    );
    Ok(Scenario::from_yaml(&text)?)
}

/// Two channels of [`models::BINS_PER_CHANNEL`] bins seeing one
/// detector-level line (10 events per day in each, a resolution of 2
/// growing to 3 over the scan) scanned over [10, 90] at [`POSITIONS`]
/// positions, each channel with its continuum, 10% background factor and
/// floated slope, and one 5% factor shared by both backgrounds.
fn two_channel_scan_scenario() -> Result<Scenario, BenchmarkError> {
    let bin_width = 100.0 / models::BINS_PER_CHANNEL as f64;
    let step = 80.0 / (POSITIONS - 1) as f64;
    let channel = |name: &str| {
        format!(
            "  - name: {name}\n    observable: {{name: x, unit: a.u., range: [0.0, 100.0], bin_width: {bin_width}}}\n    \
             resolution: {{points: [[10.0, 2.0], [90.0, 3.0]]}}\n    backgrounds:\n      - {{name: continuum, \
             events_per_day: 1000, shape: {{exponential: {{slope: -0.02}}}}, norm_uncertainty: 0.1, float_shape: true, \
             shared: [calibration]}}\n"
        )
    };
    let text = format!(
        "title: benchmark line in two channels (invented numbers)\nshared_uncertainties: {{calibration: 0.05}}\n\
         signal:\n  events_per_day: 10\n  shape: {{gaussian: {{mean: 50.0}}}}\n  \
         scan: {{from: 10.0, to: 90.0, step: {step}}}\nchannels:\n{}{}\
         plan: {{days: [10], toys: 1000, seed: 20260401, targets: [3, 5]}}\n",
        channel("first"),
        channel("second")
    );
    Ok(Scenario::from_yaml(&text)?)
}

/// Bins per channel of the reach row.
pub const REACH_BINS_PER_CHANNEL: usize = 700;

/// Positions of the reach row.
pub const REACH_POSITIONS: usize = 1_400;

/// The exposures of the reach row, in calendar days.
pub const REACH_DAYS: [&str; 3] = ["182", "365", "730"];

/// Two volumes of [`REACH_BINS_PER_CHANNEL`] bins (5 kg and 12 kg, falling
/// continua with 5% normalisation uncertainties, resolutions growing with
/// the position) seeing one line per kg·day with a 10% yield uncertainty,
/// scanned at [`REACH_POSITIONS`] positions: the run request of a
/// two-volume line search at its full size.
fn reach_scenario_text() -> String {
    let width = 1400.0 / REACH_BINS_PER_CHANNEL as f64;
    let step = 1200.0 / (REACH_POSITIONS - 1) as f64;
    let channel = |name: &str,
                   mass: u32,
                   efficiency: f64,
                   resolution: &str,
                   rate: f64,
                   slope: f64| {
        format!(
            "  - name: {name}\n    observable: {{name: energy, unit: keV, range: [0.0, 1400.0], bin_width: {width}}}\n    \
             detector: {{mass_kg: {mass}}}\n    signal_efficiency: {efficiency}\n    resolution: {resolution}\n    \
             backgrounds:\n      - {{name: {name} continuum, events_per_kg_day: {rate}, shape: {{exponential: {{slope: {slope}}}}}, \
             norm_uncertainty: 0.05}}\n"
        )
    };
    format!(
        "title: benchmark reach of a line in two volumes (invented numbers)\n\
         signal:\n  events_per_kg_day: 0.02\n  shape: {{gaussian: {{mean: 640.0}}}}\n  \
         scan: {{from: 100.0, to: 1300.0, step: {step}}}\n  yield_uncertainty: 0.1\nchannels:\n{}{}\
         schedule: {{live_fraction: 0.9}}\nplan: {{days: [10, 730], toys: 10, seed: 20261204, targets: [3, 5]}}\n",
        channel(
            "inner",
            5,
            0.9,
            "{stochastic: 0.3, constant: 0.005, noise: 1.5}",
            2.0,
            -0.002
        ),
        channel(
            "outer",
            12,
            0.75,
            "{points: [[100.0, 2.5], [1000.0, 9.0]]}",
            8.0,
            -0.003
        ),
    )
}

/// Runs `toys` background-only scans over `positions` of the 200-bin model
/// at the benchmark's exposure; returns their time and failed fits.
fn time_scans(positions: usize, toys: usize) -> Result<(Timing, usize), BenchmarkError> {
    time_scans_of(&scan_scenario(positions)?, toys)
}

/// Runs `toys` background-only scans of `scenario`; their time and failed fits.
fn time_scans_of(scenario: &Scenario, toys: usize) -> Result<(Timing, usize), BenchmarkError> {
    let model = Model::from_scenario(scenario);
    let likelihood = Likelihood::new(&model);
    let scan = scenario
        .signal_scan()
        .expect("the benchmark scenario scans");
    let plan = EnsemblePlan {
        toys: 0..toys,
        seed: SEED,
        progress: &|_| {},
    };
    let start = Instant::now();
    let outcome = look_elsewhere_ensemble(
        &likelihood,
        &scan,
        models::LIVE_DAYS,
        0,
        &plan,
        REFERENCE_LEVEL,
    );
    let seconds = start.elapsed().as_secs_f64();
    Ok((Timing { toys, seconds }, outcome.failed_fits))
}

/// The scan rows: the rate on `two` threads (the fastest of the length's
/// repeats), then the peak memory of 100 positions x T toys, 1000 positions
/// x T toys and 100 positions x 10 T toys, each in a child process.
pub fn run_scan(
    length: Length,
    two: &rayon::ThreadPool,
    step: &dyn Fn(&str),
) -> Result<ScanBenchmark, BenchmarkError> {
    let toys = length.scan_toys();
    step(&format!(
        "background-only scans: {toys} toys x {POSITIONS} positions on 2 threads"
    ));
    let mut fastest: Option<(Timing, usize)> = None;
    for _ in 0..length.repeats() {
        let run = two.install(|| time_scans(POSITIONS, toys))?;
        if fastest.is_none_or(|(best, _)| run.0.seconds < best.seconds) {
            fastest = Some(run);
        }
    }
    let (two_threads, failed_fits) = fastest.expect("at least one run");
    step(&format!(
        "background-only scans, two channels of {} bins: {toys} toys x {POSITIONS} positions on 2 threads",
        models::BINS_PER_CHANNEL
    ));
    let detector = two_channel_scan_scenario()?;
    let mut fastest: Option<(Timing, usize)> = None;
    for _ in 0..length.repeats() {
        let run = two.install(|| time_scans_of(&detector, toys))?;
        if fastest.is_none_or(|(best, _)| run.0.seconds < best.seconds) {
            fastest = Some(run);
        }
    }
    let (two_channels, two_channel_failed_fits) = fastest.expect("at least one run");
    let per = length.scan_memory_toys();
    let mut memory = Vec::new();
    for (positions, toys) in [
        (POSITIONS, per),
        (10 * POSITIONS, per),
        (POSITIONS, 10 * per),
    ] {
        step(&format!(
            "peak memory: scans of {positions} positions x {toys} toys"
        ));
        memory.push(probe_in_child(positions, toys)?);
    }
    step(&format!(
        "reach, Asimov only, 2 channels x {REACH_BINS_PER_CHANNEL} bins, {REACH_POSITIONS} positions, {} exposures, 2 threads, as a whole process",
        REACH_DAYS.len()
    ));
    let mut arguments = Vec::new();
    for day in REACH_DAYS {
        arguments.extend(["--days", day]);
    }
    arguments.extend(["--threads", "2"]);
    let reach_process_seconds = super::time_process(
        &reach_scenario_text(),
        "reach",
        &arguments,
        length.repeats(),
    )?;
    let mut levers_process_seconds = Vec::new();
    for (name, text) in LEVERS_DEMOS {
        step(&format!(
            "levers, Asimov only, scenarios/{name}, 2 threads, as a whole process"
        ));
        let seconds = super::time_process(text, "levers", &["--threads", "2"], length.repeats())?;
        levers_process_seconds.push((name, seconds));
    }
    Ok(ScanBenchmark {
        reach_process_seconds,
        levers_process_seconds,
        positions: POSITIONS,
        two_threads,
        failed_fits,
        two_channels,
        two_channel_failed_fits,
        memory,
    })
}

/// Runs, in this process, `toys` scans over `positions` and returns the peak
/// resident memory afterwards: what a child started with [`SCAN_PROBE_FLAG`] does.
pub fn probe_scan_in_process(positions: usize, toys: usize) -> Result<u64, BenchmarkError> {
    time_scans(positions, toys)?;
    peak_resident_bytes()
}

fn probe_in_child(positions: usize, toys: usize) -> Result<ScanMemoryProbe, BenchmarkError> {
    let argument = format!("{positions}:{toys}");
    let command = format!("runcast bench {SCAN_PROBE_FLAG} {argument}");
    let output = Command::new(current_program()?)
        .args(["bench", SCAN_PROBE_FLAG, &argument])
        .output()
        .map_err(|source| BenchmarkError::Io {
            what: format!("start the scan memory probe {argument}"),
            source,
        })?;
    let text = String::from_utf8_lossy(&output.stdout);
    match text.trim().parse() {
        Ok(peak_bytes) if output.status.success() => Ok(ScanMemoryProbe {
            positions,
            toys,
            peak_bytes,
        }),
        _ => Err(BenchmarkError::Child {
            command,
            message: format!(
                "expected a byte count, got {:?} ({})",
                text.trim(),
                String::from_utf8_lossy(&output.stderr).trim()
            ),
        }),
    }
}

/// Parses the POSITIONS:TOYS argument of [`SCAN_PROBE_FLAG`]: at least the
/// 3 positions of a scan.
pub fn parse_scan_probe(argument: &str) -> Option<(usize, usize)> {
    let (positions, toys) = argument.split_once(':')?;
    let positions = positions.parse().ok().filter(|&p| p >= 3)?;
    Some((positions, toys.parse().ok()?))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_benchmark_scan_has_the_positions_asked_for() {
        for positions in [POSITIONS, 10 * POSITIONS] {
            let scan = scan_scenario(positions).unwrap().signal_scan().unwrap();
            assert_eq!(scan.len(), positions);
        }
        let detector = two_channel_scan_scenario().unwrap();
        assert_eq!(detector.signal_scan().unwrap().len(), POSITIONS);
        assert_eq!(detector.signal_scan().unwrap().channels(), 2);
    }

    #[test]
    fn parses_positions_and_toys() {
        assert_eq!(parse_scan_probe("100:500"), Some((100, 500)));
        assert_eq!(parse_scan_probe("2:500"), None);
        assert_eq!(parse_scan_probe("100"), None);
    }
}
