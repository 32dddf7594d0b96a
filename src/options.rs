//! The command line resolved against the scenario, once: one validated options
//! value per command, so every override (`--toys`, `--seed`, ...) and every
//! limit on the command line is applied in one place.

use crate::cli::{
    BinningArgs, FigureArgs, FutureArg, LeversArgs, OutputArgs, PlanArgs, ProjectArgs, ReachArgs,
    ReplanArgs, SlurmArgs, SpectrumArgs,
};
use crate::error::Error;
use runcast::calendar::DayArgument;
use runcast::levers::{Step, StepFor, inputs};
use runcast::message::{show, show_list};
use runcast::model::{LiveTime, Model};
use runcast::projection::{ProjectionSettings, ShardSpec};
use runcast::provenance::{Provenance, ScenarioFile};
use runcast::reach::ReachSettings;
use runcast::replan::{ChannelData, Future, ReplanSettings, check_model, read_channel_data};
use runcast::report::{DPI_RANGE, FigureFormats};
use runcast::scenario::limits::{
    MAX_AT_DAYS, MAX_EXPECTED_COUNT_PER_BIN, MAX_REACH_EXPOSURES, MAX_SPECTRUM_EXPOSURES,
    MAX_THREADS, MAX_TOYS_IN_TOTAL, MAX_TOYS_PER_POINT,
};
use runcast::scenario::{Scenario, ScenarioError};
use runcast::spectrum::largest_expected_count;
use serde_json::{Map, json};
use statrs::distribution::{ContinuousCDF, Normal};
use std::ops::Range;
use std::path::{Path, PathBuf};

/// Fewest background-only pseudo-experiments `--calibrate` accepts: N toys
/// resolve one-sided p-values down to 1/N, which must fall below
/// 1 - Phi(1) = 0.1587 for the calibration to reach even 1 sigma.
pub const MIN_CALIBRATION_TOYS: usize = 7;

/// Background-only scan pseudo-experiments per point when the scenario has a
/// `signal.scan` and `--lee-toys` is not given: a few hundred scans measure
/// the mean upcrossings of the reference level to a few percent.
pub const DEFAULT_LOOK_ELSEWHERE_TOYS: usize = 500;

/// A validated scenario read from `path`.
pub struct Loaded {
    pub path: PathBuf,
    pub scenario: Scenario,
    /// The file's text, which a shard carries.
    pub text: String,
}

impl Loaded {
    pub fn load(path: &Path) -> Result<Loaded, Error> {
        let scenario_error = |source| Error::Scenario {
            path: path.to_path_buf(),
            source,
        };
        let text = Scenario::read_text(path).map_err(scenario_error)?;
        let scenario = Scenario::from_file_text(&text, path).map_err(scenario_error)?;
        Ok(Loaded {
            path: path.to_path_buf(),
            scenario,
            text,
        })
    }

    /// The scenario's file name, as shards record it.
    pub fn file_name(&self) -> String {
        self.path.file_name().map_or_else(
            || "scenario".into(),
            |name| name.to_string_lossy().into_owned(),
        )
    }

    /// The scenario file as provenance records it: its name and SHA-256,
    /// with those of the files of rows it names.
    pub fn scenario_file(&self) -> ScenarioFile {
        ScenarioFile::new(&self.file_name(), &self.text).with_tables(&self.scenario.table_files)
    }

    /// `out`, or `output/<scenario file stem>`.
    fn output_directory(&self, out: Option<&Path>) -> PathBuf {
        out.map(Path::to_path_buf).unwrap_or_else(|| {
            let stem = self.path.file_stem().map_or_else(
                || "scenario".into(),
                |stem| stem.to_string_lossy().into_owned(),
            );
            Path::new("output").join(stem)
        })
    }

    /// The output directory (`--out`, or the default) and the figure formats.
    fn output(&self, args: &OutputArgs) -> Result<(PathBuf, FigureFormats), Error> {
        Ok((
            self.output_directory(args.out.as_deref()),
            figure_formats(&args.figures)?,
        ))
    }

    /// `--seed`, or the scenario's `plan.seed`.
    fn seed(&self, seed: Option<u64>) -> u64 {
        seed.unwrap_or(self.scenario.plan.seed)
    }

    /// The calendar days of day arguments (numbers, durations, or dates
    /// counted from `schedule.start`) given with `flag`.
    fn calendar_days(&self, flag: &str, days: &[DayArgument]) -> Result<Vec<f64>, Error> {
        let start = self.scenario.schedule.start_date();
        days.iter()
            .map(|day| {
                day.calendar_days(start)
                    .map_err(|message| Error::Usage(format!("{flag} {message}")))
            })
            .collect()
    }

    /// `--window LO:HI` inside the observable range of every channel.
    fn check_window(&self, window: &Range<f64>) -> Result<(), Error> {
        let several = self.scenario.channels.len() > 1;
        for channel in &self.scenario.channels {
            let [low, high] = channel.observable.range;
            if window.start < low || window.end > high {
                let name = if several {
                    format!("channel {}", channel.name)
                } else {
                    channel.name.clone()
                };
                return Err(Error::Usage(format!(
                    "--window {}:{}: expected a region inside the range of {name}, {} to {} {}",
                    show(window.start),
                    show(window.end),
                    show(low),
                    show(high),
                    channel.observable.unit
                )));
            }
        }
        Ok(())
    }

