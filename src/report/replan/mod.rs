//! The re-plan's files: `figure.rs` (`replan.svg`), `csv.rs` (`replan.csv`),
//! `json.rs` (`replan.json`), and `summary.rs` for the terminal.

mod csv;
mod figure;
mod json;
mod summary;

pub use summary::replan_summary;

use super::{Kind, Output, Report, ReportError, render};
use crate::provenance::Provenance;
use crate::replan::Replan;

/// File name of the re-plan figure.
pub const REPLAN_SVG: &str = "replan.svg";
/// File name of the re-plan table.
pub const REPLAN_CSV: &str = "replan.csv";
/// File name of the re-plan document.
pub const REPLAN_JSON: &str = "replan.json";
/// Every file `render_replan` gives: the output set of `runcast replan`.
pub const REPLAN_FILES: [&str; 3] = [REPLAN_SVG, REPLAN_CSV, REPLAN_JSON];

/// Renders the re-plan in memory: `replan.svg`, `replan.csv`, `replan.json`.
pub fn render_replan(replan: &Replan, provenance: &Provenance) -> Result<Vec<Report>, ReportError> {
    render(
        &[
            &Output::new(REPLAN_SVG, Kind::Figure, replan, figure::render),
            &Output::new(REPLAN_CSV, Kind::Table, replan, csv::render),
            &Output::new(REPLAN_JSON, Kind::Document, replan, json::render),
        ],
        provenance,
    )
}
