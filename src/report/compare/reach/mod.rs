//! The reach of scan plans compared at one exposure (`compare --reach-days`):
//! per plan and scan position the Asimov median expected limit and the
//! global discovery rate of each target, as `runcast reach` gives them, and
//! their ratio to the first plan's at the same position (below 1: the plan
//! reaches smaller signals). `figure.rs` (`compare-reach.svg`), `csv.rs`,
//! `json.rs`.

pub(super) mod csv;
pub(super) mod figure;
pub(super) mod json;

use super::{ComparedPlan, Comparison};
use crate::message::show_rounded;
use crate::reach::ExposureReach;
use crate::report::kit::format::{percent_label, rounded, target_label};
use serde::Serialize;

/// One plan's reach at one position, beside the first plan's there; its
/// field names are the keys of `compare-reach.json`.
#[derive(Serialize)]
pub(super) struct ComparedPosition {
    pub position: f64,
    pub limit_rate_asimov: Option<f64>,
    pub limit_rate_asimov_to_first: Option<f64>,
    /// One per target.
    pub discovery_rate_global: Vec<Option<f64>>,
    pub discovery_rate_global_to_first: Vec<Option<f64>>,
}

/// The one exposure of a plan's reach (checked before rendering).
pub(super) fn exposure(plan: &ComparedPlan) -> &ExposureReach {
    &plan
        .reach
        .as_ref()
        .expect("every plan of a reach comparison has its reach")
        .exposures[0]
}

/// Every position of `plan` beside the first plan's (the positions are the
/// same, checked before rendering).
pub(super) fn compared_positions(
    comparison: &Comparison,
    plan: &ComparedPlan,
) -> Vec<ComparedPosition> {
    let first = exposure(&comparison.plans[0]);
    exposure(plan)
        .positions
        .iter()
        .zip(&first.positions)
        .map(|(point, reference)| ComparedPosition {
            position: point.position,
            limit_rate_asimov: point.limit_rate_asimov,
            limit_rate_asimov_to_first: ratio(point.limit_rate_asimov, reference.limit_rate_asimov),
            discovery_rate_global: point.discovery_rate_global.clone(),
            discovery_rate_global_to_first: point
                .discovery_rate_global
                .iter()
                .zip(&reference.discovery_rate_global)
                .map(|(&rate, &first)| ratio(rate, first))
                .collect(),
        })
        .collect()
}

/// `rate / first`, where both are bounded.
fn ratio(rate: Option<f64>, first: Option<f64>) -> Option<f64> {
    rate.zip(first).map(|(rate, first)| rate / first)
}

/// The terminal lines of the reach comparison: per later plan, the range
/// over the scan of its limit and global discovery rates over the first
/// plan's ("1.25 to 1.42").
pub(super) fn reach_lines(comparison: &Comparison) -> String {
    let first = &comparison.plans[0];
    let Some(reach) = &first.reach else {
        return String::new();
    };
    let mut text = format!(
        "\nReach after {} d ({} at every position in compare-reach.csv), each plan's rate over the first plan's ({}) across the scan:\n",
        show_rounded(exposure(first).days),
        reach.rate_unit,
        first.label
    );
    for plan in &comparison.plans[1..] {
        let points = compared_positions(comparison, plan);
        let range = |ratios: Vec<Option<f64>>| {
            let (low, high) = ratios
                .into_iter()
                .flatten()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(low, high), r| {
                    (low.min(r), high.max(r))
                });
            if low > high {
                "no bounded rate".to_string()
            } else {
                format!("{} to {}", rounded(low), rounded(high))
            }
        };
        let mut parts = vec![format!(
            "{} CL limit {}",
            percent_label(reach.cl),
            range(
                points
                    .iter()
                    .map(|p| p.limit_rate_asimov_to_first)
                    .collect()
            )
        )];
        for (slot, &target) in comparison.first().targets.iter().enumerate() {
            parts.push(format!(
                "global {} {}",
                target_label(target),
                range(
                    points
                        .iter()
                        .map(|p| p.discovery_rate_global_to_first[slot])
                        .collect()
                )
            ));
        }
        text.push_str(&format!("  {}: {}\n", plan.label, parts.join(", ")));
    }
    text
}
