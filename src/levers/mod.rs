//! Levers: what each input a user can act on is worth in days.
//!
//! Every input of the scenario (`inputs.rs`) is improved and worsened by a
//! step, the changed scenario validated again, and its Asimov days to each
//! target and to exclusion computed exactly as `runcast project
//! --asimov-only` computes them (`projection::project` with no toys, on the
//! model of the changed scenario). The elasticity d ln(days)/d ln(input) is
//! the central difference over the two changed values,
//! ln(D_worsened / D_improved) / ln(x_worsened / x_improved); where one side
//! is invalid or reaches no day, the one-sided difference between the other
//! side and the nominal point.

mod inputs;

pub use inputs::{Better, Input, InputKind, inputs};

use crate::model::Model;
use crate::projection::{Projection, ProjectionError, ProjectionSettings, project};
use crate::scenario::Scenario;
use rayon::prelude::*;

/// How far each input is moved.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Step {
    /// By this fraction of its nominal value (0.1 for 10%); whole-day
    /// inputs by that many days rounded, at least one.
    Relative(f64),
    /// By this amount, in the input's unit.
    Absolute(f64),
    /// To this value; the other side mirrored about the nominal value.
    To(f64),
}

impl Step {
    /// The improved and the worsened value of `input`.
    pub fn changed_values(self, input: &Input) -> (f64, f64) {
        let nominal = input.nominal;
        let change = match self {
            Step::Relative(fraction) if input.kind.whole_days() => {
                (fraction * nominal).round().max(1.0)
            }
            Step::Relative(fraction) => fraction * nominal,
            Step::Absolute(amount) => amount,
            Step::To(value) => (value - nominal).abs(),
        };
        match input.kind.better() {
            Better::Lower => (nominal - change, nominal + change),
            Better::Higher => (nominal + change, nominal - change),
        }
    }
}

/// The step as written: "10%", "±2", "to 20".
impl std::fmt::Display for Step {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Step::Relative(fraction) => {
                write!(f, "{}%", crate::message::show_rounded(fraction * 100.0))
            }
            Step::Absolute(amount) => write!(f, "±{}", crate::message::show(*amount)),
            Step::To(value) => write!(f, "to {}", crate::message::show(*value)),
        }
    }
}

/// Whether a plan reaches a target or exclusion, and when.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Reach {
    /// The calendar day (Asimov, root-found).
    Day(f64),
    /// Not by the last point of the plan's grid.
    NotWithinGrid,
    /// Never: systematic uncertainties keep Z_A below the target at any
    /// exposure (`DaysToTarget::never_reached`).
    Never,
}

impl Reach {
    pub fn day(self) -> Option<f64> {
        match self {
            Reach::Day(day) => Some(day),
            _ => None,
        }
    }
}

/// The Asimov days of one plan: per target (and, with a scan, per target
/// in global significance), and to exclusion.
#[derive(Debug, Clone, PartialEq)]
pub struct AsimovDays {
    pub targets: Vec<Reach>,
    /// With a scan: the days in global significance, per target; else empty.
    pub global: Vec<Reach>,
    pub exclusion: Reach,
}

impl AsimovDays {
    /// The Asimov days a projection found.
    pub fn of(projection: &Projection) -> AsimovDays {
        let local = |days: &crate::projection::DaysToTarget| match days.asimov_days {
            Some(day) => Reach::Day(day),
            None if days.never_reached() => Reach::Never,
            None => Reach::NotWithinGrid,
        };
        let global = projection
            .days_to_target
            .iter()
            .filter_map(|days| {
                let global = days.global.as_ref()?;
                Some(match (global.global_asimov_days, local(days)) {
                    (Some(day), _) => Reach::Day(day),
                    (None, Reach::Never) => Reach::Never,
                    (None, _) => Reach::NotWithinGrid,
                })
            })
            .collect();
        AsimovDays {
            targets: projection.days_to_target.iter().map(local).collect(),
            global,
            exclusion: projection
                .days_to_exclusion
                .asimov_days
                .map_or(Reach::NotWithinGrid, Reach::Day),
        }
    }

    /// Every day in one list: targets, then global, then exclusion.
    pub fn all(&self) -> Vec<Reach> {
        let mut all = self.targets.clone();
        all.extend(&self.global);
        all.push(self.exclusion);
        all
    }
}

