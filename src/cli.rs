//! Command-line arguments.
//!
//! The doc comments of the argument types are the `--help` text (clap), where
//! `<D>` or `<scenario file stem>` stand for values the user supplies; they are
//! not HTML, and backticks would show in the help.
#![allow(rustdoc::invalid_html_tags)]

use crate::error::Error;
use clap::error::ErrorKind;
use clap::{Args, Parser, Subcommand};
use runcast::calendar::DayArgument;
use runcast::projection::ShardSpec;
use runcast::report::{DEFAULT_DPI, DPI_RANGE, FigureFormat};
use std::ops::Range;
use std::path::PathBuf;

/// Parses the command line. A request for help or the version prints it and
/// exits here, as does a bare `runcast` (help on stderr, exit 2); any other
/// parse error becomes one [`Error::Usage`] line: the parser's message up to
/// its first blank line, joined.
pub fn parse() -> Result<Cli, Error> {
    Cli::try_parse().map_err(|error| {
        if !error.use_stderr()
            || error.kind() == ErrorKind::DisplayHelpOnMissingArgumentOrSubcommand
        {
            error.exit();
        }
        let rendered = error.to_string();
        let message: Vec<&str> = rendered
            .lines()
            .map(str::trim)
            .take_while(|line| !line.is_empty())
            .collect();
        Error::Usage(message.join(" ").trim_start_matches("error: ").to_string())
    })
}

