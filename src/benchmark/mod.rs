//! Benchmark of the pseudo-experiment engine on fixed built-in models.
//!
//! One toy is what an ensemble does for each pseudo-experiment: a Poisson draw
//! of every bin (and of the global observable), the fit with mu free, the fit
//! with mu = 0 and q0. The benchmark times toys on one and on two threads,
//! times the draws alone, measures peak memory in child processes, times an
//! Asimov-only projection as a whole process, (in a full run) a
//! background-only ensemble of ten million toys, and the background-only
//! scans of the look-elsewhere effect (`scan.rs`), alone with `--scan`.

mod memory;
pub mod models;
mod scan;
mod table;

pub use memory::{MemoryProbe, PROBE_FLAG, parse_probe, peak_resident_bytes, probe_in_process};
pub use scan::{
    SCAN_PROBE_FLAG, ScanBenchmark, ScanMemoryProbe, parse_scan_probe, probe_scan_in_process,
};
pub use table::{render, render_scan};

use crate::ensemble::{
    EnsemblePlan, Generator, background_only_q0_ensemble, discovery_ensemble, toy_stream,
};
use crate::likelihood::Likelihood;
use crate::model::Model;
use crate::scenario::ScenarioError;
use rayon::prelude::*;
use std::fmt;
use std::hint::black_box;
use std::process::Command;
use std::time::Instant;

/// Seed of every measured ensemble.
const SEED: u64 = 20_260_401;

/// Pseudo-experiments per unit of parallel work in the draw-only loop, as in the ensemble.
const CHUNK: usize = 256;

/// How long a run to make.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Length {
    /// Seconds: fewer toys, no ten-million-toy ensemble.
    Quick,
    /// A few minutes on two cores.
    Full,
}

impl Length {
    /// Toys per throughput measurement of the model with `bins` bins.
    fn toys(self, bins: usize) -> usize {
        let full = if bins >= 2000 { 20_000 } else { 200_000 };
        match self {
            Length::Quick => full / 10,
            Length::Full => full,
        }
    }

    /// Toys per exposure point in the memory growth check.
    fn memory_toys_per_point(self) -> usize {
        match self {
            Length::Quick => 200,
            Length::Full => 2_000,
        }
    }

    /// Toys at one exposure point in the memory ceiling check.
    fn memory_ceiling_toys(self) -> usize {
        match self {
            Length::Quick => 100_000,
            Length::Full => 1_000_000,
        }
    }

    /// Runs of each throughput measurement, of which the fastest counts: other
    /// work on the machine only ever slows a run down.
    fn repeats(self) -> usize {
        match self {
            Length::Quick => 2,
            Length::Full => 3,
        }
    }

    fn asimov_repeats(self) -> usize {
        match self {
            Length::Quick => 3,
            Length::Full => 7,
        }
    }

    /// Toys of the background-only ensemble, if it is run.
    fn background_only_toys(self) -> Option<usize> {
        match self {
            Length::Quick => None,
            Length::Full => Some(10_000_000),
        }
    }
}

/// Why the benchmark could not finish.
#[derive(Debug)]
pub enum BenchmarkError {
    /// A built-in scenario failed validation (a bug).
    Scenario(ScenarioError),
    Io {
        what: String,
        source: std::io::Error,
    },
    /// A child process failed or printed something unexpected.
    Child {
        command: String,
        message: String,
    },
    ThreadPool(String),
}

impl fmt::Display for BenchmarkError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            BenchmarkError::Scenario(source) => write!(f, "built-in benchmark scenario: {source}"),
            BenchmarkError::Io { what, source } => write!(f, "cannot {what}: {source}"),
            BenchmarkError::Child { command, message } => {
                write!(f, "benchmark step `{command}` failed: {message}")
            }
            BenchmarkError::ThreadPool(message) => {
                write!(f, "cannot start the benchmark's worker threads: {message}")
            }
        }
    }
}

impl std::error::Error for BenchmarkError {}

impl From<ScenarioError> for BenchmarkError {
    fn from(source: ScenarioError) -> BenchmarkError {
        BenchmarkError::Scenario(source)
    }
}

/// Wall-clock time of a number of toys.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Timing {
    pub toys: usize,
    pub seconds: f64,
}

impl Timing {
    pub fn per_second(&self) -> f64 {
        self.toys as f64 / self.seconds
    }
}

/// Throughput on one model.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelResult {
    /// Bins of all channels together.
    pub bins: usize,
    pub channels: usize,
    pub one_thread: Timing,
    pub two_threads: Timing,
    /// The draws of the same toys alone, on two threads.
    pub draws_only: Timing,
    /// Toys whose fits failed, over both runs.
    pub failed_fits: usize,
}

