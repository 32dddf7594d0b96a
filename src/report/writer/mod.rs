//! The one place where reports reach the disk.
//!
//! A run's files appear together or not at all, and the output directory
//! shows either the earlier set or the new one at every instant, even when
//! the process is killed (SIGKILL) while writing. The files are first written
//! into a hidden staging folder and flushed to the device; only when every
//! file is complete do they reach the directory:
//!
//! - a directory that does not exist yet is created by renaming the staging
//!   folder, made beside it (`.<name>.runcast-staging-<process id>`), into
//!   place (`whole_folder.rs`);
//! - an existing directory is replaced whole (`whole_folder.rs`): the staging
//!   folder beside it becomes the complete new directory, holding hard links
//!   to every file of the old one that this run neither replaces nor removes
//!   (a user's notes, shards, logs: the same files, not copies, so a log
//!   still being written stays one file) and the new files; one
//!   `renameat2(RENAME_EXCHANGE)` swaps the two, and the old one is removed;
//! - where that cannot be done (the directory holds a subdirectory or a
//!   special file, is a mount point or the current directory, belongs to
//!   another user, its parent is not writable, its file system cannot
//!   exchange (NFS), or the system is not Linux), the files are moved in one
//!   by one (`file_by_file.rs`): those being replaced, and files of the set
//!   this run does not write, are moved aside, then the new ones moved in,
//!   all undone on any failure. A kill during these moves leaves a mix,
//!   which the next run writing there completes.
//!
//! The next run writing into a directory clears the staging folders that
//! killed runs left there (`leftovers.rs`) and says so ([`Written::leftovers`]).
//! Any failure removes the staging folder and the parent directories this
//! call created; SIGINT and SIGTERM do the same (`interrupt.rs`) and cannot
//! cut the moves short. Only names the product writes are ever replaced or
//! removed: anything else in the directory is kept, and a directory in the
//! way of a file is an error, never replaced.

mod file_by_file;
mod leftovers;
mod system;
mod whole_folder;

pub use leftovers::Leftover;

use super::convert::{FigureFormats, convert, family_names};
use super::interrupt;
use super::{Report, ReportError};
use crate::created_directories::CreatedDirectories;
use std::fs::{self, File};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// Bytes written between two checks for SIGINT or SIGTERM.
const CHUNK: usize = 1 << 20;

/// What [`write_all`] did: the files it wrote, those it removed as left from
/// an earlier run, and the staging folders of killed runs it cleared first.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Written {
    pub files: Vec<String>,
    pub removed: Vec<String>,
    pub leftovers: Vec<Leftover>,
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
    let (removed, leftovers) = write_set(dir, &reports, &family)?;
    Ok(Written {
        files: reports.into_iter().map(|report| report.name).collect(),
        removed,
        leftovers,
    })
}

/// Clears what killed runs left, then writes `reports` into `dir` as one
/// set; returns the names of `family` removed as left from an earlier run,
/// and the leftovers cleared.
fn write_set(
    dir: &Path,
    reports: &[Report],
    family: &[&str],
) -> Result<(Vec<String>, Vec<Leftover>), ReportError> {
    let writing = interrupt::start_writing();
    let leftovers = leftovers::clear(dir);
    let removed = commit(dir, reports, family);
    writing.release();
    Ok((removed?, leftovers))
}

/// Writes the set the way `dir` allows (see the module documentation).
fn commit(dir: &Path, reports: &[Report], family: &[&str]) -> Result<Vec<String>, ReportError> {
    let stale = |reports: &[Report]| -> Vec<&str> {
        family
            .iter()
            .copied()
            .filter(|name| !reports.iter().any(|report| report.name == *name))
            .collect()
    };
    match fs::metadata(dir) {
        Ok(metadata) if metadata.is_dir() => {
            match whole_folder::replace(dir, reports, &stale(reports))? {
                Some(removed) => Ok(removed),
                None => file_by_file::write(dir, reports, &stale(reports)),
            }
        }
        Ok(_) => {
            let in_the_way = io::Error::new(
                io::ErrorKind::NotADirectory,
                "a file of that name is in the way",
            );
            Err(io_error("create directory", dir)(in_the_way))
        }
        Err(error) if error.kind() == io::ErrorKind::NotFound => {
            let parent = dir.parent().filter(|parent| !parent.as_os_str().is_empty());
            let (created, written) = match (parent, dir.file_name()) {
                (parent, Some(_)) => {
                    let parent = parent.unwrap_or(Path::new("."));
                    let created = CreatedDirectories::create(parent)
                        .map_err(io_error("create directory", parent))?;
                    (created, whole_folder::create(dir, reports))
                }
                // A path such as `a/..`: create it and write inside.
                (_, None) => {
                    let created = CreatedDirectories::create(dir)
                        .map_err(io_error("create directory", dir))?;
                    (created, file_by_file::write(dir, reports, &[]).map(drop))
                }
            };
            written?;
            created.keep();
            Ok(Vec::new())
        }
        Err(error) => Err(io_error("create directory", dir)(error)),
    }
}

/// Writes `report` into `folder` as a new file and flushes it to the device,
/// checking for SIGINT and SIGTERM between chunks; errors name `target`,
/// where the file is going.
fn write_file(folder: &Path, report: &Report, target: &Path) -> Result<(), ReportError> {
    let mut file =
        File::create_new(folder.join(&report.name)).map_err(io_error("write", target))?;
    for chunk in report.bytes.chunks(CHUNK) {
        check_interrupted(target)?;
        file.write_all(chunk).map_err(io_error("write", target))?;
    }
    file.sync_all().map_err(io_error("write", target))
}

