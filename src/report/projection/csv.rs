//! `projection.csv`: one row per exposure point.
//!
//! Columns: `days` (then `date`, its ISO 8601 date, when the schedule has a
//! start), `live_days, signal, background, z_asimov, z_median,
//! z_q02_3, z_q15_9, z_q84_1, z_q97_7` (toys), `z_asimov_q02_3,
//! z_asimov_q15_9, z_asimov_q84_1, z_asimov_q97_7` (Z_A - 2, - 1, + 1, + 2,
//! floored at 0, standing at those quantiles), then for each target T
//! `p_toys_<T>sigma, p_asimov_<T>sigma`, then `failed_fits`; then the
//! expected limits on μ, `limit_median, limit_q02_3, limit_q15_9,
//! limit_q84_1, limit_q97_7` (pseudo-experiments), `limit_asimov,
//! limit_asimov_q02_3, limit_asimov_q15_9, limit_asimov_q84_1,
//! limit_asimov_q97_7` (asymptotic, the -2, -1, +1, +2 σ limits standing at
//! those quantiles), `limit_failed_fits`; then the q0 calibration,
//! `calibration_converged_toys, calibration_failed_fits, calibration_exceeding,
//! q0_asimov, p_asymptotic, p_toys, z_asymptotic, z_toys, tail_reach_z`;
//! with several channels (only then), `z_asimov_<channel>`: each channel's
//! own Z_A; with a scan of the signal position (only then), the look-elsewhere
//! columns `z_global_asimov, z_global_median, reference_level,
//! mean_upcrossings, mean_upcrossings_error, look_elsewhere_toys,
//! look_elsewhere_failed_fits, direct_global_p, trials_factor`. An
//! empty cell means no value (an Asimov-only run has no toy columns filled, a
//! run without limits or calibration none of theirs). Numbers are
//! written as the shortest decimal that reads back to the same f64
//! (`kit::format::number`), so the file is lossless and byte-for-byte
//! reproducible.

use super::PROJECTION_CSV;
use crate::projection::{Calibration, ExposurePoint, GlobalSignificance, Projection};
use crate::report::ReportError;
use crate::report::kit::dates::date_cell;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::{number, optional};

/// Names of the four toy quantile columns, in the order of `z_band`.
const BAND_COLUMNS: [&str; 4] = ["z_q02_3", "z_q15_9", "z_q84_1", "z_q97_7"];

/// Names of the asymptotic band columns, in the order of `z_asimov_band`.
const ASIMOV_BAND_COLUMNS: [&str; 4] = [
    "z_asimov_q02_3",
    "z_asimov_q15_9",
    "z_asimov_q84_1",
    "z_asimov_q97_7",
];

/// The limit columns after `failed_fits`, in the order of [`limit_cells`].
const LIMIT_COLUMNS: [&str; 11] = [
    "limit_median",
    "limit_q02_3",
    "limit_q15_9",
    "limit_q84_1",
    "limit_q97_7",
    "limit_asimov",
    "limit_asimov_q02_3",
    "limit_asimov_q15_9",
    "limit_asimov_q84_1",
    "limit_asimov_q97_7",
    "limit_failed_fits",
];

/// The calibration columns at the end, in the order of [`calibration_cells`].
const CALIBRATION_COLUMNS: [&str; 9] = [
    "calibration_converged_toys",
    "calibration_failed_fits",
    "calibration_exceeding",
    "q0_asimov",
    "p_asymptotic",
    "p_toys",
    "z_asymptotic",
    "z_toys",
    "tail_reach_z",
];

/// The look-elsewhere columns at the end, with a scan only, in the order of
/// [`global_cells`].
const GLOBAL_COLUMNS: [&str; 9] = [
    "z_global_asimov",
    "z_global_median",
    "reference_level",
    "mean_upcrossings",
    "mean_upcrossings_error",
    "look_elsewhere_toys",
    "look_elsewhere_failed_fits",
    "direct_global_p",
    "trials_factor",
];

