//! Calendar days shown as dates when the schedule gives a start: in text
//! ("58 d (2027-04-28)"), in CSV cells and beside each days value in JSON.
//!
//! The date of calendar day T is the start date plus ceil(T) days
//! ([`CalendarDate::after`]), the day by which T days have passed, matching
//! the whole days of [`days_label`]; a day past the calendar's last date
//! reads "after 9999-12-31" in all three, so it never loses its date
//! silently.

use serde_json::{Map, Value};

use super::format::days_label;
use crate::calendar::CalendarDate;

/// "58 d", or "58 d (2027-04-28)" with a start date.
pub fn dated_days_label(days: f64, start: Option<CalendarDate>) -> String {
    with_date(days_label(days), days, start)
}

/// `label` for calendar day `days`, followed by its date in parentheses
/// when there is a start date.
pub fn with_date(label: String, days: f64, start: Option<CalendarDate>) -> String {
    match start.and_then(|start| start.after(days)) {
        Some(date) => format!("{label} ({date})"),
        None => label,
    }
}

/// The ISO 8601 date of calendar day `days` ("after 9999-12-31" past the
/// calendar), or an empty cell without one.
pub fn date_cell(days: Option<f64>, start: CalendarDate) -> String {
    days.and_then(|days| start.after(days))
        .map_or_else(String::new, |date| date.to_string())
}

/// `document` with a date key after every calendar-days key: `days` gets
/// `date`, `asimov_days` gets `asimov_date`, and so on (`live_days` and keys
/// holding anything but a number or null are left alone); null days give a
/// null date, days past the calendar "after 9999-12-31".
pub fn insert_dates(document: Value, start: CalendarDate) -> Value {
    match document {
        Value::Array(items) => Value::Array(
            items
                .into_iter()
                .map(|item| insert_dates(item, start))
                .collect(),
        ),
        Value::Object(fields) => {
            let mut dated = Map::new();
            for (key, value) in fields {
                let date_key = date_key(&key, &value);
                let date = date_key.as_ref().map(|_| {
                    value
                        .as_f64()
                        .and_then(|days| start.after(days))
                        .map_or(Value::Null, |date| Value::String(date.to_string()))
                });
                dated.insert(key, insert_dates(value, start));
                if let (Some(date_key), Some(date)) = (date_key, date) {
                    dated.insert(date_key, date);
                }
            }
            Value::Object(dated)
        }
        other => other,
    }
}

/// The date key for a calendar-days key holding a number or null.
fn date_key(key: &str, value: &Value) -> Option<String> {
    let holds_days = value.is_number() || value.is_null();
    let stem = key.strip_suffix("days")?;
    (holds_days && stem != "live_" && (stem.is_empty() || stem.ends_with('_')))
        .then(|| format!("{stem}date"))
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    fn start() -> CalendarDate {
        CalendarDate::parse("2027-03-01").unwrap()
    }

    #[test]
    fn labels_carry_the_date_of_the_whole_day() {
        // 1 March + 58 days = 28 April (March has 31 days).
        assert_eq!(dated_days_label(57.2, Some(start())), "58 d (2027-04-28)");
        assert_eq!(dated_days_label(57.2, None), "58 d");
        assert_eq!(date_cell(Some(0.0), start()), "2027-03-01");
        assert_eq!(date_cell(None, start()), "");
    }

    #[test]
    fn days_past_the_calendar_keep_a_date() {
        // 9999-12-31 is the calendar's last date (ISO 8601, four-digit years).
        let late = CalendarDate::parse("9999-06-01");
        assert_eq!(dated_days_label(300.0, late), "300 d (after 9999-12-31)");
        assert_eq!(date_cell(Some(300.0), late.unwrap()), "after 9999-12-31");
        let dated = insert_dates(json!({"asimov_days": 300.0}), late.unwrap());
        assert_eq!(dated["asimov_date"], "after 9999-12-31");
    }

    #[test]
    fn every_days_key_gets_a_date_beside_it() {
        let document = json!({
            "days_to_target": [{"target": 3.0, "asimov_days": 58.0, "median_days": null}],
            "points": [{"days": 1.0, "live_days": 0.8}],
        });
        let dated = insert_dates(document, start());
        assert_eq!(
            dated,
            json!({
                "days_to_target": [{"target": 3.0, "asimov_days": 58.0, "asimov_date": "2027-04-28",
                                    "median_days": null, "median_date": null}],
                "points": [{"days": 1.0, "date": "2027-03-02", "live_days": 0.8}],
            })
        );
        let keys: Vec<&String> = dated["points"][0].as_object().unwrap().keys().collect();
        assert_eq!(keys, ["days", "date", "live_days"]);
    }
}
