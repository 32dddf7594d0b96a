//! `replan.json`.
//!
//! Schema: `{title, taken: {days, live_days}, future, targets, cl, data:
//! [{channel, file, sha256, form, events}], observed: {live_days,
//! fitted_mu, fitted_mu_error, q0, z_local, parameters: [{name, nominal,
//! fitted}], backgrounds: [{channel, name, planned_per_day, fitted_per_day,
//! fitted_error, pull, as_planned}], scan: {best_position, z_local,
//! mean_upcrossings_asimov, z_global} or null, limit: {cl, mu, expected_mu}
//! or null, goodness_of_fit: {deviance, bins, p_value, toys, failed_fits}},
//! hypotheses: [{hypothesis, generating: [{name, value}], points: [{days,
//! live_days, z_median, z_band, p_reach: [one per target], limit_median,
//! limit_band, failed_fits, limit_failed_fits, z_asimov_forecast}],
//! targets: [{target, median_days, p50_days, p90_days, probability_by_day:
//! [{days, probability}]}], exclusion_median_days}], forecast: {points:
//! [{days, z_asimov}], asimov_days: [{target, asimov_days}]}}`; bands at -2, -1, +1, +2 sigma; null where not computed,
//! unbounded or not reached within the grid; with `schedule.start` a
//! `..._date` key beside every `..._days` key.

use super::REPLAN_JSON;
use crate::projection::Projection;
use crate::replan::{Hypothesis, Replan};
use crate::report::ReportError;
use crate::report::kit::dates::insert_dates;
use crate::report::kit::encode::json_bytes;
use serde::Serialize;
use serde_json::json;

#[derive(Serialize)]
struct PointJson {
    days: f64,
    live_days: f64,
    z_median: Option<f64>,
    z_band: Option<[f64; 4]>,
    p_reach: Vec<Option<f64>>,
    limit_median: Option<f64>,
    limit_band: Option<[f64; 4]>,
    failed_fits: usize,
    limit_failed_fits: usize,
    z_asimov_forecast: f64,
}

#[derive(Serialize)]
struct TargetJson {
    target: f64,
    median_days: Option<f64>,
    p50_days: Option<f64>,
    p90_days: Option<f64>,
    probability_by_day: Vec<serde_json::Value>,
}

fn hypothesis(
    replan: &Replan,
    hypothesis: Hypothesis,
    projection: &Projection,
) -> serde_json::Value {
    let generating = replan
        .generating
        .iter()
        .find(|(h, _)| *h == hypothesis)
        .map(|(_, theta)| theta.as_slice())
        .unwrap_or_default();
    let points: Vec<PointJson> = projection
        .points
        .iter()
        .map(|point| PointJson {
            days: point.days,
            live_days: point.live_days,
            z_median: point.z_median,
            z_band: point.z_band,
            p_reach: point.probability.iter().map(|p| p.toys).collect(),
            limit_median: point.limit_median,
            limit_band: point.limit_band,
            failed_fits: point.failed_fits,
            limit_failed_fits: point.limit_failed_fits,
            z_asimov_forecast: point.z_asimov,
        })
        .collect();
    let targets: Vec<TargetJson> = projection
        .days_to_target
        .iter()
        .enumerate()
        .map(|(index, days)| TargetJson {
            target: days.target,
            median_days: days.median_days,
            p50_days: days.p50_days,
            p90_days: days.p90_days,
            probability_by_day: projection
                .points
                .iter()
                .map(|point| json!({"days": point.days, "probability": point.probability[index].toys}))
                .collect(),
        })
        .collect();
    json!({
        "hypothesis": hypothesis.key(),
        "generating": replan
            .parameter_names
            .iter()
            .zip(generating)
            .map(|(name, value)| json!({"name": name, "value": value}))
            .collect::<Vec<_>>(),
        "points": points,
        "targets": targets,
        "exclusion_median_days": projection.days_to_exclusion.median_days,
    })
}

/// Pretty-printed JSON of the re-plan, ending with a newline.
pub(super) fn render(replan: &Replan) -> Result<Vec<u8>, ReportError> {
    let observed = &replan.observed;
    let signal = replan.projection(Hypothesis::Signal);
    let document = json!({
        "title": replan.title,
        "taken": {"days": replan.taken_days, "live_days": replan.taken_live_days},
        "future": replan.future.name(),
        "targets": signal.targets,
        "cl": signal.cl,
        "data": replan.data.iter().map(|data| json!({
            "channel": data.channel,
            "file": data.file.file,
            "sha256": data.file.sha256,
            "form": data.form.name(),
            "events": data.counts.iter().sum::<f64>(),
        })).collect::<Vec<_>>(),
        "observed": {
            "live_days": observed.live_days,
            "fitted_mu": observed.fitted_mu,
            "fitted_mu_error": observed.fitted_mu_error,
            "q0": observed.q0,
            "z_local": observed.z_local,
            "parameters": observed.parameters.iter().map(|p| json!({
                "name": p.name, "nominal": p.nominal, "fitted": p.fitted,
            })).collect::<Vec<_>>(),
            "backgrounds": observed.backgrounds.iter().map(|b| json!({
                "channel": b.channel,
                "name": b.name,
                "planned_per_day": b.planned_per_day,
                "fitted_per_day": b.fitted_per_day,
                "fitted_error": b.fitted_error,
                "pull": b.pull,
                "as_planned": b.as_planned(),
            })).collect::<Vec<_>>(),
            "scan": observed.scan.as_ref().map(|scan| json!({
                "best_position": scan.best_position,
                "z_local": scan.z_local,
                "mean_upcrossings_asimov": scan.upcrossings,
                "z_global": scan.z_global,
            })),
            "limit": observed.limit.map(|limit| json!({
                "cl": limit.cl,
                "mu": limit.mu,
                "expected_mu": limit.expected_mu,
                "mu_toys": limit.toys_mu,
                "toys": limit.toys,
            })),
            "goodness_of_fit": {
                "deviance": observed.goodness_of_fit.deviance,
                "bins": observed.goodness_of_fit.bins,
                "p_value": observed.goodness_of_fit.p_value,
                "toys": observed.goodness_of_fit.toys,
                "failed_fits": observed.goodness_of_fit.failed_fits,
            },
        },
        "hypotheses": replan
            .conditional
            .iter()
            .map(|(h, projection)| hypothesis(replan, *h, projection))
            .collect::<Vec<_>>(),
        "forecast": {
            "points": replan
                .forecast
                .points
                .iter()
                .map(|point| json!({"days": point.days, "z_asimov": point.z_asimov}))
                .collect::<Vec<_>>(),
            "asimov_days": replan
                .forecast
                .days_to_target
                .iter()
                .map(|days| json!({"target": days.target, "asimov_days": days.asimov_days}))
                .collect::<Vec<_>>(),
        },
    });
    let document = match signal.start {
        Some(start) => insert_dates(document, start),
        None => document,
    };
    json_bytes(REPLAN_JSON, &document)
}