    /// The live days after `days` calendar days (`--days`): finite, above
    /// zero, and with some live time by then.
    fn live_days(&self, days: f64) -> Result<f64, Error> {
        self.live_days_of("--days", days)
    }

    /// [`Loaded::live_days`] of a day given with `flag`, named in the errors.
    fn live_days_of(&self, flag: &str, days: f64) -> Result<f64, Error> {
        if !(days.is_finite() && days > 0.0) {
            return Err(Error::Usage(format!(
                "{flag} {}: expected calendar days above 0",
                show(days)
            )));
        }
        let live_days = LiveTime::from_schedule(&self.scenario.schedule).live_days(days);
        if live_days <= 0.0 {
            return Err(Error::Usage(format!(
                "{flag} {}: the schedule gives no live time by then (live days {})",
                show(days),
                show(live_days)
            )));
        }
        Ok(live_days)
    }

    /// The calendar days of `compare --reach-days` in this plan (a date
    /// counted from its own `schedule.start`), with live time by then.
    pub fn reach_days(&self, day: &DayArgument) -> Result<f64, Error> {
        let flag = "--reach-days";
        let days = self.calendar_days(flag, std::slice::from_ref(day))?[0];
        self.live_days_of(flag, days)?;
        Ok(days)
    }

    /// A list of `--days`: each with live time by then ([`Loaded::live_days`]),
    /// none given twice.
    fn check_exposures(&self, days: &[f64]) -> Result<(), Error> {
        for (index, &day) in days.iter().enumerate() {
            self.live_days(day)?;
            if days[..index].contains(&day) {
                return Err(Error::Usage(format!(
                    "--days {}: given more than once",
                    show(day)
                )));
            }
        }
        Ok(())
    }
}

/// What the command line changes in the scenario's plan.
#[derive(Debug, Default)]
struct PlanOverrides {
    toys: Option<usize>,
    seed: Option<u64>,
    asimov_only: bool,
    no_limits: bool,
    calibrate: Option<usize>,
    /// `--at` days, as given.
    at: Vec<DayArgument>,
    lee_toys: Option<usize>,
    /// The shards the projection is split into (0 or 1: not split); the
    /// limits on calibration toys and on all toys then hold per shard, since
    /// a shard holds only its own toys and merging keeps calibration counts.
    shards: usize,
}

impl PlanOverrides {
    fn from_args(args: &PlanArgs, shards: usize) -> PlanOverrides {
        PlanOverrides {
            toys: args.toys,
            seed: args.seed,
            asimov_only: args.asimov_only,
            no_limits: args.no_limits,
            calibrate: args.calibrate,
            at: args.at.clone(),
            lee_toys: args.lee_toys,
            shards,
        }
    }

    /// The largest shard (the last one, ceil(T/N) of T toys).
    fn largest_shard(&self) -> ShardSpec {
        let count = self.shards.max(1);
        ShardSpec {
            index: count,
            count,
        }
    }
}

/// The projection the scenario's plan asks for, with the command line's
/// overrides applied and checked against the limits.
fn projection_settings(
    loaded: &Loaded,
    overrides: &PlanOverrides,
) -> Result<ProjectionSettings, Error> {
    let scenario = &loaded.scenario;
    if overrides.toys == Some(0) && !overrides.asimov_only {
        return Err(Error::Usage(
            "--toys: must be at least 1 (use --asimov-only to skip pseudo-experiments)".into(),
        ));
    }
    if let Some(toys) = overrides
        .calibrate
        .filter(|&toys| toys < MIN_CALIBRATION_TOYS)
    {
        return Err(Error::Usage(format!(
            "--calibrate {toys}: at least {MIN_CALIBRATION_TOYS} pseudo-experiments are needed; N toys resolve p-values down to 1/N, and 1/N must be below {:.4} (1 sigma) to calibrate any tail",
            Normal::standard().sf(1.0)
        )));
    }
    let scan = scenario.signal_scan();
    if scan.is_none() && overrides.lee_toys.is_some() {
        return Err(Error::Usage(
            "--lee-toys: the scenario has no signal.scan, so there is no look-elsewhere effect to estimate".into(),
        ));
    }
    let largest_shard = overrides.largest_shard();
    let share = |toys: Option<usize>| toys.map(|toys| largest_shard.toys(toys).len());
    for (flag, toys) in [
        ("--toys", overrides.toys),
        ("--calibrate", share(overrides.calibrate)),
        ("--lee-toys", share(overrides.lee_toys)),
    ] {
        if let Some(toys) = toys.filter(|&toys| toys > MAX_TOYS_PER_POINT) {
            return Err(Error::Usage(format!(
                "{flag} {toys}: at most {MAX_TOYS_PER_POINT} pseudo-experiments per point are allowed"
            )));
        }
    }
    let toys = if overrides.asimov_only {
        0
    } else {
        overrides.toys.unwrap_or(scenario.plan.toys)
    };
    let settings = ProjectionSettings {
        title: scenario.title.clone(),
        days: scenario.plan.days.days(),
        day_spacing: scenario.plan.days.axis_spacing(),
        detector_mass_kg: scenario.detector_mass_kg(),
        at_days: at_days(&loaded.calendar_days("--at", &overrides.at)?)?,
        toys,
        seed: loaded.seed(overrides.seed),
        targets: scenario.plan.targets.clone(),
        cl: (!overrides.no_limits).then_some(scenario.plan.cl),
        calibration_toys: overrides.calibrate.unwrap_or(0),
        look_elsewhere_toys: match &scan {
            Some(_) if !overrides.asimov_only => {
                overrides.lee_toys.unwrap_or(DEFAULT_LOOK_ELSEWHERE_TOYS)
            }
            _ => 0,
        },
        scan,
    };
    if settings.total_toys_in(largest_shard) > MAX_TOYS_IN_TOTAL {
        return Err(Error::Usage(format!(
            "--toys/--calibrate/--lee-toys: {} pseudo-experiments at each of {} points make {}, more than the {MAX_TOYS_IN_TOTAL} allowed in one projection{}",
            settings.toys_per_point(),
            settings.days.len() + settings.at_days.len(),
            settings.total_toys(),
            if largest_shard.count > 1 {
                " or shard"
            } else {
                ""
            }
        )));
    }
    Ok(settings)
}

