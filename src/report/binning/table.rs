//! The terminal table of `runcast binning`: Z_A for every bin width, the
//! recommendation, and the counting windows every half signal width with the
//! best one.

use super::window_digits;
use crate::binning::{
    BinningScan, RECOMMENDATION_TOLERANCE, WINDOW_BACKGROUND_METHOD, WINDOW_STEPS_PER_SIGNAL_WIDTH,
};
use crate::report::kit::format::{aligned, exposure_label};

/// Windows listed in the table: one every this many steps of the scan.
const WINDOW_ROW_EVERY: usize = WINDOW_STEPS_PER_SIGNAL_WIDTH / 2;

/// The scan as plain text.
pub fn binning_table(scan: &BinningScan) -> String {
    let unit = &scan.unit;
    let mut text = format!(
        "{}\n{}\n\nBinned shape fit: Asimov significance by bin width\n",
        scan.title,
        exposure_label(scan.days, scan.live_days)
    );
    let mut rows = vec![vec![
        format!("bin width [{unit}]"),
        "Z_A [σ]".to_string(),
        String::new(),
    ]];
    for point in &scan.bin_widths {
        let mut notes = Vec::new();
        if point.width == scan.recommended_bin_width {
            notes.push("recommended");
        }
        if point.width == scan.scenario_bin_width {
            notes.push("scenario");
        }
        rows.push(vec![
            point.width.to_string(),
            format!("{:.4}", point.z_asimov),
            notes.join(", "),
        ]);
    }
    text.push_str(&aligned(&rows));
    text.push_str(&format!(
        "Recommended bin width: {} {unit} (the coarsest within {}% of the best Z_A)\n\n",
        scan.recommended_bin_width,
        100.0 * RECOMMENDATION_TOLERANCE
    ));

    let digits = window_digits(scan);
    let edges = |low: f64, high: f64| format!("[{low:.digits$}, {high:.digits$}]");
    text.push_str(&format!(
        "Counting window centred on {} {unit}: Asimov significance of the count\n",
        scan.peak.centre
    ));
    text.push_str(&window_background_line(scan));
    let mut rows = vec![vec![
        format!("window [{unit}]"),
        "signal fraction".to_string(),
        "Z_A [σ]".to_string(),
    ]];
    let listed = scan
        .windows
        .iter()
        .skip(WINDOW_ROW_EVERY - 1)
        .step_by(WINDOW_ROW_EVERY);
    for window in listed {
        rows.push(vec![
            edges(window.low, window.high),
            format!("{:.4}", window.signal_fraction),
            format!("{:.4}", window.z_asimov),
        ]);
    }
    text.push_str(&aligned(&rows));
    let best = scan.best_window;
    text.push_str(&format!(
        "Best window: {} {unit}, {:.1}% of the signal, Z_A = {:.4}σ\n",
        edges(best.low, best.high),
        100.0 * best.signal_fraction,
        best.z_asimov
    ));
    text
}

/// One line on how the windows' background is known.
fn window_background_line(scan: &BinningScan) -> String {
    if scan.sideband_backgrounds.is_empty() {
        return "Background known exactly: no sideband measurement\n".to_string();
    }
    format!(
        "Backgrounds not known exactly ({}): {WINDOW_BACKGROUND_METHOD}\n",
        scan.sideband_backgrounds.join(", ")
    )
}
