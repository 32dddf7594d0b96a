//! `runcast binning`: the bin width and counting window scans at one exposure.

use super::{print_warnings, wrote};
use crate::cli::BinningArgs;
use crate::error::Error;
use crate::options::BinningOptions;
use crate::stdout;
use runcast::binning::scan_binning;
use runcast::report;

pub fn run(args: &BinningArgs) -> Result<(), Error> {
    let options = BinningOptions::resolve(args)?;
    print_warnings(&options.loaded);
    let scan = scan_binning(&options.channel, options.days)?;
    let reports = report::render_binning(&scan, &options.provenance())?;
    let written = super::write_reports(
        &options.out,
        reports,
        &report::BINNING_FILES,
        &options.formats,
    )?;
    stdout::print(&report::binning_table(&scan))?;
    stdout::print(&wrote(&options.out, &written.files))
}