/// The `--at` days in increasing order: each finite and above 0, none
/// repeated, at most [`MAX_AT_DAYS`].
fn at_days(days: &[f64]) -> Result<Vec<f64>, Error> {
    if days.len() > MAX_AT_DAYS {
        return Err(Error::Usage(format!(
            "--at: at most {MAX_AT_DAYS} days are allowed, got {}",
            days.len()
        )));
    }
    let mut sorted = days.to_vec();
    if let Some(&bad) = sorted.iter().find(|&&day| !(day.is_finite() && day > 0.0)) {
        return Err(Error::Usage(format!(
            "--at {}: expected calendar days above 0",
            show(bad)
        )));
    }
    sorted.sort_by(f64::total_cmp);
    if let Some(pair) = sorted.windows(2).find(|pair| pair[0] == pair[1]) {
        return Err(Error::Usage(format!(
            "--at {}: given more than once",
            show(pair[0])
        )));
    }
    Ok(sorted)
}

/// Pseudo-experiments draw whole counts: refuses a grid whose last day
/// expects more than [`MAX_EXPECTED_COUNT_PER_BIN`] events in a bin or a
/// control region, naming the last day of `plan.days` (a scenario error, not a usage
/// one), and likewise the last `--at` day (a usage error).
fn check_countable(
    loaded: &Loaded,
    model: &Model,
    settings: &ProjectionSettings,
) -> Result<(), Error> {
    let too_many = |day: f64| {
        let largest = largest_expected_count(model, model.live_time.live_days(day));
        (largest > MAX_EXPECTED_COUNT_PER_BIN).then(|| {
            format!(
                "{} days expect {largest:e} events in a bin, more than the {MAX_EXPECTED_COUNT_PER_BIN:e} a pseudo-experiment can draw exactly",
                show(day)
            )
        })
    };
    let last_day = settings.days.last().copied().unwrap_or_default();
    if let Some(message) = too_many(last_day) {
        return Err(Error::Scenario {
            path: loaded.path.clone(),
            source: ScenarioError::invalid(
                loaded.scenario.plan.days.last_field(),
                format!("{message}; shorten the grid or use --asimov-only"),
            ),
        });
    }
    let last_at = settings.at_days.last().copied().unwrap_or_default();
    if let Some(message) = too_many(last_at) {
        return Err(Error::Usage(format!(
            "--at {}: {message}; ask for an earlier day or use --asimov-only",
            show(last_at)
        )));
    }
    Ok(())
}

/// `--threads`, between 1 and [`MAX_THREADS`].
pub fn check_threads(threads: Option<usize>) -> Result<Option<usize>, Error> {
    match threads {
        Some(0) => Err(Error::Usage("--threads: must be at least 1".into())),
        Some(threads) if threads > MAX_THREADS => Err(Error::Usage(format!(
            "--threads {threads}: at most {MAX_THREADS} worker threads are allowed"
        ))),
        threads => Ok(threads),
    }
}

/// The figure formats and PNG resolution asked for (`--format`, `--dpi`).
pub fn figure_formats(args: &FigureArgs) -> Result<FigureFormats, Error> {
    FigureFormats::new(&args.formats, args.dpi).ok_or_else(|| {
        Error::Usage(format!(
            "--format, --dpi {}: expected at least one format and a resolution from {} to {}",
            args.dpi,
            DPI_RANGE.start(),
            DPI_RANGE.end()
        ))
    })
}

/// `runcast project`, resolved.
pub struct ProjectOptions {
    pub loaded: Loaded,
    pub model: Model,
    pub settings: ProjectionSettings,
    pub out: PathBuf,
    /// A pool of this many workers; None for the global pool, and always
    /// None when there are no pseudo-experiments to share out.
    pub threads: Option<usize>,
    /// Only this shard of the toys, written as a shard file (`--shard K/N`).
    pub shard: Option<ShardSpec>,
    pub formats: FigureFormats,
    pub quiet: bool,
}

impl ProjectOptions {
    /// What made this projection's outputs.
    pub fn provenance(&self) -> Provenance {
        self.settings.provenance(self.loaded.scenario_file())
    }

    pub fn resolve(args: &ProjectArgs) -> Result<ProjectOptions, Error> {
        let threads = check_threads(args.workers.threads)?;
        ProjectOptions::resolve_loaded(args, Loaded::load(&args.scenario)?, threads)
    }

