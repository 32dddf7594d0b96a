//! `compare.json`: the shared targets and confidence level, and per plan its
//! file, label, title, seed, days to each target and days to exclusion,
//! exactly as `projection.json` of `runcast project` on that file gives them.

use super::{COMPARE_JSON, Comparison};
use crate::projection::{DaysToExclusion, DaysToTarget};
use crate::report::ReportError;
use crate::report::kit::encode::json_bytes;
use serde::Serialize;

#[derive(Serialize)]
struct Document<'a> {
    targets: &'a [f64],
    cl: Option<f64>,
    toys: usize,
    plans: Vec<Plan<'a>>,
}

#[derive(Serialize)]
struct Plan<'a> {
    file: &'a str,
    label: &'a str,
    title: &'a str,
    seed: u64,
    days_to_target: &'a [DaysToTarget],
    days_to_exclusion: &'a DaysToExclusion,
}

pub(super) fn render(comparison: &Comparison) -> Result<Vec<u8>, ReportError> {
    let first = comparison.first();
    let document = Document {
        targets: &first.targets,
        cl: first.cl,
        toys: first.toys,
        plans: comparison
            .plans
            .iter()
            .map(|plan| Plan {
                file: &plan.file,
                label: &plan.label,
                title: &plan.projection.title,
                seed: plan.projection.seed,
                days_to_target: &plan.projection.days_to_target,
                days_to_exclusion: &plan.projection.days_to_exclusion,
            })
            .collect(),
    };
    json_bytes(COMPARE_JSON, &document)
}
