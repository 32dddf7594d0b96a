//! The stdout summary of `runcast reach`: per exposure, the best and worst
//! expected limit over the scan and the rates for each target, local and
//! global.

use crate::message::{show, show_rounded};
use crate::reach::{ExposureReach, PositionReach, Reach};
use crate::report::kit::format::{exposure_label, fit_percent, percent_label, target_label};
use crate::report::kit::vocabulary::upcrossings_name;

/// Three significant digits, as rates are read: 0.0123, 1.89, 245; in
/// exponent form outside [1e-3, 1e6).
fn rate(value: f64) -> String {
    let magnitude = value.abs();
    if value == 0.0 || !(1e-3..1e6).contains(&magnitude) {
        return format!("{value:.2e}");
    }
    let decimals = (2 - magnitude.log10().floor() as i32).max(0) as usize;
    format!("{value:.decimals$}")
}

/// The position with the lowest and the highest value of `value`, among
/// positions where it is bounded.
fn extremes(
    positions: &[PositionReach],
    value: impl Fn(&PositionReach) -> Option<f64>,
) -> Option<((f64, f64), (f64, f64))> {
    let mut bounded = positions
        .iter()
        .filter_map(|point| value(point).map(|v| (point.position, v)));
    let first = bounded.next()?;
    Some(bounded.fold((first, first), |(best, worst), point| {
        (
            if point.1 < best.1 { point } else { best },
            if point.1 > worst.1 { point } else { worst },
        )
    }))
}

fn extremes_line(
    label: &str,
    unit: &str,
    positions: &[PositionReach],
    value: impl Fn(&PositionReach) -> Option<f64>,
) -> String {
    match extremes(positions, value) {
        Some(((best_at, best), (worst_at, worst))) => format!(
            "  {label}: best {} at {} {unit}, worst {} at {} {unit}\n",
            rate(best),
            show_rounded(best_at),
            rate(worst),
            show_rounded(worst_at)
        ),
        None => format!("  {label}: not reached at any position\n"),
    }
}

fn exposure_summary(reach: &Reach, exposure: &ExposureReach) -> String {
    let unit = &reach.unit;
    let mut text = format!(
        "{}: {} = {:.3} (asymptotic)\n",
        exposure_label(exposure.days, exposure.live_days),
        upcrossings_name(&show(exposure.reference_level)),
        exposure.mean_upcrossings_asimov
    );
    text += &extremes_line(
        &format!("{} CL limit (Asimov)", percent_label(reach.cl)),
        unit,
        &exposure.positions,
        |p| p.limit_rate_asimov,
    );
    if exposure
        .positions
        .iter()
        .any(|p| p.limit_rate_median.is_some())
    {
        text += &extremes_line(
            &format!("{} CL limit (toy median)", percent_label(reach.cl)),
            unit,
            &exposure.positions,
            |p| p.limit_rate_median,
        );
    }
    for (index, &target) in reach.targets.iter().enumerate() {
        let target = target_label(target);
        text += &extremes_line(&format!("{target} local"), unit, &exposure.positions, |p| {
            p.discovery_rate_local[index]
        });
        text += &extremes_line(
            &format!(
                "{target} global (local {:.2}σ)",
                exposure.global_local_targets[index]
            ),
            unit,
            &exposure.positions,
            |p| p.discovery_rate_global[index],
        );
    }
    text
}

/// The summary: what was scanned, then each exposure.
pub fn reach_summary(reach: &Reach, toys: usize) -> String {
    let positions = reach.exposures.first().map_or(0, |e| e.positions.len());
    let mut text = format!(
        "{}\nReach over {positions} positions, rates in signal {} (scenario: {})\n",
        reach.title,
        reach.rate_unit,
        rate(reach.signal_rate)
    );
    for exposure in &reach.exposures {
        text += &exposure_summary(reach, exposure);
        let failed: usize = exposure.positions.iter().map(|p| p.limit_failed_fits).sum();
        if toys > 0 {
            text += &format!(
                "  toy limit fits failed: {failed} of {} ({})\n",
                toys * positions,
                fit_percent(failed, toys * positions)
            );
        }
    }
    text
}

#[cfg(test)]
mod tests {
    use super::rate;

    /// Three significant digits (rounding half to even as Rust formats).
    #[test]
    fn rates_read_with_three_significant_digits() {
        assert_eq!(rate(1.885), "1.89");
        assert_eq!(rate(0.012345), "0.0123");
        assert_eq!(rate(245.4), "245");
        assert_eq!(rate(2.5e-5), "2.50e-5");
    }
}
