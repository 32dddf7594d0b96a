//! The stdout summary of `runcast levers`: the nominal days, then one row
//! per lever (sorted by days saved at the first target) with its values and,
//! per day, the days saved and lost and the elasticity; the sides that are
//! not valid scenarios named below the table.

use super::{
    Change, DayName, ELASTICITY_METHOD, NOT_VALID, day_names, lost, no_day_reason, saved, toy_lost,
    toy_saved,
};
use crate::levers::Reach;
use crate::levers::{Lever, Levers};
use crate::report::kit::format::{aligned, days_label, rounded};

/// Saved and lost days, or the words for no number.
fn pair(saved: super::Change, lost: super::Change) -> String {
    let neither = saved.days().is_none() && lost.days().is_none();
    let (saved, lost) = (saved.short_text(), lost.short_text());
    if neither && saved == lost {
        // Neither side has a number, for the same reason: said once.
        saved
    } else {
        format!("{saved} / {lost}")
    }
}

pub fn levers_summary(levers: &Levers) -> String {
    let names = day_names(levers);
    let nominal: Vec<String> = levers
        .baseline
        .all()
        .into_iter()
        .zip(&names)
        .map(|(reach, name)| match reach.day() {
            Some(day) => format!("{} {}", name.label, days_label(day)),
            None => format!("{} {}", name.label, no_day_reason(reach, levers.last_day)),
        })
        .collect();
    let mut text = format!(
        "{}\nLevers: each input improved and worsened by {} (Asimov days, as runcast project --asimov-only)\nNominal plan: {}\n\n",
        levers.title,
        levers.step,
        nominal.join(", ")
    );
    let mut header: Vec<String> = ["input", "nominal", "improved / worsened"]
        .map(String::from)
        .to_vec();
    for name in &names {
        header.push(format!("{} saved / lost", name.label));
        if name.label != "exclusion" {
            header.push(format!("{} elasticity", name.label));
        }
    }
    let mut rows = vec![header];
    let mut invalid = Vec::new();
    for lever in &levers.levers {
        let mut row = vec![
            lever.input.name.clone(),
            rounded(lever.input.nominal),
            format!(
                "{} / {}",
                rounded(lever.improved.value),
                rounded(lever.worsened.value)
            ),
        ];
        for name in &names {
            row.push(pair(
                saved(levers, lever, name.index),
                lost(levers, lever, name.index),
            ));
            if name.label != "exclusion" {
                row.push(
                    lever
                        .elasticity(&levers.baseline, name.index)
                        .map_or_else(|| "none".to_string(), |e| format!("{e:+.2}")),
                );
            }
        }
        rows.push(row);
        for (side, value, days) in [
            ("improved", lever.improved.value, &lever.improved.days),
            ("worsened", lever.worsened.value, &lever.worsened.days),
        ] {
            if let Err(reason) = days {
                invalid.push(format!(
                    "  {} {side} to {}: {NOT_VALID}: {reason}\n",
                    lever.input.name,
                    rounded(value)
                ));
            }
        }
    }
    text += &aligned(&rows);
    if !invalid.is_empty() {
        text += "\nNot computed, the changed scenario is not valid:\n";
        text += &invalid.concat();
    }
    text += &toy_block(levers);
    text += &format!(
        "\nDays saved = nominal − improved, lost = worsened − nominal (calendar days). Elasticity: {ELASTICITY_METHOD}.\nNominal days are rounded up; levers.csv and levers.json keep full precision.\n"
    );
    text
}

/// A day, or why there is none, with the change it makes to the nominal
/// plan's: "40 d (−5.9 d)".
fn toy_cell(reach: Reach, change: Option<Change>, last_day: f64) -> String {
    let day = match reach.day() {
        Some(day) => days_label(day),
        None => no_day_reason(reach, last_day),
    };
    match change {
        Some(Change::Days(days)) if days.abs() >= 0.01 => {
            let sign = if days > 0.0 { "+" } else { "−" };
            format!("{day} ({sign}{})", super::days_change(days.abs()))
        }
        Some(Change::ReachableOnlyIfImproved) => format!("{day} (reachable only if improved)"),
        _ => day,
    }
}

/// With `--toys`: the toy-median days of the nominal plan and of both sides
/// of the inputs that got them, each side's change to the nominal toy
/// median in brackets (saved days negative, lost days positive).
fn toy_block(levers: &Levers) -> String {
    let Some(toys) = &levers.toys else {
        return String::new();
    };
    // Days no plan has a toy median of (the global ones without
    // look-elsewhere pseudo-experiments) get a sentence, not a column.
    let (names, not_computed): (Vec<DayName>, Vec<DayName>) = day_names(levers)
        .into_iter()
        .partition(|name| toys.baseline.all()[name.index] != Reach::NotComputed);
    let with_toys = levers.with_toys();
    let inputs: Vec<&str> = with_toys
        .iter()
        .map(|lever| lever.input.name.as_str())
        .collect();
    let first = names
        .first()
        .map_or("exclusion", |name| name.label.as_str());
    let mut text = format!(
        "\nToy-median days for: {} (the {} inputs that save most days at {first}; {} pseudo-experiments per point, seed {}, each as runcast project --toys {} --seed {} gives them)\n\n",
        inputs.join(", "),
        with_toys.len(),
        toys.toys,
        toys.seed,
        toys.toys,
        toys.seed,
    );
    let mut header = vec!["plan".to_string()];
    header.extend(
        names
            .iter()
            .map(|name| format!("{} toy median", name.label)),
    );
    let mut rows = vec![header];
    let mut nominal = vec!["nominal".to_string()];
    let baseline = toys.baseline.all();
    nominal.extend(
        names
            .iter()
            .map(|name| toy_cell(baseline[name.index], None, levers.last_day)),
    );
    rows.push(nominal);
    for lever in with_toys {
        for (side, word, change) in [
            (
                &lever.improved,
                "improved",
                toy_saved as fn(&Levers, &Lever, usize) -> Option<Change>,
            ),
            (&lever.worsened, "worsened", toy_lost),
        ] {
            let mut row = vec![format!(
                "{} {word} to {}",
                lever.input.name,
                rounded(side.value)
            )];
            match &side.toy_days {
                Some(days) => row.extend(names.iter().map(|name| {
                    let change = change(levers, lever, name.index).map(|change| match change {
                        // Saved days are shown as the shorter run they are.
                        Change::Days(days) if word == "improved" => Change::Days(-days),
                        other => other,
                    });
                    toy_cell(days.all()[name.index], change, levers.last_day)
                })),
                None => row.extend(names.iter().map(|_| NOT_VALID.to_string())),
            }
            rows.push(row);
        }
    }
    text += &aligned(&rows);
    if !not_computed.is_empty() {
        let labels: Vec<&str> = not_computed
            .iter()
            .map(|name| name.label.as_str())
            .collect();
        text += &format!(
            "{} toy median: {}.\n",
            labels.join(", "),
            no_day_reason(Reach::NotComputed, levers.last_day)
        );
    }
    text
}
