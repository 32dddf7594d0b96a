//! `levers.csv`: one row per lever, in the order of the summary (columns
//! `<quantity>_<target>sigma` as in every table), with for
//! each day (target, global target with a scan, exclusion) the nominal,
//! improved and worsened Asimov days, the days saved and lost, and the
//! elasticity; empty cells where there is no number, and `notes` saying why.

use super::{LEVERS_CSV, NOT_VALID, day_names, lost, saved};
use crate::levers::{AsimovDays, Lever, Levers};
use crate::report::ReportError;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::{number, optional};

fn header(levers: &Levers) -> Vec<String> {
    let mut header: Vec<String> = ["input", "unit", "nominal", "improved", "worsened"]
        .map(String::from)
        .to_vec();
    for name in day_names(levers) {
        for column in [
            "days_nominal",
            "days_improved",
            "days_worsened",
            "days_saved",
            "days_lost",
            "elasticity",
        ] {
            header.push(format!("{column}_{}", name.key));
        }
    }
    header.push("notes".into());
    header
}

fn row(levers: &Levers, lever: &Lever) -> Vec<String> {
    let mut row = vec![
        lever.input.name.clone(),
        lever.input.unit.clone(),
        number(lever.input.nominal),
        number(lever.improved.value),
        number(lever.worsened.value),
    ];
    let mut notes = Vec::new();
    for (side, days) in [
        ("improved", &lever.improved.days),
        ("worsened", &lever.worsened.days),
    ] {
        if let Err(reason) = days {
            notes.push(format!("{side}: {NOT_VALID}: {reason}"));
        }
    }
    let nominal = levers.baseline.all();
    for name in day_names(levers) {
        let side = |days: &Result<AsimovDays, String>| {
            optional(
                days.as_ref()
                    .ok()
                    .and_then(|days| days.all()[name.index].day()),
            )
        };
        row.push(optional(nominal[name.index].day()));
        row.push(side(&lever.improved.days));
        row.push(side(&lever.worsened.days));
        let (saved, lost) = (
            saved(levers, lever, name.index),
            lost(levers, lever, name.index),
        );
        for (what, change) in [("saved", &saved), ("lost", &lost)] {
            if change.days().is_none() && lever.improved.days.is_ok() && lever.worsened.days.is_ok()
            {
                notes.push(format!("{} days {what}: {}", name.label, change.text()));
            }
        }
        row.push(optional(saved.days()));
        row.push(optional(lost.days()));
        row.push(optional(lever.elasticity(&levers.baseline, name.index)));
    }
    row.push(notes.join("; "));
    row
}

pub(super) fn render(levers: &Levers) -> Result<Vec<u8>, ReportError> {
    csv_bytes(
        LEVERS_CSV,
        header(levers),
        levers.levers.iter().map(|lever| row(levers, lever)),
    )
}
