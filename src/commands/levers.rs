//! `runcast levers`: each input a user can act on improved and worsened,
//! its Asimov days computed as `runcast project --asimov-only` does.

use super::print_warnings;
use super::project::{removed_lines, with_threads};
use crate::cli::LeversArgs;
use crate::error::Error;
use crate::options::LeversOptions;
use crate::progress::{advance, plan_progress, toy_progress};
use crate::stdout;
use runcast::levers::{inputs, levers, toy_medians, toy_plans};
use runcast::report;

pub fn run(args: &LeversArgs) -> Result<(), Error> {
    let options = LeversOptions::resolve(args)?;
    print_warnings(&options.loaded);
    let scenario = &options.loaded.scenario;
    let bar = plan_progress(2 * inputs(scenario).len() as u64, options.quiet);
    let progress = |done: u64| advance(&bar, done);
    let computed = with_threads(options.threads, || {
        levers(
            scenario,
            &options.settings,
            options.step,
            &options.steps,
            &progress,
        )
    })?;
    bar.finish_and_clear();
    let mut levers = computed.map_err(Error::Projection)?;
    if let Some(settings) = &options.toy_settings {
        let plans = toy_plans(&levers).len() as u64;
        let bar = toy_progress(plans * settings.total_toys(), options.quiet);
        let progress = |done: u64| advance(&bar, done);
        with_threads(options.threads, || {
            toy_medians(&mut levers, scenario, settings, &progress)
        })?
        .map_err(Error::Projection)?;
        bar.finish_and_clear();
    }
    let reports = report::render_levers(&levers, &options.provenance())?;
    let written = report::write_all(
        &options.out,
        reports,
        &report::LEVERS_FILES,
        &options.formats,
    )?;
    stdout::print(&report::levers_summary(&levers))?;
    stdout::print(&format!("wrote {}\n", options.out.display()))?;
    stdout::print(&removed_lines(&options.out, &written.removed))
}
