//! The files moved into an existing directory one by one, where it cannot be
//! replaced whole (`whole_folder.rs`).
//!
//! The staging folder is made inside the directory,
//! `.runcast-staging-<pid>` (renames within one directory never cross a file
//! system, even when the directory is a mount point). The new files are
//! written into its `new/`, which is renamed `ready/` once all are complete
//! (beside a list of the stale names): the mark that the moves may begin. Then the files being replaced, and the
//! stale files of the set, are moved aside into `old/`, and the new files
//! moved in from `ready/`. If a move fails, the moves done are undone. A kill
//! during the moves leaves a mix of both sets; the next run finds `ready/`
//! and finishes the job ([`complete`]).

use super::{
    Report, ReportError, check_interrupted, io_error, staging_name, sync_directory, write_file,
};
use std::fs;
use std::io;
use std::path::{Path, PathBuf};

/// Writes `reports` into the existing directory `dir`, moving them in one
/// by one; returns the names of `stale` (the product's files this run does
/// not write) that were there and were removed.
pub(super) fn write(
    dir: &Path,
    reports: &[Report],
    stale: &[&str],
) -> Result<Vec<String>, ReportError> {
    let staging = Staging::create(dir)?;
    for report in reports {
        write_file(&staging.incoming(), report, &dir.join(&report.name))?;
    }
    check_interrupted(dir)?;
    staging.commit(reports, stale)
}

/// Completes the moves of a run killed while moving its files in from the
/// staging folder `folder` of `dir`: when its set was complete (`ready/`),
/// the stale files it listed are removed and each file still in `ready/` is
/// moved in; returns whether it was. The caller removes the folder.
pub(super) fn complete(folder: &Path, dir: &Path) -> bool {
    let Ok(entries) = fs::read_dir(folder.join(READY)) else {
        return false;
    };
    // Best effort: a directory now in the way of a name keeps its place.
    let stale = fs::read_to_string(folder.join(STALE)).unwrap_or_default();
    for name in stale.lines() {
        if fs::symlink_metadata(dir.join(name)).is_ok_and(|metadata| !metadata.is_dir()) {
            let _ = fs::remove_file(dir.join(name));
        }
    }
    for entry in entries.flatten() {
        let _ = fs::rename(entry.path(), dir.join(entry.file_name()));
    }
    true
}

/// The new files while written, and once complete.
const NEW: &str = "new";
const READY: &str = "ready";
/// The files moved aside.
const OLD: &str = "old";
/// The stale names, one a line, for [`complete`].
const STALE: &str = "stale";

/// The hidden folder holding the new files (`new/`, then `ready/`) and, while
/// they are moved in, the files they replace (`old/`). Removed when dropped.
struct Staging {
    dir: PathBuf,
    root: PathBuf,
}

impl Staging {
    fn create(dir: &Path) -> Result<Staging, ReportError> {
        let root = dir.join(format!(".{}", staging_name()));
        fs::create_dir(&root).map_err(io_error("create directory", &root))?;
        let staging = Staging {
            dir: dir.to_path_buf(),
            root,
        };
        fs::create_dir(staging.incoming())
            .and_then(|()| fs::create_dir(staging.outgoing()))
            .map_err(io_error("create directory", &staging.root))?;
        Ok(staging)
    }

    fn incoming(&self) -> PathBuf {
        self.root.join(NEW)
    }

    fn ready(&self) -> PathBuf {
        self.root.join(READY)
    }

    fn outgoing(&self) -> PathBuf {
        self.root.join(OLD)
    }

    /// Marks the set complete and moves it in; returns the names of `stale`
    /// removed as left from an earlier run.
    fn commit(&self, reports: &[Report], stale: &[&str]) -> Result<Vec<String>, ReportError> {
        fs::write(self.root.join(STALE), stale.join("\n"))
            .and_then(|()| fs::rename(self.incoming(), self.ready()))
            .map_err(io_error("write", &self.root))?;
        sync_directory(&self.root)?;
        let names: Vec<&str> = reports.iter().map(|report| report.name.as_str()).collect();
        let mut moves = Moves::default();
        if let Err(error) = self.swap_in(&names, stale, &mut moves) {
            self.undo(&moves);
            return Err(error);
        }
        sync_directory(&self.dir)?;
        Ok(moves
            .moved_aside
            .into_iter()
            .filter(|name| stale.contains(&name.as_str()))
            .collect())
    }

    /// Moves the current files named `names` and `stale` aside into `old/`,
    /// then the new files into the directory, recording each move.
    fn swap_in(
        &self,
        names: &[&str],
        stale: &[&str],
        moves: &mut Moves,
    ) -> Result<(), ReportError> {
        for &name in names.iter().chain(stale) {
            let current = self.dir.join(name);
            match fs::symlink_metadata(&current) {
                Ok(metadata) if metadata.is_dir() => {
                    if stale.contains(&name) {
                        // Not a file runcast wrote: leave it.
                        continue;
                    }
                    let in_the_way = io::Error::new(
                        io::ErrorKind::IsADirectory,
                        "a directory of that name is in the way",
                    );
                    return Err(io_error("replace", &current)(in_the_way));
                }
                Ok(_) => {
                    fs::rename(&current, self.outgoing().join(name))
                        .map_err(io_error("replace", &current))?;
                    moves.moved_aside.push(name.to_string());
                }
                Err(error) if error.kind() == io::ErrorKind::NotFound => {}
                Err(error) => return Err(io_error("replace", &current)(error)),
            }
        }
        for &name in names {
            let target = self.dir.join(name);
            fs::rename(self.ready().join(name), &target).map_err(io_error("replace", &target))?;
            moves.moved_in.push(name.to_string());
        }
        Ok(())
    }

    /// Puts the directory back as it was: new files out, old files back, and
    /// the set no longer marked ready, so that no later run completes it.
    /// Best effort: the error that caused the undo is the one reported.
    fn undo(&self, moves: &Moves) {
        for name in moves.moved_in.iter().rev() {
            let _ = fs::rename(self.dir.join(name), self.ready().join(name));
        }
        for name in moves.moved_aside.iter().rev() {
            let _ = fs::rename(self.outgoing().join(name), self.dir.join(name));
        }
        let _ = fs::rename(self.ready(), self.incoming());
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        // Best effort: what failed before is the error worth reporting.
        let _ = fs::remove_dir_all(&self.root);
    }
}

/// The file moves of one commit, in order, so they can be undone.
#[derive(Default)]
struct Moves {
    moved_aside: Vec<String>,
    moved_in: Vec<String>,
}
