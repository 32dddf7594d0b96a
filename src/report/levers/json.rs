//! `levers.json`.
//!
//! Schema: `{title, step, elasticity_method, targets, baseline: {asimov_days:
//! [one per target], exclusion_days, global_asimov_days (with a scan)},
//! levers: [{input, unit, nominal, improved, worsened, asimov_days_improved:
//! [...], asimov_days_worsened: [...], exclusion_days_improved,
//! exclusion_days_worsened, days_saved: [...], days_lost: [...],
//! exclusion_days_saved, exclusion_days_lost, elasticity: [...],
//! exclusion_elasticity, (with a scan: global_asimov_days_improved,
//! global_asimov_days_worsened, global_days_saved, global_elasticity),
//! reasons}]}` in calendar days, sorted by days saved at the first target.
//! With `--toys`, also `toys: {toys, seed, inputs, median_days: [...],
//! exclusion_median_days, global_median_days (with a scan), reasons}` and,
//! for the levers of `inputs`, `toy_median_days_improved`,
//! `toy_median_days_worsened`, `toy_days_saved`, `toy_days_lost` (with
//! `global_` and `exclusion_` in front as above).
//! A day is null where it is not reached or not computed; `reasons` then
//! names the key and says why (`"asimov_days_worsened[1]": "unreachable if
//! worsened"`, `"improved": "not valid: ..."`).

use super::{
    Change, DayName, ELASTICITY_METHOD, LEVERS_JSON, NOT_VALID, day_names, lost, no_day_reason,
    saved, toy_lost, toy_saved,
};
use crate::levers::{Lever, Levers, Reach};
use crate::report::ReportError;
use crate::report::kit::encode::json_bytes;
use serde_json::{Map, Value, json};

/// The days at `names` as numbers or nulls under `key` (an array for
/// targets, one value for exclusion), each null's reason put in `reasons`.
fn put_days(
    object: &mut Map<String, Value>,
    reasons: &mut Map<String, Value>,
    key: &str,
    names: &[&DayName],
    array: bool,
    day: impl Fn(&DayName) -> (Option<f64>, String),
) {
    let mut values = Vec::new();
    for (position, name) in names.iter().enumerate() {
        let (value, reason) = day(name);
        if value.is_none() && !reason.is_empty() {
            let at = if array {
                format!("{key}[{position}]")
            } else {
                key.to_string()
            };
            reasons.insert(at, json!(reason));
        }
        values.push(json!(value));
    }
    let value = if array {
        Value::Array(values)
    } else {
        values.pop().unwrap_or(Value::Null)
    };
    object.insert(key.into(), value);
}

fn lever_json(levers: &Levers, lever: &Lever, names: &[DayName]) -> Value {
    let mut object = Map::new();
    let mut reasons = Map::new();
    object.insert("input".into(), json!(lever.input.name));
    object.insert("unit".into(), json!(lever.input.unit));
    object.insert("nominal".into(), json!(lever.input.nominal));
    object.insert("improved".into(), json!(lever.improved.value));
    object.insert("worsened".into(), json!(lever.worsened.value));
    for (side, days) in [
        ("improved", &lever.improved.days),
        ("worsened", &lever.worsened.days),
    ] {
        if let Err(reason) = days {
            reasons.insert(side.into(), json!(format!("{NOT_VALID}: {reason}")));
        }
    }
    let count = levers.targets.len();
    let groups: [(&str, Vec<&DayName>, bool); 3] = [
        ("", names[..count].iter().collect(), true),
        (
            "global_",
            names[count..names.len() - 1].iter().collect(),
            true,
        ),
        (
            "exclusion_",
            names[names.len() - 1..].iter().collect(),
            false,
        ),
    ];
    for (prefix, group, array) in &groups {
        if group.is_empty() {
            continue;
        }
        let days_key = if *prefix == "exclusion_" {
            "exclusion_days".to_string()
        } else {
            format!("{prefix}asimov_days")
        };
        for (suffix, side) in [
            ("improved", &lever.improved.days),
            ("worsened", &lever.worsened.days),
        ] {
            put_days(
                &mut object,
                &mut reasons,
                &format!("{days_key}_{suffix}"),
                group,
                *array,
                |name| match side {
                    Ok(days) => {
                        let reach = days.all()[name.index];
                        (reach.day(), no_day_reason(reach, levers.last_day))
                    }
                    Err(_) => (None, String::new()),
                },
            );
        }
        for (key, change) in [
            ("days_saved", saved as fn(&Levers, &Lever, usize) -> Change),
            ("days_lost", lost),
        ] {
            put_days(
                &mut object,
                &mut reasons,
                &format!("{prefix}{key}"),
                group,
                *array,
                |name| {
                    let change = change(levers, lever, name.index);
                    (change.days(), change.text())
                },
            );
        }
        let elasticity: Vec<Value> = group
            .iter()
            .map(|name| json!(lever.elasticity(&levers.baseline, name.index)))
            .collect();
        let elasticity = if *array {
            Value::Array(elasticity)
        } else {
            elasticity[0].clone()
        };
        object.insert(format!("{prefix}elasticity"), elasticity);
        if lever.improved.toy_days.is_some() || lever.worsened.toy_days.is_some() {
            put_toy_days(
                &mut object,
                &mut reasons,
                levers,
                lever,
                prefix,
                group,
                *array,
            );
        }
    }
    object.insert("reasons".into(), Value::Object(reasons));
    Value::Object(object)
}

