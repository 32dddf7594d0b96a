//! `compare-reach.csv`: one row per plan and scan position: the exposure,
//! the Asimov median expected limit and each target's global discovery rate
//! in the unit of `rate_unit`, each followed by its ratio to the first
//! plan's at that position (`..._to_first`). Numbers are lossless; an empty
//! cell is a rate not bounded (or a ratio with one).

use super::super::{COMPARE_REACH_CSV, Comparison};
use super::{compared_positions, exposure};
use crate::report::ReportError;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::{number, optional};

fn header(targets: &[f64]) -> Vec<String> {
    let mut header: Vec<String> = [
        "plan",
        "file",
        "days",
        "live_days",
        "position",
        "limit_rate_asimov",
        "limit_rate_asimov_to_first",
    ]
    .map(String::from)
    .to_vec();
    for target in targets {
        let column = format!("discovery_rate_global_{}sigma", number(*target));
        header.push(format!("{column}_to_first"));
        header.insert(header.len() - 1, column);
    }
    header.push("rate_unit".to_string());
    header
}

pub(in crate::report::compare) fn render(comparison: &Comparison) -> Result<Vec<u8>, ReportError> {
    let first = comparison.first();
    let mut rows = Vec::new();
    for plan in &comparison.plans {
        let exposure = exposure(plan);
        let rate_unit = &plan.reach.as_ref().map_or("", |reach| &reach.rate_unit);
        for point in compared_positions(comparison, plan) {
            let mut row = vec![
                plan.label.clone(),
                plan.file.clone(),
                number(exposure.days),
                number(exposure.live_days),
                number(point.position),
                optional(point.limit_rate_asimov),
                optional(point.limit_rate_asimov_to_first),
            ];
            for (rate, ratio) in point
                .discovery_rate_global
                .iter()
                .zip(&point.discovery_rate_global_to_first)
            {
                row.push(optional(*rate));
                row.push(optional(*ratio));
            }
            row.push(rate_unit.to_string());
            rows.push(row);
        }
    }
    csv_bytes(COMPARE_REACH_CSV, header(&first.targets), rows)
}
