//! The levers' files: `figure.rs` (`levers.svg`), `csv.rs` (`levers.csv`),
//! `json.rs` (`levers.json`), and `summary.rs` for the terminal. This file
//! holds what they share: the names of the days (targets, global targets,
//! exclusion) and how a lever's change of each day is worded.

mod csv;
mod figure;
mod json;
mod summary;

pub use summary::levers_summary;

use super::kit::format::{days_label, percent_label, rounded, target_label};
use super::kit::vocabulary::not_within_grid;
use super::{Kind, Output, Report, ReportError, render};
use crate::levers::{Lever, Levers, Reach};
use crate::projection::MIN_CONVERGED_FRACTION;
use crate::provenance::Provenance;

/// File name of the levers figure.
pub const LEVERS_SVG: &str = "levers.svg";
/// File name of the levers table.
pub const LEVERS_CSV: &str = "levers.csv";
/// File name of the levers document.
pub const LEVERS_JSON: &str = "levers.json";
/// Every file `render_levers` gives: the output set of `runcast levers`.
pub const LEVERS_FILES: [&str; 3] = [LEVERS_SVG, LEVERS_CSV, LEVERS_JSON];

/// How the elasticity is computed, stated in every output.
pub const ELASTICITY_METHOD: &str = "d ln(days)/d ln(input) as the central difference ln(D_worsened/D_improved)/ln(x_worsened/x_improved) over the step; one-sided against the nominal point where one side reaches no day or is not a valid scenario";

/// Renders the levers in memory: `levers.svg`, `levers.csv`, `levers.json`.
pub fn render_levers(levers: &Levers, provenance: &Provenance) -> Result<Vec<Report>, ReportError> {
    render(
        &[
            &Output::new(LEVERS_SVG, Kind::Figure, levers, figure::render),
            &Output::new(LEVERS_CSV, Kind::Table, levers, csv::render),
            &Output::new(LEVERS_JSON, Kind::Document, levers, json::render),
        ],
        provenance,
    )
}

/// One day every lever changes: a target, a target in global significance
/// (with a scan), or exclusion, at its index in `PlanDays::all`.
struct DayName {
    index: usize,
    /// For people: "3σ", "3σ global", "exclusion".
    label: String,
    /// For columns: "3sigma", "3sigma_global", "exclusion".
    key: String,
}

/// The days of [`crate::levers::PlanDays::all`], named.
fn day_names(levers: &Levers) -> Vec<DayName> {
    let mut names = Vec::new();
    let global = if levers.scan { 2 } else { 1 };
    for scope in 0..global {
        for target in &levers.targets {
            let suffix = if scope == 0 { "" } else { " global" };
            names.push(DayName {
                index: names.len(),
                label: format!("{}{suffix}", target_label(*target)),
                key: format!("{target}sigma{}", suffix.replace(' ', "_")),
            });
        }
    }
    names.push(DayName {
        index: names.len(),
        label: "exclusion".into(),
        key: "exclusion".into(),
    });
    names
}

/// Why a plan gives no day: never (Z_A saturates below the target) or not
/// within the grid.
fn no_day_reason(reach: Reach, last_day: f64) -> String {
    match reach {
        Reach::Day(_) => String::new(),
        Reach::NotWithinGrid => not_within_grid(&days_label(last_day)),
        Reach::Never => "never (Z_A saturates below the target)".into(),
        Reach::NotComputed => {
            "not computed (no look-elsewhere pseudo-experiments, as project --lee-toys 0)".into()
        }
        Reach::Withheld => format!(
            "withheld (fewer than {} of the fits converged)",
            percent_label(MIN_CONVERGED_FRACTION)
        ),
    }
}

/// Days saved or lost to three significant digits, or "<0.01 d": a change
/// that small is below what a plan can act on, and near the relative 1e-7 to
/// which the Asimov days are root-found (`numeric::bisect_log`).
fn days_change(days: f64) -> String {
    if days.abs() < 0.01 {
        "<0.01 d".to_string()
    } else {
        format!("{} d", rounded(days))
    }
}

/// The words for a side whose changed scenario its validation refuses.
const NOT_VALID: &str = "not valid";

/// What one side of a lever does to one day, with the words a report
/// prints instead of a number where there is none.
enum Change {
    /// Days saved (improved) or lost (worsened).
    Days(f64),
    /// The nominal plan misses the day and the improved one reaches it.
    ReachableOnlyIfImproved,
    /// The nominal plan reaches the day and the worsened one does not.
    UnreachableIfWorsened,
    /// No number: why.
    Missing(String),
}

