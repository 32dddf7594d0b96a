//! A channel's `signal`: its rate, its shape with the peak inside the
//! range, its scan, and the uncertainties on its yield, position and width.

use super::observable::Range;
use super::shape::{held_shape, validate_shape};
use super::values::{Checked, require_positive, require_relative_uncertainty};
use crate::message::{show, show_rounded};
use crate::scenario::{ScenarioError, ShapeSpec, Signal, SignalScan};

pub(super) fn validate_signal(signal: &Signal, range: Range, detector_level: bool) -> Checked {
    if !(detector_level && signal.events_per_day == 0.0) {
        require_positive("signal.events_per_day", signal.events_per_day)?;
    }
    validate_shape("signal", &signal.shape, range, false)?;
    refuse_signal_peak_outside_range(&signal.shape, range)?;
    if let Some(scan) = &signal.scan
        && !detector_level
    {
        SignalScan::new(scan, &signal.shape, range.edges())?;
    }
    if let Some(relative) = signal.yield_uncertainty {
        require_relative_uncertainty("signal.yield_uncertainty", relative)?;
        refuse_wide_signal_yield_uncertainty("signal.yield_uncertainty", relative)?;
    }
    validate_shape_uncertainties(signal, range)
}

/// Widest relative width uncertainty: its auxiliary measurement, drawn from
/// N(w, δ w), falls at or below zero width in Φ(−1/δ) of the
/// pseudo-experiments, 1.35e-3 at δ = 1/3 (PDG statistics review).
const MAX_WIDTH_UNCERTAINTY: f64 = 1.0 / 3.0;

/// Auxiliary measurements of the position fall within this many standard
/// deviations of the peak in all but 0.27% of pseudo-experiments (Φ(−3) on
/// each side; PDG statistics review); that far the range must reach.
const POSITION_REACH_SIGMAS: f64 = 3.0;

/// A peaked signal ([`Shape::peak`](crate::shapes::Shape::peak)) whose
/// maximum lies outside the range: only a tail would be fitted, and the days
/// to a target would describe a search for something else than the peak.
fn refuse_signal_peak_outside_range(shape: &ShapeSpec, range: Range) -> Checked {
    let Some(peak) = held_shape(shape, range.edges()).and_then(|shape| shape.peak()) else {
        return Ok(());
    };
    if (range.low..=range.high).contains(&peak.centre) {
        return Ok(());
    }
    Err(ScenarioError::invalid(
        format!("signal.shape.{}", peak.centre_key),
        format!(
            "the signal peak must lie inside observable.range [{}, {}], got {}; only its tail would be fitted",
            show(range.low),
            show(range.high),
            show(peak.centre)
        ),
    ))
}

/// A position known no better than the peak is wide is a search over
/// positions: the fitted position then moves between separate minima of the
/// likelihood (each a fluctuation the peak could sit on), the fits stop
/// converging, and the look-elsewhere effect dominates; `signal.scan` is
/// made for that. So the uncertainty may be at most the width (a Gaussian's
/// sigma, half a Breit-Wigner's full width).
fn refuse_position_uncertainty_beyond_width(signal: &Signal, range: Range, value: f64) -> Checked {
    let Some(peak) = held_shape(&signal.shape, range.edges()).and_then(|shape| shape.peak()) else {
        return Ok(());
    };
    if value > peak.width {
        return Err(ScenarioError::invalid(
            "signal.position_uncertainty",
            format!(
                "must be at most the peak's width {} (a Gaussian's sigma, half a Breit-Wigner's width): a position known worse than that is a search over positions, for signal.scan; got {}",
                show(peak.width),
                show(value)
            ),
        ));
    }
    Ok(())
}

