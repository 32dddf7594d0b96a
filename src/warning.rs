//! Warnings: what may be wrong with a valid scenario or a finished projection,
//! as typed values carrying the data each needs. They travel with what
//! produced them (`Scenario::warnings`, `Projection::warnings`) and are worded
//! in one place, `report::warning_text`.

use crate::calendar::CalendarDate;

/// Failed fits above this fraction of an ensemble's pseudo-experiments at one
/// exposure point earn a warning: the quantiles there exclude them and may be
/// biased.
pub const FAILED_FRACTION_WARNING: f64 = 0.001;

/// An ensemble of pseudo-experiments of a projection.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Ensemble {
    /// Signal + background toys for the discovery significance.
    Discovery,
    /// Background-only toys for the expected limits.
    Limits,
    /// Background-only toys calibrating the p-value of q0.
    Calibration,
    /// Background-only toys fitted at every scanned signal position.
    LookElsewhere,
}

#[derive(Debug, Clone, PartialEq)]
pub enum Warning {
    /// `backgrounds[background].float_shape` is set on a shape without
    /// parameters (flat, or a one-term polynomial): it has no effect.
    NothingToFloat { background: usize },
    /// A warning about channel `channel` of a `channels` list, whose dotted
    /// paths lie inside `channels[channel]`.
    InChannel {
        channel: usize,
        warning: Box<Warning>,
    },
    /// `signal.scan.width_at_to` is given while the signal's own position
    /// `position` is not `scan.from`: the scan's width at `from` is then the
    /// benchmark's width, so one of them is the wrong width for its position.
    WidthAtToAwayFromFrom { position: f64, from: f64 },
    /// `shared_uncertainties.<name>` is declared but no yield names it in
    /// its `shared` list: it has no effect.
    UnusedSharedUncertainty { name: String },
    /// The grid starts on `first_day`, within the first `days_without_data`
    /// days, when the schedule scales every rate to 0.
    FirstDayWithoutData {
        first_day: f64,
        days_without_data: f64,
    },
    /// More than [`FAILED_FRACTION_WARNING`] of the `toys` fits of `ensemble`
    /// failed at `flagged_points` of the `points` exposure points where it
    /// ran; the most, at
    /// `worst_days` calendar days, lost `worst_failed`; `start` is the date
    /// of day 0 when the schedule has one.
    FailedFits {
        ensemble: Ensemble,
        flagged_points: usize,
        points: usize,
        worst_failed: usize,
        toys: usize,
        worst_days: f64,
        start: Option<CalendarDate>,
    },
}
