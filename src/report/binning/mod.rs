//! The binning scan's files: `figure.rs` (`binning.svg`), `json.rs`
//! (`binning.json`), and `table.rs` for the terminal.

mod figure;
mod json;
mod table;

pub use table::binning_table;

use super::{Kind, Output, Report, ReportError, render};
use crate::binning::{BinningScan, WINDOW_STEPS_PER_SIGNAL_WIDTH};
use crate::provenance::Provenance;

/// File name of the binning plot.
pub const BINNING_SVG: &str = "binning.svg";
/// File name of the binning scan as JSON.
pub const BINNING_JSON: &str = "binning.json";
/// Every file `render_binning` gives: the output set of `runcast binning`.
pub const BINNING_FILES: [&str; 2] = [BINNING_SVG, BINNING_JSON];

/// Renders the binning scan in memory: `binning.svg`, `binning.json`.
pub fn render_binning(
    scan: &BinningScan,
    provenance: &Provenance,
) -> Result<Vec<Report>, ReportError> {
    render(
        &[
            &Output::new(BINNING_SVG, Kind::Figure, scan, figure::render),
            &Output::new(BINNING_JSON, Kind::Document, scan, json::render),
        ],
        provenance,
    )
}

/// Decimals that resolve one step of the window scan, for window edges.
fn window_digits(scan: &BinningScan) -> usize {
    let step = scan.peak.width / WINDOW_STEPS_PER_SIGNAL_WIDTH as f64;
    (-step.log10().floor()).max(0.0) as usize + 1
}
