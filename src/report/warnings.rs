//! The wording of every [`Warning`], in one place: scenario warnings, and
//! failed fits named by the projection's ensemble descriptions
//! (`projection/ensembles.rs`).

use super::kit::dates::dated_days_label;
use super::kit::format::{fit_percent, percent_label};
use super::projection::ensembles::Ensemble;
use crate::message::show;
use crate::warning::{FAILED_FRACTION_WARNING, Warning};

/// One line, without the "warning: " prefix the caller adds.
pub fn warning_text(warning: &Warning) -> String {
    match *warning {
        Warning::NothingToFloat { background } => format!(
            "backgrounds[{background}].float_shape: this shape has no parameters to float; the setting has no effect"
        ),
        Warning::InChannel {
            channel,
            ref warning,
        } => format!("channels[{channel}].{}", warning_text(warning)),
        Warning::WidthAtToAwayFromFrom { position, from } => format!(
            "signal.scan.width_at_to: the scan's width at from ({}) is the signal's own width, taken at its position {}; one of them is the wrong width for its position. Give the width as a function of position instead: `resolution` (at the top level for one channel, or in each channel beside a top-level signal), with the signal's shape {{gaussian: {{mean}}}} alone",
            show(from),
            show(position)
        ),
        Warning::UnusedSharedUncertainty { ref name } => format!(
            "shared_uncertainties.{name}: no signal or background names it in its shared list; it has no effect"
        ),
        Warning::FirstDayWithoutData {
            first_day,
            days_without_data,
        } => format!(
            "plan.days: the first day, {}, falls within the first {} days, when schedule.periods scale all rates to 0; grid points there have no data",
            show(first_day),
            show(days_without_data)
        ),
        Warning::FailedFits {
            ensemble,
            flagged_points,
            points,
            worst_failed,
            toys,
            worst_days,
            start,
        } => {
            let ensemble = Ensemble::of(ensemble);
            format!(
                "more than {} of {} failed at {flagged_points} of {points} exposure points \
                 (worst: {worst_failed} of {toys} at {}, {}); {} there may be biased.",
                percent_label(FAILED_FRACTION_WARNING),
                ensemble.fits,
                dated_days_label(worst_days, start),
                fit_percent(worst_failed, toys),
                ensemble.results
            )
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::calendar::CalendarDate;
    use crate::report::projection::example;
    use crate::warning::Ensemble;

    #[test]
    fn the_failed_fit_threshold_is_worded_from_its_constant() {
        let warning = Warning::FailedFits {
            ensemble: Ensemble::Limits,
            flagged_points: 1,
            points: 31,
            worst_failed: 3,
            toys: 200,
            worst_days: 12.0,
            start: None,
        };
        assert_eq!(
            warning_text(&warning),
            "more than 0.1% of limit fits failed at 1 of 31 exposure points \
             (worst: 3 of 200 at 12 d, 1.50%); the limit quantiles there may be biased."
        );
    }

    /// 2028 is a leap year (Gregorian calendar, common practice): 12 days
    /// after 17 February 2028 is 29 February.
    #[test]
    fn the_worst_day_of_failed_fits_carries_its_date() {
        let warning = Warning::FailedFits {
            ensemble: Ensemble::Limits,
            flagged_points: 1,
            points: 31,
            worst_failed: 3,
            toys: 200,
            worst_days: 12.0,
            start: CalendarDate::parse("2028-02-17"),
        };
        assert!(
            warning_text(&warning).contains("(worst: 3 of 200 at 12 d (2028-02-29), 1.50%)"),
            "{}",
            warning_text(&warning)
        );
    }

    #[test]
    fn scenario_warnings_name_the_field() {
        assert!(
            warning_text(&Warning::NothingToFloat { background: 1 })
                .starts_with("backgrounds[1].float_shape: ")
        );
    }

    /// The projection's warnings follow its failed fits: 3 of 2000
    /// discovery fits (0.15%) at four early points and 5 of 2000 limit fits
    /// (0.25%) at the first are above 0.1%; 2 of 5000 calibration fits
    /// (0.04%) are not.
    #[test]
    fn projection_warnings_come_from_the_failed_fits() {
        let mut projection = example::with_limits();
        projection.points[0].limit_failed_fits = 5;
        projection.points[7]
            .calibration
            .as_mut()
            .unwrap()
            .failed_fits = 2;
        let summary: Vec<_> = projection
            .warnings()
            .into_iter()
            .map(|warning| match warning {
                Warning::FailedFits {
                    ensemble,
                    flagged_points,
                    worst_failed,
                    toys,
                    ..
                } => (ensemble, flagged_points, worst_failed, toys),
                other => panic!("{other:?}"),
            })
            .collect();
        assert_eq!(
            summary,
            [
                (Ensemble::Discovery, 4, 3, 2000),
                (Ensemble::Limits, 1, 5, 2000)
            ]
        );
    }
}
