//! The one place where reports reach the disk.
//!
//! A run's files appear together or not at all. They are first written into a
//! hidden staging folder (`.runcast-staging-<process id>`) and flushed to the
//! device; only when every file is complete are they moved into the target:
//!
//! - a target directory that does not exist yet is created by renaming the
//!   staging folder (made beside it, `.<name>.runcast-staging-<process id>`)
//!   into place, so the whole set appears at once;
//! - in an existing directory the staging folder is made inside it (renames
//!   within one directory never cross a file system, even when the target is a
//!   mount point); the files the run replaces, and files of the product's
//!   output set that this run does not write (`limits.svg` after a
//!   `--no-limits` rerun), are first moved aside into the staging folder, then
//!   the new files are moved in. If a move fails, the moves already done are
//!   undone, so the directory holds the old set again.
//!
//! Any failure removes the staging folder and the parent directories this
//! call created; SIGINT and SIGTERM do the same (`interrupt.rs`) and cannot
//! cut the moves short. Only names the product writes are ever moved or
//! removed: anything else in the directory is left alone, and a directory in
//! the way of a file is an error, never replaced.

use super::convert::{FigureFormats, convert, family_names};
use super::interrupt;
use super::{Report, ReportError};
use std::fs::{self, File};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// Bytes written between two checks for SIGINT or SIGTERM.
const CHUNK: usize = 1 << 20;

/// What [`write_all`] did: the files it wrote, and those it removed as left
/// from an earlier run.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Written {
    pub files: Vec<String>,
    pub removed: Vec<String>,
}

/// Writes `reports` into `dir` (created with its parents if needed) as one
/// set, replacing files of the same names, with every figure in each of
/// `formats` (converted in memory first, so a failed conversion writes
/// nothing). `family` names every file the product can write (figures by
/// their `.svg` name, standing for each of `formats`); those present in `dir`
/// but not written now are left from an earlier run and are removed with the
/// same all-or-nothing move. A figure in a format this run does not write
/// stays: it is not this run's to judge.
pub fn write_all(
    dir: &Path,
    reports: Vec<Report>,
    family: &[&str],
    formats: &FigureFormats,
) -> Result<Written, ReportError> {
    let reports = convert(reports, formats)?;
    let family = family_names(family, formats);
    let family: Vec<&str> = family.iter().map(String::as_str).collect();
    let removed = write_set(dir, &reports, &family)?;
    Ok(Written {
        files: reports.into_iter().map(|report| report.name).collect(),
        removed,
    })
}

/// Writes `reports` into `dir` as one set; returns the names of `family`
/// removed as left from an earlier run.
fn write_set(dir: &Path, reports: &[Report], family: &[&str]) -> Result<Vec<String>, ReportError> {
    let writing = interrupt::start_writing();
    let written = stage_and_commit(dir, reports, family);
    writing.release();
    written
}

/// The set staged and moved in; on any error, including an interruption, the
/// staging folder is removed (when `Staging` is dropped) before returning.
/// Returns the names of `family` removed as left from an earlier run.
fn stage_and_commit(
    dir: &Path,
    reports: &[Report],
    family: &[&str],
) -> Result<Vec<String>, ReportError> {
    let mut staging = Staging::create(dir)?;
    for report in reports {
        staging.write(report)?;
    }
    staging.check_interrupted()?;
    let removed = staging.commit(reports, family)?;
    staging.finished = true;
    Ok(removed)
}

