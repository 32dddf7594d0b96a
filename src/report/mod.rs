//! Report: a projection turned into files a person reads.
//!
//! One file per format, each turning a [`Projection`] into bytes and nothing
//! else: `svg_projection.rs` (significance against days), `svg_probability.rs`
//! (probability of reaching each target), `svg_limits.rs` (expected upper
//! limit on the signal strength against days), `csv.rs`, `json.rs`, and
//! `summary.rs` for the terminal. [`render_all`] renders every file in memory;
//! [`write_all`] alone touches the disk, so a rendering error leaves nothing
//! written.
//!
//! Pseudo-data spectra ([`render_spectrum`]: `svg_spectrum.rs`,
//! `csv_spectrum.rs`) and the binning scan ([`render_binning`]:
//! `svg_binning.rs`, `json_binning.rs`, and `binning_table.rs` for the
//! terminal) follow the same pattern; `spectrum_summary.rs` and
//! `check_summary.rs` are the terminal text of `spectrum` and `check`.

mod binning_table;
mod check;
mod check_summary;
mod csv;
mod csv_spectrum;
mod error;
mod json;
mod json_binning;
mod plot;
mod spectrum_summary;
mod summary;
mod svg_binning;
mod svg_limits;
mod svg_probability;
mod svg_projection;
mod svg_spectrum;
mod warnings;
mod writer;

pub use binning_table::binning_table;
pub use check_summary::check_summary;
pub use error::ReportError;
pub use spectrum_summary::spectrum_summary;
pub use summary::summary;
pub use warnings::warning_text;
pub use writer::write_all;

use crate::binning::BinningScan;
use crate::projection::Projection;
use crate::spectrum::Spectrum;

/// One rendered report file: its name inside the output directory and its bytes.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Report {
    /// File name, without directory.
    pub name: String,
    pub bytes: Vec<u8>,
}

/// File name of the significance-against-days plot.
pub const PROJECTION_SVG: &str = "projection.svg";
/// File name of the probability-of-reaching-each-target plot.
pub const PROBABILITY_SVG: &str = "probability.svg";
/// File name of the expected-limit plot (only when limits were computed).
pub const LIMITS_SVG: &str = "limits.svg";
/// File name of the per-exposure table.
pub const PROJECTION_CSV: &str = "projection.csv";
/// File name of the whole projection as JSON.
pub const PROJECTION_JSON: &str = "projection.json";

/// Renders every report file in memory, in a fixed order:
/// `projection.svg`, `probability.svg`, `limits.svg` (only when the
/// projection carries expected limits, `cl` set), `projection.csv`,
/// `projection.json`.
///
/// The projection is checked first (finite numbers, increasing days above
/// zero, limits above zero, one probability per target in the order of
/// `targets`), so no renderer sees a value it cannot show. The same
/// projection always gives byte-identical files.
pub fn render_all(projection: &Projection) -> Result<Vec<Report>, ReportError> {
    check::check_projection(projection)?;
    let mut reports = vec![
        Report {
            name: PROJECTION_SVG.to_string(),
            bytes: svg_projection::render(projection)?,
        },
        Report {
            name: PROBABILITY_SVG.to_string(),
            bytes: svg_probability::render(projection)?,
        },
    ];
    if let Some(cl) = projection.cl {
        reports.push(Report {
            name: LIMITS_SVG.to_string(),
            bytes: svg_limits::render(projection, cl)?,
        });
    }
    reports.push(Report {
        name: PROJECTION_CSV.to_string(),
        bytes: csv::render(projection)?,
    });
    reports.push(Report {
        name: PROJECTION_JSON.to_string(),
        bytes: json::render(projection)?,
    });
    Ok(reports)
}

/// File name of the binning plot.
pub const BINNING_SVG: &str = "binning.svg";
/// File name of the binning scan as JSON.
pub const BINNING_JSON: &str = "binning.json";

/// Renders the spectra in memory: `<stem>.svg` and `<stem>.csv`, named by
/// [`Spectrum::file_stem`]. The same spectra always give byte-identical files.
pub fn render_spectrum(spectrum: &Spectrum) -> Result<Vec<Report>, ReportError> {
    let stem = spectrum.file_stem();
    Ok(vec![
        Report {
            name: format!("{stem}.svg"),
            bytes: svg_spectrum::render(spectrum)?,
        },
        Report {
            name: format!("{stem}.csv"),
            bytes: csv_spectrum::render(spectrum)?,
        },
    ])
}

