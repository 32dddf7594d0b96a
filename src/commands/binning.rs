//! `runcast binning`: the bin width and counting window scans at one exposure.

use super::{check_days, figure_formats, load_scenario, output_directory};
use crate::binning::scan_binning;
use crate::cli::BinningArgs;
use crate::error::Error;
use crate::report;

pub fn run(args: &BinningArgs) -> Result<(), Error> {
    let scenario = load_scenario(&args.scenario)?;
    check_days(&scenario, args.days)?;
    let formats = figure_formats(&args.figures)?;
    let scan = scan_binning(&scenario, args.days)?;
    let reports = report::render_binning(&scan)?;
    let out = output_directory(&args.scenario, args.out.as_deref());
    let written = report::write_all(&out, reports, &report::BINNING_FILES, &formats)?;
    print!("{}", report::binning_table(&scan));
    for name in &written.files {
        println!("wrote {}", out.join(name).display());
    }
    Ok(())
}
