//! `runcast spectrum`: pseudo-data spectra at one or more exposures.

use super::{print_warnings, wrote};
use crate::cli::SpectrumArgs;
use crate::error::Error;
use crate::options::SpectrumOptions;
use crate::stdout;
use runcast::message::show;
use runcast::report;
use runcast::scenario::limits::MAX_EXPECTED_COUNT_PER_BIN;
use runcast::spectrum::pseudo_data_spectrum;

pub fn run(args: &SpectrumArgs) -> Result<(), Error> {
    let options = SpectrumOptions::resolve(args)?;
    print_warnings(&options.loaded);
    let mut spectrum = pseudo_data_spectrum(&options.loaded.scenario, &options.days, options.seed);
    if let Some(window) = &options.window {
        spectrum = spectrum.zoomed_to(window);
    }
    for exposure in &spectrum.exposures {
        let largest = exposure.largest_expected();
        if largest > MAX_EXPECTED_COUNT_PER_BIN {
            return Err(Error::Usage(format!(
                "--days {}: expects {largest:e} events in a bin, more than the {MAX_EXPECTED_COUNT_PER_BIN:e} a pseudo-dataset can draw exactly",
                show(exposure.days)
            )));
        }
    }
    let reports = report::render_spectrum(&spectrum, &options.provenance())?;
    // Other spectra in the directory are other exposures: nothing is stale.
    let written = super::write_reports(&options.out, reports, &[], &options.formats)?;
    stdout::print(&report::spectrum_summary(&spectrum))?;
    stdout::print(&wrote(&options.out, &written.files))
}
