//! `runcast spectrum`: pseudo-data spectra at one or more exposures.

use super::{check_days, figure_formats, load_scenario, output_directory};
use crate::cli::SpectrumArgs;
use crate::error::Error;
use crate::report;
use crate::spectrum::pseudo_data_spectrum;

pub fn run(args: &SpectrumArgs) -> Result<(), Error> {
    let scenario = load_scenario(&args.scenario)?;
    for (index, &days) in args.days.iter().enumerate() {
        check_days(&scenario, days)?;
        if args.days[..index].contains(&days) {
            return Err(Error::Usage(format!("--days {days}: given more than once")));
        }
    }
    let formats = figure_formats(&args.figures)?;
    let seed = args.seed.unwrap_or(scenario.plan.seed);
    let spectrum = pseudo_data_spectrum(&scenario, &args.days, seed);
    let reports = report::render_spectrum(&spectrum)?;
    let out = output_directory(&args.scenario, args.out.as_deref());
    // Other spectra in the directory are other exposures: nothing is stale.
    let written = report::write_all(&out, reports, &[], &formats)?;

    println!("{}", spectrum.title);
    println!("Pseudo-data with seed {seed}");
    for exposure in &spectrum.exposures {
        let expected = |value: fn(&crate::spectrum::SpectrumBin) -> f64| -> f64 {
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
    for name in &written.files {
        println!("wrote {}", out.join(name).display());
    }
    Ok(())
}