/// runcast: how long a search must run to reach evidence or discovery.
///
/// Reads a scenario (signal, backgrounds, rates per day, schedule), runs seeded
/// pseudo-experiments with profile-likelihood fits at each exposure, cross-checks
/// them with asymptotic (Asimov) formulae, and writes SVG projections, CSV and JSON.
#[derive(Debug, Parser)]
#[command(
    name = "runcast",
    version = concat!(env!("CARGO_PKG_VERSION"), " (build ", env!("RUNCAST_BUILD_ID"), ")"),
    about,
    long_about
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Debug, Subcommand)]
pub enum Command {
    /// Project the significance against days of data-taking and the days to each target.
    ///
    /// Writes projection.svg, probability.svg, limits.svg, projection.csv and
    /// projection.json to output/<scenario file stem>/ (or --out) and prints a
    /// summary table: days to each target, days to exclusion, and (with
    /// --calibrate) toy-calibrated against asymptotic significances.
    Project(ProjectArgs),
    /// Validate a scenario and print its rates, S/B at the peak and asymptotic days to target.
    Check {
        /// The scenario file (YAML).
        scenario: PathBuf,
    },
    /// Draw one pseudo-dataset after D calendar days and plot it against the expectation.
    ///
    /// Writes spectrum-<D>d.svg and spectrum-<D>d.csv to output/<scenario file stem>/
    /// (or --out); with --days repeated, one figure with the exposures side by side,
    /// named spectrum-<D1>d-<D2>d.svg. Each panel shows the full range and, beside
    /// it, the signal region (5 widths either side of the signal's peak, or
    /// --window LO:HI). Same seed and days, same pseudo-data.
    Spectrum(SpectrumArgs),
    /// The reach over signal.scan: expected limits and discovery rates against the position.
    ///
    /// For every scan position and each --days: the expected CLs limit on the
    /// signal rate (events per live day; Asimov median and bands, and with
    /// --toys the pseudo-experiment median and bands) and the rates for which
    /// the median local and global significance reach each target. Writes
    /// reach.svg, reach.csv and reach.json to output/<scenario file stem>/ (or --out).
    Reach(ReachArgs),
    /// Scan the bin width of the shape fit and a counting window around the signal peak.
    ///
    /// Prints the Asimov significance of each, recommends a bin width (the coarsest
    /// within 1% of the best) and the best window, and writes binning.svg and
    /// binning.json to output/<scenario file stem>/ (or --out).
    Binning(BinningArgs),
    /// Compare run plans: each scenario projected as `project` does, on one page.
    ///
    /// Writes compare.svg, compare-probability.svg, compare-limits.svg,
    /// compare.csv and compare.json to output/compare/ (or --out) and prints one
    /// row per plan: days to each target and to exclusion, and the difference
    /// to the first plan. The plans must share targets and confidence level.
    Compare(CompareArgs),
    /// What each input a user can act on is worth in days: each improved and worsened by a step.
    ///
    /// For every input (signal and background rates, normalisation, yield and
    /// shared uncertainties, detector masses, the signal's width, the live
    /// fraction, reduced-rate periods and breaks): the Asimov days to each
    /// target and to exclusion with the input improved and worsened, the days
    /// saved and lost, and the elasticity d ln(days)/d ln(input). Writes
    /// levers.svg, levers.csv and levers.json to output/<scenario file stem>/
    /// (or --out) and prints the table, sorted by days saved at the first target.
    Levers(LeversArgs),
    /// Re-plan from the data taken so far: what they say, and how much longer.
    ///
    /// Fits the data (one file per channel: rows low,high,count or one event
    /// value per line) taken until --taken: signal strength, local Z, each
    /// background's rate against the plan, goodness of fit, observed limit.
    /// Then projects onward keeping those counts and drawing only the future,
    /// with and without the signal: Z bands, P(Z >= target) and the days to
    /// each target. Writes replan.svg, replan.csv and replan.json to
    /// output/<scenario file stem>/ (or --out).
    Replan(ReplanArgs),
    /// Write a commented template scenario to FILE (never overwrites).
    New {
        /// Where to write the template.
        file: PathBuf,
    },
    /// Measure the pseudo-experiment engine on built-in models of 20, 200 and
    /// 2000 bins: toys per second on 1 and 2 threads, draws alone, peak memory,
    /// the Asimov-only projection time; a table on stdout.
    Bench(BenchArgs),
    /// Merge the shards in DIR (runcast project or replan --shard K/N) into the outputs of the unsharded run.
    ///
    /// Checks that DIR holds all N shards of one run (same scenario, seed and
    /// options, each intact and written by this build of runcast, whose
    /// identifier --version shows), then writes the same files, byte for
    /// byte, as the run without --shard (runcast project or replan), into DIR.
    Merge {
        /// The directory holding the shard files.
        directory: PathBuf,
        #[command(flatten)]
        figures: FigureArgs,
    },
    /// Write (and with --submit, submit) a Slurm job array running N shards and a dependent merge job.
    ///
    /// Writes DIR/runcast-array.sh (task K runs shard K/N) and DIR/runcast-merge.sh
    /// (runs after every task succeeded; cancelled if one failed), both plain sbatch
    /// scripts to read or edit, with absolute paths to this runcast and the scenario.
    Slurm(SlurmArgs),
}

#[derive(Debug, Args)]
pub struct BenchArgs {
    /// A short run of seconds: a tenth of the toys, no ten-million-toy ensemble.
    #[arg(long)]
    pub quick: bool,
    /// Internal: run one memory measurement POINTS:TOYS and print the peak in bytes.
    #[arg(long, hide = true, value_name = "POINTS:TOYS")]
    pub memory_probe: Option<String>,
    /// Run only the look-elsewhere rows: background-only scans over 100 signal positions.
    #[arg(long)]
    pub scan: bool,
    /// Internal: run one scan memory measurement POSITIONS:TOYS and print the peak in bytes.
    #[arg(long, hide = true, value_name = "POSITIONS:TOYS")]
    pub scan_memory_probe: Option<String>,
}

#[derive(Debug, Args)]
pub struct ProjectArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    #[command(flatten)]
    pub plan: PlanArgs,
    #[command(flatten)]
    pub output: OutputArgs,
    #[command(flatten)]
    pub workers: WorkerArgs,
    /// Run only shard K of N of every ensemble and write it to the output
    /// directory as one shard file (no figures, no summary); runcast merge
    /// makes the outputs from all N.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<ShardSpec>,
}

