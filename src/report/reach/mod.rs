//! The reach's files: `figure.rs` (`reach.svg`), `csv.rs` (`reach.csv`),
//! `json.rs` (`reach.json`), and `summary.rs` for the terminal. The rate
//! panel against the position (`position_chart`, `rate_axis`, `rate_span`)
//! is also `compare --reach-days`'s.

mod csv;
mod figure;
mod json;
mod summary;

pub use summary::reach_summary;

pub(in crate::report) use figure::{position_chart, rate_axis, rate_span};

use super::{Kind, Output, Report, ReportError, render};
use crate::provenance::Provenance;
use crate::reach::Reach;

/// File name of the reach plot.
pub const REACH_SVG: &str = "reach.svg";
/// File name of the reach table.
pub const REACH_CSV: &str = "reach.csv";
/// File name of the reach document.
pub const REACH_JSON: &str = "reach.json";
/// Every file `render_reach` gives: the output set of `runcast reach`.
pub const REACH_FILES: [&str; 3] = [REACH_SVG, REACH_CSV, REACH_JSON];

/// Renders the reach in memory: `reach.svg`, `reach.csv`, `reach.json`.
pub fn render_reach(reach: &Reach, provenance: &Provenance) -> Result<Vec<Report>, ReportError> {
    render(
        &[
            &Output::new(REACH_SVG, Kind::Figure, reach, figure::render),
            &Output::new(REACH_CSV, Kind::Table, reach, csv::render),
            &Output::new(REACH_JSON, Kind::Document, reach, json::render),
        ],
        provenance,
    )
}