/// Everything the benchmark measured.
#[derive(Debug, Clone, PartialEq)]
pub struct BenchmarkReport {
    pub length: Length,
    pub models: Vec<ModelResult>,
    /// The 200-bin model on two threads with a fifth of the toys.
    pub fewer_toys: Timing,
    /// Wall-clock seconds of `runcast project --asimov-only` over 100 points, each run.
    pub asimov_process_seconds: Vec<f64>,
    pub memory: Vec<MemoryProbe>,
    /// Background-only ensemble of the 200-bin model on two threads, with its failed fits.
    pub background_only: Option<(Timing, usize)>,
    /// Background-only scans over the signal positions (look-elsewhere effect).
    pub scan: ScanBenchmark,
}

/// Runs only the look-elsewhere rows (`runcast bench --scan`).
pub fn run_scan(length: Length, step: &dyn Fn(&str)) -> Result<ScanBenchmark, BenchmarkError> {
    scan::run_scan(length, &pool(2)?, step)
}

/// Runs the benchmark, telling `step` what it is about to measure. Each
/// throughput is the fastest of a few runs of the same toys.
pub fn run(length: Length, step: &dyn Fn(&str)) -> Result<BenchmarkReport, BenchmarkError> {
    let one = pool(1)?;
    let two = pool(2)?;
    let mut results = Vec::new();
    for bins in models::BIN_COUNTS {
        let model = models::model(bins)?;
        results.push(measure_model(&model, length, (&one, &two), step));
    }
    let two_channels = models::two_channel_model()?;
    results.push(measure_model(&two_channels, length, (&one, &two), step));
    let model = models::model(200)?;
    let likelihood = Likelihood::new(&model);
    let fewer = length.toys(200) / 5;
    step(&format!("200 bins: {fewer} toys on 2 threads"));
    let fewer_toys = (0..length.repeats())
        .map(|_| two.install(|| time_toys(&likelihood, fewer)).0)
        .min_by(|a, b| a.seconds.total_cmp(&b.seconds))
        .expect("at least one run");

    step("Asimov-only projection of 100 exposure points, as a whole process");
    let asimov_process_seconds = time_asimov_process(length.asimov_repeats())?;

    let per_point = length.memory_toys_per_point();
    let ceiling = length.memory_ceiling_toys();
    let mut memory = Vec::new();
    for (points, toys) in [(1, per_point), (100, per_point), (100, 0), (1, ceiling)] {
        step(&format!(
            "peak memory: {points} exposure points x {toys} toys"
        ));
        memory.push(memory::probe_in_child(points, toys)?);
    }

    let background_only = match length.background_only_toys() {
        Some(toys) => {
            step(&format!(
                "background-only ensemble: {toys} toys on 2 threads"
            ));
            Some(two.install(|| time_background_only(&likelihood, toys)))
        }
        None => None,
    };
    let scan = scan::run_scan(length, &two, step)?;
    Ok(BenchmarkReport {
        length,
        models: results,
        fewer_toys,
        asimov_process_seconds,
        memory,
        background_only,
        scan,
    })
}

/// Toys per second of `model` on one and two threads (`pools`), and its
/// draws alone: the fastest of the length's repeats.
fn measure_model(
    model: &Model,
    length: Length,
    (one, two): (&rayon::ThreadPool, &rayon::ThreadPool),
    step: &dyn Fn(&str),
) -> ModelResult {
    let likelihood = Likelihood::new(model);
    let channels = model.channels.len();
    let bins: usize = model.channels.iter().map(|c| c.edges.len() - 1).sum();
    let toys = length.toys(bins);
    step(&format!(
        "{bins} bins in {channels} channel(s): {toys} toys on 1 and 2 threads"
    ));
    let mut fastest = Fastest::default();
    // Interleaved, so that other work on the machine falls on all three alike.
    for _ in 0..length.repeats() {
        let (one_thread, failed_one) = one.install(|| time_toys(&likelihood, toys));
        let (two_threads, failed_two) = two.install(|| time_toys(&likelihood, toys));
        let draws_only = two.install(|| time_draws(&likelihood, toys));
        fastest.keep(ModelResult {
            bins,
            channels,
            one_thread,
            two_threads,
            draws_only,
            failed_fits: failed_one + failed_two,
        });
    }
    fastest.0.expect("at least one run")
}

/// The fastest of several runs of each measurement of one model (same toys
/// each time, so the same failed fits).
#[derive(Default)]
struct Fastest(Option<ModelResult>);