/// [`ReportError::Interrupted`] once SIGINT or SIGTERM arrived.
fn check_interrupted(dir: &Path) -> Result<(), ReportError> {
    if interrupt::interrupted() {
        return Err(ReportError::Interrupted {
            path: dir.to_path_buf(),
        });
    }
    Ok(())
}

/// The name part of this process's staging folders: `runcast-staging-<pid>`.
fn staging_name() -> String {
    format!("{}{}", leftovers::STAGING, std::process::id())
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
    let temporary = directory.join(format!(".{}.{}", name.to_string_lossy(), staging_name()));
    let written = File::create_new(&temporary)
        .and_then(|mut out| {
            out.write_all(bytes)?;
            out.sync_all()
        })
        .and_then(|()| fs::hard_link(&temporary, file));
    let _ = fs::remove_file(&temporary);
    written
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

    /// The names of `family` removed by writing `reports` into `dir`.
    fn write_set(
        dir: &Path,
        reports: &[Report],
        family: &[&str],
    ) -> Result<Vec<String>, ReportError> {
        super::write_set(dir, reports, family).map(|(removed, _)| removed)
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
        // A subfolder: the files are moved in one by one, and back.
        fs::create_dir_all(dir.join("runs")).unwrap();
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
        assert_eq!(
            names_in(&dir),
            ["a.csv", "b.svg", "c.json", "runs", "stale.svg"]
        );
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

    fn inode(path: &Path) -> u64 {
        use std::os::unix::fs::MetadataExt;
        fs::symlink_metadata(path).unwrap().ino()
    }

    #[test]
    fn an_existing_directory_is_replaced_whole_keeping_the_other_files_themselves() {
        use std::os::unix::fs::PermissionsExt;
        let root = scratch("whole");
        let dir = root.join("out");
        fs::create_dir_all(&dir).unwrap();
        fs::write(dir.join("a.csv"), "old a\n").unwrap();
        fs::write(dir.join("stale.svg"), "old stale\n").unwrap();
        fs::write(dir.join("notes.txt"), "the user's own\n").unwrap();
        std::os::unix::fs::symlink("notes.txt", dir.join("link")).unwrap();
        fs::set_permissions(&dir, fs::Permissions::from_mode(0o750)).unwrap();
        let (directory, notes) = (inode(&dir), inode(&dir.join("notes.txt")));

        let removed = write_set(&dir, &[report("a.csv", "new a\n")], &["stale.svg"]).unwrap();
        assert_eq!(removed, ["stale.svg"]);
        assert_eq!(names_in(&dir), ["a.csv", "link", "notes.txt"]);
        assert_eq!(fs::read_to_string(dir.join("a.csv")).unwrap(), "new a\n");
        // A new directory in the place of the old one, holding the same file.
        assert_ne!(inode(&dir), directory);
        assert_eq!(inode(&dir.join("notes.txt")), notes);
        assert_eq!(
            fs::read_link(dir.join("link")).unwrap(),
            Path::new("notes.txt")
        );
        let mode = fs::metadata(&dir).unwrap().permissions().mode();
        assert_eq!(mode & 0o7777, 0o750);
        assert_eq!(names_in(&root), ["out"]);
        fs::remove_dir_all(root).unwrap();
    }

    #[test]
    fn a_directory_holding_a_subdirectory_is_written_file_by_file() {
        let dir = scratch("file-by-file");
        fs::create_dir_all(dir.join("runs")).unwrap();
        fs::write(dir.join("runs").join("first.txt"), "kept\n").unwrap();
        fs::write(dir.join("a.csv"), "old a\n").unwrap();
        let directory = inode(&dir);
        write_set(&dir, &[report("a.csv", "new a\n")], &[]).unwrap();
        assert_eq!(inode(&dir), directory);
        assert_eq!(names_in(&dir), ["a.csv", "runs"]);
        assert_eq!(fs::read_to_string(dir.join("a.csv")).unwrap(), "new a\n");
        assert_eq!(names_in(&dir.join("runs")), ["first.txt"]);
        fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn staging_folders_of_killed_runs_are_cleared_and_those_of_running_ones_kept() {
        let root = scratch("leftovers");
        let dir = root.join("out");
        fs::create_dir_all(&dir).unwrap();
        fs::write(dir.join("a.csv"), "old a\n").unwrap();
        // The id of a process that has ended; 1 always runs.
        let mut ended = std::process::Command::new("true").spawn().unwrap();
        ended.wait().unwrap();
        let gone = ended.id();
        let beside = root.join(format!(".out.runcast-staging-{gone}"));
        fs::create_dir_all(beside.join("partial")).unwrap();
        // Killed while moving its files in one by one: b.csv still to move.
        let inside = dir.join(format!(".runcast-staging-{gone}"));
        fs::create_dir_all(inside.join("ready")).unwrap();
        fs::write(inside.join("ready").join("b.csv"), "b\n").unwrap();
        let running = root.join(".out.runcast-staging-1");
        fs::create_dir_all(&running).unwrap();

        let (_, leftovers) = super::write_set(&dir, &[report("c.csv", "c\n")], &[]).unwrap();
        let mut leftovers: Vec<(PathBuf, bool)> = leftovers
            .into_iter()
            .map(|leftover| (leftover.path, leftover.completed))
            .collect();
        leftovers.sort();
        let mut expected = vec![(beside, false), (inside, true)];
        expected.sort();
        assert_eq!(leftovers, expected);
        assert_eq!(names_in(&dir), ["a.csv", "b.csv", "c.csv"]);
        assert_eq!(names_in(&root), [".out.runcast-staging-1", "out"]);
        fs::remove_dir_all(root).unwrap();
    }
}
