//! `runcast spectrum`: pseudo-data spectra at one or more exposures.

use super::{check_days, load_scenario, output_directory};
use crate::cli::SpectrumArgs;
use crate::error::Error;
use runcast::model::Model;
use runcast::report;
use runcast::scenario::limits::{MAX_EXPECTED_COUNT_PER_BIN, MAX_SPECTRUM_EXPOSURES};
use runcast::scenario::show_number;
use runcast::spectrum::{largest_expected_count, pseudo_data_spectrum};

pub fn run(args: &SpectrumArgs) -> Result<(), Error> {
    let scenario = load_scenario(&args.scenario)?;
    if args.days.len() > MAX_SPECTRUM_EXPOSURES {
        return Err(Error::Usage(format!(
            "--days: at most {MAX_SPECTRUM_EXPOSURES} exposures fit in one figure, got {}",
            args.days.len()
        )));
    }
    let model = Model::from_scenario(&scenario);
    for (index, &days) in args.days.iter().enumerate() {
        check_days(&scenario, days)?;
        if args.days[..index].contains(&days) {
            return Err(Error::Usage(format!(
                "--days {}: given more than once",
                show_number(days)
            )));
        }
        let largest = largest_expected_count(&model, model.live_time.live_days(days));
        if largest > MAX_EXPECTED_COUNT_PER_BIN {
            return Err(Error::Usage(format!(
                "--days {}: expects {largest:e} events in a bin, more than the {MAX_EXPECTED_COUNT_PER_BIN:e} a pseudo-dataset can draw exactly",
                show_number(days)
            )));
        }
    }
    let seed = args.seed.unwrap_or(scenario.plan.seed);
    let spectrum = pseudo_data_spectrum(&scenario, &args.days, seed);
    let reports = report::render_spectrum(&spectrum)?;
    let out = output_directory(&args.scenario, args.out.as_deref());
    report::write_all(&out, &reports)?;

    println!("{}", spectrum.title);
    println!("Pseudo-data with seed {seed}");
    for exposure in &spectrum.exposures {
        let expected = |value: fn(&runcast::spectrum::SpectrumBin) -> f64| -> f64 {
            exposure.bins.iter().map(value).sum()
        };
        println!(
            "  {} d ({:.1} live days): {} events; expected {:.1} background, {:.1} signal + background",
            exposure.days,
            exposure.live_days,
            exposure.total_counts(),
            expected(|bin| bin.background),
            expected(|bin| bin.signal_plus_background),
        );
    }
    for written in &reports {
        println!("wrote {}", out.join(&written.name).display());
    }
    Ok(())
}