    /// As [`ProjectOptions::resolve`], with the scenario of `args` already
    /// loaded and `--threads` already checked.
    pub fn resolve_loaded(
        args: &ProjectArgs,
        loaded: Loaded,
        threads: Option<usize>,
    ) -> Result<ProjectOptions, Error> {
        let (out, formats) = loaded.output(&args.output)?;
        let shards = args.shard.map_or(1, |shard| shard.count);
        let overrides = PlanOverrides::from_args(&args.plan, shards);
        let settings = projection_settings(&loaded, &overrides)?;
        let model = Model::from_scenario(&loaded.scenario);
        let with_toys = settings.toys_per_point() > 0;
        if with_toys {
            check_countable(&loaded, &model, &settings)?;
        }
        Ok(ProjectOptions {
            out,
            threads: threads.filter(|_| with_toys),
            shard: args.shard,
            formats,
            quiet: args.workers.quiet,
            loaded,
            model,
            settings,
        })
    }
}

/// What made a comparison: every plan's scenario, and per plan the options
/// of its projection, in the order of the plans.
pub fn comparison_provenance(plans: &[ProjectOptions]) -> Provenance {
    let mut options = Map::new();
    options.insert(
        "plans".into(),
        plans
            .iter()
            .map(|plan| serde_json::Value::Object(plan.settings.provenance_options()))
            .collect(),
    );
    Provenance::new(
        plans
            .iter()
            .map(|plan| plan.loaded.scenario_file())
            .collect(),
        options,
    )
}

/// `runcast slurm`, resolved: the projection every shard runs, and the
/// absolute paths the batch scripts use.
pub struct SlurmOptions {
    pub loaded: Loaded,
    pub settings: ProjectionSettings,
    pub tasks: usize,
    /// Absolute paths: this runcast binary, the scenario, the output directory.
    pub runcast: PathBuf,
    pub scenario: PathBuf,
    pub out: PathBuf,
    /// `#SBATCH` options of both scripts, without the prefix.
    pub sbatch_options: Vec<String>,
    pub submit: bool,
}

impl SlurmOptions {
    pub fn resolve(args: &SlurmArgs) -> Result<SlurmOptions, Error> {
        if args.tasks == 0 {
            return Err(Error::Usage("--tasks: must be at least 1".into()));
        }
        let loaded = Loaded::load(&args.scenario)?;
        let settings =
            projection_settings(&loaded, &PlanOverrides::from_args(&args.plan, args.tasks))?;
        let model = Model::from_scenario(&loaded.scenario);
        if settings.toys_per_point() > 0 {
            check_countable(&loaded, &model, &settings)?;
        }
        let sbatch_options = sbatch_options(args)?;
        let absolute = |path: &Path, what: &str| {
            std::path::absolute(path)
                .map_err(|error| Error::Usage(format!("{what} {}: {error}", path.display())))
        };
        let scenario = absolute(&loaded.path, "the scenario")?;
        script_path("the scenario file", &scenario)?;
        let out_option = match args.out {
            Some(_) => "--out",
            None => "the output directory (output/<scenario file stem>)",
        };
        let out = absolute(&loaded.output_directory(args.out.as_deref()), out_option)?;
        if script_path(out_option, &out)?.contains('\\') {
            return Err(Error::Usage(format!(
                "{out_option} {out:?}: contains a backslash, which Slurm reads in a log \
                 file name (--output) as \"do not replace %A, %a and %j\""
            )));
        }
        let runcast = std::env::current_exe()
            .map_err(|error| Error::Usage(format!("cannot find the runcast binary: {error}")))?;
        script_path("the runcast binary", &runcast)?;
        Ok(SlurmOptions {
            out,
            scenario,
            runcast,
            tasks: args.tasks,
            settings,
            sbatch_options,
            submit: args.submit,
            loaded,
        })
    }
}

/// The `#SBATCH` options of both scripts, without the prefix: `--partition`,
/// `--time` and every `--sbatch-arg`, each checked by [`script_text`] under
/// its own name, repeats dropped.
fn sbatch_options(args: &SlurmArgs) -> Result<Vec<String>, Error> {
    let mut options = Vec::new();
    for (option, value) in [("--partition", &args.partition), ("--time", &args.time)] {
        if let Some(value) = value {
            script_text(option, value)?;
            options.push(format!("{option}={value}"));
        }
    }
    for value in &args.sbatch_arg {
        script_text("--sbatch-arg", value)?;
        options.push(value.clone());
    }
    options.dedup();
    Ok(options)
}

/// Refuses text bound for a batch script line that contains a control
/// character: a line break would start a line of its own, which the shell
/// runs (or sbatch reads as a new option); the others have no place in a
/// name or an option either.
fn script_text(option: &str, text: &str) -> Result<(), Error> {
    match text.chars().find(|c| c.is_control()) {
        Some(control) => Err(Error::Usage(format!(
            "{option} {text:?}: contains the control character {control:?}, \
             which a line of a batch script cannot hold"
        ))),
        None => Ok(()),
    }
}

/// A path bound for a batch script, as text: valid UTF-8 (the script must
/// name the very bytes of the path) and checked by [`script_text`].
fn script_path<'a>(option: &str, path: &'a Path) -> Result<&'a str, Error> {
    let text = path.to_str().ok_or_else(|| {
        Error::Usage(format!(
            "{option} {path:?}: is not valid UTF-8, which a batch script cannot name exactly"
        ))
    })?;
    script_text(option, text)?;
    Ok(text)
}