/// What a projection runs, overriding the scenario's plan.
#[derive(Debug, Args)]
pub struct PlanArgs {
    /// Pseudo-experiments per exposure point (overrides plan.toys).
    #[arg(long, value_name = "N")]
    pub toys: Option<usize>,
    /// Seed of all pseudo-experiments (overrides plan.seed); same seed, same numbers.
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// Skip the pseudo-experiments; asymptotic (Asimov) results only.
    #[arg(long)]
    pub asimov_only: bool,
    /// Skip the expected exclusion limits (CLs) and limits.svg.
    #[arg(long)]
    pub no_limits: bool,
    /// Calibrate the discovery p-value with N background-only pseudo-experiments per point.
    #[arg(long, value_name = "N")]
    pub calibrate: Option<usize>,
    /// Also compute everything at calendar day D exactly (its own point and
    /// pseudo-experiments, not read off the grid): significance, P(Z >= each
    /// target), expected limits in signal events per live day and over the
    /// run; repeatable. D is calendar days (90), a duration (90d, 26w, 2y; a
    /// year is 365.25 days) or, with schedule.start, a date (2027-09-01).
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    pub at: Vec<DayArgument>,
    /// Background-only pseudo-experiments per exposure point fitted at every
    /// position of signal.scan, for the look-elsewhere effect (default 500).
    #[arg(long, value_name = "N")]
    pub lee_toys: Option<usize>,
}

#[derive(Debug, Args)]
pub struct SlurmArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Array tasks, one shard each.
    #[arg(long, value_name = "N")]
    pub tasks: usize,
    /// Directory of the scripts, shards, logs and merged outputs (default:
    /// output/<scenario file stem>); it must be visible to every node.
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub plan: PlanArgs,
    /// Slurm partition of both jobs.
    #[arg(long, value_name = "P")]
    pub partition: Option<String>,
    /// Time limit of each array task (and of the merge), as sbatch takes it.
    #[arg(long, value_name = "HH:MM:SS")]
    pub time: Option<String>,
    /// Another sbatch option for both scripts, e.g. --sbatch-arg=--cpus-per-task=8; repeatable.
    #[arg(long, value_name = "ARG", allow_hyphen_values = true)]
    pub sbatch_arg: Vec<String>,
    /// Submit both jobs with sbatch and print their ids (otherwise print the commands).
    #[arg(long)]
    pub submit: bool,
}

#[derive(Debug, Args)]
pub struct CompareArgs {
    /// The run plans (scenario files, YAML), the first one the reference.
    #[arg(required = true, num_args = 2..)]
    pub plans: Vec<PathBuf>,
    /// Name of each plan in the legend and table, in the order of the files
    /// (default: each scenario's title).
    #[arg(long = "label", value_name = "NAME")]
    pub labels: Vec<String>,
    /// Pseudo-experiments per exposure point (overrides each plan.toys).
    #[arg(long, value_name = "N")]
    pub toys: Option<usize>,
    /// Seed of all pseudo-experiments (overrides each plan.seed).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    #[command(flatten)]
    pub output: OutputArgs,
    #[command(flatten)]
    pub workers: WorkerArgs,
    /// Skip the pseudo-experiments; asymptotic (Asimov) results only.
    #[arg(long)]
    pub asimov_only: bool,
    /// Skip the expected exclusion limits (CLs) and compare-limits.svg.
    #[arg(long)]
    pub no_limits: bool,
    /// Background-only pseudo-experiments per exposure point fitted at every
    /// position of signal.scan, for the look-elsewhere effect, in each plan
    /// that has a scan (default 500).
    #[arg(long, value_name = "N")]
    pub lee_toys: Option<usize>,
    /// Also compare the plans' reach over signal.scan after D calendar days
    /// (90, 90d, 26w, 2y or, with schedule.start, a date): the Asimov limit
    /// and global discovery rates at every position, and their ratio to the
    /// first plan's (compare-reach.svg, .csv, .json). Every plan needs a scan
    /// over the same positions with rates in the same unit.
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    pub reach_days: Option<DayArgument>,
}

