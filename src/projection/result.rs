//! The result of a projection: what every report turns into bytes.
//!
//! Field names are the JSON schema of `projection.json`; `None` is written as null.

use crate::calendar::CalendarDate;
use crate::model::LiveTime;
use crate::scenario::Spacing;
use serde::Serialize;

use crate::asymptotic::significance;

/// A whole projection over the grid of calendar days.
#[derive(Debug, Clone, Serialize)]
pub struct Projection {
    pub title: String,
    /// The date of calendar day 0 (`schedule.start`); absent from the JSON
    /// without one. With it the reports give a date beside each calendar day.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub start: Option<CalendarDate>,
    /// Spacing of the figures' day axis; not part of the JSON (the scenario
    /// it comes from is).
    #[serde(skip)]
    pub day_spacing: Spacing,
    /// The schedule's stretches whose rates differ from the nominal ones,
    /// for the figures to shade; not part of the JSON (the scenario it
    /// comes from is).
    #[serde(skip)]
    pub rate_stretches: Vec<RateStretch>,
    pub seed: u64,
    /// Pseudo-experiments requested per exposure point (0 for an Asimov-only
    /// run); those whose fits converged are `toys` less `failed_fits`.
    pub toys: usize,
    /// Target significances in sigma.
    pub targets: Vec<f64>,
    /// Confidence level of the expected limits; None when limits were not computed.
    pub cl: Option<f64>,
    /// Background-only pseudo-experiments requested per point for the q0
    /// calibration (0 = none); see `Calibration::converged_toys`.
    pub calibration_toys: usize,
    /// The scan of the signal position (`signal.scan`); absent from the JSON
    /// without one, and so are every global significance and day.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub scan: Option<ScanSummary>,
    pub points: Vec<ExposurePoint>,
    pub days_to_target: Vec<DaysToTarget>,
    pub days_to_exclusion: DaysToExclusion,
    /// Exposure points run with pseudo-experiments beside the grid to solve
    /// the toy days (each with its own streams, keyed by its live days).
    pub solving_points: usize,
    /// The days asked for with `--at`, each computed there (empty without).
    pub at: Vec<AtDay>,
}

/// Calendar days [from, to) of the schedule at rates other than nominal: the
/// rate scale of all components, and the factors on the signal and on
/// single backgrounds (by name) of the period it belongs to.
#[derive(Debug, Clone, PartialEq)]
pub struct RateStretch {
    pub from: f64,
    /// May be infinite (the last period without `days`).
    pub to: f64,
    pub rate_scale: f64,
    pub signal_scale: f64,
    pub background_scale: Vec<(String, f64)>,
}

impl RateStretch {
    /// The stretches of `live_time` where some rate or factor is not 1.
    pub fn of(live_time: &LiveTime) -> Vec<RateStretch> {
        live_time
            .stretches()
            .map(|(from, to, rate_scale, period)| RateStretch {
                from,
                to,
                rate_scale,
                signal_scale: period.map_or(1.0, |period| period.signal_scale),
                background_scale: period
                    .map(|period| {
                        period
                            .background_scale
                            .iter()
                            .filter(|&(_, &factor)| factor != 1.0)
                            .map(|(name, &factor)| (name.clone(), factor))
                            .collect()
                    })
                    .unwrap_or_default(),
            })
            .filter(|stretch| !stretch.is_nominal())
            .collect()
    }

    /// True when every rate of the stretch is the nominal one.
    fn is_nominal(&self) -> bool {
        self.rate_scale == 1.0 && self.signal_scale == 1.0 && self.background_scale.is_empty()
    }

    /// True when some rate of the stretch is below its nominal value.
    pub fn is_reduced(&self) -> bool {
        self.rate_scale < 1.0
            || self.signal_scale < 1.0
            || self
                .background_scale
                .iter()
                .any(|&(_, factor)| factor < 1.0)
    }
}

/// Everything known at one day asked for with `--at`: the exposure point
/// computed at that day with its own pseudo-experiments, and its expected
/// limits as signal rates and counts beside the limits on mu (the ratio to
/// the nominal signal).
#[derive(Debug, Clone, Serialize)]
pub struct AtDay {
    #[serde(flatten)]
    pub point: ExposurePoint,
    /// Expected signal events per live day at the nominal signal strength
    /// (mu = 1), over the whole range: a limit on mu times this is a limit
    /// on the signal rate.
    pub signal_per_live_day: f64,
    /// The expected limits in signal events per live day: mu_up × `signal_per_live_day`.
    pub limit_events_per_live_day: EventLimits,
    /// The expected limits in signal events over the run up to this day:
    /// mu_up × `signal` (the nominal signal expected in the live days).
    pub limit_events: EventLimits,
    /// With a detector mass M: the expected limits in signal events per
    /// kg·day of exposure, mu_up × `signal_per_live_day` / M.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub limit_events_per_kg_day: Option<EventLimits>,
}

