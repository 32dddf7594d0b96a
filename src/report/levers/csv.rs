//! `levers.csv`: one row per lever, in the order of the summary (columns
//! `<quantity>_<target>sigma` as in every table), with for
//! each day (target, global target with a scan, exclusion) the nominal,
//! improved and worsened Asimov days, the days saved and lost, and the
//! elasticity; empty cells where there is no number, and `notes` saying why.
//! With `--toys`, per day also the toy-median days (nominal, improved,
//! worsened, saved, lost) of the inputs that got them.

use super::{LEVERS_CSV, NOT_VALID, day_names, lost, saved, toy_lost, toy_saved};
use crate::levers::{Lever, Levers, PlanDays};
use crate::report::ReportError;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::{number, optional};

/// The toy-median columns of each day with `--toys`, filled for the inputs
/// that got toy-median days, empty for the others.
const TOY_COLUMNS: [&str; 5] = [
    "toy_median_days_nominal",
    "toy_median_days_improved",
    "toy_median_days_worsened",
    "toy_median_days_saved",
    "toy_median_days_lost",
];

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
        if levers.toys.is_some() {
            for column in TOY_COLUMNS {
                header.push(format!("{column}_{}", name.key));
            }
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
        let side = |days: &Result<PlanDays, String>| {
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
        if let Some(toys) = &levers.toys {
            let side = |days: &Option<PlanDays>| {
                optional(days.as_ref().and_then(|days| days.all()[name.index].day()))
            };
            let with_toys = lever.improved.toy_days.is_some() || lever.worsened.toy_days.is_some();
            row.push(optional(
                toys.baseline.all()[name.index].day().filter(|_| with_toys),
            ));
            row.push(side(&lever.improved.toy_days));
            row.push(side(&lever.worsened.toy_days));
            let changes = [
                ("saved", toy_saved(levers, lever, name.index)),
                ("lost", toy_lost(levers, lever, name.index)),
            ];
            for (what, change) in &changes {
                if let Some(change) = change.as_ref().filter(|change| change.days().is_none()) {
                    notes.push(format!(
                        "{} toy median days {what}: {}",
                        name.label,
                        change.text()
                    ));
                }
            }
            for (_, change) in changes {
                row.push(optional(change.and_then(|change| change.days())));
            }
        }
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