/// The toy-median days of a lever's sides (`{prefix}toy_median_days_improved`,
/// `..._worsened`) and the days they save and lose against the nominal toy
/// median (`{prefix}toy_days_saved`, `..._lost`).
fn put_toy_days(
    object: &mut Map<String, Value>,
    reasons: &mut Map<String, Value>,
    levers: &Levers,
    lever: &Lever,
    prefix: &str,
    group: &[&DayName],
    array: bool,
) {
    for (suffix, side) in [
        ("improved", &lever.improved.toy_days),
        ("worsened", &lever.worsened.toy_days),
    ] {
        put_days(
            object,
            reasons,
            &format!("{prefix}toy_median_days_{suffix}"),
            group,
            array,
            |name| match side {
                Some(days) => {
                    let reach = days.all()[name.index];
                    (reach.day(), no_day_reason(reach, levers.last_day))
                }
                None => (None, String::new()),
            },
        );
    }
    for (key, change) in [
        (
            "toy_days_saved",
            toy_saved as fn(&Levers, &Lever, usize) -> Option<Change>,
        ),
        ("toy_days_lost", toy_lost),
    ] {
        put_days(
            object,
            reasons,
            &format!("{prefix}{key}"),
            group,
            array,
            |name| match change(levers, lever, name.index) {
                Some(change) => (change.days(), change.text()),
                None => (None, String::new()),
            },
        );
    }
}

/// With `--toys`: the pseudo-experiments, the inputs that got toy-median
/// days, and the nominal plan's toy-median days.
fn toys_json(levers: &Levers) -> Option<Value> {
    let toys = levers.toys.as_ref()?;
    let days =
        |reaches: &[Reach]| -> Vec<Option<f64>> { reaches.iter().map(|r| r.day()).collect() };
    let baseline = &toys.baseline;
    let mut object = Map::new();
    object.insert("toys".into(), json!(toys.toys));
    object.insert("seed".into(), json!(toys.seed));
    let inputs: Vec<&str> = levers
        .with_toys()
        .iter()
        .map(|lever| lever.input.name.as_str())
        .collect();
    object.insert("inputs".into(), json!(inputs));
    object.insert("median_days".into(), json!(days(&baseline.targets)));
    object.insert(
        "exclusion_median_days".into(),
        json!(baseline.exclusion.day()),
    );
    if levers.scan {
        object.insert("global_median_days".into(), json!(days(&baseline.global)));
    }
    object.insert(
        "reasons".into(),
        Value::Object(reasons_of(levers, baseline)),
    );
    Some(Value::Object(object))
}

/// Why each day of `days` that has no number has none, by the day's label.
fn reasons_of(levers: &Levers, days: &crate::levers::PlanDays) -> Map<String, Value> {
    days.all()
        .into_iter()
        .zip(day_names(levers))
        .filter(|(reach, _)| reach.day().is_none())
        .map(|(reach, name)| (name.label, json!(no_day_reason(reach, levers.last_day))))
        .collect()
}

fn baseline_json(levers: &Levers) -> Value {
    let days =
        |reaches: &[Reach]| -> Vec<Option<f64>> { reaches.iter().map(|r| r.day()).collect() };
    let baseline = &levers.baseline;
    let mut object = Map::new();
    object.insert("asimov_days".into(), json!(days(&baseline.targets)));
    object.insert("exclusion_days".into(), json!(baseline.exclusion.day()));
    if levers.scan {
        object.insert("global_asimov_days".into(), json!(days(&baseline.global)));
    }
    object.insert(
        "reasons".into(),
        Value::Object(reasons_of(levers, baseline)),
    );
    Value::Object(object)
}

/// Pretty-printed JSON of the levers, ending with a newline.
pub(super) fn render(levers: &Levers) -> Result<Vec<u8>, ReportError> {
    let names = day_names(levers);
    let mut document = json!({
        "title": levers.title,
        "step": levers.step.to_string(),
        "elasticity_method": ELASTICITY_METHOD,
        "targets": levers.targets,
        "baseline": baseline_json(levers),
        "levers": levers.levers.iter().map(|lever| lever_json(levers, lever, &names)).collect::<Vec<Value>>(),
    });
    if let (Some(toys), Value::Object(document)) = (toys_json(levers), &mut document) {
        document.insert("toys".into(), toys);
    }
    json_bytes(LEVERS_JSON, &document)
}
