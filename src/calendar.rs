//! Calendar dates: ISO 8601 dates (`2027-03-01`) read from a scenario and the
//! date on which a number of calendar days since the start has passed, or
//! that it lies past the calendar's last date.
//!
//! Date arithmetic (month lengths, leap years) is the `time` crate's.

use std::fmt;
use std::str::FromStr;

use serde::{Serialize, Serializer};
use time::Date;
use time::format_description::well_known::Iso8601;

/// A calendar date, read and written as ISO 8601 `YYYY-MM-DD`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord)]
pub struct CalendarDate(Date);

impl CalendarDate {
    /// Parses an ISO 8601 calendar date such as `2027-03-01`; `None` for
    /// anything else, including days that do not exist (`2027-02-29`).
    pub fn parse(text: &str) -> Option<CalendarDate> {
        let is_calendar_form = text.len() == 10
            && text.bytes().enumerate().all(|(i, b)| {
                if i == 4 || i == 7 {
                    b == b'-'
                } else {
                    b.is_ascii_digit()
                }
            });
        if !is_calendar_form {
            return None;
        }
        Date::parse(text, &Iso8601::DATE).ok().map(CalendarDate)
    }

    /// Whole days from `earlier` to this date (negative if `earlier` is later).
    pub fn days_since(self, earlier: CalendarDate) -> i64 {
        (self.0 - earlier.0).whole_days()
    }

    /// The date by which `days` calendar days have passed since the start of
    /// this date: this date plus ceil(days) days, so day 0 is this date and
    /// day 57.3 is reached by the start of the 58th day after it; past
    /// 9999-12-31, the last date with a four-digit year (ISO 8601), it is
    /// [`DayDate::AfterLast`]. `None` for a negative or NaN number of days.
    pub fn after(self, days: f64) -> Option<DayDate> {
        if days.is_nan() || days < 0.0 {
            return None;
        }
        // 10^7 days (27 379 years) take any date past the last one.
        let date = (days < 1e7)
            .then(|| self.0.checked_add(time::Duration::days(days.ceil() as i64)))
            .flatten();
        Some(date.map_or(DayDate::AfterLast, |date| DayDate::On(CalendarDate(date))))
    }
}

impl fmt::Display for CalendarDate {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}", self.0)
    }
}

/// The date by which some days have passed since a start date
/// ([`CalendarDate::after`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DayDate {
    /// A date of the calendar.
    On(CalendarDate),
    /// Past the last date of the calendar, 9999-12-31.
    AfterLast,
}

impl fmt::Display for DayDate {
    /// The ISO 8601 date, or `after 9999-12-31`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            DayDate::On(date) => write!(f, "{date}"),
            DayDate::AfterLast => write!(f, "after {}", CalendarDate(Date::MAX)),
        }
    }
}

impl Serialize for CalendarDate {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.collect_str(self)
    }
}

/// Days in a year, for rates per year and durations in years: the Julian
/// year of 365.25 days (common practice).
pub const DAYS_PER_YEAR: f64 = 365.25;

/// Days in a week.
pub const DAYS_PER_WEEK: f64 = 7.0;

/// A calendar day as written on the command line (`--days`, `--at`): a
/// number of calendar days (`90`), a duration with its unit (`90d`, `26w`,
/// `2y`, a year being [`DAYS_PER_YEAR`] days), or an ISO 8601 date
/// (`2027-09-01`), which counts from the scenario's `schedule.start`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DayArgument {
    Days(f64),
    Date(CalendarDate),
}

/// What a day argument may look like, for its error messages.
pub const DAY_ARGUMENT_FORMS: &str = "calendar days (90), a duration (90d, 26w, 2y; a year is 365.25 days) or an ISO date (2027-09-01)";

impl FromStr for DayArgument {
    type Err = String;

    fn from_str(text: &str) -> Result<DayArgument, String> {
        let text = text.trim();
        if let Some(date) = CalendarDate::parse(text) {
            return Ok(DayArgument::Date(date));
        }
        let (number, unit) = match text.char_indices().last() {
            Some((at, 'd')) => (&text[..at], 1.0),
            Some((at, 'w')) => (&text[..at], DAYS_PER_WEEK),
            Some((at, 'y')) => (&text[..at], DAYS_PER_YEAR),
            _ => (text, 1.0),
        };
        let is_number = !number.is_empty()
            && number
                .bytes()
                .all(|b| b.is_ascii_digit() || matches!(b, b'.' | b'-' | b'+' | b'e' | b'E'));
        match number.parse::<f64>() {
            Ok(value) if is_number => Ok(DayArgument::Days(value * unit)),
            _ => Err(format!("expected {DAY_ARGUMENT_FORMS}")),
        }
    }
}

