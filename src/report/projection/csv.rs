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
//! look_elsewhere_failed_fits, direct_global_p, trials_factor,
//! mean_upcrossings_asimov`. An
//! empty cell means no value (an Asimov-only run has no toy columns filled, a
//! run without limits or calibration none of theirs). Numbers are
//! written as the shortest decimal that reads back to the same f64
//! (`kit::format::number`), so the file is lossless and byte-for-byte
//! reproducible.
//!
//! `at.csv` (only with `--at`): one row per `--at` day, the same columns,
//! then `signal_per_live_day` (nominal signal events per live day), and the
//! expected limits as signal events per live day and over the run:
//! `limit_events_per_live_day_median, _q02_3, _q15_9, _q84_1, _q97_7,
//! _asimov, _asimov_q02_3, _asimov_q15_9, _asimov_q84_1, _asimov_q97_7`, and
//! the same ten columns of `limit_events_...`; with a detector mass, ten
//! more of `limit_events_per_kg_day_...`.

use super::{AT_CSV, PROJECTION_CSV};
use crate::projection::{
    AtDay, Calibration, EventLimits, ExposurePoint, GlobalSignificance, Projection,
};
use crate::report::ReportError;
use crate::report::kit::dates::date_cell;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::{number, optional};
use crate::report::kit::vocabulary::band_columns;

/// The limit columns after `failed_fits`, in the order of [`limit_cells`]:
/// the toy median and band, the asymptotic median and band, failed fits.
fn limit_columns() -> Vec<String> {
    let mut columns = vec!["limit_median".to_string()];
    columns.extend(band_columns("limit"));
    columns.push("limit_asimov".to_string());
    columns.extend(band_columns("limit_asimov"));
    columns.push("limit_failed_fits".to_string());
    columns
}

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
const GLOBAL_COLUMNS: [&str; 10] = [
    "z_global_asimov",
    "z_global_median",
    "reference_level",
    "mean_upcrossings",
    "mean_upcrossings_error",
    "look_elsewhere_toys",
    "look_elsewhere_failed_fits",
    "direct_global_p",
    "trials_factor",
    "mean_upcrossings_asimov",
];

/// The columns of limits in `unit`, in the order of [`event_limit_cells`].
fn event_limit_columns(unit: &str) -> Vec<String> {
    let mut columns = vec![format!("{unit}_median")];
    columns.extend(band_columns(unit));
    columns.push(format!("{unit}_asimov"));
    columns.extend(band_columns(&format!("{unit}_asimov")));
    columns
}

/// The CSV table of the projection.
pub(super) fn render(projection: &Projection) -> Result<Vec<u8>, ReportError> {
    let (columns, rows) = dated(
        projection,
        point_columns(projection),
        projection
            .points
            .iter()
            .map(|point| (point.days, point_row(projection, point))),
    );
    csv_bytes(PROJECTION_CSV, columns, rows)
}

/// The CSV table of the `--at` days.
pub(super) fn render_at(projection: &Projection) -> Result<Vec<u8>, ReportError> {
    let mut columns = point_columns(projection);
    columns.push("signal_per_live_day".to_string());
    let per_kg_day = with_mass(projection).then_some("limit_events_per_kg_day");
    let units = ["limit_events_per_live_day", "limit_events"]
        .into_iter()
        .chain(per_kg_day);
    for unit in units {
        columns.extend(event_limit_columns(unit));
    }
    let (columns, rows) = dated(
        projection,
        columns,
        projection
            .at
            .iter()
            .map(|at| (at.point.days, at_row(projection, at))),
    );
    csv_bytes(AT_CSV, columns, rows)
}

/// The table with a `date` column after `days` when the schedule has a start.
fn dated(
    projection: &Projection,
    mut columns: Vec<String>,
    rows: impl Iterator<Item = (f64, Vec<String>)>,
) -> (Vec<String>, Vec<Vec<String>>) {
    let Some(start) = projection.start else {
        return (columns, rows.map(|(_, cells)| cells).collect());
    };
    columns.insert(1, "date".to_string());
    let rows = rows
        .map(|(days, mut cells)| {
            cells.insert(1, date_cell(Some(days), start));
            cells
        })
        .collect();
    (columns, rows)
}

