//! The output directory written whole: a complete new folder is built beside
//! it, then put in its place by one rename, so the directory shows the old
//! set or the new one at every instant, whenever the process is killed.
//!
//! An existing directory is swapped with the new folder by
//! `renameat2(RENAME_EXCHANGE)` (Linux 3.15; `system.rs`). The new folder
//! keeps what the old one held besides this run's files as hard links (the
//! same files: a log still being appended to stays one file), takes its
//! mode, owner and group (extended attributes and ACLs are not carried
//! over), and anything that appeared in the old one while the new one was
//! built is moved across after the exchange. [`replace`] declines, with
//! nothing changed, where the folder cannot be rebuilt that way; the caller
//! then moves the files in one by one (`file_by_file.rs`).

use super::{
    Report, ReportError, check_interrupted, io_error, staging_name, sync_directory, system,
    write_file,
};
use std::ffi::OsString;
use std::fs;
use std::io;
use std::os::unix::fs::MetadataExt;
use std::path::{Path, PathBuf};

/// Writes `reports` as the new directory `dir`, which does not exist but
/// whose parent does: in a folder beside it, renamed into place when every
/// file is complete.
pub(super) fn create(dir: &Path, reports: &[Report]) -> Result<(), ReportError> {
    let parent = dir
        .parent()
        .filter(|parent| !parent.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = dir.file_name().unwrap_or_default();
    let folder = Beside::create(parent, name).map_err(io_error("create directory", dir))?;
    for report in reports {
        write_file(&folder.path, report, &dir.join(&report.name))?;
    }
    sync_directory(&folder.path)?;
    check_interrupted(dir)?;
    fs::rename(&folder.path, dir).map_err(io_error("create directory", dir))?;
    sync_directory(parent)
}

/// Replaces the existing directory `dir` whole by a folder holding
/// `reports` and every entry of `dir` but those of the same names and the
/// files named in `stale`; returns the names of `stale` that were there, or
/// None, with nothing changed, when `dir` cannot be replaced this way (see
/// the module documentation of the writer).
pub(super) fn replace(
    dir: &Path,
    reports: &[Report],
    stale: &[&str],
) -> Result<Option<Vec<String>>, ReportError> {
    let Some(target) = Target::of(dir)? else {
        return Ok(None);
    };
    let Some(kept) = Kept::of(dir, &target.path, reports, stale)? else {
        return Ok(None);
    };
    let Ok(folder) = Beside::create(&target.parent, &target.name) else {
        // The parent is not writable (or not a place for folders): the
        // directory itself may still be.
        return Ok(None);
    };
    if !folder.can_take_the_place_of(&target) || !folder.link(&target.path, &kept.linked) {
        return Ok(None);
    }
    for report in reports {
        write_file(&folder.path, report, &dir.join(&report.name))?;
    }
    sync_directory(&folder.path)?;
    check_interrupted(dir)?;
    if system::exchange(&folder.path, &target.path).is_err() {
        // A bind mount, or the directory moved meanwhile: nothing changed.
        return Ok(None);
    }
    // From here on the folder beside holds the old directory, removed when
    // `folder` is dropped.
    sync_directory(&target.parent)?;
    folder.move_late_arrivals(&target.path, reports, stale, &kept.linked);
    Ok(Some(kept.stale))
}

/// The directory to replace, as it is on disk.
struct Target {
    /// Its path with symbolic links resolved (the link itself stays).
    path: PathBuf,
    parent: PathBuf,
    name: OsString,
    metadata: fs::Metadata,
}

impl Target {
    /// `dir` resolved, or None where replacing it whole would change more
    /// than its files: the root, a mount point (the folder beside would be
    /// on another file system), or the current directory (a shell in it
    /// would be left in the removed one).
    fn of(dir: &Path) -> Result<Option<Target>, ReportError> {
        let path = fs::canonicalize(dir).map_err(io_error("read directory", dir))?;
        let (Some(parent), Some(name)) = (path.parent(), path.file_name()) else {
            return Ok(None);
        };
        let metadata = fs::metadata(&path).map_err(io_error("read directory", dir))?;
        let Ok(parent_metadata) = fs::metadata(parent) else {
            return Ok(None);
        };
        let current = std::env::current_dir().and_then(fs::canonicalize);
        if parent_metadata.dev() != metadata.dev() || current.is_ok_and(|current| current == path) {
            return Ok(None);
        }
        Ok(Some(Target {
            parent: parent.to_path_buf(),
            name: name.to_os_string(),
            metadata,
            path,
        }))
    }
}

/// What the new folder keeps of the old directory.
struct Kept {
    /// Entries linked into the new folder: everything but this run's names.
    linked: Vec<OsString>,
    /// Names of the stale files present, removed by the replacement.
    stale: Vec<String>,
}

impl Kept {
    /// Sorts the entries of the directory at `path` (named `dir` in errors);
    /// None when one cannot be linked (a subdirectory, a special file).
    fn of(
        dir: &Path,
        path: &Path,
        reports: &[Report],
        stale: &[&str],
    ) -> Result<Option<Kept>, ReportError> {
        let read_error = |error| io_error("read directory", dir)(error);
        let mut kept = Kept {
            linked: Vec::new(),
            stale: Vec::new(),
        };
        for entry in fs::read_dir(path).map_err(read_error)? {
            let entry = entry.map_err(read_error)?;
            let file_type = entry.file_type().map_err(read_error)?;
            let name = entry.file_name();
            let linkable = file_type.is_file() || file_type.is_symlink();
            if reports.iter().any(|report| name == report.name.as_str()) {
                if file_type.is_dir() {
                    let in_the_way = io::Error::new(
                        io::ErrorKind::IsADirectory,
                        "a directory of that name is in the way",
                    );
                    return Err(io_error("replace", &dir.join(&name))(in_the_way));
                }
            } else if !linkable {
                return Ok(None);
            } else if let Some(&stale) = stale.iter().find(|&&stale| name == stale) {
                kept.stale.push(stale.to_string());
            } else {
                kept.linked.push(name);
            }
        }
        kept.stale.sort();
        Ok(Some(kept))
    }
}

/// The hidden folder beside the target, `.<name>.runcast-staging-<pid>`:
/// first the new directory being built, after the exchange the old one.
/// Removed with all it holds when dropped.
struct Beside {
    path: PathBuf,
}

impl Beside {
    fn create(parent: &Path, name: &std::ffi::OsStr) -> io::Result<Beside> {
        let path = parent.join(format!(".{}.{}", name.to_string_lossy(), staging_name()));
        fs::create_dir(&path)?;
        Ok(Beside { path })
    }

    /// Gives the folder the target's mode and group; false when the target
    /// belongs to another user (the folder would change hands), when the
    /// group cannot be given, or when this file system cannot exchange two
    /// directories (tried on two empty ones inside the folder).
    fn can_take_the_place_of(&self, target: &Target) -> bool {
        let Ok(own) = fs::metadata(&self.path) else {
            return false;
        };
        if own.uid() != target.metadata.uid() {
            return false;
        }
        if own.gid() != target.metadata.gid()
            && std::os::unix::fs::chown(&self.path, None, Some(target.metadata.gid())).is_err()
        {
            return false;
        }
        let (first, second) = (self.path.join("exchange-1"), self.path.join("exchange-2"));
        let exchanges = fs::create_dir(&first)
            .and_then(|()| fs::create_dir(&second))
            .and_then(|()| system::exchange(&first, &second))
            .and_then(|()| fs::remove_dir(&first))
            .and_then(|()| fs::remove_dir(&second));
        // The mode last: the group change may have cleared a set-group-ID bit.
        exchanges.is_ok() && fs::set_permissions(&self.path, target.metadata.permissions()).is_ok()
    }

    /// Hard-links each of `names` of the directory at `from` into the
    /// folder; false if one cannot be (another file system, a file of
    /// another user under `fs.protected_hardlinks`, too many links).
    fn link(&self, from: &Path, names: &[OsString]) -> bool {
        names
            .iter()
            .all(|name| fs::hard_link(from.join(name), self.path.join(name)).is_ok())
    }

    /// After the exchange: moves into the directory at `path` what appeared
    /// in the old one (now this folder) while the new one was built, a file
    /// made or replaced there, leaving this run's names and `stale`. An
    /// entry the new directory holds as the same file (the link made) stays.
    /// Best effort: the set is in place either way.
    fn move_late_arrivals(
        &self,
        path: &Path,
        reports: &[Report],
        stale: &[&str],
        linked: &[OsString],
    ) {
        let Ok(entries) = fs::read_dir(&self.path) else {
            return;
        };
        for entry in entries.flatten() {
            let name = entry.file_name();
            let ours = reports.iter().any(|report| name == report.name.as_str())
                || stale.iter().any(|&stale| name == stale);
            let same_file = |old: &fs::Metadata| {
                fs::symlink_metadata(path.join(&name))
                    .is_ok_and(|new| new.dev() == old.dev() && new.ino() == old.ino())
            };
            let linked_unchanged =
                linked.contains(&name) && entry.metadata().is_ok_and(|old| same_file(&old));
            if !ours && !linked_unchanged {
                let _ = fs::rename(entry.path(), path.join(&name));
            }
        }
    }
}

impl Drop for Beside {
    fn drop(&mut self) {
        // Best effort: what failed before is the error worth reporting, and
        // a folder left here is cleared by the next run (`leftovers.rs`).
        let _ = fs::remove_dir_all(&self.path);
    }
}
