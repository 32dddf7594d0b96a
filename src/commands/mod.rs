//! The commands: each loads what it needs, calls the engine and reports.

mod bench;
mod check;
mod new;
mod project;

use crate::cli::{Cli, Command};
use crate::error::Error;
use crate::scenario::Scenario;
use std::path::Path;

/// Runs one command line.
pub fn run(cli: Cli) -> Result<(), Error> {
    match cli.command {
        Command::Project(args) => project::run(&args),
        Command::Check { scenario } => check::run(&scenario),
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