/// `runcast check`: the plan as written, Asimov only, with limits.
pub struct CheckOptions {
    pub loaded: Loaded,
    pub model: Model,
    pub settings: ProjectionSettings,
}

impl CheckOptions {
    pub fn resolve(path: &Path) -> Result<CheckOptions, Error> {
        let loaded = Loaded::load(path)?;
        let overrides = PlanOverrides {
            asimov_only: true,
            ..PlanOverrides::default()
        };
        let settings = projection_settings(&loaded, &overrides)?;
        Ok(CheckOptions {
            model: Model::from_scenario(&loaded.scenario),
            loaded,
            settings,
        })
    }
}

/// `runcast spectrum`, resolved.
pub struct SpectrumOptions {
    pub loaded: Loaded,
    /// Calendar days, each with live time, none repeated, in the order given.
    pub days: Vec<f64>,
    /// `--window`: the signal region drawn, inside every channel's range.
    pub window: Option<Range<f64>>,
    pub seed: u64,
    pub out: PathBuf,
    pub formats: FigureFormats,
}

impl SpectrumOptions {
    /// What made these spectra: the scenario, the seed and the days.
    pub fn provenance(&self) -> Provenance {
        let mut options = Map::new();
        options.insert("seed".into(), json!(self.seed));
        options.insert("days".into(), json!(self.days));
        Provenance::new(vec![self.loaded.scenario_file()], options)
    }

    pub fn resolve(args: &SpectrumArgs) -> Result<SpectrumOptions, Error> {
        if args.days.len() > MAX_SPECTRUM_EXPOSURES {
            return Err(Error::Usage(format!(
                "--days: at most {MAX_SPECTRUM_EXPOSURES} exposures fit in one figure, got {}",
                args.days.len()
            )));
        }
        let loaded = Loaded::load(&args.scenario)?;
        let days = loaded.calendar_days("--days", &args.days)?;
        loaded.check_exposures(&days)?;
        if let Some(window) = &args.window {
            loaded.check_window(window)?;
        }
        let (out, formats) = loaded.output(&args.output)?;
        Ok(SpectrumOptions {
            days,
            window: args.window.clone(),
            seed: loaded.seed(args.seed),
            out,
            formats,
            loaded,
        })
    }
}

/// `runcast reach`, resolved.
pub struct ReachOptions {
    pub loaded: Loaded,
    pub settings: ReachSettings,
    pub threads: Option<usize>,
    pub quiet: bool,
    pub out: PathBuf,
    pub formats: FigureFormats,
}

impl ReachOptions {
    /// What made this reach: the scenario, the days, the limit toys, the
    /// seed and the confidence level.
    pub fn provenance(&self) -> Provenance {
        let settings = &self.settings;
        let mut options = Map::new();
        options.insert("seed".into(), json!(settings.seed));
        options.insert("toys".into(), json!(settings.toys));
        options.insert("cl".into(), json!(settings.cl));
        options.insert("days".into(), json!(settings.days));
        Provenance::new(vec![self.loaded.scenario_file()], options)
    }
    /// The exposures checked as for `spectrum` (live time, none repeated, at
    /// most [`MAX_REACH_EXPOSURES`]); the toys bounded per position and in
    /// total over positions and exposures.
    pub fn resolve(args: &ReachArgs) -> Result<ReachOptions, Error> {
        if args.days.len() > MAX_REACH_EXPOSURES {
            return Err(Error::Usage(format!(
                "--days: at most {MAX_REACH_EXPOSURES} exposures fit in one reach figure, got {}",
                args.days.len()
            )));
        }
        if args.toys > MAX_TOYS_PER_POINT {
            return Err(Error::Usage(format!(
                "--toys {}: at most {MAX_TOYS_PER_POINT} pseudo-experiments per position are allowed",
                args.toys
            )));
        }
        let loaded = Loaded::load(&args.scenario)?;
        let days = loaded.calendar_days("--days", &args.days)?;
        loaded.check_exposures(&days)?;
        let positions = loaded.scenario.signal_scan().map_or(0, |scan| scan.len());
        let total = args.toys as u64 * positions as u64 * args.days.len() as u64;
        if total > MAX_TOYS_IN_TOTAL {
            return Err(Error::Usage(format!(
                "--toys {}: {total} pseudo-experiments over {positions} positions and {} exposures, more than the {MAX_TOYS_IN_TOTAL} allowed",
                args.toys,
                args.days.len()
            )));
        }
        let plan = &loaded.scenario.plan;
        let (out, formats) = loaded.output(&args.output)?;
        Ok(ReachOptions {
            settings: ReachSettings {
                days,
                cl: plan.cl,
                targets: plan.targets.clone(),
                toys: args.toys,
                seed: loaded.seed(args.seed),
            },
            threads: check_threads(args.workers.threads)?,
            quiet: args.workers.quiet,
            out,
            formats,
            loaded,
        })
    }
}

/// `runcast replan`, resolved: the plan as `project` resolves it, the day
/// the data stopped, and each channel's data read and checked.
pub struct ReplanOptions {
    pub loaded: Loaded,
    pub model: Model,
    pub settings: ReplanSettings,
    /// One per channel, in the scenario's order.
    pub data: Vec<ChannelData>,
    pub threads: Option<usize>,
    pub quiet: bool,
    pub out: PathBuf,
    pub formats: FigureFormats,
    pub shard: Option<ShardSpec>,
}

