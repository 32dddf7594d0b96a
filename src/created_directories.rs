//! Directories a run creates for its output, removed again if the run fails.
//!
//! A failed run leaves the file system as it found it: a directory it made
//! (the output directory, or parents of it) must not stay behind empty, while
//! a directory that was there before is never removed. Every writer of
//! outputs (reports, shard files, batch scripts) creates its directory
//! through [`CreatedDirectories`].

use std::fs;
use std::io;
use std::path::{Path, PathBuf};

/// The directories [`create`](CreatedDirectories::create) made, outermost
/// first. Dropped before [`keep`](CreatedDirectories::keep), it removes those
/// still empty, innermost first; never one that existed before.
#[derive(Debug)]
pub struct CreatedDirectories {
    created: Vec<PathBuf>,
}

impl CreatedDirectories {
    /// Creates `path` and the parents it lacks.
    pub fn create(path: &Path) -> io::Result<CreatedDirectories> {
        let missing: Vec<&Path> = path
            .ancestors()
            .filter(|ancestor| !ancestor.as_os_str().is_empty())
            .take_while(|ancestor| !ancestor.exists())
            .collect();
        let mut directories = CreatedDirectories {
            created: Vec::new(),
        };
        for ancestor in missing.into_iter().rev() {
            match fs::create_dir(ancestor) {
                Ok(()) => directories.created.push(ancestor.to_path_buf()),
                // Made meanwhile by someone else: theirs, not ours to remove.
                Err(error) if error.kind() == io::ErrorKind::AlreadyExists && ancestor.is_dir() => {
                }
                // Dropping `directories` removes what was made so far.
                Err(error) => return Err(error),
            }
        }
        Ok(directories)
    }

    /// The run succeeded: the directories stay.
    pub fn keep(mut self) {
        self.created.clear();
    }
}

impl Drop for CreatedDirectories {
    fn drop(&mut self) {
        for created in self.created.iter().rev() {
            // Only removes a directory that is still empty; best effort, as
            // the error that failed the run is the one worth reporting.
            let _ = fs::remove_dir(created);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn scratch(name: &str) -> PathBuf {
        let dir = std::env::temp_dir().join(format!(
            "runcast-created-directories-{name}-{}",
            std::process::id()
        ));
        let _ = fs::remove_dir_all(&dir);
        fs::create_dir_all(&dir).unwrap();
        dir
    }

    #[test]
    fn dropped_unkept_it_removes_only_what_it_made() {
        let root = scratch("dropped");
        let created = CreatedDirectories::create(&root.join("a").join("b")).unwrap();
        assert!(root.join("a").join("b").is_dir());
        drop(created);
        assert!(root.is_dir());
        assert!(!root.join("a").exists());
        fs::remove_dir_all(root).unwrap();
    }

    #[test]
    fn kept_directories_stay_and_a_directory_holding_a_file_is_never_removed() {
        let root = scratch("kept");
        CreatedDirectories::create(&root.join("kept"))
            .unwrap()
            .keep();
        assert!(root.join("kept").is_dir());

        let created = CreatedDirectories::create(&root.join("used").join("out")).unwrap();
        fs::write(root.join("used").join("notes.txt"), "a user's file\n").unwrap();
        drop(created);
        assert!(!root.join("used").join("out").exists());
        assert!(root.join("used").join("notes.txt").is_file());
        fs::remove_dir_all(root).unwrap();
    }
}
