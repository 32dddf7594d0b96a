//! `runcast check`: validate a scenario and print what it implies, asymptotically.

use super::print_warnings;
use crate::error::Error;
use crate::options::CheckOptions;
use crate::stdout;
use runcast::projection::project;
use runcast::report;

pub fn run(path: &std::path::Path) -> Result<(), Error> {
    let options = CheckOptions::resolve(path)?;
    print_warnings(&options.loaded);
    let projection = project(&options.model, &options.settings, &|_| {})?;
    stdout::print(&report::check_summary(
        path,
        &options.loaded.scenario,
        &options.model,
        &projection,
    ))
}