impl Change {
    fn text(&self) -> String {
        match self {
            Change::Days(days) => days_change(*days),
            Change::ReachableOnlyIfImproved => "reachable only if improved".into(),
            Change::UnreachableIfWorsened => "unreachable if worsened".into(),
            Change::Missing(reason) => reason.clone(),
        }
    }

    /// [`Change::text`] for a table cell or a figure: a side that is not a
    /// valid scenario only says so (the reason is printed once, elsewhere).
    fn short_text(&self) -> String {
        match self {
            Change::Missing(reason) if reason.starts_with(NOT_VALID) => NOT_VALID.to_string(),
            other => other.text(),
        }
    }

    fn days(&self) -> Option<f64> {
        match self {
            Change::Days(days) => Some(*days),
            _ => None,
        }
    }
}

/// The reach of one side of `lever` at day `index`, or why the side is not
/// a valid scenario.
fn side_reach(days: &Result<crate::levers::PlanDays, String>, index: usize) -> Result<Reach, &str> {
    days.as_ref()
        .map(|days| days.all()[index])
        .map_err(String::as_str)
}

/// Days saved by improving `lever`, at day `index`.
fn saved(levers: &Levers, lever: &Lever, index: usize) -> Change {
    let nominal = levers.baseline.all()[index];
    let improved = side_reach(&lever.improved.days, index);
    saved_between(nominal, improved, levers.last_day)
}

/// Days lost by worsening `lever`, at day `index`.
fn lost(levers: &Levers, lever: &Lever, index: usize) -> Change {
    let nominal = levers.baseline.all()[index];
    let worsened = side_reach(&lever.worsened.days, index);
    lost_between(nominal, worsened, levers.last_day)
}

/// Toy-median days saved by improving `lever`, at day `index`, when its
/// toy-median days were computed.
fn toy_saved(levers: &Levers, lever: &Lever, index: usize) -> Option<Change> {
    let nominal = levers.toys.as_ref()?.baseline.all()[index];
    let improved = lever.improved.toy_days.as_ref()?.all()[index];
    Some(saved_between(nominal, Ok(improved), levers.last_day))
}

/// Toy-median days lost by worsening `lever`, at day `index`, when its
/// toy-median days were computed.
fn toy_lost(levers: &Levers, lever: &Lever, index: usize) -> Option<Change> {
    let nominal = levers.toys.as_ref()?.baseline.all()[index];
    let worsened = lever.worsened.toy_days.as_ref()?.all()[index];
    Some(lost_between(nominal, Ok(worsened), levers.last_day))
}

/// Days saved from `nominal` to `improved` (or why the improved scenario
/// is not valid).
fn saved_between(nominal: Reach, improved: Result<Reach, &str>, last_day: f64) -> Change {
    match (nominal, improved) {
        (_, Err(reason)) => Change::Missing(format!("{NOT_VALID}: {reason}")),
        (Reach::Day(nominal), Ok(Reach::Day(improved))) => Change::Days(nominal - improved),
        (Reach::Day(_), Ok(improved)) => Change::Missing(no_day_reason(improved, last_day)),
        (Reach::Withheld, Ok(_)) => Change::Missing(no_day_reason(nominal, last_day)),
        (_, Ok(Reach::Day(_))) => Change::ReachableOnlyIfImproved,
        (_, Ok(_)) => Change::Missing(no_day_reason(nominal, last_day)),
    }
}

/// Days lost from `nominal` to `worsened` (or why the worsened scenario is
/// not valid).
fn lost_between(nominal: Reach, worsened: Result<Reach, &str>, last_day: f64) -> Change {
    match (nominal, worsened) {
        (_, Err(reason)) => Change::Missing(format!("{NOT_VALID}: {reason}")),
        (Reach::Day(nominal), Ok(Reach::Day(worsened))) => Change::Days(worsened - nominal),
        (Reach::Day(_), Ok(Reach::Withheld)) => {
            Change::Missing(no_day_reason(Reach::Withheld, last_day))
        }
        (Reach::Day(_), Ok(_)) => Change::UnreachableIfWorsened,
        (nominal, Ok(_)) => Change::Missing(no_day_reason(nominal, last_day)),
    }
}