/// The columns of one point: [`header`], then with several channels each
/// channel's Z_A, then with a scan [`GLOBAL_COLUMNS`].
fn point_columns(projection: &Projection) -> Vec<String> {
    let mut columns = header(&projection.targets);
    columns.extend(channel_columns(projection));
    if projection.scan.is_some() {
        columns.extend(GLOBAL_COLUMNS.iter().map(|name| name.to_string()));
    }
    columns
}

/// The cells of one point, in the order of [`point_columns`].
fn point_row(projection: &Projection, point: &ExposurePoint) -> Vec<String> {
    let mut cells = row(point);
    if projection.scan.is_some() {
        cells.extend(global_cells(point.global.as_ref()));
    }
    cells
}

/// Whether the `--at` limits are also given per kg·day (a detector mass).
fn with_mass(projection: &Projection) -> bool {
    projection
        .at
        .iter()
        .any(|at| at.limit_events_per_kg_day.is_some())
}

/// One row of `at.csv`.
fn at_row(projection: &Projection, at: &AtDay) -> Vec<String> {
    let mut cells = point_row(projection, &at.point);
    cells.push(number(at.signal_per_live_day));
    cells.extend(event_limit_cells(&at.limit_events_per_live_day));
    cells.extend(event_limit_cells(&at.limit_events));
    if let Some(limits) = &at.limit_events_per_kg_day {
        cells.extend(event_limit_cells(limits));
    }
    cells
}

fn event_limit_cells(limits: &EventLimits) -> Vec<String> {
    let mut cells = vec![optional(limits.median)];
    cells.extend(band_cells(limits.band));
    cells.push(optional(limits.asimov));
    cells.extend(band_cells(limits.asimov_band));
    cells
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
    let mut columns: Vec<String> = leading.iter().map(|name| name.to_string()).collect();
    columns.extend(band_columns("z"));
    columns.extend(band_columns("z_asimov"));
    for target in targets {
        columns.push(format!("p_toys_{target}sigma"));
        columns.push(format!("p_asimov_{target}sigma"));
    }
    columns.push("failed_fits".to_string());
    columns.extend(limit_columns());
    columns.extend(CALIBRATION_COLUMNS.iter().map(|name| name.to_string()));
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
fn global_cells(global: Option<&GlobalSignificance>) -> [String; 10] {
    let Some(global) = global else {
        return Default::default();
    };
    let mut cells: [String; 10] = Default::default();
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
        cells[9] = optional(measured.mean_upcrossings_asimov);
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
    fn at_rows_carry_the_limits_in_events_exactly() {
        let projection = example::with_at_day();
        let bytes = render_at(&projection).unwrap();
        let table: Vec<Vec<String>> = ::csv::ReaderBuilder::new()
            .has_headers(false)
            .from_reader(bytes.as_slice())
            .records()
            .map(|record| record.unwrap().iter().map(str::to_string).collect())
            .collect();
        assert_eq!(table.len(), 2);
        let at = &projection.at[0];
        let value = |column: &str| cell(&table, column, 0).parse::<f64>().unwrap();
        assert_eq!(value("days"), at.point.days);
        assert_eq!(value("signal_per_live_day"), 2.5);
        assert_eq!(
            value("limit_events_per_live_day_median"),
            at.limit_events_per_live_day.median.unwrap()
        );
        assert_eq!(
            value("limit_events_asimov_q97_7"),
            at.limit_events.asimov_band.unwrap()[3]
        );
        // The limit over the run is the limit on mu times the nominal signal
        // of the live days (a limit on mu is one on the yield).
        assert_eq!(
            value("limit_events_asimov"),
            at.point.limit_asimov.unwrap() * at.point.signal
        );
        assert_eq!(table[0].len(), header(&projection.targets).len() + 21);
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
