//! The commands: each loads what it needs, calls the engine and reports.

mod bench;
mod binning;
mod check;
mod compare;
mod new;
mod project;
mod spectrum;

use crate::cli::{Cli, Command, FigureArgs};
use crate::error::Error;
use crate::model::Model;
use crate::report::FigureFormats;
use crate::scenario::Scenario;
use std::path::{Path, PathBuf};

/// Runs one command line.
pub fn run(cli: Cli) -> Result<(), Error> {
    match cli.command {
        Command::Project(args) => project::run(&args),
        Command::Check { scenario } => check::run(&scenario),
        Command::Spectrum(args) => spectrum::run(&args),
        Command::Binning(args) => binning::run(&args),
        Command::Compare(args) => compare::run(&args),
        Command::New { file } => new::run(&file),
        Command::Bench(args) => bench::run(&args),
    }
}

/// Loads a scenario and prints its warnings to stderr.
fn load_scenario(path: &Path) -> Result<Scenario, Error> {
    let scenario = Scenario::load(path).map_err(|source| Error::Scenario {
        path: path.to_path_buf(),
        source,
    })?;
    for warning in scenario.warnings() {
        eprintln!("runcast: warning: {}: {warning}", path.display());
    }
    Ok(scenario)
}

/// `out`, or `output/<scenario file stem>`.
fn output_directory(scenario: &Path, out: Option<&Path>) -> PathBuf {
    out.map(Path::to_path_buf).unwrap_or_else(|| {
        let stem = scenario.file_stem().map_or_else(
            || "scenario".into(),
            |stem| stem.to_string_lossy().into_owned(),
        );
        Path::new("output").join(stem)
    })
}

/// Checks that `days` are calendar days after which the scenario has taken
/// some data: finite, above zero, with live time by then.
fn check_days(scenario: &Scenario, days: f64) -> Result<(), Error> {
    if !(days.is_finite() && days > 0.0) {
        return Err(Error::Usage(format!(
            "--days {days}: expected calendar days above 0"
        )));
    }
    let live_days = Model::from_scenario(scenario).live_time.live_days(days);
    if live_days <= 0.0 {
        return Err(Error::Usage(format!(
            "--days {days}: the schedule gives no live time by then (live days {live_days})"
        )));
    }
    Ok(())
}

/// The figure formats and PNG resolution asked for.
fn figure_formats(args: &FigureArgs) -> Result<FigureFormats, Error> {
    FigureFormats::new(&args.formats, args.dpi).ok_or_else(|| {
        Error::Usage(format!(
            "--format, --dpi {}: expected at least one format and a resolution from {} to {}",
            args.dpi,
            crate::report::DPI_RANGE.start(),
            crate::report::DPI_RANGE.end()
        ))
    })
}
