//! `runcast compare`: run plans, each projected exactly as `runcast project`
//! would with the same options, then compared on one page.

use super::print_warnings;
use super::project::{self, removed_lines, with_threads};
use crate::cli::{CompareArgs, OutputArgs, PlanArgs, ProjectArgs};
use crate::error::Error;
use crate::options::{
    Loaded, ProjectOptions, check_threads, comparison_provenance, figure_formats,
};
use crate::progress::{advance, toy_progress};
use crate::stdout;
use runcast::calendar::DayArgument;
use runcast::message::{show, show_list};
use runcast::reach::{Reach, ReachSettings, rate_unit, reach};
use runcast::report::{self, ComparedPlan, Comparison};
use runcast::scenario::SignalScan;
use std::path::{Path, PathBuf};

pub fn run(args: &CompareArgs) -> Result<(), Error> {
    if !args.labels.is_empty() && args.labels.len() != args.plans.len() {
        return Err(Error::Usage(format!(
            "--label: given {} times for {} plans; give one per plan or none",
            args.labels.len(),
            args.plans.len()
        )));
    }
    let formats = figure_formats(&args.output.figures)?;
    let threads = check_threads(args.workers.threads)?;
    let options = args
        .plans
        .iter()
        .map(|path| plan_options(args, path, threads))
        .collect::<Result<Vec<ProjectOptions>, Error>>()?;
    if args.lee_toys.is_some()
        && !options
            .iter()
            .any(|plan| plan.loaded.scenario.signal_scan().is_some())
    {
        return Err(Error::Usage(
            "--lee-toys: no plan has a signal.scan, so there is no look-elsewhere effect to estimate".into(),
        ));
    }
    let loaded: Vec<&Loaded> = options.iter().map(|options| &options.loaded).collect();
    check_shared(args, &loaded)?;
    for plan in &loaded {
        print_warnings(plan);
    }
    let out = args
        .output
        .out
        .clone()
        .unwrap_or_else(|| Path::new("output").join("compare"));

    let reach_days = match &args.reach_days {
        Some(day) => Some(reach_days(args, &loaded, day)?),
        None => None,
    };

    let mut plans = Vec::with_capacity(options.len());
    for (index, (path, options)) in args.plans.iter().zip(&options).enumerate() {
        plans.push(ComparedPlan {
            file: path.display().to_string(),
            label: args
                .labels
                .get(index)
                .cloned()
                .unwrap_or_else(|| options.loaded.scenario.title.clone()),
            projection: project::projection(options)?,
            reach: match &reach_days {
                Some(days) => Some(plan_reach(args, &options.loaded, days[index])?),
                None => None,
            },
        });
    }
    let comparison = Comparison { plans };
    let reports = report::render_comparison(&comparison, &comparison_provenance(&options))?;
    let written = super::write_reports(&out, reports, &report::COMPARE_FILES, &formats)?;
    stdout::print(&report::comparison_table(&comparison))?;
    stdout::print(&format!("wrote {}\n", out.display()))?;
    stdout::print(&removed_lines(&out, &written.removed))
}

/// The calendar days of `--reach-days` in each plan (a date counts from each
/// plan's own start), after checking that every plan scans the same
/// positions with rates in the same unit, so that their reaches compare
/// position by position; the error names the plan file, the field and
/// both values.
fn reach_days(
    args: &CompareArgs,
    loaded: &[&Loaded],
    day: &DayArgument,
) -> Result<Vec<f64>, Error> {
    let first_path = &args.plans[0];
    let mut reference: Option<(SignalScan, String)> = None;
    let mut days = Vec::with_capacity(loaded.len());
    for (path, plan) in args.plans.iter().zip(loaded) {
        let scenario = &plan.scenario;
        let scan = scenario.signal_scan().ok_or_else(|| {
            Error::Usage(format!(
                "--reach-days: {}: signal.scan: missing; a reach is compared over the positions of a scan",
                path.display()
            ))
        })?;
        let unit = rate_unit(scenario);
        if let Some((first_scan, first_unit)) = &reference {
            let differs = |field: &str, value: String, first: String| {
                Error::Usage(format!(
                    "--reach-days: {}: {field} {value} differs from {first} in {}; plans whose reach is compared must scan the same positions with rates in one unit",
                    path.display(),
                    first_path.display()
                ))
            };
            let [from, to] = scan.interval();
            let [first_from, first_to] = first_scan.interval();
            for (field, value, first) in [
                ("signal.scan.from", from, first_from),
                ("signal.scan.to", to, first_to),
                ("signal.scan.step", scan.step(), first_scan.step()),
            ] {
                if value != first {
                    return Err(differs(field, show(value), show(first)));
                }
            }
            if unit != *first_unit {
                return Err(differs(
                    "the signal rate's unit",
                    format!("\"{unit}\""),
                    format!("\"{first_unit}\""),
                ));
            }
        } else {
            reference = Some((scan, unit));
        }
        days.push(plan.reach_days(day).map_err(|error| match error {
            Error::Usage(message) => Error::Usage(format!("{}: {message}", path.display())),
            other => other,
        })?);
    }
    Ok(days)
}

