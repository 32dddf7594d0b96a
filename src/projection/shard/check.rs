//! What a shard says, checked before it is believed.
//!
//! The checksum shows only that a file is whole: a file changed by hand with
//! its checksum recomputed, or written by other code, passes it. So before a
//! number of a shard is used, its settings are checked against the scenario
//! it carries and the input limits, and each point's counts and values
//! against what this runcast writes: every ensemble of this shard's size,
//! counts within their totals, values finite and in their domain.

use super::{ShardError, ShardSpec};
use crate::ensemble::EnsembleOutcome;
use crate::message::show;
use crate::projection::ensembles::{LookElsewhereCount, PointRequest, PointToys};
use crate::projection::{AT_EXPOSURE_INDEX, ProjectionSettings};
use crate::scenario::Scenario;
use crate::scenario::limits::{MAX_AT_DAYS, MAX_TOYS_IN_TOTAL, MAX_TOYS_PER_POINT};
use std::path::Path;

/// A field of a shard holding what no run of this runcast writes.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Impossible {
    /// Where: the setting, or the point and the field of its section.
    pub place: String,
    /// What it holds, and what it would have to be.
    pub problem: String,
}

impl Impossible {
    fn new(place: impl Into<String>, problem: String) -> Impossible {
        Impossible {
            place: place.into(),
            problem,
        }
    }

    /// The error of the shard file `path`.
    pub(super) fn in_file(self, path: &Path) -> ShardError {
        ShardError::Impossible {
            path: path.to_path_buf(),
            place: self.place,
            problem: self.problem,
        }
    }
}

/// The settings of a shard against the scenario it carries (title, grid,
/// targets and confidence level are the scenario's) and against the limits
/// `project` enforces for shard `largest` (the largest of the run's N).
pub(super) fn check_settings(
    settings: &ProjectionSettings,
    scenario: &Scenario,
    largest: ShardSpec,
) -> Result<(), Impossible> {
    let plan = &scenario.plan;
    let from_scenario = [
        ("title", settings.title == scenario.title),
        ("plan.days", settings.days == plan.days.days()),
        ("plan.targets", settings.targets == plan.targets),
        ("plan.cl", settings.cl.is_none_or(|cl| cl == plan.cl)),
    ];
    if let Some((name, _)) = from_scenario.iter().find(|(_, agrees)| !agrees) {
        return Err(Impossible::new(
            format!("settings, {name}"),
            format!("differs from `{name}` of the scenario the shard carries"),
        ));
    }
    let at_days = &settings.at_days;
    if at_days.len() > MAX_AT_DAYS {
        return Err(Impossible::new(
            "settings, --at",
            format!(
                "{} days where at most {MAX_AT_DAYS} are allowed",
                at_days.len()
            ),
        ));
    }
    if let Some((index, &day)) = at_days.iter().enumerate().find(|&(index, &day)| {
        !(day.is_finite() && day > 0.0 && (index == 0 || day > at_days[index - 1]))
    }) {
        return Err(Impossible::new(
            format!("settings, --at day {}", index + 1),
            format!(
                "{}, where calendar days above 0, increasing, are expected",
                show(day)
            ),
        ));
    }
    let shares = [
        ("--toys", settings.toys),
        ("--calibrate", largest.toys(settings.calibration_toys).len()),
        (
            "--lee-toys",
            largest.toys(settings.look_elsewhere_toys).len(),
        ),
    ];
    if let Some((flag, toys)) = shares.iter().find(|(_, toys)| *toys > MAX_TOYS_PER_POINT) {
        return Err(Impossible::new(
            format!("settings, {flag}"),
            format!(
                "{toys} pseudo-experiments per point where at most {MAX_TOYS_PER_POINT} are allowed"
            ),
        ));
    }
    if settings.look_elsewhere_toys > 0 && scenario.signal_scan().is_none() {
        return Err(Impossible::new(
            "settings, --lee-toys",
            format!(
                "{} look-elsewhere pseudo-experiments, but the scenario has no signal.scan",
                settings.look_elsewhere_toys
            ),
        ));
    }
    let total = settings.total_toys_in(largest);
    if total > MAX_TOYS_IN_TOTAL {
        return Err(Impossible::new(
            "settings, --toys/--calibrate/--lee-toys",
            format!(
                "{total} pseudo-experiments in a shard where at most {MAX_TOYS_IN_TOTAL} are allowed"
            ),
        ));
    }
    Ok(())
}

