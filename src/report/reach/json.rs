//! `reach.json`.
//!
//! Schema: `{title, seed, cl, targets, rate_unit, exposures: [{days, live_days,
//! look_elsewhere: {reference_level, mean_upcrossings, mean_upcrossings_error,
//! toys, direct_global_p, trials_factor, mean_upcrossings_asimov}, positions:
//! [{position, width, limit_rate_asimov, limit_rate_asimov_band: [-2σ, -1σ, +1σ,
//! +2σ], limit_rate_median, limit_rate_band, discovery_rate_local: [one per
//! target], discovery_rate_global: [one per target], channels: [{name, width,
//! limit_rate_asimov, discovery_rate_local}] (each channel alone; only with
//! several channels)}]}]}`; rates in `rate_unit` (the signal's own unit:
//! events per live day, or per kg·day for a detector-level signal written
//! so), null where not computed (the toy look-elsewhere
//! values, which `reach` does not run; toy limits without `--toys`) or
//! unbounded.

use super::REACH_JSON;
use crate::reach::{ExposureReach, PositionReach, Reach};
use crate::report::ReportError;
use crate::report::kit::encode::json_bytes;
use serde::Serialize;

#[derive(Serialize)]
struct ReachJson<'r> {
    title: &'r str,
    seed: u64,
    cl: f64,
    targets: &'r [f64],
    rate_unit: &'r str,
    exposures: Vec<ExposureJson<'r>>,
}

#[derive(Serialize)]
struct ExposureJson<'r> {
    days: f64,
    live_days: f64,
    look_elsewhere: LookElsewhereJson,
    positions: Vec<PositionJson<'r>>,
}

/// The look-elsewhere estimate of one exposure: the toy values are null,
/// since `reach` runs no background-only scan toys.
#[derive(Serialize)]
struct LookElsewhereJson {
    reference_level: f64,
    mean_upcrossings: Option<f64>,
    mean_upcrossings_error: Option<f64>,
    toys: usize,
    direct_global_p: Option<f64>,
    trials_factor: Option<f64>,
    mean_upcrossings_asimov: f64,
}

#[derive(Serialize)]
struct PositionJson<'r> {
    position: f64,
    width: f64,
    limit_rate_asimov: Option<f64>,
    limit_rate_asimov_band: Option<[f64; 4]>,
    limit_rate_median: Option<f64>,
    limit_rate_band: Option<[f64; 4]>,
    discovery_rate_local: &'r [Option<f64>],
    discovery_rate_global: &'r [Option<f64>],
    #[serde(skip_serializing_if = "<[_]>::is_empty")]
    channels: Vec<ChannelJson<'r>>,
}

/// One channel alone at a position.
#[derive(Serialize)]
struct ChannelJson<'r> {
    name: &'r str,
    width: f64,
    limit_rate_asimov: Option<f64>,
    discovery_rate_local: &'r [Option<f64>],
}

fn exposure<'r>(exposure: &'r ExposureReach, names: &'r [String]) -> ExposureJson<'r> {
    ExposureJson {
        days: exposure.days,
        live_days: exposure.live_days,
        look_elsewhere: LookElsewhereJson {
            reference_level: exposure.reference_level,
            mean_upcrossings: None,
            mean_upcrossings_error: None,
            toys: 0,
            direct_global_p: None,
            trials_factor: None,
            mean_upcrossings_asimov: exposure.mean_upcrossings_asimov,
        },
        positions: exposure
            .positions
            .iter()
            .map(|point| position(point, names))
            .collect(),
    }
}

fn position<'r>(point: &'r PositionReach, names: &'r [String]) -> PositionJson<'r> {
    PositionJson {
        position: point.position,
        width: point.width,
        limit_rate_asimov: point.limit_rate_asimov,
        limit_rate_asimov_band: point.limit_rate_asimov_band,
        limit_rate_median: point.limit_rate_median,
        limit_rate_band: point.limit_rate_band,
        discovery_rate_local: &point.discovery_rate_local,
        discovery_rate_global: &point.discovery_rate_global,
        channels: point
            .channels
            .iter()
            .zip(names)
            .map(|(channel, name)| ChannelJson {
                name,
                width: channel.width,
                limit_rate_asimov: channel.limit_rate_asimov,
                discovery_rate_local: &channel.discovery_rate_local,
            })
            .collect(),
    }
}

/// Pretty-printed JSON of the reach, ending with a newline.
pub(super) fn render(reach: &Reach) -> Result<Vec<u8>, ReportError> {
    let document = ReachJson {
        title: &reach.title,
        seed: reach.seed,
        cl: reach.cl,
        targets: &reach.targets,
        rate_unit: &reach.rate_unit,
        exposures: reach
            .exposures
            .iter()
            .map(|point| exposure(point, &reach.channel_names))
            .collect(),
    };
    json_bytes(REACH_JSON, &document)
}
