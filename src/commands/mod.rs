//! The commands: each resolves its options, calls the engine and reports.

mod bench;
mod binning;
mod check;
mod compare;
mod levers;
mod merge;
mod new;
mod project;
mod reach;
mod replan;
mod slurm;
mod spectrum;

use crate::cli::{Cli, Command};
use crate::error::Error;
use crate::options::Loaded;
use runcast::report;
use std::path::Path;

/// Runs one command line.
pub fn run(cli: Cli) -> Result<(), Error> {
    match cli.command {
        Command::Project(args) => project::run(&args),
        Command::Check { scenario } => check::run(&scenario),
        Command::Spectrum(args) => spectrum::run(&args),
        Command::Reach(args) => reach::run(&args),
        Command::Replan(args) => replan::run(&args),
        Command::Binning(args) => binning::run(&args),
        Command::Compare(args) => compare::run(&args),
        Command::Levers(args) => levers::run(&args),
        Command::New { file } => new::run(&file),
        Command::Bench(args) => bench::run(&args),
        Command::Merge { directory, figures } => merge::run(&directory, &figures),
        Command::Slurm(args) => slurm::run(&args),
    }
}

/// Prints the scenario's warnings to stderr.
fn print_warnings(loaded: &Loaded) {
    for warning in loaded.scenario.warnings() {
        eprintln!(
            "runcast: warning: {}: {}",
            loaded.path.display(),
            report::warning_text(&warning)
        );
    }
}

/// Writes a product's files into `out` ([`report::write_all`]), saying on
/// stderr which staging folders of earlier, killed runs it cleared first.
fn write_reports(
    out: &Path,
    reports: Vec<report::Report>,
    family: &[&str],
    formats: &report::FigureFormats,
) -> Result<report::Written, Error> {
    let written = report::write_all(out, reports, family, formats)?;
    for leftover in &written.leftovers {
        let done = if leftover.completed {
            "moved the rest of its files in and removed"
        } else {
            "removed"
        };
        eprintln!(
            "runcast: warning: {}: an earlier run was killed while writing here; {done} its staging folder {}",
            out.display(),
            leftover.path.display()
        );
    }
    Ok(written)
}

/// The "wrote FILE" lines after the files `names` went to `out`.
fn wrote(out: &Path, names: &[String]) -> String {
    names
        .iter()
        .map(|name| format!("wrote {}\n", out.join(name).display()))
        .collect()
}