impl Fastest {
    fn keep(&mut self, run: ModelResult) {
        let Some(best) = &mut self.0 else {
            self.0 = Some(run);
            return;
        };
        for (kept, new) in [
            (&mut best.one_thread, run.one_thread),
            (&mut best.two_threads, run.two_threads),
            (&mut best.draws_only, run.draws_only),
        ] {
            if new.seconds < kept.seconds {
                *kept = new;
            }
        }
    }
}

fn pool(threads: usize) -> Result<rayon::ThreadPool, BenchmarkError> {
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build()
        .map_err(|error| BenchmarkError::ThreadPool(error.to_string()))
}

/// `toys` full toys generated at nominal parameters (mu = 1), with their failed fits.
fn time_toys(likelihood: &Likelihood, toys: usize) -> (Timing, usize) {
    let plan = EnsemblePlan {
        toys: 0..toys,
        seed: SEED,
        progress: &|_| {},
    };
    let start = Instant::now();
    let outcome = discovery_ensemble(likelihood, models::LIVE_DAYS, 0, &plan);
    let seconds = start.elapsed().as_secs_f64();
    (Timing { toys, seconds }, outcome.failed_fits)
}

/// `toys` draws of the same pseudo-experiments, without fits.
fn time_draws(likelihood: &Likelihood, toys: usize) -> Timing {
    let start = Instant::now();
    let generator = Generator::new(
        likelihood,
        &likelihood.model().nominal_parameters(),
        models::LIVE_DAYS,
    );
    let checksum: f64 = (0..toys.div_ceil(CHUNK))
        .into_par_iter()
        .map_init(
            || generator.empty_dataset(),
            |data, chunk| {
                let mut sum = 0.0;
                for toy in chunk * CHUNK..((chunk + 1) * CHUNK).min(toys) {
                    generator.draw(&mut toy_stream(SEED, 0, toy), data);
                    sum += data.counts[0];
                }
                sum
            },
        )
        .sum();
    black_box(checksum);
    Timing {
        toys,
        seconds: start.elapsed().as_secs_f64(),
    }
}

/// `toys` toys generated with mu = 0, as for calibrating q0 by pseudo-experiments.
fn time_background_only(likelihood: &Likelihood, toys: usize) -> (Timing, usize) {
    let plan = EnsemblePlan {
        toys: 0..toys,
        seed: SEED,
        progress: &|_| {},
    };
    let start = Instant::now();
    let outcome = background_only_q0_ensemble(likelihood, models::LIVE_DAYS, 0, &plan);
    let seconds = start.elapsed().as_secs_f64();
    (Timing { toys, seconds }, outcome.failed_fits)
}

/// Wall-clock seconds of `runcast project FILE --asimov-only` on the 200-bin
/// model over 100 exposure points, from process start to exit, `repeats` times.
fn time_asimov_process(repeats: usize) -> Result<Vec<f64>, BenchmarkError> {
    time_process(
        &models::scenario_text(200, 100),
        "project",
        &["--asimov-only"],
        repeats,
    )
}

/// Wall-clock seconds of `runcast COMMAND FILE ARGUMENTS --quiet --out DIR`
/// on a scenario file holding `scenario`, from process start to exit,
/// `repeats` times, in a temporary folder removed afterwards.
fn time_process(
    scenario: &str,
    command: &str,
    arguments: &[&str],
    repeats: usize,
) -> Result<Vec<f64>, BenchmarkError> {
    let directory = std::env::temp_dir().join(format!("runcast-bench-{}", std::process::id()));
    let io = |what: &str| {
        let what = format!("{what} {}", directory.display());
        move |source| BenchmarkError::Io { what, source }
    };
    std::fs::create_dir_all(&directory).map_err(io("create"))?;
    let file = directory.join("scenario.yaml");
    std::fs::write(&file, scenario).map_err(io("write into"))?;
    let program = memory::current_program()?;
    let mut seconds = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let start = Instant::now();
        let output = Command::new(&program)
            .arg(command)
            .arg(&file)
            .args(arguments)
            .args(["--quiet", "--out"])
            .arg(directory.join("out"))
            .output()
            .map_err(io(&format!("run runcast {command} in")))?;
        seconds.push(start.elapsed().as_secs_f64());
        if !output.status.success() {
            return Err(BenchmarkError::Child {
                command: format!("runcast {command} {}", arguments.join(" ")),
                message: String::from_utf8_lossy(&output.stderr).trim().to_string(),
            });
        }
    }
    std::fs::remove_dir_all(&directory).map_err(io("remove"))?;
    Ok(seconds)
}
