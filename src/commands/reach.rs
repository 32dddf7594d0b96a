//! `runcast reach`: limits and discovery rates over the scan of the signal position.

use super::print_warnings;
use super::project::{removed_lines, with_threads};
use crate::cli::ReachArgs;
use crate::error::Error;
use crate::options::ReachOptions;
use crate::progress::{advance, toy_progress};
use crate::stdout;
use runcast::reach::reach;
use runcast::report;

pub fn run(args: &ReachArgs) -> Result<(), Error> {
    let options = ReachOptions::resolve(args)?;
    print_warnings(&options.loaded);
    let settings = &options.settings;
    let positions = options
        .loaded
        .scenario
        .signal_scan()
        .map_or(0, |scan| scan.len());
    let steps = (positions * settings.days.len() * (1 + settings.toys)) as u64;
    let bar = toy_progress(steps, options.quiet);
    let progress = |done: u64| advance(&bar, done);
    let computed = with_threads(options.threads, || {
        reach(&options.loaded.scenario, settings, &progress)
    })?;
    bar.finish_and_clear();
    let reach = computed.map_err(|source| Error::Reach {
        path: options.loaded.path.clone(),
        source,
    })?;
    let reports = report::render_reach(&reach, &options.provenance())?;
    let written = super::write_reports(
        &options.out,
        reports,
        &report::REACH_FILES,
        &options.formats,
    )?;
    stdout::print(&report::reach_summary(&reach, settings.toys))?;
    stdout::print(&format!("wrote {}\n", options.out.display()))?;
    stdout::print(&removed_lines(&options.out, &written.removed))
}