impl ReplanOptions {
    /// What made this re-plan: the scenario, the options that change a
    /// number, and each data file's name and SHA-256 by channel.
    pub fn provenance(&self) -> Provenance {
        self.settings
            .provenance(self.loaded.scenario_file(), &self.data)
    }

    pub fn resolve(args: &ReplanArgs) -> Result<ReplanOptions, Error> {
        if args.toys == Some(0) {
            return Err(Error::Usage(
                "--toys: must be at least 1: the conditional projection and the goodness of fit are made of pseudo-experiments".into(),
            ));
        }
        let threads = check_threads(args.workers.threads)?;
        let loaded = Loaded::load(&args.scenario)?;
        let overrides = PlanOverrides {
            toys: args.toys,
            seed: args.seed,
            ..PlanOverrides::default()
        };
        let plan = ProjectionSettings {
            scan: None,
            look_elsewhere_toys: 0,
            ..projection_settings(&loaded, &overrides)?
        };
        let taken_days = loaded.calendar_days("--taken", &[args.taken])?[0];
        loaded.live_days_of("--taken", taken_days)?;
        let model = Model::from_scenario(&loaded.scenario);
        check_model(&model).map_err(|source| Error::Replan {
            path: loaded.path.clone(),
            source,
        })?;
        let settings = ReplanSettings {
            plan,
            taken_days,
            toy_limit: args.toys.is_some(),
            future: match args.future {
                FutureArg::Fitted => Future::Fitted,
                FutureArg::Nominal => Future::Nominal,
            },
        };
        if settings.total_toys() > MAX_TOYS_IN_TOTAL {
            return Err(Error::Usage(format!(
                "--toys {}: {} pseudo-experiments in all, more than the {MAX_TOYS_IN_TOTAL} allowed",
                settings.plan.toys,
                settings.total_toys()
            )));
        }
        check_countable(&loaded, &model, &settings.plan)?;
        let data = data_files(&model, &args.data)?;
        let (out, formats) = loaded.output(&args.output)?;
        Ok(ReplanOptions {
            loaded,
            model,
            settings,
            data,
            threads,
            quiet: args.workers.quiet,
            out,
            formats,
            shard: args.shard,
        })
    }
}

/// Each `--data [CHANNEL=]FILE` read on its channel's bins: a bare FILE
/// only for a scenario of one channel, every channel exactly once.
fn data_files(model: &Model, given: &[String]) -> Result<Vec<ChannelData>, Error> {
    let names = || {
        let names: Vec<&str> = model.channels.iter().map(|c| c.name.as_str()).collect();
        names.join(", ")
    };
    let mut files: Vec<Option<PathBuf>> = vec![None; model.channels.len()];
    for argument in given {
        let (index, file) = match argument.split_once('=') {
            Some((channel, file)) => {
                let index = model
                    .channels
                    .iter()
                    .position(|c| c.name == channel)
                    .ok_or_else(|| {
                        Error::Usage(format!(
                            "--data {argument}: the scenario has no channel {channel}; its channels are {}",
                            names()
                        ))
                    })?;
                (index, file)
            }
            None if model.channels.len() == 1 => (0, argument.as_str()),
            None => {
                return Err(Error::Usage(format!(
                    "--data {argument}: the scenario has several channels; give each as CHANNEL=FILE ({})",
                    names()
                )));
            }
        };
        if files[index].is_some() {
            return Err(Error::Usage(format!(
                "--data {argument}: channel {} is given more than once",
                model.channels[index].name
            )));
        }
        files[index] = Some(PathBuf::from(file));
    }
    model
        .channels
        .iter()
        .zip(files)
        .map(|(channel, file)| {
            let file = file.ok_or_else(|| {
                Error::Usage(format!(
                    "--data: no data for channel {}; expected --data {}=FILE",
                    channel.name, channel.name
                ))
            })?;
            read_channel_data(&file, channel).map_err(Error::Data)
        })
        .collect()
}

/// `runcast binning`, resolved.
pub struct BinningOptions {
    pub loaded: Loaded,
    /// The scenario of the one channel scanned (`--channel`).
    pub channel: Scenario,
    pub days: f64,
    pub out: PathBuf,
    pub formats: FigureFormats,
}

impl BinningOptions {
    /// What made this scan: the scenario and the day.
    pub fn provenance(&self) -> Provenance {
        let mut options = Map::new();
        options.insert("days".into(), json!(self.days));
        Provenance::new(vec![self.loaded.scenario_file()], options)
    }

    pub fn resolve(args: &BinningArgs) -> Result<BinningOptions, Error> {
        let loaded = Loaded::load(&args.scenario)?;
        let days = loaded.calendar_days("--days", &[args.days])?[0];
        loaded.live_days(days)?;
        let (out, formats) = loaded.output(&args.output)?;
        Ok(BinningOptions {
            channel: channel_alone(&loaded.scenario, args.channel.as_deref())?,
            days,
            out,
            formats,
            loaded,
        })
    }
}

