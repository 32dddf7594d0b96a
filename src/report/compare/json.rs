//! `compare.json`: the shared targets and confidence level, and per plan its
//! file, label, title, seed, days to each target and days to exclusion,
//! exactly as `projection.json` of `runcast project` on that file gives them
//! (with a start date, its `start` and a date beside each days value).

use super::{COMPARE_JSON, Comparison};
use crate::calendar::CalendarDate;
use crate::projection::{DaysToExclusion, DaysToTarget};
use crate::report::ReportError;
use crate::report::kit::dates::insert_dates;
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
    #[serde(skip_serializing_if = "Option::is_none")]
    start: Option<CalendarDate>,
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
                start: plan.projection.start,
                seed: plan.projection.seed,
                days_to_target: &plan.projection.days_to_target,
                days_to_exclusion: &plan.projection.days_to_exclusion,
            })
            .collect(),
    };
    if document.plans.iter().all(|plan| plan.start.is_none()) {
        return json_bytes(COMPARE_JSON, &document);
    }
    let starts: Vec<Option<CalendarDate>> = document.plans.iter().map(|plan| plan.start).collect();
    let mut value = serde_json::to_value(&document).map_err(|error| ReportError::Render {
        file: COMPARE_JSON,
        message: error.to_string(),
    })?;
    if let Some(plans) = value
        .get_mut("plans")
        .and_then(|plans| plans.as_array_mut())
    {
        for (plan, start) in plans.iter_mut().zip(starts) {
            if let Some(start) = start {
                *plan = insert_dates(plan.take(), start);
            }
        }
    }
    json_bytes(COMPARE_JSON, &value)
}
