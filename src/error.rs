//! The errors a command can end with; each prints as one line a user can act on.

use runcast::benchmark::BenchmarkError;
use runcast::binning::BinningError;
use runcast::projection::{ProjectionError, ShardError};
use runcast::reach::ReachError;
use runcast::replan::{DataError, ReplanError, ReplanShardError};
use runcast::report::ReportError;
use runcast::scenario::ScenarioError;
use std::fmt;
use std::path::PathBuf;
use std::process::ExitCode;

#[derive(Debug)]
pub enum Error {
    Scenario {
        path: PathBuf,
        source: ScenarioError,
    },
    Projection(ProjectionError),
    /// The reach could not be computed (no scan, a failed asymptotic fit).
    Reach {
        path: PathBuf,
        source: ReachError,
    },
    /// The re-plan could not be made (a failed fit, a control region).
    Replan {
        path: PathBuf,
        source: ReplanError,
    },
    /// A data file of `replan` cannot be used.
    Data(DataError),
    /// A shard could not be written, or shards not merged.
    Shard(ShardError),
    /// A re-plan shard could not be written, or re-plan shards not merged.
    ReplanShard(ReplanShardError),
    /// sbatch could not be run or refused a script.
    Slurm(String),
    Binning(BinningError),
    Report(ReportError),
    /// A file the user named could not be written.
    Write {
        path: PathBuf,
        source: std::io::Error,
    },
    /// A file exists and would be overwritten.
    Exists {
        path: PathBuf,
    },
    /// Command-line values that parse but make no sense.
    Usage(String),
    Benchmark(BenchmarkError),
    /// Standard output failed for another reason than a closed pipe.
    Stdout(std::io::Error),
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            // A read error names the file itself.
            Error::Scenario {
                source: source @ (ScenarioError::Read { .. } | ScenarioError::TooLarge { .. }),
                ..
            } => write!(f, "{source}"),
            Error::Scenario { path, source } => write!(f, "{}: {source}", path.display()),
            Error::Projection(source) => write!(f, "{source}"),
            Error::Reach { path, source } => write!(f, "{}: {source}", path.display()),
            Error::Replan { path, source } => write!(f, "{}: {source}", path.display()),
            Error::Data(source) => write!(f, "{source}"),
            Error::Shard(source) => write!(f, "{source}"),
            Error::ReplanShard(source) => write!(f, "{source}"),
            Error::Slurm(message) => f.write_str(message),
            Error::Binning(source) => write!(f, "{source}"),
            Error::Report(source) => write!(f, "{source}"),
            Error::Write { path, source } => write!(f, "cannot write {}: {source}", path.display()),
            Error::Exists { path } => write!(
                f,
                "{} already exists; choose another name or remove it first",
                path.display()
            ),
            Error::Usage(message) => f.write_str(message),
            Error::Benchmark(source) => write!(f, "{source}"),
            Error::Stdout(source) => write!(f, "cannot write to standard output: {source}"),
        }
    }
}

impl Error {
    /// The exit status: 2 for a usage error (a command-line value the parser
    /// or a command refuses, as the argument parser itself does), 1 for
    /// everything else (a bad scenario, a failed fit, a file not written).
    pub fn exit_code(&self) -> ExitCode {
        match self {
            Error::Usage(_) => ExitCode::from(2),
            _ => ExitCode::FAILURE,
        }
    }
}

impl std::error::Error for Error {}

impl From<ProjectionError> for Error {
    fn from(source: ProjectionError) -> Error {
        Error::Projection(source)
    }
}

impl From<BinningError> for Error {
    fn from(source: BinningError) -> Error {
        Error::Binning(source)
    }
}

impl From<BenchmarkError> for Error {
    fn from(source: BenchmarkError) -> Error {
        Error::Benchmark(source)
    }
}

impl From<ReportError> for Error {
    fn from(source: ReportError) -> Error {
        Error::Report(source)
    }
}

impl From<ReplanShardError> for Error {
    fn from(source: ReplanShardError) -> Error {
        Error::ReplanShard(source)
    }
}

impl From<ShardError> for Error {
    fn from(source: ShardError) -> Error {
        Error::Shard(source)
    }
}
