//! Live time: calendar days to live days through the data-taking schedule,
//! and each component's exposure as a function of live days.

use crate::calendar::CalendarDate;
use crate::scenario::{Period, Schedule};

/// Converts calendar days into live days.
///
/// Live days at calendar day T = live_fraction x integral over [0, T] of the rate
/// scale, which is `rate_scale` during each period and 1 after them (or the
/// last period's to the end of the run when it has no `days`), and 0 during
/// each break. A break from date F to date G (both included) covers calendar
/// days [F - start, G - start + 1), day 0 being the start date.
///
/// Live days measure the detector's time taking data; a period's factors on
/// the signal or on single backgrounds do not change them, but each
/// component's [`Exposure`].
#[derive(Debug, Clone, PartialEq)]
pub struct LiveTime {
    /// The date of calendar day 0, when the schedule gives one.
    start: Option<CalendarDate>,
    live_fraction: f64,
    /// Consecutive stretches from day 0, in order: the periods split where
    /// breaks cut them, then the breaks after the periods; the rate scale is
    /// 1 after the last. Trailing stretches that change nothing are dropped,
    /// so a schedule of neutral periods is the same as none.
    stretches: Vec<Stretch>,
}

/// A stretch of calendar days at one rate scale, with the schedule period it
/// belongs to (none for a break after the periods).
#[derive(Debug, Clone, PartialEq)]
struct Stretch {
    days: f64,
    rate_scale: f64,
    period: Option<Period>,
}

/// A component's exposure E (its rate-weighted live days) after L live days:
/// E(L) = live_fraction x integral over [0, T(L)] of rate_scale x factor dt,
/// where factor is the component's own factor of each period (1 outside
/// them). Piecewise linear and non-decreasing in L, and E(L) = L exactly when
/// every factor of the component is 1.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct Exposure {
    /// (live days, factor) of consecutive stretches of live time; factor 1
    /// after the last. Empty for a component no period scales.
    segments: Vec<(f64, f64)>,
    /// Exposure held from the start whatever the live days: that of data
    /// already taken ([`Exposure::taken`]); 0 otherwise.
    held: f64,
}

impl Exposure {
    /// The exposure after `live_days` live days.
    pub fn at(&self, live_days: f64) -> f64 {
        if self.segments.is_empty() {
            return live_days;
        }
        let mut remaining = live_days;
        let mut exposure = self.held;
        for &(length, factor) in &self.segments {
            let inside = remaining.min(length);
            exposure += inside * factor;
            remaining -= inside;
            if remaining <= 0.0 {
                return exposure;
            }
        }
        exposure + remaining
    }

    /// The exposure of the data taken by `taken_live_days`, as one block of a
    /// re-plan: E(taken) at any live days, since those data are on disk
    /// whatever comes later.
    pub fn taken(&self, taken_live_days: f64) -> Exposure {
        Exposure {
            segments: vec![(f64::INFINITY, 0.0)],
            held: self.at(taken_live_days),
        }
    }

    /// The exposure still to come after `taken_live_days`: E(L) - E(taken)
    /// from there on, 0 before. With [`Exposure::taken`] it adds up to E(L)
    /// for L at or after the taken live days.
    pub fn to_come(&self, taken_live_days: f64) -> Exposure {
        let mut segments = vec![(taken_live_days, 0.0)];
        let mut skipped = 0.0;
        for &(length, factor) in &self.segments {
            let end = skipped + length;
            if end > taken_live_days {
                segments.push((end - skipped.max(taken_live_days), factor));
            }
            skipped = end;
        }
        Exposure {
            segments,
            held: 0.0,
        }
    }
}

impl LiveTime {
    pub fn from_schedule(schedule: &Schedule) -> LiveTime {
        let breaks = break_days(schedule);
        let mut stretches = Vec::new();
        let mut begin = 0.0;
        for period in &schedule.periods {
            let days = period.days.unwrap_or(f64::INFINITY);
            split_by_breaks(begin, days, Some(period), &breaks, &mut stretches);
            begin += days;
        }
        let last_break_end = breaks.last().map_or(begin, |&(_, end)| end);
        if last_break_end > begin {
            split_by_breaks(begin, last_break_end - begin, None, &breaks, &mut stretches);
        }
        while stretches.last().is_some_and(|stretch: &Stretch| {
            stretch.rate_scale == 1.0 && stretch.period.as_ref().is_none_or(Period::is_neutral)
        }) {
            stretches.pop();
        }
        LiveTime {
            start: schedule.start_date(),
            live_fraction: schedule.live_fraction,
            stretches,
        }
    }