/// One side of a lever: the changed value and the plan's days with it, or
/// why the changed scenario is not valid.
#[derive(Debug, Clone, PartialEq)]
pub struct Side {
    pub value: f64,
    pub days: Result<AsimovDays, String>,
}

/// One input improved and worsened by the step.
#[derive(Debug, Clone, PartialEq)]
pub struct Lever {
    pub input: Input,
    pub improved: Side,
    pub worsened: Side,
}

impl Lever {
    /// d ln(days)/d ln(input) for day `index` of [`AsimovDays::all`], from
    /// the two sides (central difference) or, when one side has no day,
    /// from the other and the nominal point; None when neither has one.
    pub fn elasticity(&self, baseline: &AsimovDays, index: usize) -> Option<f64> {
        let point = |side: &Side| {
            let day = side.days.as_ref().ok()?.all()[index].day()?;
            (day > 0.0 && side.value > 0.0).then(|| (side.value.ln(), day.ln()))
        };
        let nominal = baseline.all()[index]
            .day()
            .filter(|&day| day > 0.0)
            .map(|day| (self.input.nominal.ln(), day.ln()));
        let (low, high) = match (point(&self.improved), point(&self.worsened)) {
            (Some(improved), Some(worsened)) => (improved, worsened),
            (Some(one), None) | (None, Some(one)) => (one, nominal?),
            (None, None) => return None,
        };
        let run = high.0 - low.0;
        (run != 0.0).then(|| (high.1 - low.1) / run)
    }
}

/// Every lever of a scenario and the nominal days.
#[derive(Debug, Clone, PartialEq)]
pub struct Levers {
    pub title: String,
    pub step: Step,
    pub targets: Vec<f64>,
    /// The last calendar day of the plan's grid.
    pub last_day: f64,
    /// True with a scan: global days are given too.
    pub scan: bool,
    pub baseline: AsimovDays,
    /// Sorted by days saved at the first target, most first (`sort`).
    pub levers: Vec<Lever>,
}

/// The change of one input the user asked for by name.
#[derive(Debug, Clone, PartialEq)]
pub struct StepFor {
    pub input: String,
    pub step: Step,
}

/// The Asimov days of `scenario` as `runcast project --asimov-only` gives
/// them: `settings` (toys 0) with the scan of this scenario, on its model.
pub fn asimov_days(
    scenario: &Scenario,
    settings: &ProjectionSettings,
) -> Result<AsimovDays, ProjectionError> {
    let settings = ProjectionSettings {
        toys: 0,
        calibration_toys: 0,
        look_elsewhere_toys: 0,
        scan: scenario.signal_scan(),
        ..settings.clone()
    };
    let projection = project(&Model::from_scenario(scenario), &settings, &|_| {})?;
    Ok(AsimovDays::of(&projection))
}

/// Every lever of `scenario`: each input moved by `step` (or by its own
/// step in `steps`), both sides computed in parallel; `progress` is called
/// with 1 after each changed plan. A changed scenario that is not valid is
/// reported on its side; a failed asymptotic fit stops the run.
pub fn levers(
    scenario: &Scenario,
    settings: &ProjectionSettings,
    step: Step,
    steps: &[StepFor],
    progress: &(dyn Fn(u64) + Sync),
) -> Result<Levers, ProjectionError> {
    let baseline = asimov_days(scenario, settings)?;
    let found = inputs(scenario);
    let sides: Vec<(usize, f64)> = found
        .iter()
        .enumerate()
        .flat_map(|(index, input)| {
            let step = steps
                .iter()
                .rfind(|named| named.input == input.name)
                .map_or(step, |named| named.step);
            let (improved, worsened) = step.changed_values(input);
            [(index, improved), (index, worsened)]
        })
        .collect();
    let computed = sides
        .par_iter()
        .map(|&(index, value)| {
            let days = match found[index].set(scenario, value) {
                Ok(changed) => Ok(asimov_days(&changed, settings)?),
                Err(invalid) => Err(invalid.to_string()),
            };
            progress(1);
            Ok(Side { value, days })
        })
        .collect::<Result<Vec<Side>, ProjectionError>>()?;
    let mut computed = computed.into_iter();
    let mut levers: Vec<Lever> = found
        .into_iter()
        .filter_map(|input| {
            Some(Lever {
                input,
                improved: computed.next()?,
                worsened: computed.next()?,
            })
        })
        .collect();
    sort(&mut levers, &baseline);
    Ok(Levers {
        title: scenario.title.clone(),
        step,
        targets: settings.targets.clone(),
        last_day: settings.days.last().copied().unwrap_or_default(),
        scan: !baseline.global.is_empty(),
        baseline,
        levers,
    })
}

