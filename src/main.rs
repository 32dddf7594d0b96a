//! The runcast command line: parse the arguments, run the command, print one
//! error line. The engine and the reports are the library (`src/lib.rs`).

mod cli;
mod commands;
mod error;
mod options;
mod progress;
mod stdout;

use std::process::ExitCode;

fn main() -> ExitCode {
    match cli::parse().and_then(commands::run) {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("runcast: error: {error}");
            error.exit_code()
        }
    }
}