#[derive(Debug, Args)]
pub struct SpectrumArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Calendar days of data-taking (90, 90d, 26w, 2y or, with
    /// schedule.start, a date 2027-09-01); repeat for several exposures side by side.
    #[arg(long, value_name = "D", required = true, allow_negative_numbers = true)]
    pub days: Vec<DayArgument>,
    /// Seed of the pseudo-data (overrides plan.seed); same seed, same spectrum.
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    /// The signal region drawn beside the full range, in the observable's
    /// unit (770:795, -5:5), widened to whole bins; default: 5 widths either
    /// side of the signal's peak. The CSV keeps the full range.
    #[arg(long, value_name = "LO:HI", allow_hyphen_values = true, value_parser = parse_window)]
    pub window: Option<Range<f64>>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// `--window LO:HI`: two finite numbers, the first below the second.
fn parse_window(text: &str) -> Result<Range<f64>, String> {
    const EXPECTED: &str =
        "expected LO:HI, two numbers in the observable's unit with LO below HI (770:795, -5:5)";
    let Some((low, high)) = text.split_once(':') else {
        return Err(EXPECTED.to_string());
    };
    let number = |part: &str| {
        part.trim()
            .parse::<f64>()
            .ok()
            .filter(|value| value.is_finite())
    };
    match (number(low), number(high)) {
        (Some(low), Some(high)) if low < high => Ok(low..high),
        (Some(_), Some(_)) => Err(format!("LO is not below HI; {EXPECTED}")),
        _ => Err(EXPECTED.to_string()),
    }
}

#[derive(Debug, Args)]
pub struct ReachArgs {
    /// The scenario file (YAML), with signal.scan.
    pub scenario: PathBuf,
    /// Calendar days of data-taking (90, 90d, 26w, 2y or, with
    /// schedule.start, a date 2027-09-01); repeat for several exposures.
    #[arg(long, value_name = "D", required = true, allow_negative_numbers = true)]
    pub days: Vec<DayArgument>,
    /// Background-only pseudo-experiments per position and exposure for toy limits (default 0: Asimov only).
    #[arg(long, value_name = "N", default_value_t = 0)]
    pub toys: usize,
    /// Seed of the pseudo-experiments (overrides plan.seed).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    #[command(flatten)]
    pub output: OutputArgs,
    #[command(flatten)]
    pub workers: WorkerArgs,
}

#[derive(Debug, Args)]
pub struct ReplanArgs {
    /// The scenario file (YAML) of the run.
    pub scenario: PathBuf,
    /// The data taken: FILE for a scenario of one channel, CHANNEL=FILE for
    /// each channel of several. Rows low,high,count on the channel's bins
    /// (a header line, # comments), or one event value per line.
    #[arg(long, value_name = "[CHANNEL=]FILE", required = true)]
    pub data: Vec<String>,
    /// The calendar day the data stopped (90, 90d, 26w, 2y or, with
    /// schedule.start, a date 2027-09-01).
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    pub taken: DayArgument,
    /// Where the future data are drawn from: fitted (the parameters fitted
    /// to the data taken) or nominal (the scenario's).
    #[arg(long, value_name = "FROM", default_value = "fitted")]
    pub future: FutureArg,
    /// Pseudo-experiments per point and hypothesis, and for the goodness of
    /// fit (overrides plan.toys).
    #[arg(long, value_name = "N")]
    pub toys: Option<usize>,
    /// Seed of all pseudo-experiments (overrides plan.seed).
    #[arg(long, value_name = "S")]
    pub seed: Option<u64>,
    #[command(flatten)]
    pub output: OutputArgs,
    #[command(flatten)]
    pub workers: WorkerArgs,
    /// Run only shard K of N of the goodness of fit's and the conditional
    /// projections' pseudo-experiments and write it to the output directory
    /// as one shard file; runcast merge makes the outputs from all N.
    #[arg(long, value_name = "K/N")]
    pub shard: Option<ShardSpec>,
}

/// `--future`: the parameters the future data are drawn from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FutureArg {
    Fitted,
    Nominal,
}