/// The scenario of the channel `--channel` names: any of a scenario's
/// channels, and needed when it has several; the error lists the names.
fn channel_alone(scenario: &Scenario, name: Option<&str>) -> Result<Scenario, Error> {
    let names = || {
        let names: Vec<&str> = scenario.channels.iter().map(|c| c.name.as_str()).collect();
        names.join(", ")
    };
    let index = match name {
        None if scenario.channels.len() == 1 => 0,
        None => {
            return Err(Error::Usage(format!(
                "--channel: the scenario has {} channels; name one of: {}",
                scenario.channels.len(),
                names()
            )));
        }
        Some(name) => scenario
            .channels
            .iter()
            .position(|channel| channel.name == name)
            .ok_or_else(|| {
                Error::Usage(format!(
                    "--channel {name}: no such channel; the scenario's channels are: {}",
                    names()
                ))
            })?,
    };
    Ok(scenario.only_channel(index))
}

/// `runcast levers`, resolved.
pub struct LeversOptions {
    /// The scenario, with `--target` in place of `plan.targets` when given.
    pub loaded: Loaded,
    /// The settings of `runcast project --asimov-only` on it.
    pub settings: ProjectionSettings,
    /// With `--toys N`: the settings of `runcast project --toys N --seed S`
    /// (`--lee-toys 0` with a scan) for the toy-median days.
    pub toy_settings: Option<ProjectionSettings>,
    /// The step of every input (`--step P%`, default 10%).
    pub step: Step,
    /// The inputs moved otherwise (`--step INPUT=AMOUNT`, `--set INPUT=VALUE`).
    pub steps: Vec<StepFor>,
    pub threads: Option<usize>,
    pub quiet: bool,
    pub out: PathBuf,
    pub formats: FigureFormats,
}

/// The step of every input when `--step` gives no percentage.
const DEFAULT_LEVER_STEP: f64 = 0.1;

impl LeversOptions {
    /// What made these levers: the scenario, the targets and the steps.
    pub fn provenance(&self) -> Provenance {
        let mut options = Map::new();
        options.insert("targets".into(), json!(self.settings.targets));
        options.insert("step".into(), json!(self.step.to_string()));
        let steps: Vec<String> = self
            .steps
            .iter()
            .map(|named| format!("{}: {}", named.input, named.step))
            .collect();
        options.insert("steps".into(), json!(steps));
        if let Some(settings) = &self.toy_settings {
            options.insert("toys".into(), json!(settings.toys));
            options.insert("seed".into(), json!(settings.seed));
        }
        Provenance::new(vec![self.loaded.scenario_file()], options)
    }

    pub fn resolve(args: &LeversArgs) -> Result<LeversOptions, Error> {
        let mut loaded = Loaded::load(&args.scenario)?;
        if !args.targets.is_empty() {
            loaded.scenario.plan.targets = args.targets.clone();
            loaded.scenario.validate().map_err(|error| {
                Error::Usage(format!("--target {}: {error}", show_list(&args.targets)))
            })?;
        }
        let names: Vec<String> = inputs(&loaded.scenario)
            .into_iter()
            .map(|input| input.name)
            .collect();
        let known = |option: &str, name: &str| -> Result<String, Error> {
            if names.iter().any(|known| known == name) {
                return Ok(name.to_string());
            }
            Err(Error::Usage(format!(
                "{option} {name}: no such input in {}; the inputs are: {}",
                loaded.path.display(),
                names.join(", ")
            )))
        };
        let mut step = None;
        let mut steps = Vec::new();
        for written in &args.step {
            match written.rsplit_once('=') {
                None => {
                    let percent = written.strip_suffix('%').ok_or_else(|| {
                        Error::Usage(format!(
                            "--step {written}: expected a percentage such as 10% or INPUT=AMOUNT"
                        ))
                    })?;
                    let fraction = lever_number("--step", written, percent)? / 100.0;
                    if !(fraction > 0.0 && fraction < 1.0) || step.is_some() {
                        return Err(Error::Usage(format!(
                            "--step {written}: expected one percentage above 0% and below 100%"
                        )));
                    }
                    step = Some(Step::Relative(fraction));
                }
                Some((name, amount)) => {
                    let amount = lever_number("--step", written, amount)?;
                    if amount <= 0.0 {
                        return Err(Error::Usage(format!(
                            "--step {written}: expected an amount above 0"
                        )));
                    }
                    steps.push(StepFor {
                        input: known("--step", name)?,
                        step: Step::Absolute(amount),
                    });
                }
            }
        }
        for written in &args.set {
            let (name, value) = written
                .rsplit_once('=')
                .ok_or_else(|| Error::Usage(format!("--set {written}: expected INPUT=VALUE")))?;
            steps.push(StepFor {
                input: known("--set", name)?,
                step: Step::To(lever_number("--set", written, value)?),
            });
        }
        let overrides = PlanOverrides {
            asimov_only: true,
            ..PlanOverrides::default()
        };
        let toy_settings = match args.toys {
            None => None,
            Some(0) => return Err(Error::Usage("--toys: must be at least 1".into())),
            Some(toys) => {
                let overrides = PlanOverrides {
                    toys: Some(toys),
                    seed: args.seed,
                    lee_toys: loaded.scenario.signal_scan().map(|_| 0),
                    ..PlanOverrides::default()
                };
                let settings = projection_settings(&loaded, &overrides)?;
                check_countable(&loaded, &Model::from_scenario(&loaded.scenario), &settings)?;
                Some(settings)
            }
        };
        let (out, formats) = loaded.output(&args.output)?;
        Ok(LeversOptions {
            toy_settings,
            settings: projection_settings(&loaded, &overrides)?,
            step: step.unwrap_or(Step::Relative(DEFAULT_LEVER_STEP)),
            steps,
            threads: check_threads(args.workers.threads)?,
            quiet: args.workers.quiet,
            out,
            formats,
            loaded,
        })
    }
}