/// The CSV table of the projection.
pub(super) fn render(projection: &Projection) -> Result<Vec<u8>, ReportError> {
    let mut columns = header(&projection.targets);
    columns.extend(channel_columns(projection));
    let mut rows: Vec<Vec<String>> = projection.points.iter().map(row).collect();
    if projection.scan.is_some() {
        columns.extend(GLOBAL_COLUMNS.iter().map(|name| name.to_string()));
        for (cells, point) in rows.iter_mut().zip(&projection.points) {
            cells.extend(global_cells(point.global.as_ref()));
        }
    }
    if let Some(start) = projection.start {
        columns.insert(1, "date".to_string());
        for (cells, point) in rows.iter_mut().zip(&projection.points) {
            cells.insert(1, date_cell(Some(point.days), start));
        }
    }
    csv_bytes(PROJECTION_CSV, columns, rows)
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
        .chain(&ASIMOV_BAND_COLUMNS)
        .map(|name| name.to_string())
        .collect();
    for target in targets {
        columns.push(format!("p_toys_{target}sigma"));
        columns.push(format!("p_asimov_{target}sigma"));
    }
    columns.push("failed_fits".to_string());
    columns.extend(
        LIMIT_COLUMNS
            .iter()
            .chain(&CALIBRATION_COLUMNS)
            .map(|name| name.to_string()),
    );
    columns
}

/// `z_asimov_<channel>` for each channel of a scenario with several (every
/// point lists the same channels); none for a single channel.
fn channel_columns(projection: &Projection) -> Vec<String> {
    projection.points.first().map_or_else(Vec::new, |point| {
        point
            .channels
            .iter()
            .map(|channel| format!("z_asimov_{}", channel.name))
            .collect()
    })
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
    cells.extend(band_cells(point.z_band));
    cells.extend(band_cells(Some(point.z_asimov_band)));
    for probability in &point.probability {
        cells.push(optional(probability.toys));
        cells.push(number(probability.asimov));
    }
    cells.push(point.failed_fits.to_string());
    cells.extend(limit_cells(point));
    cells.extend(calibration_cells(point.calibration.as_ref()));
    cells.extend(
        point
            .channels
            .iter()
            .map(|channel| number(channel.z_asimov)),
    );
    cells
}

/// The four quantiles of a band, or four empty cells.
fn band_cells(band: Option<[f64; 4]>) -> [String; 4] {
    std::array::from_fn(|quantile| optional(band.map(|band| band[quantile])))
}

fn limit_cells(point: &ExposurePoint) -> Vec<String> {
    let mut cells = vec![optional(point.limit_median)];
    cells.extend(band_cells(point.limit_band));
    cells.push(optional(point.limit_asimov));
    cells.extend(band_cells(point.limit_asimov_band));
    cells.push(point.limit_failed_fits.to_string());
    cells
}

/// The calibration of one point, or empty cells throughout.
fn calibration_cells(calibration: Option<&Calibration>) -> [String; 9] {
    let Some(calibration) = calibration else {
        return Default::default();
    };
    [
        calibration.converged_toys.to_string(),
        calibration.failed_fits.to_string(),
        calibration.exceeding.to_string(),
        number(calibration.q0_asimov),
        number(calibration.p_asymptotic),
        optional(calibration.p_toys),
        number(calibration.z_asymptotic),
        optional(calibration.z_toys),
        optional(calibration.tail_reach_z),
    ]
}