#[derive(Debug, Args)]
pub struct LeversArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Target significance in sigma (repeat for several; default: plan.targets).
    #[arg(long = "target", value_name = "Z", allow_negative_numbers = true)]
    pub targets: Vec<f64>,
    /// How far each input moves: a percentage of its value (default 10%), or
    /// INPUT=AMOUNT, an amount in the input's unit for that input (repeatable).
    #[arg(long, value_name = "STEP")]
    pub step: Vec<String>,
    /// INPUT=VALUE: that input changed to VALUE, the other side mirrored about
    /// its nominal value (repeatable).
    #[arg(long, value_name = "INPUT=VALUE")]
    pub set: Vec<String>,
    /// Also the toy-median days, from N pseudo-experiments per point, of the
    /// nominal plan and of the 3 inputs that save most days at the first
    /// target, improved and worsened: each as runcast project --toys N
    /// --seed S gives them (with a scan, --lee-toys 0).
    #[arg(long, value_name = "N")]
    pub toys: Option<usize>,
    /// Seed of the pseudo-experiments of --toys (overrides plan.seed); same seed, same numbers.
    #[arg(long, value_name = "S", requires = "toys")]
    pub seed: Option<u64>,
    #[command(flatten)]
    pub output: OutputArgs,
    #[command(flatten)]
    pub workers: WorkerArgs,
}

#[derive(Debug, Args)]
pub struct BinningArgs {
    /// The scenario file (YAML).
    pub scenario: PathBuf,
    /// Calendar days of data-taking at which to compare binnings (90, 90d,
    /// 26w, 2y or, with schedule.start, a date 2027-09-01).
    #[arg(long, value_name = "D", allow_negative_numbers = true)]
    pub days: DayArgument,
    /// The channel whose binning to scan; required when the scenario has several.
    #[arg(long, value_name = "NAME")]
    pub channel: Option<String>,
    #[command(flatten)]
    pub output: OutputArgs,
}

/// Where a command writes, and in which figure formats.
#[derive(Debug, Clone, Args)]
pub struct OutputArgs {
    /// Output directory (default: the one the command's description names).
    #[arg(long, value_name = "DIR")]
    pub out: Option<PathBuf>,
    #[command(flatten)]
    pub figures: FigureArgs,
}

/// How a command that runs pseudo-experiments or many fits runs them.
#[derive(Debug, Clone, Copy, Args)]
pub struct WorkerArgs {
    /// Worker threads (default: all cores); results do not depend on it.
    #[arg(long, value_name = "N")]
    pub threads: Option<usize>,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
}

/// The formats figures are written in.
#[derive(Debug, Clone, Args)]
pub struct FigureArgs {
    /// Figure formats, a comma list of svg, pdf (vector, font embedded) and png.
    #[arg(
        long = "format",
        value_name = "FORMATS",
        value_delimiter = ',',
        default_value = "svg"
    )]
    pub formats: Vec<FigureFormat>,
    /// Resolution of PNG figures in dots per inch (10 to 1200).
    #[arg(
        long,
        value_name = "N",
        default_value_t = DEFAULT_DPI,
        value_parser = clap::value_parser!(u32)
            .range(i64::from(*DPI_RANGE.start())..=i64::from(*DPI_RANGE.end()))
    )]
    pub dpi: u32,
}
