//! `runcast compare`: run plans, each projected exactly as `runcast project`
//! would with the same options, then compared on one page.

use super::print_warnings;
use super::project::{self, removed_lines};
use crate::cli::{CompareArgs, OutputArgs, PlanArgs, ProjectArgs};
use crate::error::Error;
use crate::options::{Loaded, ProjectOptions, comparison_provenance, figure_formats};
use crate::stdout;
use runcast::report::{self, ComparedPlan, Comparison};
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
    let options = args
        .plans
        .iter()
        .map(|path| ProjectOptions::resolve(&project_args(args, path)))
        .collect::<Result<Vec<ProjectOptions>, Error>>()?;
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
        });
    }
    let comparison = Comparison { plans };
    let reports = report::render_comparison(&comparison, &comparison_provenance(&options))?;
    let written = super::write_reports(&out, reports, &report::COMPARE_FILES, &formats)?;
    stdout::print(&report::comparison_table(&comparison))?;
    stdout::print(&format!("wrote {}\n", out.display()))?;
    stdout::print(&removed_lines(&out, &written.removed))
}

/// The options of `runcast project` on `plan` that this comparison runs with.
fn project_args(args: &CompareArgs, plan: &Path) -> ProjectArgs {
    ProjectArgs {
        scenario: PathBuf::from(plan),
        plan: PlanArgs {
            toys: args.toys,
            seed: args.seed,
            asimov_only: args.asimov_only,
            no_limits: args.no_limits,
            calibrate: None,
            at: Vec::new(),
            lee_toys: None,
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
