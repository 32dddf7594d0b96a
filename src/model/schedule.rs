//! Live time: calendar days to live days through the data-taking schedule.

use crate::scenario::Schedule;

/// Converts calendar days into live days.
///
/// Live days at calendar day T = live_fraction x integral over [0, T] of the rate
/// scale, which is `rate_scale` during each of the leading periods and 1 after them.
#[derive(Debug, Clone, PartialEq)]
pub struct LiveTime {
    live_fraction: f64,
    /// (length in calendar days, rate scale) of the leading periods, in order.
    periods: Vec<(f64, f64)>,
}

impl LiveTime {
    pub fn from_schedule(schedule: &Schedule) -> LiveTime {
        LiveTime {
            live_fraction: schedule.live_fraction,
            periods: schedule
                .periods
                .iter()
                .map(|p| (p.days, p.rate_scale))
                .collect(),
        }
    }

    /// Live days accumulated by calendar day `days`.
    pub fn live_days(&self, days: f64) -> f64 {
        let mut remaining = days;
        let mut scaled_days = 0.0;
        for &(length, scale) in &self.periods {
            let inside = remaining.min(length);
            scaled_days += inside * scale;
            remaining -= inside;
            if remaining <= 0.0 {
                return self.live_fraction * scaled_days;
            }
        }
        self.live_fraction * (scaled_days + remaining)
    }

    /// The first calendar day by which `live_days` live days have accumulated:
    /// the inverse of [`LiveTime::live_days`], which is continuous and
    /// non-decreasing, so the earliest day of a stretch where no live time
    /// accrues (a period of `rate_scale` 0) is returned, never a day inside it.
    ///
    /// T(L) = start of the period in which live_fraction x (scaled days so far)
    /// reaches L, plus the days still needed at that period's rate scale.
    pub fn calendar_days(&self, live_days: f64) -> f64 {
        let mut remaining = live_days / self.live_fraction;
        let mut start = 0.0;
        for &(length, scale) in &self.periods {
            let accrued = length * scale;
            if remaining <= accrued {
                return if remaining > 0.0 {
                    start + remaining / scale
                } else {
                    start
                };
            }
            remaining -= accrued;
            start += length;
        }
        start + remaining
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::Period;

    fn schedule(live_fraction: f64, periods: &[(f64, f64)]) -> LiveTime {
        LiveTime::from_schedule(&Schedule {
            live_fraction,
            periods: periods
                .iter()
                .map(|&(days, rate_scale)| Period { days, rate_scale })
                .collect(),
        })
    }

    #[test]
    fn live_days_without_periods_is_live_fraction_times_days() {
        assert_eq!(schedule(0.75, &[]).live_days(100.0), 75.0);
    }

    #[test]
    fn reduced_rate_period_counts_at_its_scale() {
        // 30 days at 0.4 then full rate: at day 100, 0.75 * (12 + 70) = 61.5 live days.
        let live = schedule(0.75, &[(30.0, 0.4)]);
        assert!((live.live_days(100.0) - 61.5).abs() < 1e-12);
        assert!((live.live_days(10.0) - 3.0).abs() < 1e-12);
    }

    #[test]
    fn consecutive_periods_apply_in_order() {
        let live = schedule(1.0, &[(10.0, 0.0), (10.0, 0.5)]);
        assert_eq!(live.live_days(10.0), 0.0);
        assert_eq!(live.live_days(20.0), 5.0);
        assert_eq!(live.live_days(25.0), 10.0);
    }

    #[test]
    fn calendar_days_inverts_live_days_outside_pauses() {
        // A commissioning period, a pause and full rate (all invented): every
        // calendar day where live time accrues maps back to itself.
        let live = schedule(0.8, &[(20.0, 0.5), (100.0, 0.0), (30.0, 2.0)]);
        for days in [0.5, 7.0, 20.0, 120.5, 133.0, 150.0, 151.0, 400.0] {
            let back = live.calendar_days(live.live_days(days));
            assert!((back - days).abs() < 1e-12 * days, "{days} -> {back}");
        }
    }

    #[test]
    fn calendar_days_never_fall_inside_a_pause() {
        // Live time 8 is reached on day 20 and kept until day 120: the first
        // day with it is 20; anything more needs days after the pause.
        let live = schedule(0.8, &[(20.0, 0.5), (100.0, 0.0)]);
        assert_eq!(live.calendar_days(8.0), 20.0);
        assert!((live.calendar_days(8.0 + 0.8) - 121.0).abs() < 1e-12);
        // A leading pause: no live time is had from day 0; the first live day
        // after it ends.
        let late = schedule(1.0, &[(10.0, 0.0)]);
        assert_eq!(late.calendar_days(0.0), 0.0);
        assert!((late.calendar_days(1.0) - 11.0).abs() < 1e-12);
    }
}
