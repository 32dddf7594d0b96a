//! `runcast project`: the main job.

use super::{figure_formats, load_scenario, output_directory};
use crate::cli::ProjectArgs;
use crate::error::Error;
use crate::model::Model;
use crate::progress::toy_progress;
use crate::projection::{Projection, ProjectionSettings, project};
use crate::report;
use crate::scenario::Scenario;

pub fn run(args: &ProjectArgs) -> Result<(), Error> {
    let scenario = load_scenario(&args.scenario)?;
    let settings = settings(&scenario, args)?;
    let out = output_directory(&args.scenario, args.out.as_deref());
    let formats = figure_formats(&args.figures)?;
    let projection = projection(&scenario, &settings, args)?;

    let reports = report::render_all(&projection)?;
    let written = report::write_all(&out, reports, &report::PROJECTION_FILES, &formats)?;
    print!("{}", report::summary(&projection));
    println!("wrote {}", out.display());
    for name in written.removed {
        println!(
            "removed {} (left from an earlier run)",
            out.join(name).display()
        );
    }
    Ok(())
}

/// The projection of `scenario` with `settings`, on `args.threads` workers,
/// with a progress bar unless `args.quiet`.
pub(super) fn projection(
    scenario: &Scenario,
    settings: &ProjectionSettings,
    args: &ProjectArgs,
) -> Result<Projection, Error> {
    let model = Model::from_scenario(scenario);
    let bar = toy_progress(settings.total_toys(), args.quiet);
    let progress = |done: u64| bar.inc(done);
    let projection = with_threads(args.threads, || project(&model, settings, &progress))??;
    bar.finish_and_clear();
    Ok(projection)
}

/// What `runcast project` runs with `args` on `scenario`.
pub(super) fn settings(
    scenario: &Scenario,
    args: &ProjectArgs,
) -> Result<ProjectionSettings, Error> {
    if args.toys == Some(0) && !args.asimov_only {
        return Err(Error::Usage(
            "--toys: must be at least 1 (use --asimov-only to skip pseudo-experiments)".into(),
        ));
    }
    if args.calibrate == Some(0) {
        return Err(Error::Usage(
            "--calibrate: must be at least 1 pseudo-experiment".into(),
        ));
    }
    let toys = if args.asimov_only {
        0
    } else {
        args.toys.unwrap_or(scenario.plan.toys)
    };
    Ok(ProjectionSettings {
        title: scenario.title.clone(),
        days: scenario.plan.days.days(),
        toys,
        seed: args.seed.unwrap_or(scenario.plan.seed),
        targets: scenario.plan.targets.clone(),
        cl: (!args.no_limits).then_some(scenario.plan.cl),
        calibration_toys: args.calibrate.unwrap_or(0),
    })
}

/// Runs `work` on a pool of `threads` workers (the global pool when None).
fn with_threads<T: Send>(
    threads: Option<usize>,
    work: impl FnOnce() -> T + Send,
) -> Result<T, Error> {
    match threads {
        None => Ok(work()),
        Some(0) => Err(Error::Usage("--threads: must be at least 1".into())),
        Some(threads) => rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map(|pool| pool.install(work))
            .map_err(|error| Error::Usage(format!("--threads {threads}: {error}"))),
    }
}