/// The look-elsewhere cells of one point; empty where nothing was measured.
fn global_cells(global: Option<&GlobalSignificance>) -> [String; 9] {
    let Some(global) = global else {
        return Default::default();
    };
    let mut cells: [String; 9] = Default::default();
    cells[0] = optional(global.z_global_asimov);
    cells[1] = optional(global.z_global_median);
    if let Some(measured) = &global.look_elsewhere {
        cells[2] = number(measured.reference_level);
        cells[3] = optional(measured.mean_upcrossings);
        cells[4] = optional(measured.mean_upcrossings_error);
        cells[5] = measured.toys.to_string();
        cells[6] = measured.failed_fits.to_string();
        cells[7] = optional(measured.direct_global_p);
        cells[8] = optional(measured.trials_factor);
    }
    cells
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::projection::example;

    #[test]
    fn header_and_rows_match_the_documented_columns() {
        let text = String::from_utf8(render(&example::tiny()).unwrap()).unwrap();
        let lines: Vec<&str> = text.lines().collect();
        assert_eq!(
            lines,
            [
                "days,live_days,signal,background,z_asimov,z_median,\
                 z_q02_3,z_q15_9,z_q84_1,z_q97_7,\
                 z_asimov_q02_3,z_asimov_q15_9,z_asimov_q84_1,z_asimov_q97_7,\
                 p_toys_3sigma,p_asimov_3sigma,p_toys_5sigma,p_asimov_5sigma,failed_fits,\
                 limit_median,limit_q02_3,limit_q15_9,limit_q84_1,limit_q97_7,\
                 limit_asimov,limit_asimov_q02_3,limit_asimov_q15_9,limit_asimov_q84_1,\
                 limit_asimov_q97_7,limit_failed_fits,\
                 calibration_converged_toys,calibration_failed_fits,calibration_exceeding,q0_asimov,\
                 p_asymptotic,p_toys,z_asymptotic,z_toys,tail_reach_z",
                "10,8,16,80,1.75,1.625,0.125,0.75,2.5,3.5,0,0.75,2.75,3.75,0.105,0.0885,0,0.0005,0\
                 ,,,,,,,,,,,0,,,,,,,,,",
                "100,80,160,800,3.875,,,,,,1.875,2.875,4.875,5.875,,0.8125,,0.125,2\
                 ,,,,,,,,,,,0,,,,,,,,,",
            ]
        );
    }

    /// The cell of `column` in data row `row` of the rendered table.
    fn cell(table: &[Vec<String>], column: &str, row: usize) -> String {
        let index = table[0].iter().position(|name| name == column).unwrap();
        table[row + 1][index].clone()
    }

    fn table(projection: &Projection) -> Vec<Vec<String>> {
        let bytes = render(projection).unwrap();
        ::csv::ReaderBuilder::new()
            .has_headers(false)
            .from_reader(bytes.as_slice())
            .records()
            .map(|record| record.unwrap().iter().map(str::to_string).collect())
            .collect()
    }

    #[test]
    fn limit_and_calibration_columns_read_back_exactly() {
        let projection = example::with_limits();
        let table = table(&projection);
        assert_eq!(table.len(), projection.points.len() + 1);
        let value = |column: &str, row: usize| cell(&table, column, row).parse::<f64>().unwrap();
        for (row, point) in projection.points.iter().enumerate() {
            let band = point.limit_band.unwrap();
            let asymptotic_band = point.limit_asimov_band.unwrap();
            assert_eq!(value("limit_median", row), point.limit_median.unwrap());
            assert_eq!(value("limit_q02_3", row), band[0]);
            assert_eq!(value("limit_q97_7", row), band[3]);
            assert_eq!(value("limit_asimov", row), point.limit_asimov.unwrap());
            assert_eq!(value("limit_asimov_q15_9", row), asymptotic_band[1]);
            assert_eq!(value("limit_asimov_q84_1", row), asymptotic_band[2]);
            let calibration = point.calibration.as_ref().unwrap();
            assert_eq!(value("z_asymptotic", row), calibration.z_asymptotic);
            assert_eq!(Some(value("tail_reach_z", row)), calibration.tail_reach_z);
            assert_eq!(cell(&table, "calibration_converged_toys", row), "5000");
        }
        // At 1000 days the Asimov Z lies far past what 5000 toys resolve: none exceeds.
        let last = projection.points.len() - 1;
        assert_eq!(cell(&table, "limit_failed_fits", 0), "1");
        assert_eq!(cell(&table, "calibration_exceeding", last), "0");
        assert_eq!(cell(&table, "p_toys", last), "");
        assert_eq!(cell(&table, "z_toys", last), "");
    }

    #[test]
    fn asimov_only_limits_leave_the_toy_limit_cells_empty() {
        let table = table(&example::asimov_only_with_limits());
        assert_eq!(cell(&table, "limit_median", 3), "");
        assert_eq!(cell(&table, "limit_q84_1", 3), "");
        assert_eq!(cell(&table, "limit_failed_fits", 3), "0");
        assert!(
            cell(&table, "limit_asimov_q97_7", 3)
                .parse::<f64>()
                .unwrap()
                > 0.0
        );
        assert_eq!(cell(&table, "calibration_converged_toys", 3), "");
    }
}
