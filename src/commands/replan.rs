//! `runcast replan`: what the data taken say, and how much longer.

use super::print_warnings;
use super::project::{removed_lines, with_threads};
use crate::cli::ReplanArgs;
use crate::error::Error;
use crate::options::ReplanOptions;
use crate::progress::toy_progress;
use crate::stdout;
use runcast::replan::replan;
use runcast::report;

pub fn run(args: &ReplanArgs) -> Result<(), Error> {
    let options = ReplanOptions::resolve(args)?;
    print_warnings(&options.loaded);
    let settings = &options.settings;
    let bar = toy_progress(settings.total_toys(), options.quiet);
    let progress = |done: u64| bar.inc(done);
    let scan = options.loaded.scenario.signal_scan();
    let computed = with_threads(options.threads, || {
        replan(
            &options.model,
            scan.as_ref(),
            options.data.clone(),
            settings,
            &progress,
        )
    })?;
    bar.finish_and_clear();
    let replan = computed.map_err(|source| Error::Replan {
        path: options.loaded.path.clone(),
        source,
    })?;
    let reports = report::render_replan(&replan, &options.provenance())?;
    let written = super::write_reports(
        &options.out,
        reports,
        &report::REPLAN_FILES,
        &options.formats,
    )?;
    stdout::print(&report::replan_summary(&replan))?;
    stdout::print(&format!("wrote {}\n", options.out.display()))?;
    stdout::print(&removed_lines(&options.out, &written.removed))
}
