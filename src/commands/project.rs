//! `runcast project`: the main job.

use super::print_warnings;
use crate::cli::ProjectArgs;
use crate::error::Error;
use crate::options::ProjectOptions;
use crate::progress::{advance, toy_progress};
use crate::stdout;
use runcast::projection::{self, Projection, ShardRun, ShardSpec, project};
use runcast::report;
use std::path::Path;

pub fn run(args: &ProjectArgs) -> Result<(), Error> {
    let options = ProjectOptions::resolve(args)?;
    print_warnings(&options.loaded);
    if let Some(shard) = options.shard {
        return run_shard(&options, shard);
    }
    let projection = projection(&options)?;
    let reports = report::render_all(&projection, &options.provenance())?;
    let written = super::write_reports(
        &options.out,
        reports,
        &report::PROJECTION_FILES,
        &options.formats,
    )?;
    stdout::print(&report::summary(&projection))?;
    stdout::print(&format!("wrote {}\n", options.out.display()))?;
    stdout::print(&removed_lines(&options.out, &written.removed))
}

/// The projection `options` ask for, on their worker threads, with a
/// progress bar unless quiet.
pub(super) fn projection(options: &ProjectOptions) -> Result<Projection, Error> {
    let settings = &options.settings;
    let bar = toy_progress(settings.total_toys(), options.quiet);
    let progress = |done: u64| advance(&bar, done);
    let projection = with_threads(options.threads, || {
        project(&options.model, settings, &progress)
    })??;
    bar.finish_and_clear();
    Ok(projection)
}

/// `--shard K/N`: runs the shard's toys and writes its file into the output
/// directory; `runcast merge` makes the outputs.
fn run_shard(options: &ProjectOptions, shard: ShardSpec) -> Result<(), Error> {
    let loaded = &options.loaded;
    let run = ShardRun::new(
        loaded.file_name(),
        loaded.text.clone(),
        loaded.scenario.table_files.clone(),
        options.settings.clone(),
    );
    let bar = toy_progress(options.settings.total_toys_in(shard), options.quiet);
    let progress = |done: u64| advance(&bar, done);
    let path = with_threads(options.threads, || {
        projection::run_shard(&options.model, &run, shard, &options.out, &progress)
    })??;
    bar.finish_and_clear();
    stdout::print(&format!("wrote shard {shard}: {}\n", path.display()))
}

/// The "removed FILE" lines for files of the output set left from an earlier
/// run that `write_all` removed from `out`.
pub(super) fn removed_lines(out: &Path, removed: &[String]) -> String {
    removed
        .iter()
        .map(|name| {
            format!(
                "removed {} (left from an earlier run)\n",
                out.join(name).display()
            )
        })
        .collect()
}

/// Runs `work` on a pool of `threads` workers (the global pool when None).
pub(super) fn with_threads<T: Send>(
    threads: Option<usize>,
    work: impl FnOnce() -> T + Send,
) -> Result<T, Error> {
    match threads {
        None => Ok(work()),
        Some(threads) => rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map(|pool| pool.install(work))
            .map_err(|error| Error::Usage(format!("--threads {threads}: {error}"))),
    }
}
