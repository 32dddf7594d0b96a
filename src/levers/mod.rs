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
//!
//! With pseudo-experiments ([`toy_medians`]), the [`TOY_INPUTS`] inputs that
//! save most days at the first target, both sides, and the nominal plan are
//! projected again with toys, as `runcast project --toys N --seed S` does
//! (the same seeded streams and day solver), for their toy-median days.

mod inputs;

pub use inputs::{Better, Input, InputKind, inputs};

use crate::model::Model;
use crate::projection::{
    DaysToTarget, Projection, ProjectionError, ProjectionSettings, WithheldDay, project,
};
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
    /// A toy day from too few converged fits (`WithheldDay`): no number.
    Withheld,
    /// A global toy-median day of a projection without look-elsewhere
    /// pseudo-experiments, which it needs.
    NotComputed,
}

impl Reach {
    pub fn day(self) -> Option<f64> {
        match self {
            Reach::Day(day) => Some(day),
            _ => None,
        }
    }
}

/// The days of one plan, Asimov or toy median: per target (and, with a
/// scan, per target in global significance), and to exclusion.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanDays {
    pub targets: Vec<Reach>,
    /// With a scan: the days in global significance, per target; else empty.
    pub global: Vec<Reach>,
    pub exclusion: Reach,
}

impl PlanDays {
    /// The Asimov days a projection found.
    pub fn asimov(projection: &Projection) -> PlanDays {
        PlanDays::of(projection, false)
    }

    /// The toy-median days a projection with pseudo-experiments found; a
    /// day withheld for too few converged fits is [`Reach::Withheld`].
    pub fn toy_median(projection: &Projection) -> PlanDays {
        PlanDays::of(projection, true)
    }

