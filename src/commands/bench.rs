//! `runcast bench`: the engine's throughput, scaling and memory on built-in models.

use crate::cli::BenchArgs;
use crate::error::Error;
use crate::stdout;
use runcast::benchmark::{self, Length, PROBE_FLAG, SCAN_PROBE_FLAG};

pub fn run(args: &BenchArgs) -> Result<(), Error> {
    if let Some(argument) = &args.memory_probe {
        let (points, toys) = benchmark::parse_probe(argument).ok_or_else(|| {
            Error::Usage(format!(
                "{PROBE_FLAG} {argument}: expected POINTS:TOYS, at least one point"
            ))
        })?;
        return stdout::print(&format!("{}\n", benchmark::probe_in_process(points, toys)?));
    }
    if let Some(argument) = &args.scan_memory_probe {
        let (positions, toys) = benchmark::parse_scan_probe(argument).ok_or_else(|| {
            Error::Usage(format!(
                "{SCAN_PROBE_FLAG} {argument}: expected POSITIONS:TOYS, at least 3 positions"
            ))
        })?;
        let peak = benchmark::probe_scan_in_process(positions, toys)?;
        return stdout::print(&format!("{peak}\n"));
    }
    let length = if args.quick {
        Length::Quick
    } else {
        Length::Full
    };
    if args.scan {
        let scan = benchmark::run_scan(length, &|step| eprintln!("runcast bench: {step}"))?;
        return stdout::print(&benchmark::render_scan(&scan));
    }
    let report = benchmark::run(length, &|step| eprintln!("runcast bench: {step}"))?;
    stdout::print(&benchmark::render(&report))
}
