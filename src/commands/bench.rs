//! `runcast bench`: the engine's throughput, scaling and memory on built-in models.

use runcast::benchmark::{self, Length, PROBE_FLAG};
use crate::cli::BenchArgs;
use crate::error::Error;

pub fn run(args: &BenchArgs) -> Result<(), Error> {
    if let Some(argument) = &args.memory_probe {
        let (points, toys) = benchmark::parse_probe(argument).ok_or_else(|| {
            Error::Usage(format!(
                "{PROBE_FLAG} {argument}: expected POINTS:TOYS, at least one point"
            ))
        })?;
        println!("{}", benchmark::probe_in_process(points, toys)?);
        return Ok(());
    }
    let length = if args.quick {
        Length::Quick
    } else {
        Length::Full
    };
    let report = benchmark::run(length, &|step| eprintln!("runcast bench: {step}"))?;
    print!("{}", benchmark::render(&report));
    Ok(())
}