/// Renders the binning scan in memory: `binning.svg`, `binning.json`.
pub fn render_binning(scan: &BinningScan) -> Result<Vec<Report>, ReportError> {
    Ok(vec![
        Report {
            name: BINNING_SVG.to_string(),
            bytes: svg_binning::render(scan)?,
        },
        Report {
            name: BINNING_JSON.to_string(),
            bytes: json_binning::render(scan)?,
        },
    ])
}

/// An exposure as "After 30 d (24 live days)": calendar days as given, live
/// days to a tenth.
fn exposure_label(days: f64, live_days: f64) -> String {
    format!(
        "After {days} d ({} live days)",
        (live_days * 10.0).round() / 10.0
    )
}

/// Decimals that resolve one step of the window scan, for window edges.
fn window_digits(scan: &BinningScan) -> usize {
    let step = scan.peak.width / crate::binning::WINDOW_STEPS_PER_SIGNAL_WIDTH as f64;
    (-step.log10().floor()).max(0.0) as usize + 1
}

/// A target significance as people write it: `3σ`, `2.5σ`.
fn target_label(target: f64) -> String {
    format!("{target}σ")
}

/// A confidence level as a percentage: 0.95 as "95%", 0.683 as "68.3%".
fn percent_label(cl: f64) -> String {
    format!("{}%", (cl * 1e4).round() / 100.0)
}

/// Calendar days, rounded up so the value is reached by then: to a tenth of a
/// day below 10 days ("3.1 d"), to whole days from there on ("142 d").
fn days_label(days: f64) -> String {
    let tenths = (days * 10.0).ceil() / 10.0;
    if tenths < 10.0 {
        format!("{tenths:.1} d")
    } else {
        format!("{} d", days.ceil())
    }
}

#[cfg(test)]
pub(crate) mod example;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn renders_the_four_files_in_order() {
        let reports = render_all(&example::with_toys()).unwrap();
        let names: Vec<&str> = reports.iter().map(|report| report.name.as_str()).collect();
        assert_eq!(
            names,
            [
                PROJECTION_SVG,
                PROBABILITY_SVG,
                PROJECTION_CSV,
                PROJECTION_JSON
            ]
        );
        assert!(reports.iter().all(|report| !report.bytes.is_empty()));
    }

    #[test]
    fn rendering_twice_gives_identical_bytes() {
        for projection in [
            example::with_toys(),
            example::asimov_only(),
            example::with_limits(),
            example::asimov_only_with_limits(),
        ] {
            let first = render_all(&projection).unwrap();
            let second = render_all(&projection).unwrap();
            assert_eq!(first, second);
        }
    }

    #[test]
    fn a_nan_is_refused_before_anything_is_rendered() {
        let mut projection = example::with_toys();
        projection.points[1].z_median = Some(f64::NAN);
        let error = render_all(&projection).unwrap_err();
        assert_eq!(
            error.to_string(),
            "cannot report the projection: points[1].z_median is NaN, expected a finite number"
        );
    }

    #[test]
    fn days_are_rounded_up() {
        assert_eq!(days_label(141.2), "142 d");
        assert_eq!(days_label(142.0), "142 d");
        assert_eq!(days_label(3.04), "3.1 d");
        assert_eq!(days_label(0.25), "0.3 d");
        assert_eq!(days_label(9.99), "10 d");
        assert_eq!(target_label(3.0), "3σ");
        assert_eq!(target_label(2.5), "2.5σ");
    }

    #[test]
    fn confidence_levels_read_as_percentages() {
        assert_eq!(percent_label(0.95), "95%");
        assert_eq!(percent_label(0.9), "90%");
        assert_eq!(percent_label(0.683), "68.3%");
    }

    #[test]
    fn limits_add_their_plot_after_the_probability_plot() {
        let reports = render_all(&example::with_limits()).unwrap();
        let names: Vec<&str> = reports.iter().map(|report| report.name.as_str()).collect();
        assert_eq!(
            names,
            [
                PROJECTION_SVG,
                PROBABILITY_SVG,
                LIMITS_SVG,
                PROJECTION_CSV,
                PROJECTION_JSON
            ]
        );
    }
}