/// `signal.position_uncertainty` and `signal.width_uncertainty`: finite, not
/// negative (0 as absent), only for a peak with a position and a width and
/// without a scan (which tests every position itself); the position
/// uncertainty at most the peak's width, and the position must
/// stay inside the range within [`POSITION_REACH_SIGMAS`] of its
/// uncertainty, since the signal is normalised on the range and would keep
/// its whole yield beyond it; the width uncertainty at most
/// [`MAX_WIDTH_UNCERTAINTY`].
fn validate_shape_uncertainties(signal: &Signal, range: Range) -> Checked {
    let fields = [
        ("signal.position_uncertainty", signal.position_uncertainty),
        ("signal.width_uncertainty", signal.width_uncertainty),
    ];
    for (field, value) in fields {
        let Some(value) = value else { continue };
        if !(value.is_finite() && value >= 0.0) {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "must be a non-negative finite number (0 = known exactly), got {}",
                    show(value)
                ),
            ));
        }
        if value == 0.0 {
            continue;
        }
        let movable =
            held_shape(&signal.shape, range.edges()).and_then(|shape| shape.movable_peak());
        let Some(position) = movable.map(|peak| peak.position) else {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "applies to gaussian and breit_wigner signals (a peak with a position and a width); this signal's shape is {}",
                    signal.shape.kind.key
                ),
            ));
        };
        if signal.scan.is_some() {
            return Err(ScenarioError::invalid(
                field,
                "signal.scan tests every position with a fixed shape; remove the scan or this uncertainty",
            ));
        }
        if field == "signal.width_uncertainty" && value > MAX_WIDTH_UNCERTAINTY {
            return Err(ScenarioError::invalid(
                field,
                format!(
                    "above 1/3 more than 0.13% of the auxiliary measurements of the width fall at or below zero; use at most 0.333, got {}",
                    show(value)
                ),
            ));
        }
        if field == "signal.position_uncertainty" {
            refuse_position_uncertainty_beyond_width(signal, range, value)?;
            let centre = signal.shape.values[position].number();
            let reach = POSITION_REACH_SIGMAS * value;
            if centre - reach < range.low || centre + reach > range.high {
                return Err(ScenarioError::invalid(
                    field,
                    format!(
                        "the position {} ± 3 × {} leaves the range [{}, {}]; the signal is normalised on the range, so a shifted peak would keep its whole yield there: use at most {}",
                        show(centre),
                        show(value),
                        show(range.low),
                        show(range.high),
                        show_rounded(
                            (centre - range.low).min(range.high - centre) / POSITION_REACH_SIGMAS
                        )
                    ),
                ));
            }
        }
    }
    Ok(())
}

/// The auxiliary measurement of the signal yield factor is drawn from
/// N(1, δ²); it falls below zero in Φ(−1/δ) of the pseudo-experiments, where
/// the fit holds the factor at 0 and q0 = 0 whatever the data. Above δ = 1/3
/// that is more than Φ(−3) = 1.35e-3 of them (PDG statistics review), enough
/// to bias the toy quantiles, so such a width is refused.
pub(super) fn refuse_wide_signal_yield_uncertainty(field: &str, relative: f64) -> Checked {
    if relative > 1.0 / 3.0 {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "a Gaussian yield uncertainty above 1/3 puts more than 0.13% of the auxiliary \
                 measurements below zero, where the yield factor is unphysical; use at most 0.333, got {}",
                show(relative)
            ),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::super::test_scenario::{accepted, rejected_field, with};
    use crate::scenario::Scenario;

    #[test]
    fn widths_of_peaks_must_be_positive() {
        assert_eq!(
            rejected_field(&with("sigma: 1.5", "sigma: 0")),
            "signal.shape.gaussian.sigma"
        );
        let breit_wigner = with(
            "{gaussian: {mean: 50.0, sigma: 1.5}}",
            "{breit_wigner: {mean: 50.0, width: -2}}",
        );
        assert_eq!(
            rejected_field(&breit_wigner),
            "signal.shape.breit_wigner.width"
        );
    }

    #[test]
    fn peak_outside_the_range_is_an_error_naming_the_centre() {
        let text = with("mean: 50.0", "mean: 120.0");
        assert_eq!(rejected_field(&text), "signal.shape.gaussian.mean");
        let error = Scenario::from_yaml(&text).unwrap_err().to_string();
        assert!(
            error.contains("inside observable.range [0, 100], got 120"),
            "{error}"
        );
        // On the edge the peak is inside, and nothing is said.
        assert!(
            accepted(&with("mean: 50.0", "mean: 100.0"))
                .warnings()
                .is_empty()
        );
    }
}