/// Writes `bytes` to a new file `file`, never replacing one: the bytes go to
/// a hidden temporary file beside it, are flushed, and are hard-linked into
/// place, which fails with [`io::ErrorKind::AlreadyExists`] if `file` exists
/// (even when it appeared meanwhile), so no half-written file is ever
/// visible. The temporary file is removed in every case, also on SIGINT or
/// SIGTERM.
pub fn write_new(file: &Path, bytes: &[u8]) -> io::Result<()> {
    let _writing = interrupt::start_writing();
    let directory = file
        .parent()
        .filter(|parent| !parent.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = file
        .file_name()
        .ok_or_else(|| io::Error::new(io::ErrorKind::InvalidInput, "not a file name"))?;
    let temporary = directory.join(format!(
        ".{}.runcast-staging-{}",
        name.to_string_lossy(),
        std::process::id()
    ));
    let written = File::create_new(&temporary)
        .and_then(|mut out| {
            out.write_all(bytes)?;
            out.sync_all()
        })
        .and_then(|()| fs::hard_link(&temporary, file));
    let _ = fs::remove_file(&temporary);
    written
}

/// Where the target directory stands before the run.
enum Target {
    /// It exists: stage inside it and move files in one by one.
    Existing,
    /// It does not: stage beside it and rename the staging folder into place.
    New,
}

/// The hidden folder holding the new files (`new/`) and, while they are
/// moved in, the files they replace (`old/`). Removed when dropped, together
/// with the parents created for it unless the run finished.
struct Staging {
    dir: PathBuf,
    target: Target,
    root: PathBuf,
    /// Directories this run created, outermost first.
    created: Vec<PathBuf>,
    finished: bool,
}

impl Staging {
    fn create(dir: &Path) -> Result<Staging, ReportError> {
        let folder = format!("runcast-staging-{}", std::process::id());
        let (target, root, created) = match fs::metadata(dir) {
            Ok(metadata) if metadata.is_dir() => {
                (Target::Existing, dir.join(format!(".{folder}")), Vec::new())
            }
            Ok(_) => {
                let in_the_way = io::Error::new(
                    io::ErrorKind::NotADirectory,
                    "a file of that name is in the way",
                );
                return Err(io_error("create directory", dir)(in_the_way));
            }
            Err(error) if error.kind() == io::ErrorKind::NotFound => match dir.file_name() {
                Some(name) => {
                    let parent = dir.parent().filter(|parent| !parent.as_os_str().is_empty());
                    let parent = parent.unwrap_or(Path::new("."));
                    let created =
                        create_missing(parent).map_err(io_error("create directory", parent))?;
                    let root = parent.join(format!(".{}.{folder}", name.to_string_lossy()));
                    (Target::New, root, created)
                }
                // A path such as `a/..`: create it and stage inside.
                None => {
                    let created = create_missing(dir).map_err(io_error("create directory", dir))?;
                    (Target::Existing, dir.join(format!(".{folder}")), created)
                }
            },
            Err(error) => return Err(io_error("create directory", dir)(error)),
        };
        let staging = Staging {
            dir: dir.to_path_buf(),
            target,
            root,
            created,
            finished: false,
        };
        // A folder of this name can only be left by a killed run whose
        // process id this one reuses.
        let _ = fs::remove_dir_all(&staging.root);
        let made = fs::create_dir(&staging.root)
            .and_then(|()| fs::create_dir(staging.incoming()))
            .and_then(|()| fs::create_dir(staging.outgoing()));
        if let Err(error) = made {
            return Err(io_error("create directory", &staging.root)(error));
        }
        Ok(staging)
    }

    fn incoming(&self) -> PathBuf {
        self.root.join("new")
    }

    fn outgoing(&self) -> PathBuf {
        self.root.join("old")
    }

    fn check_interrupted(&self) -> Result<(), ReportError> {
        if interrupt::interrupted() {
            return Err(ReportError::Interrupted {
                path: self.dir.clone(),
            });
        }
        Ok(())
    }

    /// Writes one report into `new/` and flushes it to the device, checking
    /// for SIGINT and SIGTERM between chunks.
    fn write(&self, report: &Report) -> Result<(), ReportError> {
        let target = self.dir.join(&report.name);
        let mut file = File::create_new(self.incoming().join(&report.name))
            .map_err(io_error("write", &target))?;
        for chunk in report.bytes.chunks(CHUNK) {
            self.check_interrupted()?;
            file.write_all(chunk).map_err(io_error("write", &target))?;
        }
        file.sync_all().map_err(io_error("write", &target))
    }

    /// Moves the staged files into the target; returns the names of the
    /// family's files removed as left from an earlier run.
    fn commit(&self, reports: &[Report], family: &[&str]) -> Result<Vec<String>, ReportError> {
        match self.target {
            Target::New => {
                fs::rename(self.incoming(), &self.dir)
                    .map_err(io_error("create directory", &self.dir))?;
                let parent = self
                    .dir
                    .parent()
                    .filter(|parent| !parent.as_os_str().is_empty());
                sync_directory(parent.unwrap_or(Path::new(".")))?;
                Ok(Vec::new())
            }
            Target::Existing => {
                let names: Vec<&str> = reports.iter().map(|report| report.name.as_str()).collect();
                let stale: Vec<&str> = family
                    .iter()
                    .copied()
                    .filter(|name| !names.contains(name))
                    .collect();
                let mut moves = Moves::default();
                if let Err(error) = self.swap_in(&names, &stale, &mut moves) {
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
        }
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
            fs::rename(self.incoming().join(name), &target)
                .map_err(io_error("replace", &target))?;
            moves.moved_in.push(name.to_string());
        }
        Ok(())
    }

    /// Puts the directory back as it was: new files out, old files back.
    /// Best effort: the error that caused the undo is the one reported.
    fn undo(&self, moves: &Moves) {
        for name in moves.moved_in.iter().rev() {
            let _ = fs::rename(self.dir.join(name), self.incoming().join(name));
        }
        for name in moves.moved_aside.iter().rev() {
            let _ = fs::rename(self.outgoing().join(name), self.dir.join(name));
        }
    }
}

impl Drop for Staging {
    fn drop(&mut self) {
        // Best effort: what failed before is the error worth reporting.
        let _ = fs::remove_dir_all(&self.root);
        if !self.finished {
            for created in self.created.iter().rev() {
                // Only removes a directory that is still empty.
                let _ = fs::remove_dir(created);
            }
        }
    }
}

/// The file moves of one commit, in order, so they can be undone.
#[derive(Default)]
struct Moves {
    moved_aside: Vec<String>,
    moved_in: Vec<String>,
}

/// Creates `path` and the parents it lacks; returns those created, outermost
/// first.
fn create_missing(path: &Path) -> io::Result<Vec<PathBuf>> {
    let missing: Vec<&Path> = path
        .ancestors()
        .filter(|ancestor| !ancestor.as_os_str().is_empty())
        .take_while(|ancestor| !ancestor.exists())
        .collect();
    let mut created = Vec::new();
    for ancestor in missing.into_iter().rev() {
        match fs::create_dir(ancestor) {
            Ok(()) => created.push(ancestor.to_path_buf()),
            Err(error) if error.kind() == io::ErrorKind::AlreadyExists && ancestor.is_dir() => {}
            Err(error) => return Err(error),
        }
    }
    Ok(created)
}

/// Flushes the directory entries of the moved files, so the new names survive
/// a crash (POSIX; other systems cannot open a directory as a file).
#[cfg(unix)]
fn sync_directory(dir: &Path) -> Result<(), ReportError> {
    File::open(dir)
        .and_then(|directory| directory.sync_all())
        .map_err(io_error("flush directory", dir))
}

#[cfg(not(unix))]
fn sync_directory(_dir: &Path) -> Result<(), ReportError> {
    Ok(())
}

fn io_error(action: &'static str, path: &Path) -> impl FnOnce(io::Error) -> ReportError {
    let path: PathBuf = path.to_path_buf();
    move |source| ReportError::Io {
        action,
        path,
        source,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::Kind;

    /// A fresh, empty directory under the system temporary directory.
    fn scratch(name: &str) -> PathBuf {
        let dir =
            std::env::temp_dir().join(format!("runcast-report-{name}-{}", std::process::id()));
        let _ = fs::remove_dir_all(&dir);
        dir
    }

    fn report(name: &str, text: &str) -> Report {
        Report {
            name: name.to_string(),
            kind: Kind::Table,
            bytes: text.as_bytes().to_vec(),
        }
    }

    fn names_in(dir: &Path) -> Vec<String> {
        let mut names: Vec<String> = fs::read_dir(dir)
            .unwrap()
            .map(|entry| entry.unwrap().file_name().into_string().unwrap())
            .collect();
        names.sort();
        names
    }

    #[test]
    fn creates_nested_directories_and_leaves_no_temporary_files() {
        let root = scratch("create");
        let dir = root.join("nested").join("out");
        write_set(
            &dir,
            &[report("a.csv", "1,2\n"), report("b.json", "{}\n")],
            &[],
        )
        .unwrap();
        assert_eq!(names_in(&dir), ["a.csv", "b.json"]);
        assert_eq!(fs::read_to_string(dir.join("a.csv")).unwrap(), "1,2\n");
        fs::remove_dir_all(root).unwrap();
    }

    #[test]
    fn overwrites_existing_files() {
        let dir = scratch("overwrite");
        fs::create_dir_all(&dir).unwrap();
        fs::write(dir.join("a.csv"), "an older and longer content\n").unwrap();
        write_set(&dir, &[report("a.csv", "new\n")], &[]).unwrap();
        assert_eq!(fs::read_to_string(dir.join("a.csv")).unwrap(), "new\n");
        assert_eq!(names_in(&dir), ["a.csv"]);
        fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_failed_replacement_names_the_file_and_cleans_up() {
        let dir = scratch("blocked");
        // A non-empty directory where the file should go cannot be replaced by rename.
        fs::create_dir_all(dir.join("a.csv").join("occupied")).unwrap();
        let error = write_set(&dir, &[report("a.csv", "new\n")], &[]).unwrap_err();
        let message = error.to_string();
        assert!(
            message.starts_with(&format!("cannot replace {}", dir.join("a.csv").display())),
            "{message}"
        );
        assert_eq!(names_in(&dir), ["a.csv"]);
        fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_file_in_the_way_of_the_directory_is_reported() {
        let root = scratch("file-in-the-way");
        fs::create_dir_all(&root).unwrap();
        let blocker = root.join("reports");
        fs::write(&blocker, "not a directory").unwrap();
        let error = write_set(&blocker, &[report("a.csv", "new\n")], &[]).unwrap_err();
        assert!(
            error
                .to_string()
                .starts_with(&format!("cannot create directory {}", blocker.display())),
            "{error}"
        );
        fs::remove_dir_all(root).unwrap();
    }

    #[test]
    fn files_of_the_set_left_from_an_earlier_run_are_removed_and_named() {
        let dir = scratch("stale");
        fs::create_dir_all(&dir).unwrap();
        fs::write(dir.join("limits.svg"), "earlier run\n").unwrap();
        fs::write(dir.join("notes.txt"), "the user's own\n").unwrap();
        let family = ["plot.svg", "limits.svg", "table.csv"];
        let removed = write_set(
            &dir,
            &[report("plot.svg", "<svg/>\n"), report("table.csv", "1\n")],
            &family,
        )
        .unwrap();
        assert_eq!(removed, ["limits.svg"]);
        assert_eq!(names_in(&dir), ["notes.txt", "plot.svg", "table.csv"]);
        fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_directory_named_like_a_stale_file_is_left_alone() {
        let dir = scratch("stale-directory");
        fs::create_dir_all(dir.join("limits.svg")).unwrap();
        let removed = write_set(&dir, &[report("plot.svg", "<svg/>\n")], &["limits.svg"]).unwrap();
        assert!(removed.is_empty());
        assert_eq!(names_in(&dir), ["limits.svg", "plot.svg"]);
        fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_failed_move_puts_the_old_set_back() {
        let dir = scratch("undo");
        fs::create_dir_all(dir.join("c.json").join("occupied")).unwrap();
        fs::write(dir.join("a.csv"), "old a\n").unwrap();
        fs::write(dir.join("b.svg"), "old b\n").unwrap();
        fs::write(dir.join("stale.svg"), "old stale\n").unwrap();
        let reports = [
            report("a.csv", "new a\n"),
            report("b.svg", "new b\n"),
            report("c.json", "new c\n"),
        ];
        let error = write_set(&dir, &reports, &["stale.svg"]).unwrap_err();
        assert!(
            error
                .to_string()
                .starts_with(&format!("cannot replace {}", dir.join("c.json").display())),
            "{error}"
        );
        assert_eq!(names_in(&dir), ["a.csv", "b.svg", "c.json", "stale.svg"]);
        assert_eq!(fs::read_to_string(dir.join("a.csv")).unwrap(), "old a\n");
        assert_eq!(fs::read_to_string(dir.join("b.svg")).unwrap(), "old b\n");
        assert_eq!(
            fs::read_to_string(dir.join("stale.svg")).unwrap(),
            "old stale\n"
        );
        fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_failed_write_removes_the_staging_folder_and_the_created_parents() {
        let root = scratch("failed-write");
        fs::create_dir_all(&root).unwrap();
        let dir = root.join("made").join("for").join("out");
        // A name with a separator cannot be created inside the staging folder.
        let error = write_set(
            &dir,
            &[report("a.csv", "1\n"), report("x/b.csv", "2\n")],
            &[],
        )
        .unwrap_err();
        assert!(error.to_string().starts_with("cannot write"), "{error}");
        assert!(names_in(&root).is_empty(), "{:?}", names_in(&root));
        fs::remove_dir_all(root).unwrap();
    }

    #[test]
    fn a_new_directory_appears_with_every_file_and_nothing_else_beside_it() {
        let root = scratch("new-directory");
        fs::create_dir_all(&root).unwrap();
        write_set(
            &root.join("out"),
            &[report("a.csv", "1\n"), report("b.svg", "2\n")],
            &[],
        )
        .unwrap();
        assert_eq!(names_in(&root), ["out"]);
        assert_eq!(names_in(&root.join("out")), ["a.csv", "b.svg"]);
        fs::remove_dir_all(root).unwrap();
    }

    #[test]
    fn a_new_file_never_replaces_one() {
        let dir = scratch("new-file");
        fs::create_dir_all(&dir).unwrap();
        let file = dir.join("scenario.yaml");
        write_new(&file, b"first\n").unwrap();
        let error = write_new(&file, b"second\n").unwrap_err();
        assert_eq!(error.kind(), io::ErrorKind::AlreadyExists);
        assert_eq!(fs::read_to_string(&file).unwrap(), "first\n");
        assert_eq!(names_in(&dir), ["scenario.yaml"]);
        fs::remove_dir_all(dir).unwrap();
    }
}
