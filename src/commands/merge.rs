//! `runcast merge DIR`: the shards of one run into the outputs of the unsharded run.

use crate::cli::FigureArgs;
use crate::error::Error;
use crate::options::figure_formats;
use crate::stdout;
use runcast::projection::{ShardRun, ShardSet, merge_shard_set};
use runcast::provenance::ScenarioFile;
use runcast::replan::{REPLAN_COMMAND, describe_shard_inputs, merge_replan_shards};
use runcast::report;
use std::path::Path;

/// Merges the shards in `directory` and writes the files of the command
/// that made them (`project` or `replan`) there, with its summary on
/// stdout, as the unsharded run does. Nothing is written unless every
/// shard is present, intact and of the same run; figures go in each of
/// `figures`' formats.
pub fn run(directory: &Path, figures: &FigureArgs) -> Result<(), Error> {
    let formats = figure_formats(figures)?;
    let shards = ShardSet::open(directory, &describe_shard_inputs)?;
    let (run, summary, written) = if shards.run().command == REPLAN_COMMAND {
        let (run, settings, replan) = merge_replan_shards(shards)?;
        let provenance = settings.provenance(scenario_file(&run), &replan.data);
        let reports = report::render_replan(&replan, &provenance)?;
        let written = super::write_reports(directory, reports, &report::REPLAN_FILES, &formats)?;
        (run, report::replan_summary(&replan), written)
    } else {
        let (run, projection) = merge_shard_set(shards)?;
        let reports = report::render_all(&projection, &run.provenance())?;
        let written =
            super::write_reports(directory, reports, &report::PROJECTION_FILES, &formats)?;
        (run, report::summary(&projection), written)
    };
    stdout::print(&format!(
        "merged the shards of {} (seed {})\n",
        run.scenario_name, run.settings.seed
    ))?;
    stdout::print(&summary)?;
    stdout::print(&format!("wrote {}\n", directory.display()))?;
    stdout::print(&super::project::removed_lines(directory, &written.removed))
}

/// The scenario file a shard carries, as provenance records it.
fn scenario_file(run: &ShardRun) -> ScenarioFile {
    ScenarioFile::new(&run.scenario_name, &run.scenario_text).with_tables(&run.table_files)
}
