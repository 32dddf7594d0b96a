use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    let cli = runcast::cli::Cli::parse();
    match runcast::commands::run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(error) => {
            eprintln!("runcast: error: {error}");
            ExitCode::FAILURE
        }
    }
}
