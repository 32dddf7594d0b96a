//! `compare-reach.json`.
//!
//! Schema: `{targets, cl, rate_unit, plans: [{file, label, title, days,
//! live_days, mean_upcrossings_asimov, positions: [{position,
//! limit_rate_asimov, limit_rate_asimov_to_first, discovery_rate_global: [one
//! per target], discovery_rate_global_to_first: [one per target]}]}]}`; rates
//! in `rate_unit`, as `reach.json` of `runcast reach` on each plan's file
//! gives them at that exposure; a ratio is the plan's rate over the first
//! plan's at the same position; null where a rate is not bounded.

use super::super::{COMPARE_REACH_JSON, Comparison};
use super::{ComparedPosition, compared_positions, exposure};
use crate::report::ReportError;
use crate::report::kit::encode::json_bytes;
use serde::Serialize;

#[derive(Serialize)]
struct Document<'a> {
    targets: &'a [f64],
    cl: Option<f64>,
    rate_unit: &'a str,
    plans: Vec<Plan<'a>>,
}

#[derive(Serialize)]
struct Plan<'a> {
    file: &'a str,
    label: &'a str,
    title: &'a str,
    days: f64,
    live_days: f64,
    mean_upcrossings_asimov: f64,
    positions: Vec<ComparedPosition>,
}

pub(in crate::report::compare) fn render(comparison: &Comparison) -> Result<Vec<u8>, ReportError> {
    let first = comparison.first();
    let rate_unit = comparison.plans[0]
        .reach
        .as_ref()
        .map_or("", |reach| &reach.rate_unit);
    let document = Document {
        targets: &first.targets,
        cl: comparison.plans[0].reach.as_ref().map(|reach| reach.cl),
        rate_unit,
        plans: comparison
            .plans
            .iter()
            .map(|plan| {
                let exposure = exposure(plan);
                Plan {
                    file: &plan.file,
                    label: &plan.label,
                    title: &plan.projection.title,
                    days: exposure.days,
                    live_days: exposure.live_days,
                    mean_upcrossings_asimov: exposure.mean_upcrossings_asimov,
                    positions: compared_positions(comparison, plan),
                }
            })
            .collect(),
    };
    json_bytes(COMPARE_REACH_JSON, &document)
}
