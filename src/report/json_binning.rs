//! `binning.json`: both scans and the recommendation.
//!
//! Schema: `{days, bin_widths: [{width, z_asimov}], windows: [{low, high,
//! signal_fraction, z_asimov}], recommended_bin_width, best_window: {low,
//! high, signal_fraction, z_asimov}}`, widths and edges in the unit of the
//! observable, significances in σ.

use super::{BINNING_JSON, ReportError};
use crate::binning::{BinWidthPoint, BinningScan, WindowPoint};
use serde::Serialize;

#[derive(Serialize)]
struct BinningJson<'s> {
    days: f64,
    bin_widths: &'s [BinWidthPoint],
    windows: &'s [WindowPoint],
    recommended_bin_width: f64,
    best_window: WindowPoint,
}

/// Pretty-printed JSON of the scan, ending with a newline.
pub(super) fn render(scan: &BinningScan) -> Result<Vec<u8>, ReportError> {
    let document = BinningJson {
        days: scan.days,
        bin_widths: &scan.bin_widths,
        windows: &scan.windows,
        recommended_bin_width: scan.recommended_bin_width,
        best_window: scan.best_window,
    };
    let mut bytes = serde_json::to_vec_pretty(&document).map_err(|error| ReportError::Render {
        file: BINNING_JSON,
        message: error.to_string(),
    })?;
    bytes.push(b'\n');
    Ok(bytes)
}
