//! `runcast binning`: the bin width and counting window scans at one exposure.

use super::{check_days, load_scenario, output_directory};
use runcast::binning::scan_binning;
use crate::cli::BinningArgs;
use crate::error::Error;
use runcast::report;

pub fn run(args: &BinningArgs) -> Result<(), Error> {
    let scenario = load_scenario(&args.scenario)?;
    check_days(&scenario, args.days)?;
    let scan = scan_binning(&scenario, args.days)?;
    let reports = report::render_binning(&scan)?;
    let out = output_directory(&args.scenario, args.out.as_deref());
    report::write_all(&out, &reports)?;
    print!("{}", report::binning_table(&scan));
    for written in &reports {
        println!("wrote {}", out.join(&written.name).display());
    }
    Ok(())
}
