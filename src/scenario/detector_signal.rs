//! A detector-level signal: one physical rate and one position for a
//! detector of several channels (volumes, event categories, run
//! configurations), each of which sees it through its own mass, signal
//! efficiency and resolution.
//!
//! Expected signal in channel i = rate × mass_i × efficiency_i × live days
//! (× period factors) for a rate per kg·day, rate × efficiency_i × live days
//! for a rate per day (common practice). When the file is read the signal
//! becomes one ordinary signal per channel: a Gaussian at the position with
//! the channel's resolution there as its width, and that rate, so everything
//! downstream (model, likelihood, scans) is the engine of several channels
//! with one signal strength. A yield uncertainty becomes one factor shared
//! by every channel's signal.
//!
//! One channel written at the top level with a top-level `resolution` has
//! its signal read in this form too, as the channel of a one-entry list.

use super::rate::WrittenRate;
use super::resolution::{Resolution, ResolutionFile};
use super::validate::values::require_finite;
use super::{Detector, Observable, RateUnit, Scan, ScenarioError, ShapeSpec, Signal};
use crate::message::show;
use crate::shapes::{ParameterValue, ShapeKind};
use serde::Deserialize;
use std::collections::BTreeMap;

/// The name of the shared uncertainty a detector-level `yield_uncertainty`
/// becomes when the detector has several channels.
pub const SIGNAL_YIELD_SHARED: &str = "signal.yield_uncertainty";

/// The top-level `signal` beside `channels`, as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct DetectorSignalFile {
    #[serde(default)]
    events_per_day: Option<f64>,
    #[serde(default)]
    events_per_week: Option<f64>,
    #[serde(default)]
    events_per_year: Option<f64>,
    #[serde(default)]
    events_per_kg_day: Option<f64>,
    shape: PositionOnly,
    #[serde(default)]
    scan: Option<Scan>,
    #[serde(default)]
    yield_uncertainty: Option<f64>,
    /// Names of shared uncertainties whose factors multiply the signal
    /// yield in every channel.
    #[serde(default)]
    shared: Vec<String>,
}

/// `shape: {gaussian: {mean: M}}`: the position alone.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct PositionOnly {
    gaussian: GaussianMean,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct GaussianMean {
    mean: f64,
    /// Refused when given: each channel's resolution gives the width.
    #[serde(default)]
    sigma: Option<f64>,
}

/// How one channel sees the detector-level signal, as written in it.
#[derive(Debug, Clone, Default)]
pub(super) struct ChannelResponseFile {
    pub signal_efficiency: Option<f64>,
    pub resolution: Option<ResolutionFile>,
}

/// The detector-level signal once read: its rate as written and how each
/// channel sees it.
#[derive(Debug, Clone, PartialEq)]
pub struct DetectorSignal {
    /// The rate in its written unit.
    pub rate: f64,
    pub unit: RateUnit,
    pub position: f64,
    /// One per channel, in channel order.
    pub channels: Vec<ChannelResponse>,
}

/// How one channel sees the detector-level signal.
#[derive(Debug, Clone, PartialEq)]
pub struct ChannelResponse {
    /// The signal events per live day at signal strength 1 per unit of the
    /// written rate: mass × efficiency per kg·day, efficiency per day.
    pub rate_factor: f64,
    pub efficiency: f64,
    pub resolution: Resolution,
}

/// One channel as it takes part in the conversion.
pub(super) struct ChannelSight<'a> {
    /// Dotted path of the channel, e.g. `channels[1].`; empty for the one
    /// channel written at the top level.
    pub path: String,
    pub observable: &'a Observable,
    pub detector: Option<Detector>,
    pub response: ChannelResponseFile,
}