/// The finite number `text` of `option`'s value `written`, or a usage error.
fn lever_number(option: &str, written: &str, text: &str) -> Result<f64, Error> {
    text.trim()
        .parse::<f64>()
        .ok()
        .filter(|value| value.is_finite())
        .ok_or_else(|| {
            Error::Usage(format!(
                "{option} {written}: {text:?} is not a finite number"
            ))
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn loaded() -> Loaded {
        let text = "title: options test (invented numbers)\n\
             observable: {name: x, unit: a.u., range: [0.0, 10.0], bin_width: 1.0}\n\
             signal: {events_per_day: 1.0, shape: {gaussian: {mean: 5.0, sigma: 1.0}}}\n\
             backgrounds:\n  - {name: flat, events_per_day: 10.0, shape: {flat: {}}}\n\
             plan: {days: {first: 1, last: 10, points: 3, spacing: log}, toys: 50, seed: 9, targets: [3], cl: 0.9}\n";
        Loaded {
            path: PathBuf::from("scenarios/test.yaml"),
            scenario: Scenario::from_yaml(text).unwrap(),
            text: text.to_string(),
        }
    }

    /// 1 - Phi(1) = 0.158655 (statrs, reference library): 1/7 lies below it
    /// and 1/6 above, so 7 toys are the fewest that reach 1 sigma.
    #[test]
    fn the_fewest_calibration_toys_resolve_one_sigma() {
        let tail = Normal::standard().sf(1.0);
        assert!((tail - 0.158655).abs() < 1e-6, "{tail}");
        let n = MIN_CALIBRATION_TOYS as f64;
        assert!(1.0 / n < tail && 1.0 / (n - 1.0) > tail);
    }

    #[test]
    fn check_and_project_share_one_settings_builder() {
        let loaded = loaded();
        let check = projection_settings(
            &loaded,
            &PlanOverrides {
                asimov_only: true,
                ..PlanOverrides::default()
            },
        )
        .unwrap();
        assert_eq!(
            (check.toys, check.seed, check.cl, check.calibration_toys),
            (0, 9, Some(0.9), 0)
        );
        assert_eq!(check.days.len(), 3);
        let project = projection_settings(
            &loaded,
            &PlanOverrides {
                toys: Some(20),
                seed: Some(4),
                no_limits: true,
                calibrate: Some(7),
                ..PlanOverrides::default()
            },
        )
        .unwrap();
        assert_eq!(
            (
                project.toys,
                project.seed,
                project.cl,
                project.calibration_toys
            ),
            (20, 4, None, 7)
        );
        assert_eq!(project.total_toys(), 3 * (20 + 7));
    }

    #[test]
    fn calibration_and_total_limits_hold_per_shard() {
        let loaded = loaded();
        let calibrate = |toys, shards| {
            projection_settings(
                &loaded,
                &PlanOverrides {
                    calibrate: Some(toys),
                    shards,
                    ..PlanOverrides::default()
                },
            )
        };
        assert!(calibrate(MAX_TOYS_PER_POINT + 1, 1).is_err());
        assert!(calibrate(MAX_TOYS_PER_POINT + 1, 2).is_ok());
        assert!(calibrate(100 * MAX_TOYS_PER_POINT, 100).is_ok());
        assert!(calibrate(100 * MAX_TOYS_PER_POINT + 1, 100).is_err());
        let toys = projection_settings(
            &loaded,
            &PlanOverrides {
                toys: Some(MAX_TOYS_PER_POINT + 1),
                shards: 100,
                ..PlanOverrides::default()
            },
        );
        assert!(
            toys.is_err(),
            "the merge holds every discovery value of a point"
        );
    }

    #[test]
    fn refused_overrides_are_usage_errors_naming_the_flag() {
        let loaded = loaded();
        let refused = |overrides: PlanOverrides, flag: &str| {
            let error = projection_settings(&loaded, &overrides).unwrap_err();
            assert!(matches!(error, Error::Usage(_)), "{error}");
            assert!(error.to_string().starts_with(flag), "{error}");
        };
        refused(
            PlanOverrides {
                toys: Some(0),
                ..PlanOverrides::default()
            },
            "--toys",
        );
        refused(
            PlanOverrides {
                calibrate: Some(MIN_CALIBRATION_TOYS - 1),
                ..PlanOverrides::default()
            },
            "--calibrate 6",
        );
        refused(
            PlanOverrides {
                toys: Some(MAX_TOYS_PER_POINT + 1),
                ..PlanOverrides::default()
            },
            "--toys 10000001",
        );
        assert!(check_threads(Some(MAX_THREADS + 1)).is_err());
        assert_eq!(check_threads(Some(MAX_THREADS)).unwrap(), Some(MAX_THREADS));
    }

    #[test]
    fn days_must_give_live_time() {
        let loaded = loaded();
        assert_eq!(loaded.live_days(2.5).unwrap(), 2.5);
        for days in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert!(loaded.live_days(days).is_err(), "{days}");
        }
        assert_eq!(
            loaded.output_directory(None),
            Path::new("output").join("test")
        );
    }
}
