//! `reach.csv`: one row per exposure and position, rates in the unit of the
//! `rate_unit` column (the signal's own unit), empty cells where not
//! computed or unbounded; with several channels, each channel alone after
//! the combined rates (`<channel>_limit_rate_asimov`,
//! `<channel>_discovery_rate_local_<t>sigma`).

use super::REACH_CSV;
use crate::reach::Reach;
use crate::report::ReportError;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::{number, optional};
use crate::report::kit::vocabulary::band_columns;

/// The header: exposure, position, limits, failed toy fits, the local and
/// the global discovery rate of each target, the rate unit, then each
/// channel alone when there are several.
fn header(reach: &Reach) -> Vec<String> {
    let mut header: Vec<String> = [
        "days",
        "live_days",
        "mean_upcrossings_asimov",
        "position",
        "width",
        "limit_rate_asimov",
    ]
    .map(String::from)
    .to_vec();
    header.extend(band_columns("limit_rate_asimov"));
    header.push("limit_rate_median".to_string());
    header.extend(band_columns("limit_rate"));
    header.push("limit_failed_fits".to_string());
    for scope in ["local", "global"] {
        for target in &reach.targets {
            header.push(format!("discovery_rate_{scope}_{}sigma", number(*target)));
        }
    }
    header.push("rate_unit".to_string());
    if reach.channel_names.len() > 1 {
        for name in &reach.channel_names {
            header.push(format!("{name}_limit_rate_asimov"));
            for target in &reach.targets {
                header.push(format!(
                    "{name}_discovery_rate_local_{}sigma",
                    number(*target)
                ));
            }
        }
    }
    header
}

fn band_cells(band: Option<[f64; 4]>) -> [String; 4] {
    match band {
        Some(band) => band.map(number),
        None => Default::default(),
    }
}

pub(super) fn render(reach: &Reach) -> Result<Vec<u8>, ReportError> {
    let rows = reach.exposures.iter().flat_map(|exposure| {
        exposure.positions.iter().map(move |point| {
            let mut row = vec![
                number(exposure.days),
                number(exposure.live_days),
                number(exposure.mean_upcrossings_asimov),
                number(point.position),
                number(point.width),
                optional(point.limit_rate_asimov),
            ];
            row.extend(band_cells(point.limit_rate_asimov_band));
            row.push(optional(point.limit_rate_median));
            row.extend(band_cells(point.limit_rate_band));
            row.push(point.limit_failed_fits.to_string());
            row.extend(point.discovery_rate_local.iter().map(|r| optional(*r)));
            row.extend(point.discovery_rate_global.iter().map(|r| optional(*r)));
            row.push(reach.rate_unit.clone());
            for channel in &point.channels {
                row.push(optional(channel.limit_rate_asimov));
                row.extend(channel.discovery_rate_local.iter().map(|r| optional(*r)));
            }
            row
        })
    });
    csv_bytes(REACH_CSV, header(reach), rows)
}