/// The reach of one plan after `days`: `runcast reach` on its file at that
/// one exposure, Asimov only, with the plan's confidence level and targets.
fn plan_reach(args: &CompareArgs, loaded: &Loaded, days: f64) -> Result<Reach, Error> {
    let scenario = &loaded.scenario;
    let settings = ReachSettings {
        days: vec![days],
        cl: scenario.plan.cl,
        targets: scenario.plan.targets.clone(),
        toys: 0,
        seed: loaded.scenario.plan.seed,
    };
    let positions = scenario.signal_scan().map_or(0, |scan| scan.len());
    let bar = toy_progress(positions as u64, args.workers.quiet);
    let progress = |done: u64| advance(&bar, done);
    let computed = with_threads(args.workers.threads, || {
        reach(scenario, &settings, &progress)
    })?;
    bar.finish_and_clear();
    computed.map_err(|source| Error::Reach {
        path: loaded.path.clone(),
        source,
    })
}

/// `runcast project`'s options on `plan` as this comparison runs it:
/// `--lee-toys` only for a plan with a scan, which alone has a
/// look-elsewhere effect.
fn plan_options(
    args: &CompareArgs,
    plan: &Path,
    threads: Option<usize>,
) -> Result<ProjectOptions, Error> {
    let loaded = Loaded::load(plan)?;
    let lee_toys = args
        .lee_toys
        .filter(|_| loaded.scenario.signal_scan().is_some());
    ProjectOptions::resolve_loaded(&project_args(args, plan, lee_toys), loaded, threads)
}

/// The options of `runcast project` on `plan` that this comparison runs
/// with, `lee_toys` look-elsewhere pseudo-experiments per point if given.
fn project_args(args: &CompareArgs, plan: &Path, lee_toys: Option<usize>) -> ProjectArgs {
    ProjectArgs {
        scenario: PathBuf::from(plan),
        plan: PlanArgs {
            toys: args.toys,
            seed: args.seed,
            asimov_only: args.asimov_only,
            no_limits: args.no_limits,
            calibrate: None,
            at: Vec::new(),
            lee_toys,
        },
        output: OutputArgs {
            out: None,
            figures: args.output.figures.clone(),
        },
        workers: args.workers,
        shard: None,
    }
}

/// Plans are compared at the same targets and (with limits) the same
/// confidence level; otherwise the error names the plans and values that differ.
fn check_shared(args: &CompareArgs, loaded: &[&Loaded]) -> Result<(), Error> {
    let (first_path, first) = (&args.plans[0], &loaded[0].scenario.plan);
    for (path, plan) in args.plans.iter().zip(loaded).skip(1) {
        let plan = &plan.scenario.plan;
        let differs = |field: &str, value: String, reference: String| {
            Error::Usage(format!(
                "{}: {field} {value} differs from {reference} in {}; compared plans must share it",
                path.display(),
                first_path.display()
            ))
        };
        if plan.targets != first.targets {
            return Err(differs(
                "plan.targets",
                show_list(&plan.targets),
                show_list(&first.targets),
            ));
        }
        if (!args.no_limits || args.reach_days.is_some()) && plan.cl != first.cl {
            return Err(differs("plan.cl", show(plan.cl), show(first.cl)));
        }
    }
    Ok(())
}
