//! `runcast project`: the main job.

use super::{load_scenario, output_directory};
use crate::cli::ProjectArgs;
use crate::error::Error;
use runcast::model::Model;
use crate::progress::toy_progress;
use runcast::projection::{ProjectionSettings, project};
use runcast::report;
use runcast::scenario::Scenario;
use runcast::scenario::limits::{
    MAX_EXPECTED_COUNT_PER_BIN, MAX_THREADS, MAX_TOYS_IN_TOTAL, MAX_TOYS_PER_POINT,
};
use runcast::spectrum::largest_expected_count;

pub fn run(args: &ProjectArgs) -> Result<(), Error> {
    let scenario = load_scenario(&args.scenario)?;
    let settings = settings(&scenario, args)?;
    let out = output_directory(&args.scenario, args.out.as_deref());
    let model = Model::from_scenario(&scenario);
    if settings.toys_per_point() > 0 {
        check_countable(&model, &settings)?;
    }

    let bar = toy_progress(settings.total_toys(), args.quiet);
    let progress = |done: u64| bar.inc(done);
    let threads = check_threads(args.threads)?.filter(|_| settings.toys_per_point() > 0);
    let projection = with_threads(threads, || project(&model, &settings, &progress))??;
    bar.finish_and_clear();

    let reports = report::render_all(&projection)?;
    report::write_all(&out, &reports)?;
    print!("{}", report::summary(&projection));
    println!("wrote {}", out.display());
    Ok(())
}

fn settings(scenario: &Scenario, args: &ProjectArgs) -> Result<ProjectionSettings, Error> {
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
    for (flag, toys) in [("--toys", args.toys), ("--calibrate", args.calibrate)] {
        if let Some(toys) = toys.filter(|&toys| toys > MAX_TOYS_PER_POINT) {
            return Err(Error::Usage(format!(
                "{flag} {toys}: at most {MAX_TOYS_PER_POINT} pseudo-experiments per point are allowed"
            )));
        }
    }
    let toys = if args.asimov_only {
        0
    } else {
        args.toys.unwrap_or(scenario.plan.toys)
    };
    let settings = ProjectionSettings {
        title: scenario.title.clone(),
        days: scenario.plan.days.days(),
        toys,
        seed: args.seed.unwrap_or(scenario.plan.seed),
        targets: scenario.plan.targets.clone(),
        cl: (!args.no_limits).then_some(scenario.plan.cl),
        calibration_toys: args.calibrate.unwrap_or(0),
    };
    if settings.total_toys() > MAX_TOYS_IN_TOTAL {
        return Err(Error::Usage(format!(
            "--toys/--calibrate: {} pseudo-experiments at each of {} points make {}, more than the {MAX_TOYS_IN_TOTAL} allowed in one projection",
            settings.toys_per_point(),
            settings.days.len(),
            settings.total_toys()
        )));
    }
    Ok(settings)
}

/// Pseudo-experiments draw whole counts: refuses a grid whose last day
/// expects more than [`MAX_EXPECTED_COUNT_PER_BIN`] events in a bin.
fn check_countable(model: &Model, settings: &ProjectionSettings) -> Result<(), Error> {
    let last_day = settings.days.last().copied().unwrap_or_default();
    let largest = largest_expected_count(model, model.live_time.live_days(last_day));
    if largest > MAX_EXPECTED_COUNT_PER_BIN {
        return Err(Error::Usage(format!(
            "plan.days.last: {last_day} days expect {largest:e} events in a bin, more than the {MAX_EXPECTED_COUNT_PER_BIN:e} a pseudo-experiment can draw exactly; shorten the grid or use --asimov-only"
        )));
    }
    Ok(())
}

/// `--threads`, between 1 and [`MAX_THREADS`].
fn check_threads(threads: Option<usize>) -> Result<Option<usize>, Error> {
    match threads {
        Some(0) => Err(Error::Usage("--threads: must be at least 1".into())),
        Some(threads) if threads > MAX_THREADS => Err(Error::Usage(format!(
            "--threads {threads}: at most {MAX_THREADS} worker threads are allowed"
        ))),
        threads => Ok(threads),
    }
}

/// Runs `work` on a pool of `threads` workers (the global pool when None).
fn with_threads<T: Send>(
    threads: Option<usize>,
    work: impl FnOnce() -> T + Send,
) -> Result<T, Error> {
    match threads {
        None => Ok(work()),
        Some(threads) => rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .map(|pool| pool.install(work))
            .map_err(|error| Error::Usage(format!("--threads {threads}: {error}"))),
    }
}
