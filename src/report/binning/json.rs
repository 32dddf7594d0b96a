//! `binning.json`: both scans and the recommendation.
//!
//! Schema: `{days, bin_widths: [{width, z_asimov}], windows: [{low, high,
//! signal_fraction, z_asimov}], recommended_bin_width, best_window: {low,
//! high, signal_fraction, z_asimov}, window_background: {method,
//! sideband_backgrounds: [name]}}`, widths and edges in the unit of the
//! observable, significances in σ.

use super::BINNING_JSON;
use crate::binning::{BinWidthPoint, BinningScan, WINDOW_BACKGROUND_METHOD, WindowPoint};
use crate::report::ReportError;
use crate::report::kit::encode::json_bytes;
use serde::Serialize;

#[derive(Serialize)]
struct BinningJson<'s> {
    days: f64,
    bin_widths: &'s [BinWidthPoint],
    windows: &'s [WindowPoint],
    recommended_bin_width: f64,
    best_window: WindowPoint,
    window_background: WindowBackground<'s>,
}

/// How the windows' background is known.
#[derive(Serialize)]
struct WindowBackground<'s> {
    method: &'static str,
    sideband_backgrounds: &'s [String],
}

/// Pretty-printed JSON of the scan, ending with a newline.
pub(super) fn render(scan: &BinningScan) -> Result<Vec<u8>, ReportError> {
    let document = BinningJson {
        days: scan.days,
        bin_widths: &scan.bin_widths,
        windows: &scan.windows,
        recommended_bin_width: scan.recommended_bin_width,
        best_window: scan.best_window,
        window_background: WindowBackground {
            method: WINDOW_BACKGROUND_METHOD,
            sideband_backgrounds: &scan.sideband_backgrounds,
        },
    };
    json_bytes(BINNING_JSON, &document)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::binning::scan_binning;
    use crate::report::projection::example;
    use serde_json::Value;

    #[test]
    fn keys_follow_the_documented_schema() {
        let scenario = example::invented_peak();
        let scan = scan_binning(&scenario, 10.0).unwrap();
        let json: Value = serde_json::from_slice(&render(&scan).unwrap()).unwrap();
        let keys: Vec<&str> = json
            .as_object()
            .unwrap()
            .keys()
            .map(String::as_str)
            .collect();
        assert_eq!(
            keys,
            [
                "days",
                "bin_widths",
                "windows",
                "recommended_bin_width",
                "best_window",
                "window_background"
            ]
        );
        assert_eq!(json["recommended_bin_width"], scan.recommended_bin_width);
        assert_eq!(
            json["windows"].as_array().unwrap().len(),
            scan.windows.len()
        );
    }
}