impl DayArgument {
    /// Calendar days since the start: a number as it is, a date as the whole
    /// days from `start` to it (day N is reached on the date N days after the
    /// start, see [`CalendarDate::after`]). A date needs a start and may not
    /// come before it.
    pub fn calendar_days(self, start: Option<CalendarDate>) -> Result<f64, String> {
        match (self, start) {
            (DayArgument::Days(days), _) => Ok(days),
            (DayArgument::Date(date), None) => Err(format!(
                "{date} is a date, and the scenario has no schedule.start to count from; give calendar days (90) or a duration (90d, 26w, 2y)"
            )),
            (DayArgument::Date(date), Some(start)) if date < start => {
                Err(format!("{date} comes before schedule.start ({start})"))
            }
            (DayArgument::Date(date), Some(start)) => Ok(date.days_since(start) as f64),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn date(text: &str) -> CalendarDate {
        CalendarDate::parse(text).unwrap()
    }

    #[test]
    fn parses_and_writes_iso_8601_calendar_dates() {
        assert_eq!(date("2027-03-01").to_string(), "2027-03-01");
        for wrong in [
            "2027-02-29",
            "2027-13-01",
            "2027-3-1",
            "20270301",
            "2027-060",
            "soon",
        ] {
            assert_eq!(CalendarDate::parse(wrong), None, "{wrong}");
        }
    }

    #[test]
    fn days_past_the_last_date_are_after_it() {
        // 9999-12-31 is the last date with a four-digit year (ISO 8601).
        let start = date("9999-06-01");
        assert_eq!(start.after(213.0), Some(DayDate::On(date("9999-12-31"))));
        assert_eq!(start.after(213.2), Some(DayDate::AfterLast));
        assert_eq!(start.after(1e300), Some(DayDate::AfterLast));
        assert_eq!(start.after(f64::INFINITY), Some(DayDate::AfterLast));
        assert_eq!(DayDate::AfterLast.to_string(), "after 9999-12-31");
    }

    #[test]
    fn leap_day_exists_in_2028_only() {
        // Gregorian calendar (ISO 8601): 2028 is divisible by 4 and not by
        // 100, so it has 29 February; 2027 does not.
        assert_eq!(date("2028-02-29").to_string(), "2028-02-29");
        assert_eq!(date("2028-03-01").days_since(date("2028-02-28")), 2);
        assert_eq!(date("2027-03-01").days_since(date("2027-02-28")), 1);
        assert_eq!(
            date("2028-02-28").after(1.0),
            Some(DayDate::On(date("2028-02-29")))
        );
    }

    #[test]
    fn after_counts_whole_days_rounded_up() {
        // March has 31 days: 58 days after 1 March is 28 April.
        let start = date("2027-03-01");
        let on = |text| Some(DayDate::On(date(text)));
        assert_eq!(start.after(58.0), on("2027-04-28"));
        assert_eq!(start.after(57.3), on("2027-04-28"));
        assert_eq!(start.after(0.0), Some(DayDate::On(start)));
        assert_eq!(start.after(-1.0), None);
        assert_eq!(start.after(f64::NAN), None);
    }

    #[test]
    fn day_arguments_as_numbers_durations_and_dates() {
        let days = |text: &str, start| {
            text.parse::<DayArgument>()
                .and_then(|day| day.calendar_days(start))
        };
        assert_eq!(days("90", None), Ok(90.0));
        assert_eq!(days("90d", None), Ok(90.0));
        assert_eq!(days("26w", None), Ok(182.0));
        // A Julian year of 365.25 days (common practice): 2y = 730.5 d.
        assert_eq!(days("2y", None), Ok(730.5));
        assert_eq!(days("0.5y", None), Ok(182.625));
        // 2027-03-01 to 2027-09-01: 30 + 31 + 30 + 31 + 31 + 31 = 184 days,
        // counted by hand from the month lengths.
        assert_eq!(days("2027-09-01", Some(date("2027-03-01"))), Ok(184.0));
        // Across 29 February 2028: 2028-01-01 to 2028-03-01 is 31 + 29 = 60.
        assert_eq!(days("2028-03-01", Some(date("2028-01-01"))), Ok(60.0));
        assert!(
            days("2027-09-01", None)
                .unwrap_err()
                .contains("no schedule.start")
        );
        assert!(
            days("2027-01-01", Some(date("2027-03-01")))
                .unwrap_err()
                .contains("before schedule.start")
        );
        for wrong in [
            "",
            "d",
            "2m",
            "ten",
            "1e",
            "2027-02-30",
            "nan",
            "inf",
            "3 d x",
        ] {
            assert!(wrong.parse::<DayArgument>().is_err(), "{wrong}");
        }
    }
}
