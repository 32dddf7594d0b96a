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
}