    /// The Asimov days, or with `toys` the toy-median ones.
    fn of(projection: &Projection, toys: bool) -> PlanDays {
        let withheld =
            |key: &str, withheld: &[WithheldDay]| toys && withheld.iter().any(|day| day.day == key);
        let local = |days: &DaysToTarget| {
            let day = if toys {
                days.median_days
            } else {
                days.asimov_days
            };
            match day {
                Some(day) => Reach::Day(day),
                None if withheld("median_days", &days.withheld) => Reach::Withheld,
                None if days.never_reached() => Reach::Never,
                None => Reach::NotWithinGrid,
            }
        };
        let global = projection
            .days_to_target
            .iter()
            .filter_map(|days| {
                let global = days.global.as_ref()?;
                let day = if toys {
                    global.global_median_days
                } else {
                    global.global_asimov_days
                };
                Some(match (day, local(days)) {
                    _ if toys && projection.look_elsewhere_toys() == 0 => Reach::NotComputed,
                    (Some(day), _) => Reach::Day(day),
                    (None, _) if withheld("global_median_days", &days.withheld) => Reach::Withheld,
                    (None, Reach::Never) => Reach::Never,
                    (None, _) => Reach::NotWithinGrid,
                })
            })
            .collect();
        let exclusion = &projection.days_to_exclusion;
        let exclusion_day = if toys {
            exclusion.median_days
        } else {
            exclusion.asimov_days
        };
        PlanDays {
            targets: projection.days_to_target.iter().map(local).collect(),
            global,
            exclusion: match exclusion_day {
                Some(day) => Reach::Day(day),
                None if withheld("median_days", &exclusion.withheld) => Reach::Withheld,
                None => Reach::NotWithinGrid,
            },
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
    pub days: Result<PlanDays, String>,
    /// The toy-median days, for the inputs [`toy_medians`] projects with
    /// pseudo-experiments (a valid side only).
    pub toy_days: Option<PlanDays>,
}

/// One input improved and worsened by the step.
#[derive(Debug, Clone, PartialEq)]
pub struct Lever {
    pub input: Input,
    pub improved: Side,
    pub worsened: Side,
}

impl Lever {
    /// d ln(days)/d ln(input) for day `index` of [`PlanDays::all`], from
    /// the two sides (central difference) or, when one side has no day,
    /// from the other and the nominal point; None when neither has one.
    pub fn elasticity(&self, baseline: &PlanDays, index: usize) -> Option<f64> {
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
    pub baseline: PlanDays,
    /// Sorted by days saved at the first target, most first (`sort`).
    pub levers: Vec<Lever>,
    /// The pseudo-experiments of [`toy_medians`], when run.
    pub toys: Option<ToyMedians>,
}

/// Inputs that get toy-median days with pseudo-experiments: the first this
/// many of the sorted levers, those that save most days at the first target.
pub const TOY_INPUTS: usize = 3;

/// The toy-median projections of the first [`TOY_INPUTS`] levers.
#[derive(Debug, Clone, PartialEq)]
pub struct ToyMedians {
    /// Pseudo-experiments per point and hypothesis, and their seed.
    pub toys: usize,
    pub seed: u64,
    /// The nominal plan's toy-median days.
    pub baseline: PlanDays,
}

impl Levers {
    /// The levers with toy-median days: the first [`TOY_INPUTS`] once
    /// [`toy_medians`] ran, none before.
    pub fn with_toys(&self) -> &[Lever] {
        match self.toys {
            Some(_) => &self.levers[..TOY_INPUTS.min(self.levers.len())],
            None => &[],
        }
    }
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
) -> Result<PlanDays, ProjectionError> {
    let settings = ProjectionSettings {
        toys: 0,
        calibration_toys: 0,
        look_elsewhere_toys: 0,
        scan: scenario.signal_scan(),
        ..settings.clone()
    };
    let projection = project(&Model::from_scenario(scenario), &settings, &|_| {})?;
    Ok(PlanDays::asimov(&projection))
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
            Ok(Side {
                value,
                days,
                toy_days: None,
            })
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
        toys: None,
    })
}

/// The toy-median days of `scenario` as `runcast project` gives them with
/// `settings` (its toys and seed), on its own model and scan.
pub fn toy_median_days(
    scenario: &Scenario,
    settings: &ProjectionSettings,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<PlanDays, ProjectionError> {
    let settings = ProjectionSettings {
        scan: scenario.signal_scan(),
        ..settings.clone()
    };
    let projection = project(&Model::from_scenario(scenario), &settings, progress)?;
    Ok(PlanDays::toy_median(&projection))
}

/// The plans [`toy_medians`] projects with pseudo-experiments: the nominal
/// one (None), then each valid side of the first [`TOY_INPUTS`] levers
/// (lever index, improved).
pub fn toy_plans(levers: &Levers) -> Vec<Option<(usize, bool)>> {
    let sides = levers.levers.iter().take(TOY_INPUTS).enumerate();
    let sides = sides.flat_map(|(index, lever)| {
        [(true, &lever.improved), (false, &lever.worsened)]
            .into_iter()
            .filter(|(_, side)| side.days.is_ok())
            .map(move |(improved, _)| Some((index, improved)))
    });
    std::iter::once(None).chain(sides).collect()
}

/// Toy-median days for the nominal plan and both sides of the first
/// [`TOY_INPUTS`] levers (those saving most days at the first target),
/// each a projection with pseudo-experiments as `runcast project` runs it
/// with `settings` (toys, seed, limits; [`toy_median_days`]), in parallel;
/// `progress` counts their pseudo-experiments. The numbers depend on the
/// seed only, not on the threads.
pub fn toy_medians(
    levers: &mut Levers,
    scenario: &Scenario,
    settings: &ProjectionSettings,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<(), ProjectionError> {
    let plans: Vec<(Option<(usize, bool)>, Scenario)> = toy_plans(levers)
        .into_iter()
        .filter_map(|plan| match plan {
            None => Some((plan, scenario.clone())),
            Some((index, improved)) => {
                let lever = &levers.levers[index];
                let side = if improved {
                    &lever.improved
                } else {
                    &lever.worsened
                };
                lever
                    .input
                    .set(scenario, side.value)
                    .ok()
                    .map(|changed| (plan, changed))
            }
        })
        .collect();
    let computed = plans
        .par_iter()
        .map(|(_, scenario)| toy_median_days(scenario, settings, progress))
        .collect::<Result<Vec<PlanDays>, ProjectionError>>()?;
    let mut computed = plans.into_iter().map(|(plan, _)| plan).zip(computed);
    let Some((_, baseline)) = computed.next() else {
        return Ok(());
    };
    for (plan, days) in computed {
        if let Some((index, improved)) = plan {
            let lever = &mut levers.levers[index];
            let side = if improved {
                &mut lever.improved
            } else {
                &mut lever.worsened
            };
            side.toy_days = Some(days);
        }
    }
    levers.toys = Some(ToyMedians {
        toys: settings.toys,
        seed: settings.seed,
        baseline,
    });
    Ok(())
}

/// Days saved at day `index` of [`PlanDays::all`]: nominal less improved
/// when both are days.
pub fn days_saved(lever: &Lever, baseline: &PlanDays, index: usize) -> Option<f64> {
    let improved = lever.improved.days.as_ref().ok()?.all()[index].day()?;
    Some(baseline.all()[index].day()? - improved)
}

/// Sorts by days saved at the first target, most first: a lever that makes
/// a target reachable the nominal plan never reaches comes before every
/// number, a lever without a number after them (stable, so in scenario order).
fn sort(levers: &mut [Lever], baseline: &PlanDays) {
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
            toy_days: None,
            days: Ok(PlanDays {
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
