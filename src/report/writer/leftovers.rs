//! Staging folders left by runs that were killed while writing (SIGKILL, a
//! crash), found and cleared by the next run writing into the same
//! directory.
//!
//! A staging folder's name ends in the process id of the run that made it,
//! so a folder whose process no longer exists is a leftover; one whose
//! process runs (another runcast writing there now) is left alone. A folder
//! beside the directory (`.<name>.runcast-staging-<pid>`, `whole_folder.rs`)
//! held either a new set not yet in place or, after the exchange, the old
//! directory: the directory itself is whole either way, and the folder is
//! removed. A folder inside it (`.runcast-staging-<pid>`, `file_by_file.rs`)
//! whose set was marked ready may have been stopped half-way through its
//! moves: the rest of its files are moved in first.

use super::file_by_file;
use super::system;
use std::fs;
use std::path::{Path, PathBuf};

/// The name of a staging folder before its process id.
pub(super) const STAGING: &str = "runcast-staging-";

/// A staging folder of an earlier, killed run, removed by a run writing
/// into the same directory ([`write_all`](super::write_all)).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Leftover {
    /// The folder.
    pub path: PathBuf,
    /// Whether its files were moved into the directory first, completing
    /// the set that run was moving in one by one.
    pub completed: bool,
}

/// Clears the leftovers of `dir`: the staging folders inside it and beside
/// it (beside the directory a symbolic link `dir` points to) whose process
/// is gone. Best effort: a folder that cannot be removed stays, and is tried
/// again by the next run.
pub(super) fn clear(dir: &Path) -> Vec<Leftover> {
    let mut cleared = Vec::new();
    for path in staging_folders(dir, &format!(".{STAGING}")) {
        let completed = file_by_file::complete(&path, dir);
        if fs::remove_dir_all(&path).is_ok() {
            cleared.push(Leftover { path, completed });
        }
    }
    let real = fs::canonicalize(dir).unwrap_or_else(|_| dir.to_path_buf());
    let Some(name) = real.file_name() else {
        return cleared;
    };
    let parent_of = |path: &Path| {
        path.parent()
            .filter(|parent| !parent.as_os_str().is_empty())
            .unwrap_or(Path::new("."))
            .to_path_buf()
    };
    let parent = parent_of(&real);
    // Named as the user wrote the directory, unless a link leads elsewhere.
    let shown = match fs::canonicalize(parent_of(dir)) {
        Ok(resolved) if fs::canonicalize(&parent).is_ok_and(|real| real == resolved) => {
            dir.parent().unwrap_or(Path::new("")).to_path_buf()
        }
        _ => parent.clone(),
    };
    let prefix = format!(".{}.{STAGING}", name.to_string_lossy());
    for path in staging_folders(&parent, &prefix) {
        if fs::remove_dir_all(&path).is_ok() {
            cleared.push(Leftover {
                path: shown.join(path.file_name().unwrap_or_default()),
                completed: false,
            });
        }
    }
    cleared
}

/// The folders in `dir` named `prefix` and a process id whose process is
/// gone. This process has no staging folder yet, so one bearing its id was
/// left by an earlier process that had the same id.
fn staging_folders(dir: &Path, prefix: &str) -> Vec<PathBuf> {
    let Ok(entries) = fs::read_dir(dir) else {
        return Vec::new();
    };
    entries
        .flatten()
        .filter(|entry| entry.file_type().is_ok_and(|kind| kind.is_dir()))
        .filter(|entry| {
            let name = entry.file_name();
            let Some(digits) = name.to_str().and_then(|name| name.strip_prefix(prefix)) else {
                return false;
            };
            match digits.parse::<u32>() {
                Ok(pid) if digits.bytes().all(|byte| byte.is_ascii_digit()) => {
                    pid == std::process::id() || !system::process_exists(pid)
                }
                _ => false,
            }
        })
        .map(|entry| entry.path())
        .collect()
}