impl DetectorSignalFile {
    /// The per-channel signals of this detector-level signal and what it is;
    /// adds the shared yield factor to `shared_uncertainties` when there are
    /// several channels. Errors name the field: the rate, the position
    /// outside a channel's range, a missing or invalid resolution or
    /// efficiency, a width not positive over the scan.
    pub(super) fn into_channel_signals(
        self,
        channels: &[ChannelSight],
        shared_uncertainties: &mut BTreeMap<String, f64>,
    ) -> Result<(Vec<Signal>, DetectorSignal), ScenarioError> {
        let written = WrittenRate {
            events_per_day: self.events_per_day,
            events_per_week: self.events_per_week,
            events_per_year: self.events_per_year,
            events_per_kg_day: self.events_per_kg_day,
        };
        let unit_detector = Some(Detector { mass_kg: 1.0 });
        let (per_unit_day, unit) = written.per_day("signal", unit_detector)?;
        let rate = match unit {
            RateUnit::PerDay => self.events_per_day,
            RateUnit::PerWeek => self.events_per_week,
            RateUnit::PerYear => self.events_per_year,
            RateUnit::PerKgDay => self.events_per_kg_day,
        }
        .expect("per_day found the written key");
        let position = self.shape.gaussian.mean;
        require_finite("signal.shape.gaussian.mean", position)?;
        let top_level = matches!(channels, [only] if only.path.is_empty());
        if self.shape.gaussian.sigma.is_some() {
            return Err(ScenarioError::invalid(
                "signal.shape.gaussian.sigma",
                if top_level {
                    "the signal's width is given twice, by sigma and by the top-level resolution, which gives it at every position; remove sigma, or remove resolution for a fixed width"
                } else {
                    "a detector-level signal takes its width in each channel from the channel's resolution; remove sigma and give each channel `resolution`"
                },
            ));
        }
        if self.scan.is_some_and(|scan| scan.width_at_to.is_some()) {
            return Err(ScenarioError::invalid(
                "signal.scan.width_at_to",
                if top_level {
                    "the signal's width along the scan is given twice, by width_at_to and by the top-level resolution; remove width_at_to"
                } else {
                    "a detector-level signal takes its width along the scan from each channel's resolution; remove width_at_to"
                },
            ));
        }
        let several = channels.len() > 1;
        if let Some(width) = self.yield_uncertainty
            && several
        {
            shared_uncertainties.insert(SIGNAL_YIELD_SHARED.to_string(), width);
        }
        let gaussian = ShapeKind::find("gaussian").expect("gaussian is a registered shape");
        let mut signals = Vec::with_capacity(channels.len());
        let mut responses = Vec::with_capacity(channels.len());
        for channel in channels {
            let path = &channel.path;
            let efficiency = channel.response.signal_efficiency.unwrap_or(1.0);
            if !(efficiency.is_finite() && (0.0..=1.0).contains(&efficiency)) {
                return Err(ScenarioError::invalid(
                    format!("{path}signal_efficiency"),
                    format!(
                        "must be a fraction from 0 (a background-only channel) to 1, got {}",
                        show(efficiency)
                    ),
                ));
            }
            let mass_factor = match (unit, channel.detector) {
                (RateUnit::PerKgDay, Some(detector)) => detector.mass_kg,
                (RateUnit::PerKgDay, None) => {
                    return Err(ScenarioError::invalid(
                        format!("{path}detector.mass_kg"),
                        "a signal rate per kg·day needs each channel's mass: add `detector: {mass_kg: ...}` to the channel or at the top level",
                    ));
                }
                (_, Some(_)) => {
                    return Err(ScenarioError::invalid(
                        format!("signal.{}", unit.key()),
                        if top_level {
                            "the detector has a mass and the signal's width comes from resolution, so the rate is per kg·day: write signal.events_per_kg_day"
                        } else {
                            "the channels have masses, so the detector-level rate is per kg·day: write signal.events_per_kg_day"
                        },
                    ));
                }
                (_, None) => 1.0,
            };
            let Some(resolution) = &channel.response.resolution else {
                return Err(ScenarioError::invalid(
                    format!("{path}resolution"),
                    "missing: a detector-level signal takes its width in each channel from the channel's resolution, e.g. resolution: {points: [[100, 2.0], [900, 6.0]]}",
                ));
            };
            let resolution = resolution.checked(path)?;
            let range = channel.observable.range;
            if !(position >= range[0] && position <= range[1]) {
                return Err(ScenarioError::invalid(
                    "signal.shape.gaussian.mean",
                    format!(
                        "must lie inside {path}observable.range [{}, {}], got {}",
                        show(range[0]),
                        show(range[1]),
                        show(position)
                    ),
                ));
            }
            let field = format!("{path}resolution");
            let interval = match &self.scan {
                Some(scan) if scan.from.is_finite() && scan.to.is_finite() => [
                    scan.from.min(scan.to).min(position),
                    scan.to.max(scan.from).max(position),
                ],
                _ => [position, position],
            };
            resolution.require_positive_on(&field, interval)?;
            let rate_factor = mass_factor * efficiency;
            let mut shared = self.shared.clone();
            if several && self.yield_uncertainty.is_some() {
                shared.push(SIGNAL_YIELD_SHARED.to_string());
            }
            signals.push(Signal {
                events_per_day: per_unit_day * rate_factor,
                rate_unit: unit,
                written_per_day: None,
                written_per_week: None,
                written_per_year: None,
                written_per_kg_day: None,
                shape: ShapeSpec {
                    kind: gaussian,
                    values: vec![
                        ParameterValue::Number(position),
                        ParameterValue::Number(resolution.sigma_at(position)),
                    ],
                    file: None,
                },
                yield_uncertainty: if several {
                    None
                } else {
                    self.yield_uncertainty
                },
                position_uncertainty: None,
                width_uncertainty: None,
                shared,
                scan: self.scan,
            });
            responses.push(ChannelResponse {
                rate_factor: per_unit_day / rate * rate_factor,
                efficiency,
                resolution,
            });
        }
        if responses.iter().all(|response| response.efficiency == 0.0) {
            return Err(ScenarioError::invalid(
                "channels",
                "every channel has signal_efficiency 0: at least one channel must see the signal",
            ));
        }
        Ok((
            signals,
            DetectorSignal {
                rate,
                unit,
                position,
                channels: responses,
            },
        ))
    }
}

impl DetectorSignal {
    /// The signal rate in its written unit that a signal strength `mu` means.
    pub fn rate_of(&self, mu: f64) -> f64 {
        mu * self.rate
    }

    /// The unit of the written rate in words, e.g. "events per kg·day".
    pub fn unit_label(&self) -> String {
        format!("events {}", self.unit.label())
    }
}
