//! Why a shard could not be written, or shards not merged.

use super::{BUILD, MAGIC_PREFIX, SHARD_EXTENSION, ShardSpec, VERSION};
use crate::projection::ProjectionError;
use crate::scenario::ScenarioError;
use std::fmt;
use std::io;
use std::path::PathBuf;

/// Why a shard could not be written, or shards not merged.
#[derive(Debug)]
pub enum ShardError {
    /// A shard file or directory could not be read or written.
    Io { path: PathBuf, source: io::Error },
    /// Not a shard file of this format.
    NotAShard { path: PathBuf },
    /// A shard file of another format than this runcast writes.
    OtherFormat { path: PathBuf, format: String },
    /// The file's bytes do not match its checksum.
    Corrupted { path: PathBuf },
    /// The checksum matches but the content does not make sense.
    Malformed { path: PathBuf, what: String },
    /// A shard written by another build of runcast (or claiming to be).
    OtherBuild {
        path: PathBuf,
        version: String,
        build: String,
    },
    /// A setting or a point's field holding what no run of this runcast
    /// writes: a count beyond its total, a value outside its domain.
    Impossible {
        path: PathBuf,
        /// The setting, or the point and the field.
        place: String,
        problem: String,
    },
    /// No shard files in the directory.
    NoShards { directory: PathBuf },
    /// A shard of another run.
    Mixed {
        path: PathBuf,
        first: PathBuf,
        difference: String,
    },
    /// Two files for the same K.
    Duplicate {
        path: PathBuf,
        other: PathBuf,
        shard: ShardSpec,
    },
    /// Shards missing from the set: the first few of them, and how many.
    Missing {
        directory: PathBuf,
        first_missing: Vec<usize>,
        missing: usize,
        count: usize,
    },
    /// The scenario stored in the shards is not valid for this runcast.
    Scenario {
        path: PathBuf,
        source: ScenarioError,
    },
    /// An asymptotic fit failed.
    Projection(ProjectionError),
}

impl fmt::Display for ShardError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ShardError::Io { path, source } => write!(f, "{}: {source}", path.display()),
            ShardError::NotAShard { path } => {
                write!(
                    f,
                    "{}: not a runcast shard file of this format",
                    path.display()
                )
            }
            ShardError::OtherFormat { path, format } => write!(
                f,
                "{}: a shard file of format {format}, but this runcast reads format {}; \
                 rerun the shards with this runcast",
                path.display(),
                String::from_utf8_lossy(&super::MAGIC[MAGIC_PREFIX.len()..]).trim_end()
            ),
            ShardError::Corrupted { path } => write!(
                f,
                "{}: truncated or corrupted (its checksum does not match); rerun this shard",
                path.display()
            ),
            ShardError::Malformed { path, what } => write!(f, "{}: {what}", path.display()),
            ShardError::OtherBuild {
                path,
                version,
                build,
            } => write!(
                f,
                "{}: a shard of runcast {version} (build {build}), but this is runcast \
                 {VERSION} (build {BUILD}); run the shards and the merge with one build",
                path.display()
            ),
            ShardError::Impossible {
                path,
                place,
                problem,
            } => write!(
                f,
                "{}: {place}: {problem}; runcast never writes that, so the file was changed \
                 or made elsewhere: rerun this shard",
                path.display()
            ),
            ShardError::NoShards { directory } => write!(
                f,
                "{}: no shard files (*.{SHARD_EXTENSION}) to merge",
                directory.display()
            ),
            ShardError::Mixed {
                path,
                first,
                difference,
            } => write!(
                f,
                "{}: a shard of another run than {} ({difference}); merge the shards of one run only",
                path.display(),
                first.display()
            ),
            ShardError::Duplicate { path, other, shard } => write!(
                f,
                "{}: shard {shard} is also in {}",
                path.display(),
                other.display()
            ),
            ShardError::Missing {
                directory,
                first_missing,
                missing,
                count,
            } => {
                let mut list: Vec<String> = first_missing
                    .iter()
                    .map(|k| format!("{k}/{count}"))
                    .collect();
                if *missing > first_missing.len() {
                    list.push(format!("and {} more", missing - first_missing.len()));
                }
                write!(
                    f,
                    "{}: missing shard{} {}; run them with --shard K/{count}",
                    directory.display(),
                    if *missing == 1 { "" } else { "s" },
                    list.join(", ")
                )
            }
            ShardError::Scenario { path, source } => {
                write!(f, "{}: the scenario it holds: {source}", path.display())
            }
            ShardError::Projection(error) => error.fmt(f),
        }
    }
}

impl std::error::Error for ShardError {}

impl From<ProjectionError> for ShardError {
    fn from(error: ProjectionError) -> Self {
        ShardError::Projection(error)
    }
}