/// A point's section of shard `shard` against what the point asks for:
/// each ensemble present exactly when requested and of this shard's part of
/// its toys, every count within its total, every value finite and in its
/// domain (significances Z = sqrt(q0) at least 0; upper limits on mu above
/// 0 and finite, since a pseudo-experiment whose limit finds no bound counts
/// as a failed fit).
/// `max_upcrossings` is the most upcrossings one scan can have: half its
/// positions, as each needs a position below the level and one at or above.
pub(super) fn check_point(
    toys: &PointToys,
    request: &PointRequest,
    shard: ShardSpec,
    max_upcrossings: u64,
) -> Result<(), Impossible> {
    let place = |field: &str| format!("{}, {field}", point_name(request));
    let share = |total: usize| shard.toys(total).len();
    let discovery = (request.discovery_toys > 0).then(|| share(request.discovery_toys));
    check_values(
        &place("discovery"),
        toys.discovery.as_ref(),
        discovery,
        |z| z.is_finite() && z >= 0.0,
        "a significance (finite, at least 0)",
    )?;
    let limits = request.limits.map(|limits| share(limits.toys));
    check_values(
        &place("limits"),
        toys.limits.as_ref(),
        limits,
        |mu| mu.is_finite() && mu > 0.0,
        "an upper limit on mu (finite, above 0)",
    )?;
    let field = place("calibration");
    let calibration = request.calibration.map(|request| share(request.toys));
    if let (Some(count), Some(toys)) = (
        present(&field, toys.calibration.as_ref(), calibration)?,
        calibration,
    ) {
        check_counts(
            &field,
            count.converged,
            count.failed_fits,
            count.exceeding,
            toys,
        )?;
    }
    let field = place("look_elsewhere");
    let look_elsewhere = request.look_elsewhere.map(|request| share(request.toys));
    if let (Some(count), Some(toys)) = (
        present(&field, toys.look_elsewhere.as_ref(), look_elsewhere)?,
        look_elsewhere,
    ) {
        check_look_elsewhere(&field, count, toys, max_upcrossings)?;
    }
    Ok(())
}

/// The point of `request` as messages name it: `grid point 3` or `--at
/// point 2`, counted from 1.
pub(super) fn point_name(request: &PointRequest) -> String {
    match request.index.checked_sub(AT_EXPOSURE_INDEX) {
        Some(at) => format!("--at point {}", at + 1),
        None => format!("grid point {}", request.index + 1),
    }
}

/// The ensemble `found` when `expected` (this shard's toys) says it runs,
/// refused when it is there without being asked for or the reverse.
fn present<'a, T>(
    field: &str,
    found: Option<&'a T>,
    expected: Option<usize>,
) -> Result<Option<&'a T>, Impossible> {
    match (found, expected) {
        (Some(_), None) => Err(Impossible::new(
            field,
            "present where this point runs none".into(),
        )),
        (None, Some(toys)) => Err(Impossible::new(
            field,
            format!("absent where this shard runs {toys} pseudo-experiments"),
        )),
        (found, _) => Ok(found),
    }
}

/// `converged` and `failed` pseudo-experiments, which must add up to `toys`.
fn check_total(
    field: &str,
    converged: usize,
    failed: usize,
    toys: usize,
) -> Result<(), Impossible> {
    if converged.checked_add(failed) != Some(toys) {
        return Err(Impossible::new(
            field,
            format!(
                "{converged} converged and {failed} failed pseudo-experiments where this shard runs {toys}"
            ),
        ));
    }
    Ok(())
}

/// An ensemble kept value by value: its size, and each value `valid`.
fn check_values(
    field: &str,
    found: Option<&EnsembleOutcome>,
    expected: Option<usize>,
    valid: impl Fn(f64) -> bool,
    what: &str,
) -> Result<(), Impossible> {
    let (Some(outcome), Some(toys)) = (present(field, found, expected)?, expected) else {
        return Ok(());
    };
    let total_field = format!("{field}.values and failed_fits");
    check_total(
        &total_field,
        outcome.values.len(),
        outcome.failed_fits,
        toys,
    )?;
    match outcome.values.iter().position(|&value| !valid(value)) {
        Some(index) => Err(Impossible::new(
            format!("{field}.values[{index}]"),
            format!("{} where {what} is expected", show(outcome.values[index])),
        )),
        None => Ok(()),
    }
}

/// An ensemble kept as counts: `converged` and `failed` adding up to
/// `toys`, and of the converged, `exceeding` reaching the Asimov q0.
fn check_counts(
    field: &str,
    converged: usize,
    failed: usize,
    exceeding: usize,
    toys: usize,
) -> Result<(), Impossible> {
    let total_field = format!("{field}.converged and failed_fits");
    check_total(&total_field, converged, failed, toys)?;
    if exceeding > converged {
        return Err(Impossible::new(
            format!("{field}.exceeding"),
            format!(
                "{exceeding} pseudo-experiments reaching the Asimov q0 of {converged} converged"
            ),
        ));
    }
    Ok(())
}

/// The scans' counts, and the sums of upcrossings and of their squares: the
/// sum U of `converged` whole numbers n from 0 to `max_upcrossings` has
/// U ≤ max × converged, and the sum S of their squares lies between
/// max(U, U²/converged) (n² ≥ n for whole numbers; Cauchy and Schwarz) and
/// max × U (n² ≤ max × n).
fn check_look_elsewhere(
    field: &str,
    count: &LookElsewhereCount,
    toys: usize,
    max_upcrossings: u64,
) -> Result<(), Impossible> {
    check_counts(
        field,
        count.converged,
        count.failed_fits,
        count.exceeding,
        toys,
    )?;
    let scans = count.converged as u128;
    let (sum, squares, max) = (
        u128::from(count.upcrossings),
        u128::from(count.upcrossings_squared),
        u128::from(max_upcrossings),
    );
    if sum > max * scans {
        return Err(Impossible::new(
            format!("{field}.upcrossings"),
            format!("{sum} upcrossings in {scans} scans where each has at most {max_upcrossings}"),
        ));
    }
    if squares < sum || squares * scans < sum * sum || squares > max * sum {
        return Err(Impossible::new(
            format!("{field}.upcrossings_squared"),
            format!(
                "{squares}, which is no sum of the squares of {scans} whole numbers from 0 to \
                 {max_upcrossings} adding up to {sum}"
            ),
        ));
    }
    Ok(())
}
