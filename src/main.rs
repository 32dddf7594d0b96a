//! The runcast command line: parse the arguments, run the command, print one
//! error line. The engine and the reports are the library (`src/lib.rs`).

mod cli;
mod commands;
mod error;
mod progress;

use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    let cli = cli::Cli::parse();
    match commands::run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("runcast: error: {error}");
            ExitCode::FAILURE
        }
    }
}
