//! The one place where reports reach the disk.
//!
//! Each file is written atomically: the bytes go to a hidden temporary file in
//! the same directory (`.<name>.tmp-<process id>`), are flushed to the device,
//! and the temporary file is renamed over the target. A reader therefore sees
//! either the previous file or the new one, never a half-written file, and a
//! failure leaves no temporary file behind.

use super::{Report, ReportError};
use std::fs::{self, File};
use std::io::{self, Write};
use std::path::{Path, PathBuf};

/// Creates `dir` (and its parents) if needed and writes every report into it,
/// replacing files of the same name.
pub fn write_all(dir: &Path, reports: &[Report]) -> Result<(), ReportError> {
    fs::create_dir_all(dir).map_err(io_error("create directory", dir))?;
    for report in reports {
        write_atomically(dir, report)?;
    }
    sync_directory(dir)
}

fn write_atomically(dir: &Path, report: &Report) -> Result<(), ReportError> {
    let target = dir.join(&report.name);
    let temporary = dir.join(format!(".{}.tmp-{}", report.name, std::process::id()));
    let written = write_and_sync(&temporary, &report.bytes)
        .map_err(io_error("write", &temporary))
        .and_then(|()| fs::rename(&temporary, &target).map_err(io_error("replace", &target)));
    if written.is_err() {
        // Best effort: the write error is the one worth reporting.
        let _ = fs::remove_file(&temporary);
    }
    written
}

fn write_and_sync(path: &Path, bytes: &[u8]) -> io::Result<()> {
    let mut file = File::create(path)?;
    file.write_all(bytes)?;
    file.sync_all()
}

/// Flushes the directory entry of the renamed files, so the new names survive
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
        write_all(&dir, &[report("a.csv", "1,2\n"), report("b.json", "{}\n")]).unwrap();
        assert_eq!(names_in(&dir), ["a.csv", "b.json"]);
        assert_eq!(fs::read_to_string(dir.join("a.csv")).unwrap(), "1,2\n");
        fs::remove_dir_all(root).unwrap();
    }

    #[test]
    fn overwrites_existing_files() {
        let dir = scratch("overwrite");
        fs::create_dir_all(&dir).unwrap();
        fs::write(dir.join("a.csv"), "an older and longer content\n").unwrap();
        write_all(&dir, &[report("a.csv", "new\n")]).unwrap();
        assert_eq!(fs::read_to_string(dir.join("a.csv")).unwrap(), "new\n");
        assert_eq!(names_in(&dir), ["a.csv"]);
        fs::remove_dir_all(dir).unwrap();
    }

    #[test]
    fn a_failed_replacement_names_the_file_and_cleans_up() {
        let dir = scratch("blocked");
        // A non-empty directory where the file should go cannot be replaced by rename.
        fs::create_dir_all(dir.join("a.csv").join("occupied")).unwrap();
        let error = write_all(&dir, &[report("a.csv", "new\n")]).unwrap_err();
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
        let error = write_all(&blocker, &[report("a.csv", "new\n")]).unwrap_err();
        assert!(
            error
                .to_string()
                .starts_with(&format!("cannot create directory {}", blocker.display())),
            "{error}"
        );
        fs::remove_dir_all(root).unwrap();
    }
}
