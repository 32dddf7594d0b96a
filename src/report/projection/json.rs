//! `projection.json`: the whole projection, pretty-printed.
//!
//! Keys are the field names of [`Projection`]; `None` is written as null.
//! The projection has been checked for non-finite numbers before this runs,
//! so every null in the file means "no value", never NaN.

use super::PROJECTION_JSON;
use crate::projection::Projection;
use crate::report::ReportError;
use crate::report::kit::dates::insert_dates;
use crate::report::kit::encode::json_bytes;

/// Pretty-printed JSON of the projection, ending with a newline; with a
/// start date, a date beside each calendar-days value.
pub(super) fn render(projection: &Projection) -> Result<Vec<u8>, ReportError> {
    let Some(start) = projection.start else {
        return json_bytes(PROJECTION_JSON, projection);
    };
    let document = serde_json::to_value(projection).map_err(|error| ReportError::Render {
        file: PROJECTION_JSON,
        message: error.to_string(),
    })?;
    json_bytes(PROJECTION_JSON, &insert_dates(document, start))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::projection::example;
    use serde_json::{Value, json};

    fn parsed(projection: &Projection) -> Value {
        serde_json::from_slice(&render(projection).unwrap()).unwrap()
    }

    #[test]
    fn keys_and_nulls_follow_the_schema() {
        let expected = json!({
            "title": "Invented counting search",
            "seed": 7,
            "toys": 200,
            "targets": [3.0, 5.0],
            "cl": null,
            "calibration_toys": 0,
            "points": [
                {
                    "days": 10.0, "live_days": 8.0, "signal": 16.0, "background": 80.0,
                    "z_asimov": 1.75, "z_asimov_band": [0.0, 0.75, 2.75, 3.75], "z_median": 1.625, "z_band": [0.125, 0.75, 2.5, 3.5],
                    "probability": [
                        {"target": 3.0, "toys": 0.105, "asimov": 0.0885},
                        {"target": 5.0, "toys": 0.0, "asimov": 0.0005}
                    ],
                    "failed_fits": 0,
                    "limit_median": null, "limit_band": null,
                    "limit_asimov": null, "limit_asimov_band": null,
                    "limit_failed_fits": 0, "calibration": null
                },
                {
                    "days": 100.0, "live_days": 80.0, "signal": 160.0, "background": 800.0,
                    "z_asimov": 3.875, "z_asimov_band": [1.875, 2.875, 4.875, 5.875], "z_median": null, "z_band": null,
                    "probability": [
                        {"target": 3.0, "toys": null, "asimov": 0.8125},
                        {"target": 5.0, "toys": null, "asimov": 0.125}
                    ],
                    "failed_fits": 2,
                    "limit_median": null, "limit_band": null,
                    "limit_asimov": null, "limit_asimov_band": null,
                    "limit_failed_fits": 0, "calibration": null
                }
            ],
            "days_to_target": [
                {"target": 3.0, "asimov_days": 41.5, "median_days": 44.0,
                 "p50_days": 44.25, "p90_days": 98.0, "saturation_z": 4.5},
                {"target": 5.0, "asimov_days": null, "median_days": null,
                 "p50_days": null, "p90_days": null, "saturation_z": 4.5}
            ],
            "days_to_exclusion": {"asimov_days": null, "median_days": null},
            "solving_points": 6,
            "at": []
        });
        assert_eq!(parsed(&example::tiny()), expected);
    }

    #[test]
    fn limits_and_calibration_follow_the_schema() {
        let projection = example::with_limits();
        let json = parsed(&projection);
        assert_eq!(json["cl"], json!(0.95));
        assert_eq!(json["calibration_toys"], json!(5000));
        let exclusion = &projection.days_to_exclusion;
        assert_eq!(
            json["days_to_exclusion"],
            json!({"asimov_days": exclusion.asimov_days, "median_days": exclusion.median_days})
        );
        let point = &projection.points[0];
        let calibration = point.calibration.as_ref().unwrap();
        let first = &json["points"][0];
        assert_eq!(first["limit_median"], json!(point.limit_median));
        assert_eq!(first["limit_band"], json!(point.limit_band));
        assert_eq!(first["limit_asimov"], json!(point.limit_asimov));
        assert_eq!(first["limit_asimov_band"], json!(point.limit_asimov_band));
        assert_eq!(first["limit_failed_fits"], json!(1));
        assert_eq!(
            first["calibration"],
            json!({
                "converged_toys": 5000, "failed_fits": 0,
                "q0_asimov": calibration.q0_asimov, "exceeding": calibration.exceeding,
                "p_asymptotic": calibration.p_asymptotic,
                "z_asymptotic": calibration.z_asymptotic,
                "p_toys": calibration.p_toys, "z_toys": calibration.z_toys,
                "tail_reach_z": calibration.tail_reach_z
            })
        );
        let last = &json["points"][projection.points.len() - 1]["calibration"];
        assert_eq!(last["exceeding"], json!(0));
        assert_eq!(last["p_toys"], Value::Null);
        assert_eq!(last["z_toys"], Value::Null);
    }

    #[test]
    fn output_is_pretty_and_ends_with_a_newline() {
        let text = String::from_utf8(render(&example::tiny()).unwrap()).unwrap();
        assert!(text.starts_with("{\n  \"title\": \"Invented counting search\",\n"));
        assert!(text.ends_with("}\n"));
    }
}
