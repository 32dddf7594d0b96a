//! `runcast merge DIR`: the shards of one run into the outputs of the unsharded run.

use crate::cli::FigureArgs;
use crate::error::Error;
use crate::options::figure_formats;
use crate::stdout;
use runcast::projection::merge_shards;
use runcast::report;
use std::path::Path;

/// Merges the shards in `directory` and writes the projection's files there,
/// with the summary on stdout, as `runcast project` does. Nothing is written
/// unless every shard is present, intact and of the same run; figures go in
/// each of `figures`' formats.
pub fn run(directory: &Path, figures: &FigureArgs) -> Result<(), Error> {
    let formats = figure_formats(figures)?;
    let (run, projection) = merge_shards(directory)?;
    let reports = report::render_all(&projection, &run.provenance())?;
    let written = super::write_reports(directory, reports, &report::PROJECTION_FILES, &formats)?;
    stdout::print(&format!(
        "merged the shards of {} (seed {})\n",
        run.scenario_name, run.settings.seed
    ))?;
    stdout::print(&report::summary(&projection))?;
    stdout::print(&format!("wrote {}\n", directory.display()))?;
    stdout::print(&super::project::removed_lines(directory, &written.removed))
}