/// Days saved at day `index` of [`AsimovDays::all`]: nominal less improved
/// when both are days.
pub fn days_saved(lever: &Lever, baseline: &AsimovDays, index: usize) -> Option<f64> {
    let improved = lever.improved.days.as_ref().ok()?.all()[index].day()?;
    Some(baseline.all()[index].day()? - improved)
}

/// Sorts by days saved at the first target, most first: a lever that makes
/// a target reachable the nominal plan never reaches comes before every
/// number, a lever without a number after them (stable, so in scenario order).
fn sort(levers: &mut [Lever], baseline: &AsimovDays) {
    let key = |lever: &Lever| -> f64 {
        let nominal_missed = baseline.all()[0].day().is_none();
        let improved = lever
            .improved
            .days
            .as_ref()
            .ok()
            .and_then(|days| days.all()[0].day());
        match (nominal_missed, improved) {
            (true, Some(_)) => f64::INFINITY,
            _ => days_saved(lever, baseline, 0).unwrap_or(f64::NEG_INFINITY),
        }
    };
    levers.sort_by(|a, b| key(b).total_cmp(&key(a)));
}

#[cfg(test)]
mod tests {
    use super::*;

    fn input(kind: InputKind, nominal: f64) -> Input {
        Input {
            name: "x".into(),
            unit: "u".into(),
            nominal,
            kind,
        }
    }

    #[test]
    fn steps_move_each_input_its_better_way() {
        let background = input(
            InputKind::BackgroundRate {
                channel: 0,
                background: 0,
            },
            40.0,
        );
        assert_eq!(
            Step::Relative(0.25).changed_values(&background),
            (30.0, 50.0)
        );
        assert_eq!(
            Step::Absolute(5.0).changed_values(&background),
            (35.0, 45.0)
        );
        // A value set on the worse side is still the worsened one.
        assert_eq!(Step::To(44.0).changed_values(&background), (36.0, 44.0));
        let signal = input(InputKind::SignalRate { channel: 0 }, 2.0);
        assert_eq!(Step::Relative(0.5).changed_values(&signal), (3.0, 1.0));
    }

    #[test]
    fn breaks_move_by_whole_days_and_at_least_one() {
        let pause = input(InputKind::BreakDays { pause: 0 }, 28.0);
        assert_eq!(Step::Relative(0.1).changed_values(&pause), (25.0, 31.0));
        let short = input(InputKind::BreakDays { pause: 0 }, 3.0);
        assert_eq!(Step::Relative(0.1).changed_values(&short), (2.0, 4.0));
    }

    fn side(value: f64, day: Option<f64>) -> Side {
        let reach = day.map_or(Reach::NotWithinGrid, Reach::Day);
        Side {
            value,
            days: Ok(AsimovDays {
                targets: vec![reach],
                global: Vec::new(),
                exclusion: reach,
            }),
        }
    }

    #[test]
    fn the_elasticity_of_a_power_law_is_its_exponent() {
        // days = 100 x^-2: d ln(days)/d ln(x) = -2 from either difference.
        let days = |x: f64| 100.0 * x.powi(-2);
        let baseline = side(1.0, Some(days(1.0))).days.unwrap();
        let central = Lever {
            input: input(InputKind::SignalRate { channel: 0 }, 1.0),
            improved: side(1.1, Some(days(1.1))),
            worsened: side(0.9, Some(days(0.9))),
        };
        assert!((central.elasticity(&baseline, 0).unwrap() + 2.0).abs() < 1e-12);
        let one_sided = Lever {
            worsened: side(0.9, None),
            ..central
        };
        assert!((one_sided.elasticity(&baseline, 0).unwrap() + 2.0).abs() < 1e-12);
    }
}