impl AtDay {
    /// The point at an `--at` day, with `signal_per_live_day` nominal signal
    /// events per live day and, when given, a detector of `mass_kg`.
    pub fn new(point: ExposurePoint, signal_per_live_day: f64, mass_kg: Option<f64>) -> AtDay {
        AtDay {
            limit_events_per_live_day: EventLimits::scaled(&point, signal_per_live_day),
            limit_events: EventLimits::scaled(&point, point.signal),
            limit_events_per_kg_day: mass_kg
                .map(|mass| EventLimits::scaled(&point, signal_per_live_day / mass)),
            point,
            signal_per_live_day,
        }
    }
}

/// Expected upper limits of one point in another unit than mu: the limit
/// is proportional to the signal yield, so each is mu_up times the yield
/// of the nominal signal in that unit.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct EventLimits {
    /// From the median of the pseudo-experiment limits.
    pub median: Option<f64>,
    /// Quantiles 2.3%, 15.9%, 84.1%, 97.7% of the pseudo-experiment limits.
    pub band: Option<[f64; 4]>,
    /// From the asymptotic formulae.
    pub asimov: Option<f64>,
    /// The asymptotic limits at -2, -1, +1, +2 sigma.
    pub asimov_band: Option<[f64; 4]>,
}

impl EventLimits {
    /// The limits on mu of `point` times `nominal`, the nominal signal in the new unit.
    pub fn scaled(point: &ExposurePoint, nominal: f64) -> EventLimits {
        let value = |mu: Option<f64>| mu.map(|mu| mu * nominal);
        let band = |band: Option<[f64; 4]>| band.map(|band| band.map(|mu| mu * nominal));
        EventLimits {
            median: value(point.limit_median),
            band: band(point.limit_band),
            asimov: value(point.limit_asimov),
            asimov_band: band(point.limit_asimov_band),
        }
    }
}

/// Everything known at one calendar day of the grid.
#[derive(Debug, Clone, Serialize)]
pub struct ExposurePoint {
    /// Calendar days since the start of data-taking.
    pub days: f64,
    /// Live days accumulated by then (schedule applied).
    pub live_days: f64,
    /// Expected signal events at nominal signal strength over the whole range.
    pub signal: f64,
    /// Expected background events over the whole range.
    pub background: f64,
    /// Median expected discovery significance from the Asimov dataset.
    pub z_asimov: f64,
    /// Each channel alone, in scenario order, when there are several; empty
    /// (and absent from the JSON) for a single channel.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub channels: Vec<ChannelPoint>,
    /// Asymptotic band of the significance: Z_A - 2, Z_A - 1, Z_A + 1, Z_A + 2,
    /// floored at 0 (`asymptotic::significance_band`), standing at the
    /// quantiles of `z_band`.
    pub z_asimov_band: [f64; 4],
    /// Median significance of the pseudo-experiments (None for Asimov-only).
    pub z_median: Option<f64>,
    /// Quantiles 2.3%, 15.9%, 84.1%, 97.7% of the toy significances.
    pub z_band: Option<[f64; 4]>,
    /// Probability of reaching each target, from toys and asymptotically.
    pub probability: Vec<TargetProbability>,
    /// Pseudo-experiments whose fits failed after all retries (excluded from
    /// quantiles); 0 before any live time, where none is run.
    pub failed_fits: usize,
    /// Median expected upper limit on mu from background-only pseudo-experiments;
    /// None without toys or limits, before any live time, or when unbounded
    /// (no mu is excluded at this exposure).
    pub limit_median: Option<f64>,
    /// Quantiles 2.3%, 15.9%, 84.1%, 97.7% of the pseudo-experiment limits on mu;
    /// None as for `limit_median`, or when one of them is unbounded.
    pub limit_band: Option<[f64; 4]>,
    /// Median expected upper limit on mu from the asymptotic formulae; None
    /// without limits, before any live time, or when unbounded.
    pub limit_asimov: Option<f64>,
    /// Asymptotic expected limits on mu at -2, -1, +1, +2 sigma; None as for
    /// `limit_asimov`, or when one of them is unbounded.
    pub limit_asimov_band: Option<[f64; 4]>,
    /// Background-only pseudo-experiments whose limit could not be computed;
    /// 0 where none is run: before any live time, or without a bounded
    /// `limit_asimov` (`Projection::toys_run_at`).
    pub limit_failed_fits: usize,
    /// Toy calibration of the discovery p-value (with `--calibrate`).
    pub calibration: Option<Calibration>,
    /// With a scan: the significances after the look-elsewhere effect.
    #[serde(flatten)]
    pub global: Option<GlobalSignificance>,
}

