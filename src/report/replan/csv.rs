//! `replan.csv`: one row per hypothesis and point of the conditional
//! projection (the day the data stopped, then every grid day after it):
//! the toy median and band of Z, P(Z >= each target), the median limit on
//! mu and its band, failed fits, and the original forecast's Z_A at that
//! day; empty cells where nothing was computed or a limit is unbounded; a
//! `date` column after `days` with `schedule.start`.

use super::REPLAN_CSV;
use crate::calendar::CalendarDate;
use crate::replan::{Hypothesis, Replan};
use crate::report::ReportError;
use crate::report::kit::dates::date_cell;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::{number, optional};
use crate::report::kit::vocabulary::band_columns;

fn header(replan: &Replan) -> Vec<String> {
    let mut header: Vec<String> = ["hypothesis", "days"].map(String::from).to_vec();
    if start(replan).is_some() {
        header.push("date".to_string());
    }
    header.extend(["live_days", "z_median"].map(String::from));
    header.extend(band_columns("z"));
    let targets = &replan.projection(Hypothesis::Signal).targets;
    for target in targets {
        header.push(format!("p_reach_{}sigma", number(*target)));
    }
    header.push("limit_median".to_string());
    header.extend(band_columns("limit"));
    header.extend(["failed_fits", "limit_failed_fits", "z_asimov_forecast"].map(String::from));
    header
}

fn start(replan: &Replan) -> Option<CalendarDate> {
    replan.projection(Hypothesis::Signal).start
}

fn band_cells(band: Option<[f64; 4]>) -> [String; 4] {
    match band {
        Some(band) => band.map(number),
        None => Default::default(),
    }
}

pub(super) fn render(replan: &Replan) -> Result<Vec<u8>, ReportError> {
    let rows = replan
        .conditional
        .iter()
        .flat_map(|(hypothesis, projection)| {
            projection.points.iter().map(move |point| {
                let mut row = vec![hypothesis.key().to_string(), number(point.days)];
                if let Some(start) = start(replan) {
                    row.push(date_cell(Some(point.days), start));
                }
                row.extend([number(point.live_days), optional(point.z_median)]);
                row.extend(band_cells(point.z_band));
                row.extend(point.probability.iter().map(|p| optional(p.toys)));
                row.push(optional(point.limit_median));
                row.extend(band_cells(point.limit_band));
                row.push(point.failed_fits.to_string());
                row.push(point.limit_failed_fits.to_string());
                row.push(number(point.z_asimov));
                row
            })
        });
    csv_bytes(REPLAN_CSV, header(replan), rows)
}
