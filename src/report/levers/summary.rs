//! The stdout summary of `runcast levers`: the nominal days, then one row
//! per lever (sorted by days saved at the first target) with its values and,
//! per day, the days saved and lost and the elasticity; the sides that are
//! not valid scenarios named below the table.

use super::{ELASTICITY_METHOD, NOT_VALID, day_names, lost, no_day_reason, saved};
use crate::levers::Levers;
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
    text += &format!(
        "\nDays saved = nominal − improved, lost = worsened − nominal (calendar days). Elasticity: {ELASTICITY_METHOD}.\nNominal days are rounded up; levers.csv and levers.json keep full precision.\n"
    );
    text
}