/// The scan of the signal position a projection accounts for.
#[derive(Debug, Clone, Serialize)]
pub struct ScanSummary {
    /// Positions tested.
    pub positions: usize,
    pub from: f64,
    pub to: f64,
    pub step: f64,
    /// Background-only scan pseudo-experiments requested per point (0 = none).
    pub look_elsewhere_toys: usize,
}

impl ScanSummary {
    pub fn of(scan: &crate::scenario::SignalScan, settings: &super::ProjectionSettings) -> Self {
        let [from, to] = scan.interval();
        ScanSummary {
            positions: scan.len(),
            from,
            to,
            step: scan.step(),
            look_elsewhere_toys: settings.look_elsewhere_toys,
        }
    }
}

/// Significances at one point after the look-elsewhere effect, by the global
/// p-value of Gross and Vitells (Eur. Phys. J. C 70 (2010) 525): for Z_A
/// with the asymptotic N(u0) of the Asimov geometry (the toys' N(u0) where
/// that geometry is degenerate), for the toy median with the toys' N(u0);
/// each None where it was not measured (no live time, no discovery toys, no
/// converged scan).
#[derive(Debug, Clone, Serialize)]
pub struct GlobalSignificance {
    /// The global significance of the Asimov local Z_A.
    pub z_global_asimov: Option<f64>,
    /// The global significance of the toy median local Z.
    pub z_global_median: Option<f64>,
    pub look_elsewhere: Option<LookElsewhere>,
}

/// What the background-only scans at one point measured, and N(u0) from the
/// Asimov geometry beside it; with a scan and live time always present (the
/// toy values None and `toys` 0 without scans).
#[derive(Debug, Clone, Serialize)]
pub struct LookElsewhere {
    /// The level u0 of q0 whose upcrossings are counted.
    pub reference_level: f64,
    /// N(u0): upcrossings of u0 by q0(position) per converged scan; None
    /// when no scan converged.
    pub mean_upcrossings: Option<f64>,
    /// Standard error of N(u0); None with fewer than two converged scans.
    pub mean_upcrossings_error: Option<f64>,
    /// Scans whose fits all converged.
    pub toys: usize,
    /// Scans with a failed fit at some position (left out of the counts).
    pub failed_fits: usize,
    /// Fraction of the scans whose largest q0 reaches the Asimov local q0;
    /// None when none does (the toys do not resolve it).
    pub direct_global_p: Option<f64>,
    /// p_global / p_local at the Asimov local significance, with the
    /// asymptotic N(u0) (the toys' without it); None without either.
    pub trials_factor: Option<f64>,
    /// N(u0) from the Asimov geometry of the scan (`upcrossings`), without
    /// toys; None where that geometry is degenerate (the nuisance parameters
    /// absorb the signal at some position).
    pub mean_upcrossings_asimov: Option<f64>,
}

/// One channel of a scenario with several, at one exposure point.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ChannelPoint {
    pub name: String,
    /// Expected signal events in this channel at nominal signal strength.
    pub signal: f64,
    /// Expected background events in this channel.
    pub background: f64,
    /// The channel's own Asimov significance, as if it were the only one
    /// (its shared uncertainties constrained by their auxiliary measurements alone).
    pub z_asimov: f64,
}

/// The p-value of the median expected q0 (the Asimov q0), asymptotically and
/// from background-only pseudo-experiments.
#[derive(Debug, Clone, Serialize)]
pub struct Calibration {
    /// Background-only pseudo-experiments whose fits converged (of the
    /// requested `Projection::calibration_toys`).
    pub converged_toys: usize,
    pub failed_fits: usize,
    /// The Asimov q0 = Z_A^2 whose p-value is calibrated.
    pub q0_asimov: f64,
    /// Pseudo-experiments with q0 >= q0_asimov.
    pub exceeding: usize,
    /// 1 - Phi(Z_A) from the asymptotic half chi-square distribution.
    pub p_asymptotic: f64,
    pub z_asymptotic: f64,
    /// exceeding / converged_toys; None when no pseudo-experiment reached q0_asimov.
    pub p_toys: Option<f64>,
    pub z_toys: Option<f64>,
    /// The significance of p = 1/converged_toys, the deepest tail the ensemble
    /// resolves (`Calibration::tail_reach`); None when fewer than two toys
    /// converged, as p = 1 resolves no tail.
    pub tail_reach_z: Option<f64>,
}

