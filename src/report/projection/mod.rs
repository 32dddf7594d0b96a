//! The projection's files: `significance.rs` (`projection.svg`, significance
//! against days), `probability.rs` (`probability.svg`, probability of reaching
//! each target), `limits.rs` (`limits.svg`, expected upper limit on the
//! signal strength), `csv.rs` (`projection.csv`, `at.csv`), `json.rs`, and
//! `summary.rs` for the terminal (with `at_summary.rs`, the `--at` days).
//! `check.rs` holds what they may assume about a projection, `ensembles.rs`
//! how each ensemble of pseudo-experiments is named and counted.

mod at_summary;
mod check;
mod csv;
pub(super) mod ensembles;
mod json;
mod limits;
mod probability;
mod significance;
mod summary;

#[cfg(test)]
pub(crate) mod example;

pub(super) use check::check_projection;
pub use summary::summary;

use super::{Kind, Output, Render, Report, ReportError, render};
use crate::projection::{ExposurePoint, Projection};
use crate::provenance::Provenance;
use std::ops::Range;

/// File name of the significance-against-days plot.
pub const PROJECTION_SVG: &str = "projection.svg";
/// File name of the probability-of-reaching-each-target plot.
pub const PROBABILITY_SVG: &str = "probability.svg";
/// File name of the expected-limit plot (only when limits were computed).
pub const LIMITS_SVG: &str = "limits.svg";
/// File name of the per-exposure table.
pub const PROJECTION_CSV: &str = "projection.csv";
/// File name of the table of the `--at` days (only with `--at`).
pub const AT_CSV: &str = "at.csv";
/// File name of the whole projection as JSON.
pub const PROJECTION_JSON: &str = "projection.json";
/// Every file `render_all` can give: the output set of `runcast project`.
pub const PROJECTION_FILES: [&str; 6] = [
    PROJECTION_SVG,
    PROBABILITY_SVG,
    LIMITS_SVG,
    PROJECTION_CSV,
    AT_CSV,
    PROJECTION_JSON,
];

/// Renders every report file in memory, in a fixed order:
/// `projection.svg`, `probability.svg`, `limits.svg` (only when the
/// projection carries expected limits, `cl` set), `projection.csv`,
/// `projection.json`.
///
/// The projection is checked first (finite numbers, increasing days above
/// zero, limits above zero, one probability per target in the order of
/// `targets`), so no renderer sees a value it cannot show. The same
/// projection always gives byte-identical files.
pub fn render_all(
    projection: &Projection,
    provenance: &Provenance,
) -> Result<Vec<Report>, ReportError> {
    check::check_projection(projection)?;
    type Renderer = fn(&Projection) -> Result<Vec<u8>, ReportError>;
    let output = |name: &str, kind, render: Renderer| Output::new(name, kind, projection, render);
    let outputs = [
        Some(output(PROJECTION_SVG, Kind::Figure, significance::render)),
        Some(output(PROBABILITY_SVG, Kind::Figure, probability::render)),
        projection
            .cl
            .map(|_| output(LIMITS_SVG, Kind::Figure, limits::render)),
        Some(output(PROJECTION_CSV, Kind::Table, csv::render)),
        (!projection.at.is_empty()).then(|| output(AT_CSV, Kind::Table, csv::render_at)),
        Some(output(PROJECTION_JSON, Kind::Document, json::render)),
    ];
    let outputs: Vec<&dyn Render> = outputs
        .iter()
        .flatten()
        .map(|output| output as &dyn Render)
        .collect();
    render(&outputs, provenance)
}

/// The day range of the x axis: the grid itself, or a factor of two either
/// side of a single point. `points` is not empty (checked before rendering).
fn day_range(points: &[ExposurePoint]) -> Range<f64> {
    let (first, last) = (points[0].days, points[points.len() - 1].days);
    if last > first {
        first..last
    } else {
        first / 2.0..first * 2.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn renders_the_four_files_in_order() {
        let reports = render_all(&example::with_toys(), &example::provenance()).unwrap();
        let names: Vec<(&str, Kind)> = reports
            .iter()
            .map(|report| (report.name.as_str(), report.kind))
            .collect();
        assert_eq!(
            names,
            [
                (PROJECTION_SVG, Kind::Figure),
                (PROBABILITY_SVG, Kind::Figure),
                (PROJECTION_CSV, Kind::Table),
                (PROJECTION_JSON, Kind::Document)
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
            let first = render_all(&projection, &example::provenance()).unwrap();
            let second = render_all(&projection, &example::provenance()).unwrap();
            assert_eq!(first, second);
        }
    }

    #[test]
    fn a_nan_is_refused_before_anything_is_rendered() {
        let mut projection = example::with_toys();
        projection.points[1].z_median = Some(f64::NAN);
        let error = render_all(&projection, &example::provenance()).unwrap_err();
        assert_eq!(
            error.to_string(),
            "cannot report the projection: points[1].z_median is NaN, expected a finite number"
        );
    }

    #[test]
    fn limits_add_their_plot_after_the_probability_plot() {
        let reports = render_all(&example::with_limits(), &example::provenance()).unwrap();
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

    #[test]
    fn the_output_set_names_every_file_render_all_can_give() {
        let reports = render_all(&example::with_at_day(), &example::provenance()).unwrap();
        let names: Vec<&str> = reports.iter().map(|report| report.name.as_str()).collect();
        assert_eq!(names, PROJECTION_FILES);
    }

    #[test]
    fn every_figure_is_well_formed_xml_whatever_the_title() {
        let mut projection = example::with_limits();
        projection.title = "A <b>\u{1}\u{1b}[31m & \"title\"\u{FFFE}".to_string();
        let reports = render_all(&projection, &example::provenance()).unwrap();
        let figures: Vec<&Report> = reports
            .iter()
            .filter(|report| report.kind == Kind::Figure)
            .collect();
        assert_eq!(figures.len(), 3);
        for figure in figures {
            let text = std::str::from_utf8(&figure.bytes).unwrap();
            crate::report::kit::figure::tests::assert_well_formed(text);
            assert!(
                text.contains("A &lt;b&gt;\u{FFFD}\u{FFFD}[31m &amp; &quot;title&quot;\u{FFFD}")
            );
        }
    }
}
