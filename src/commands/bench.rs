//! `runcast bench`: the engine's throughput, scaling and memory on built-in models.

use crate::cli::BenchArgs;
use crate::error::Error;
use crate::stdout;
use runcast::benchmark::{self, Length, PROBE_FLAG};

pub fn run(args: &BenchArgs) -> Result<(), Error> {
    if let Some(argument) = &args.memory_probe {
        let (points, toys) = benchmark::parse_probe(argument).ok_or_else(|| {
            Error::Usage(format!(
                "{PROBE_FLAG} {argument}: expected POINTS:TOYS, at least one point"
            ))
        })?;
        return stdout::print(&format!("{}\n", benchmark::probe_in_process(points, toys)?));
    }
    let length = if args.quick {
        Length::Quick
    } else {
        Length::Full
    };
    let report = benchmark::run(length, &|step| eprintln!("runcast bench: {step}"))?;
    stdout::print(&benchmark::render(&report))
}
