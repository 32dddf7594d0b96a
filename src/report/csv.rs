//! `projection.csv`: one row per exposure point.
//!
//! Columns: `days, live_days, signal, background, z_asimov, z_median,
//! z_q02_3, z_q15_9, z_q84_1, z_q97_7`, then for each target T
//! `p_toys_<T>sigma, p_asimov_<T>sigma`, then `failed_fits`. An empty cell
//! means no value (an Asimov-only run has no toy columns filled). Numbers are
//! written as the shortest decimal that reads back to the same f64, so the
//! file is lossless and byte-for-byte reproducible; magnitudes below 1e-4 or
//! from 1e15 up use exponent form (`2.867e-7`) instead of long runs of zeros.

use super::{PROJECTION_CSV, ReportError};
use crate::projection::{ExposurePoint, Projection};

/// Names of the four toy quantile columns, in the order of `z_band`.
const BAND_COLUMNS: [&str; 4] = ["z_q02_3", "z_q15_9", "z_q84_1", "z_q97_7"];

/// The CSV table of the projection.
pub(super) fn render(projection: &Projection) -> Result<Vec<u8>, ReportError> {
    let mut writer = ::csv::Writer::from_writer(Vec::new());
    writer
        .write_record(header(&projection.targets))
        .map_err(failure)?;
    for point in &projection.points {
        writer.write_record(row(point)).map_err(failure)?;
    }
    writer
        .into_inner()
        .map_err(|error| failure(error.into_error()))
}

fn header(targets: &[f64]) -> Vec<String> {
    let leading = [
        "days",
        "live_days",
        "signal",
        "background",
        "z_asimov",
        "z_median",
    ];
    let mut columns: Vec<String> = leading
        .iter()
        .chain(&BAND_COLUMNS)
        .map(|name| name.to_string())
        .collect();
    for target in targets {
        columns.push(format!("p_toys_{target}sigma"));
        columns.push(format!("p_asimov_{target}sigma"));
    }
    columns.push("failed_fits".to_string());
    columns
}

/// One row; the probabilities are in the order of the targets (checked upstream).
fn row(point: &ExposurePoint) -> Vec<String> {
    let mut cells = vec![
        number(point.days),
        number(point.live_days),
        number(point.signal),
        number(point.background),
        number(point.z_asimov),
        optional(point.z_median),
    ];
    for quantile in 0..BAND_COLUMNS.len() {
        cells.push(optional(point.z_band.map(|band| band[quantile])));
    }
    for probability in &point.probability {
        cells.push(optional(probability.toys));
        cells.push(number(probability.asimov));
    }
    cells.push(point.failed_fits.to_string());
    cells
}

/// The shortest decimal that reads back to `value`, in exponent form outside [1e-4, 1e15).
pub(super) fn number(value: f64) -> String {
    let magnitude = value.abs();
    if magnitude != 0.0 && !(1e-4..1e15).contains(&magnitude) {
        format!("{value:e}")
    } else {
        value.to_string()
    }
}

fn optional(value: Option<f64>) -> String {
    value.map(number).unwrap_or_default()
}

fn failure(error: impl std::fmt::Display) -> ReportError {
    ReportError::Render {
        file: PROJECTION_CSV,
        message: error.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::example;

    #[test]
    fn header_and_rows_match_the_documented_columns() {
        let text = String::from_utf8(render(&example::tiny()).unwrap()).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(
            lines,
            [
                "days,live_days,signal,background,z_asimov,z_median,\
                 z_q02_3,z_q15_9,z_q84_1,z_q97_7,\
                 p_toys_3sigma,p_asimov_3sigma,p_toys_5sigma,p_asimov_5sigma,failed_fits",
                "10,8,16,80,1.75,1.625,0.125,0.75,2.5,3.5,0.105,0.0885,0,0.0005,0",
                "100,80,160,800,3.875,,,,,,,0.8125,,0.125,2",
            ]
        );
    }

    #[test]
    fn numbers_are_shortest_round_trip_decimals() {
        assert_eq!(number(0.1 + 0.2), "0.30000000000000004");
        assert_eq!(number(1.5e6), "1500000");
        assert_eq!(number(0.0), "0");
        assert_eq!(number(0.0001), "0.0001");
        assert_eq!(number(2.867e-7), "2.867e-7");
        assert_eq!(number(-4.0291033463290996e-6), "-4.0291033463290996e-6");
        assert_eq!(number(2.5e15), "2.5e15");
        for value in [2.867e-7, 0.1 + 0.2, 1.0 / 3.0, 6.02e23] {
            assert_eq!(number(value).parse::<f64>().unwrap(), value);
        }
    }
}