    /// The date of calendar day 0, when the schedule gives one.
    pub fn start(&self) -> Option<CalendarDate> {
        self.start
    }

    /// Live days accumulated by calendar day `days`.
    pub fn live_days(&self, days: f64) -> f64 {
        let mut remaining = days;
        let mut scaled_days = 0.0;
        for stretch in &self.stretches {
            let inside = remaining.min(stretch.days);
            scaled_days += inside * stretch.rate_scale;
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
        for stretch in &self.stretches {
            let accrued = stretch.days * stretch.rate_scale;
            if remaining <= accrued {
                return if remaining > 0.0 {
                    start + remaining / stretch.rate_scale
                } else {
                    start
                };
            }
            remaining -= accrued;
            start += stretch.days;
        }
        start + remaining
    }

    /// The exposure of a component whose factor in each period is
    /// `factor(period)`: stretches without live time are left out (no
    /// component accrues anything there), trailing factors of 1 dropped.
    pub fn exposure(&self, factor: impl Fn(&Period) -> f64) -> Exposure {
        let mut segments: Vec<(f64, f64)> = self
            .stretches
            .iter()
            .filter(|stretch| stretch.rate_scale > 0.0)
            .map(|stretch| {
                (
                    self.live_fraction * stretch.days * stretch.rate_scale,
                    stretch.period.as_ref().map_or(1.0, &factor),
                )
            })
            .collect();
        while segments.last().is_some_and(|&(_, factor)| factor == 1.0) {
            segments.pop();
        }
        Exposure {
            segments,
            held: 0.0,
        }
    }

    /// The stretches of the schedule as (first calendar day, last calendar
    /// day, rate scale, period), for timelines and figures; the last may end
    /// at infinity.
    pub fn stretches(&self) -> impl Iterator<Item = (f64, f64, f64, Option<&Period>)> {
        self.stretches.iter().scan(0.0, |begin, stretch| {
            let from = *begin;
            *begin += stretch.days;
            Some((from, *begin, stretch.rate_scale, stretch.period.as_ref()))
        })
    }
}

/// The breaks as calendar-day intervals [begin, end) since the start, in
/// order (validation guarantees they follow the start and do not overlap).
fn break_days(schedule: &Schedule) -> Vec<(f64, f64)> {
    let Some(start) = schedule.start_date() else {
        return Vec::new();
    };
    let mut days: Vec<(f64, f64)> = schedule
        .break_dates()
        .iter()
        .map(|(from, to)| {
            (
                from.days_since(start) as f64,
                (to.days_since(start) + 1) as f64,
            )
        })
        .collect();
    days.sort_by(|a, b| a.0.total_cmp(&b.0));
    days
}

/// Appends the stretch [begin, begin + length) of `period` (none for the
/// time after the periods, at rate 1) to `stretches`, with the parts inside
/// `breaks` at rate 0. A stretch no break touches is appended as it is, so a
/// schedule without breaks keeps its exact lengths.
fn split_by_breaks(
    begin: f64,
    length: f64,
    period: Option<&Period>,
    breaks: &[(f64, f64)],
    stretches: &mut Vec<Stretch>,
) {
    let rate_scale = period.map_or(1.0, |period| period.rate_scale);
    let stretch = |days: f64, rate_scale: f64| Stretch {
        days,
        rate_scale,
        period: period.cloned(),
    };
    let end = begin + length;
    let mut at = begin;
    for &(from, to) in breaks
        .iter()
        .filter(|&&(from, to)| from < end && to > begin)
    {
        if from > at {
            stretches.push(stretch(from - at, rate_scale));
        }
        let pause_end = to.min(end);
        stretches.push(stretch(pause_end - from.max(at), 0.0));
        at = pause_end;
    }
    if at == begin {
        stretches.push(stretch(length, rate_scale));
    } else if end > at {
        stretches.push(stretch(end - at, rate_scale));
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::scenario::{Break, Period};

    fn schedule(live_fraction: f64, periods: &[(f64, f64)]) -> LiveTime {
        LiveTime::from_schedule(&Schedule {
            live_fraction,
            periods: periods
                .iter()
                .map(|&(days, rate_scale)| Period::uniform(days, rate_scale))
                .collect(),
            ..Schedule::default()
        })
    }

    /// A schedule from `start` with breaks given as (from, to) dates.
    fn with_breaks(start: &str, periods: &[(f64, f64)], breaks: &[(&str, &str)]) -> LiveTime {
        LiveTime::from_schedule(&Schedule {
            live_fraction: 1.0,
            periods: periods
                .iter()
                .map(|&(days, rate_scale)| Period::uniform(days, rate_scale))
                .collect(),
            start: Some(start.to_string()),
            breaks: breaks
                .iter()
                .map(|&(from, to)| Break {
                    from: from.to_string(),
                    to: to.to_string(),
                })
                .collect(),
        })
    }

    #[test]
    fn breaks_match_a_hand_count_over_a_small_calendar() {
        // Hand count (common practice: a day of data per calendar day at its
        // rate scale), start 2027-03-01, 6 days at rate 0.5, break 03-05..03-07:
        //   03-01 .5  03-02 .5  03-03 .5  03-04 .5  03-05 0  03-06 0
        //   03-07 0 (break, after the period)  03-08 1  03-09 1  03-10 1
        // By day 10 (the start of 03-11): 2 + 3 = 5 live days; by day 4: 2;
        // during the break no more; by day 8: 3.
        let live = with_breaks("2027-03-01", &[(6.0, 0.5)], &[("2027-03-05", "2027-03-07")]);
        for (day, expected) in [(4.0, 2.0), (5.0, 2.0), (7.0, 2.0), (8.0, 3.0), (10.0, 5.0)] {
            assert!(
                (live.live_days(day) - expected).abs() < 1e-12,
                "day {day}: {}",
                live.live_days(day)
            );
        }
        // Two breaks after the periods, one a single day (03-09 counts as a break day).
        let two = with_breaks(
            "2027-03-01",
            &[],
            &[("2027-03-03", "2027-03-04"), ("2027-03-09", "2027-03-09")],
        );
        assert_eq!(two.live_days(10.0), 7.0);
        assert_eq!(two.live_days(20.0), 17.0);
    }

    #[test]
    fn a_break_over_a_leap_day_lasts_three_days() {
        // Gregorian calendar (ISO 8601): 2028 has 29 February, so the break
        // 2028-02-28..2028-03-01 covers 3 days, days 8, 9 and 10 after the start.
        let live = with_breaks("2028-02-20", &[], &[("2028-02-28", "2028-03-01")]);
        assert_eq!(live.live_days(8.0), 8.0);
        assert_eq!(live.live_days(11.0), 8.0);
        assert_eq!(live.live_days(20.0), 17.0);
        assert_eq!(live.calendar_days(9.0), 12.0);
    }

    #[test]
    fn a_day_inside_a_break_has_the_live_time_of_its_first_day() {
        // Start 2027-03-01, break 03-05..03-07 = days [4, 7): a grid point at
        // day 5.5 has 4 live days, like day 4; live time 4 is first had on
        // day 4 (never inside the break), and 4.5 half a day after it.
        let live = with_breaks("2027-03-01", &[], &[("2027-03-05", "2027-03-07")]);
        assert_eq!(live.live_days(5.5), 4.0);
        assert_eq!(live.calendar_days(live.live_days(5.5)), 4.0);
        assert!((live.calendar_days(4.5) - 7.5).abs() < 1e-12);
    }

    #[test]
    fn breaks_cutting_a_period_keep_its_rate_on_both_sides() {
        // 10 days at rate 0.2 cut by a break on days [3, 5) (2027-03-04..05):
        // 0.2 x 3 + 0.2 x 5 + 1 x 2 = 3.6 live days by day 12.
        let live = with_breaks(
            "2027-03-01",
            &[(10.0, 0.2)],
            &[("2027-03-04", "2027-03-05")],
        );
        assert!((live.live_days(12.0) - 3.6).abs() < 1e-12);
        assert!((live.calendar_days(3.6) - 12.0).abs() < 1e-12);
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

    /// A schedule of `periods` given as YAML flow text, e.g.
    /// `[{days: 10, background_scale: {flat: 0.5}}]`.
    fn from_periods(live_fraction: f64, periods: &str) -> LiveTime {
        LiveTime::from_schedule(&Schedule {
            live_fraction,
            periods: serde_yaml::from_str(periods).expect("periods"),
            ..Schedule::default()
        })
    }

    #[test]
    fn a_background_halved_from_day_t_on_has_a_hand_counted_exposure() {
        // Hand count (a day of data per calendar day at its factors; common
        // practice): live fraction 0.8, full rates for 120 days, then the
        // background named `continuum` at half rate to the end of the run.
        // At day 200: live days 0.8 x 200 = 160; continuum exposure
        // 0.8 x (120 + 0.5 x 80) = 128; the signal and other backgrounds 160.
        let live = from_periods(0.8, "[{days: 120}, {background_scale: {continuum: 0.5}}]");
        let continuum = live.exposure(|period| period.background_factor("continuum"));
        let other = live.exposure(|period| period.background_factor("radon"));
        let signal = live.exposure(|period| period.signal_scale);
        let live_days = live.live_days(200.0);
        assert!((live_days - 160.0).abs() < 1e-12);
        assert!((continuum.at(live_days) - 128.0).abs() < 1e-12);
        assert_eq!(other.at(live_days), live_days);
        assert_eq!(signal.at(live_days), live_days);
        // Before day 120 nothing differs.
        assert_eq!(continuum.at(live.live_days(50.0)), live.live_days(50.0));
    }

    #[test]
    fn data_taken_and_data_to_come_add_up_to_the_whole_exposure() {
        // The same run as above, split at 100 live days (hand count: the
        // continuum's exposure is 0.8 x 120 = 96 live days at full rate,
        // then half rate): taken E(100) = 96 + 4/2 = 98, to come
        // E(160) - 98 = 128 - 98 = 30.
        let live = from_periods(0.8, "[{days: 120}, {background_scale: {continuum: 0.5}}]");
        let continuum = live.exposure(|period| period.background_factor("continuum"));
        let taken = continuum.taken(100.0);
        let to_come = continuum.to_come(100.0);
        for live_days in [100.0, 130.0, 160.0] {
            assert_eq!(taken.at(live_days), 98.0);
            let whole = taken.at(live_days) + to_come.at(live_days);
            assert!(
                (whole - continuum.at(live_days)).abs() < 1e-12,
                "{live_days}"
            );
        }
        assert!((to_come.at(160.0) - 30.0).abs() < 1e-12);
        // Before the data stopped nothing is to come, and the taken data stay.
        assert_eq!(to_come.at(50.0), 0.0);
        assert_eq!(taken.at(0.0), 98.0);
        // A component no period scales: E(L) = L split the same way.
        let plain = Exposure::default();
        assert_eq!(
            plain.taken(60.0).at(90.0) + plain.to_come(60.0).at(90.0),
            90.0
        );
    }

    #[test]
    fn a_period_in_the_middle_of_the_run_scales_only_its_days() {
        // Full rate to day 30, then 20 days at rate 0.5 with the signal
        // efficiency at 0.4 of nominal, then full rate again (invented):
        // by day 80 the live days are 30 + 0.5 x 20 + 30 = 70 and the signal
        // exposure 30 + 0.4 x 0.5 x 20 + 30 = 64.
        let live = from_periods(
            1.0,
            "[{days: 30}, {days: 20, rate_scale: 0.5, signal_scale: 0.4}]",
        );
        let signal = live.exposure(|period| period.signal_scale);
        assert!((live.live_days(80.0) - 70.0).abs() < 1e-12);
        assert!((signal.at(live.live_days(80.0)) - 64.0).abs() < 1e-12);
        // Day 40: 35 live days, signal exposure 30 + 0.4 x 5 = 32.
        assert!((signal.at(live.live_days(40.0)) - 32.0).abs() < 1e-12);
        assert!((live.calendar_days(70.0) - 80.0).abs() < 1e-12);
    }

    #[test]
    fn factors_inside_a_break_accrue_nothing() {
        // Start 2027-03-01, the background doubled for 10 days, a break on
        // days [3, 5): its exposure by day 12 is 2 x (3 + 5) + 2 = 18, the
        // live time 3 + 5 + 2 = 10.
        let live = LiveTime::from_schedule(&Schedule {
            live_fraction: 1.0,
            periods: serde_yaml::from_str("[{days: 10, background_scale: {b: 2}}]").unwrap(),
            start: Some("2027-03-01".to_string()),
            breaks: vec![Break {
                from: "2027-03-04".to_string(),
                to: "2027-03-05".to_string(),
            }],
        });
        let background = live.exposure(|period| period.background_factor("b"));
        assert!((live.live_days(12.0) - 10.0).abs() < 1e-12);
        assert!((background.at(live.live_days(12.0)) - 18.0).abs() < 1e-12);
    }

    #[test]
    fn neutral_periods_are_no_schedule_at_all() {
        // Periods whose factors are all 1 give the very same live time and
        // exposures, bit for bit, as no periods.
        let neutral = from_periods(
            0.7,
            "[{days: 30.3, rate_scale: 1, signal_scale: 1, background_scale: {b: 1}}, {days: 0.1}]",
        );
        assert_eq!(neutral, schedule(0.7, &[]));
        let exposure = neutral.exposure(|period| period.background_factor("b"));
        for days in [0.3, 30.3, 30.4, 1e5 / 3.0] {
            let live_days = neutral.live_days(days);
            assert_eq!(exposure.at(live_days).to_bits(), live_days.to_bits());
        }
    }
}
