//! `runcast compare`: run plans, each projected exactly as `runcast project`
//! would with the same options, then compared on one page.

use super::project;
use super::{figure_formats, load_scenario};
use crate::cli::{CompareArgs, ProjectArgs};
use crate::error::Error;
use crate::report::{self, ComparedPlan, Comparison};
use crate::scenario::Scenario;
use std::path::{Path, PathBuf};

pub fn run(args: &CompareArgs) -> Result<(), Error> {
    if !args.labels.is_empty() && args.labels.len() != args.plans.len() {
        return Err(Error::Usage(format!(
            "--label: given {} times for {} plans; give one per plan or none",
            args.labels.len(),
            args.plans.len()
        )));
    }
    let scenarios = args
        .plans
        .iter()
        .map(|path| load_scenario(path))
        .collect::<Result<Vec<Scenario>, Error>>()?;
    check_shared(args, &scenarios)?;
    let formats = figure_formats(&args.figures)?;
    let out = args
        .out
        .clone()
        .unwrap_or_else(|| Path::new("output").join("compare"));

    let mut plans = Vec::with_capacity(scenarios.len());
    for (index, (path, scenario)) in args.plans.iter().zip(&scenarios).enumerate() {
        let project_args = project_args(args, path);
        let settings = project::settings(scenario, &project_args)?;
        plans.push(ComparedPlan {
            file: path.display().to_string(),
            label: args
                .labels
                .get(index)
                .cloned()
                .unwrap_or_else(|| scenario.title.clone()),
            projection: project::projection(scenario, &settings, &project_args)?,
        });
    }
    let comparison = Comparison { plans };
    let reports = report::render_comparison(&comparison)?;
    let written = report::write_all(&out, reports, &report::COMPARE_FILES, &formats)?;
    print!("{}", report::comparison_table(&comparison));
    println!("wrote {}", out.display());
    for name in written.removed {
        println!(
            "removed {} (left from an earlier run)",
            out.join(name).display()
        );
    }
    Ok(())
}

/// The options of `runcast project` on `plan` that this comparison runs with.
fn project_args(args: &CompareArgs, plan: &Path) -> ProjectArgs {
    ProjectArgs {
        scenario: PathBuf::from(plan),
        toys: args.toys,
        seed: args.seed,
        out: None,
        figures: args.figures.clone(),
        threads: args.threads,
        asimov_only: args.asimov_only,
        no_limits: args.no_limits,
        calibrate: None,
        quiet: args.quiet,
    }
}

/// Plans are compared at the same targets and (with limits) the same
/// confidence level; otherwise the error names the plans and values that differ.
fn check_shared(args: &CompareArgs, scenarios: &[Scenario]) -> Result<(), Error> {
    let (first_path, first) = (&args.plans[0], &scenarios[0].plan);
    for (path, scenario) in args.plans.iter().zip(scenarios).skip(1) {
        let plan = &scenario.plan;
        let differs = |field: &str, value: String, reference: String| {
            Error::Usage(format!(
                "{}: {field} {value} differs from {reference} in {}; compared plans must share it",
                path.display(),
                first_path.display()
            ))
        };
        if plan.targets != first.targets {
            let list = |targets: &[f64]| format!("{targets:?}");
            return Err(differs(
                "plan.targets",
                list(&plan.targets),
                list(&first.targets),
            ));
        }
        if !args.no_limits && plan.cl != first.cl {
            return Err(differs(
                "plan.cl",
                plan.cl.to_string(),
                first.cl.to_string(),
            ));
        }
    }
    Ok(())
}