impl Calibration {
    /// The one-sided significance of p = 1/N, the smallest p-value N converged
    /// pseudo-experiments resolve (Cowan et al., Eur. Phys. J. C 71 (2011)
    /// 1554, eq. 1: Z = Phi^-1(1 - p)); None for N < 2, where p = 1/N is 1 or
    /// undefined and Z would be -inf or nothing.
    pub fn tail_reach(converged_toys: usize) -> Option<f64> {
        (converged_toys >= 2).then(|| significance(1.0 / converged_toys as f64))
    }
}

/// Calendar days until the nominal signal (mu = 1) is excluded by the median expected limit.
#[derive(Debug, Clone, Default, Serialize)]
pub struct DaysToExclusion {
    /// From the asymptotic median limit (root-found).
    pub asimov_days: Option<f64>,
    /// From the median of the pseudo-experiment limits, solved with extra
    /// ensembles (1/limit^2 linear in live days inside the final bracket).
    pub median_days: Option<f64>,
    /// The toy day left out because too few of its fits converged.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub withheld: Vec<WithheldDay>,
}

/// A toy day that the grid brackets but that is not given as a number:
/// fewer than [`MIN_CONVERGED_FRACTION`](super::refine::MIN_CONVERGED_FRACTION)
/// of the pseudo-experiments at a point it comes from converged, so the
/// quantiles there describe the converged minority only.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WithheldDay {
    /// The key of the day left out (`median_days`, `p50_days`, ...).
    pub day: &'static str,
    /// Pseudo-experiments whose fits converged at that point...
    pub converged: usize,
    /// ...of those run there.
    pub toys: usize,
}

/// P(Z >= target) at one exposure.
#[derive(Debug, Clone, Serialize)]
pub struct TargetProbability {
    pub target: f64,
    /// Fraction of successful pseudo-experiments reaching the target.
    pub toys: Option<f64>,
    /// Phi(Z_A - target) (Cowan et al., EPJC 71 (2011) 1554).
    pub asimov: f64,
}

/// Calendar days needed to reach one target significance, by each method.
#[derive(Debug, Clone, Serialize)]
pub struct DaysToTarget {
    pub target: f64,
    /// Where the Asimov significance reaches the target (root-found).
    pub asimov_days: Option<f64>,
    /// Where the toy median reaches the target, solved with extra ensembles
    /// inside the bracketing grid interval (Z^2 linear in live days inside
    /// the final bracket).
    pub median_days: Option<f64>,
    /// Where 50% of the pseudo-experiments reach the target (the fraction read
    /// as the median significance it stands for, whose square is interpolated
    /// linearly in live days inside the final bracket), solved likewise.
    pub p50_days: Option<f64>,
    /// Where 90% of the pseudo-experiments reach the target.
    pub p90_days: Option<f64>,
    /// The Asimov significance as days grow without bound, when systematic
    /// uncertainties make it saturate; None when it grows without bound; 0
    /// when Z_A is still 0 at 10^5 times the grid's live time (the signal is
    /// too small to change any fit).
    pub saturation_z: Option<f64>,
    /// With a scan: the days to the target in global significance.
    #[serde(flatten)]
    pub global: Option<GlobalDays>,
    /// The toy days left out because too few of their fits converged.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub withheld: Vec<WithheldDay>,
}

/// Calendar days until the global significance reaches a target: of Z_A
/// root-found, of the toy median solved as the other toy days.
#[derive(Debug, Clone, Serialize)]
pub struct GlobalDays {
    /// From the global significance of Z_A.
    pub global_asimov_days: Option<f64>,
    /// From the global significance of the toy median.
    pub global_median_days: Option<f64>,
}

impl DaysToTarget {
    /// True when systematic uncertainties keep Z_A below the target at any exposure.
    pub fn never_reached(&self) -> bool {
        self.saturation_z.is_some_and(|limit| limit < self.target)
    }

    /// True when Z_A stays 0 however long the run: the signal is too small to
    /// change any fit.
    pub fn signal_unseen(&self) -> bool {
        self.saturation_z == Some(0.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{ContinuousCDF, Normal};

    #[test]
    fn tail_reach_needs_two_converged_toys() {
        // p = 1/N: N = 1 gives p = 1, Z = -inf, and N = 0 no p-value at all.
        assert_eq!(Calibration::tail_reach(0), None);
        assert_eq!(Calibration::tail_reach(1), None);
        // p = 1/2 is the median of the standard normal, Z = 0 (common practice).
        assert!(Calibration::tail_reach(2).unwrap().abs() < 1e-12);
        // Phi^-1(1 - 1/5000) = 3.540 (standard normal quantile, from memory;
        // recomputed with statrs as reference).
        let reach = Calibration::tail_reach(5000).unwrap();
        let reference = Normal::standard().inverse_cdf(1.0 - 1.0 / 5000.0);
        assert!((reach - 3.540).abs() < 5e-4 && (reach - reference).abs() < 1e-12);
    }
}
