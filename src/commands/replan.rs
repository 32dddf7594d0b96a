//! `runcast replan`: what the data taken say, and how much longer.

use super::print_warnings;
use super::project::{removed_lines, with_threads};
use crate::cli::ReplanArgs;
use crate::error::Error;
use crate::options::ReplanOptions;
use crate::progress::{advance, toy_progress};
use crate::stdout;
use runcast::projection::{ShardRun, ShardSpec};
use runcast::replan::{ReplanInputs, replan, run_replan_shard};
use runcast::report;

pub fn run(args: &ReplanArgs) -> Result<(), Error> {
    let options = ReplanOptions::resolve(args)?;
    print_warnings(&options.loaded);
    if let Some(shard) = options.shard {
        return run_shard(&options, shard);
    }
    let settings = &options.settings;
    let bar = toy_progress(settings.total_toys(), options.quiet);
    let progress = |done: u64| advance(&bar, done);
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

/// `--shard K/N`: runs the shard's pseudo-experiments and writes its file
/// into the output directory; `runcast merge` makes the outputs.
fn run_shard(options: &ReplanOptions, shard: ShardSpec) -> Result<(), Error> {
    let loaded = &options.loaded;
    let settings = &options.settings;
    let run = ShardRun::new(
        loaded.file_name(),
        loaded.text.clone(),
        loaded.scenario.table_files.clone(),
        settings.plan.clone(),
    );
    let inputs = ReplanInputs::new(settings, options.data.clone());
    let bar = toy_progress(settings.total_toys_in(shard), options.quiet);
    let progress = |done: u64| advance(&bar, done);
    let scan = loaded.scenario.signal_scan();
    let path = with_threads(options.threads, || {
        run_replan_shard(
            &options.model,
            scan.as_ref(),
            &inputs,
            run,
            shard,
            &options.out,
            &progress,
        )
    })??;
    bar.finish_and_clear();
    stdout::print(&format!(
        "wrote shard {shard}: {}
",
        path.display()
    ))
}
