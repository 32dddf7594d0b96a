//! The build identifier shards carry (`RUNCAST_BUILD_ID`): the first 16 hex
//! digits of a SHA-256 over the sources that make the binary (`Cargo.toml`,
//! `Cargo.lock`, this file and every `src/**/*.rs`), each as its path and
//! bytes, in path order, line endings as `\n`. The same code gives the same
//! identifier on any machine and checkout; a change of any source gives
//! another, so `merge` can refuse shards of another build that still say the
//! same version.

use sha2::{Digest, Sha256};
use std::fs;
use std::path::{Path, PathBuf};

/// The sources beside `src/`.
const PACKAGE_FILES: [&str; 3] = ["Cargo.toml", "Cargo.lock", "build.rs"];

fn main() {
    let root = PathBuf::from(std::env::var_os("CARGO_MANIFEST_DIR").expect("set by cargo"));
    let mut files: Vec<PathBuf> = PACKAGE_FILES.iter().map(PathBuf::from).collect();
    rust_files(&root, Path::new("src"), &mut files);
    files.sort();
    let mut hasher = Sha256::new();
    for file in &files {
        let bytes = fs::read(root.join(file))
            .unwrap_or_else(|error| panic!("cannot read {}: {error}", file.display()));
        let text = String::from_utf8_lossy(&bytes).replace("\r\n", "\n");
        let name = file.to_string_lossy().replace('\\', "/");
        for part in [name.as_bytes(), text.as_bytes()] {
            hasher.update((part.len() as u64).to_le_bytes());
            hasher.update(part);
        }
    }
    // A directory is watched whole: any file under `src` changed, added or removed.
    for watched in PACKAGE_FILES.iter().chain(&["src"]) {
        println!("cargo:rerun-if-changed={watched}");
    }
    let id: String = hasher.finalize()[..8]
        .iter()
        .map(|byte| format!("{byte:02x}"))
        .collect();
    println!("cargo:rustc-env=RUNCAST_BUILD_ID={id}");
}

/// Every `.rs` file under `root/directory`, as a path relative to `root`.
fn rust_files(root: &Path, directory: &Path, files: &mut Vec<PathBuf>) {
    let entries = fs::read_dir(root.join(directory))
        .unwrap_or_else(|error| panic!("cannot list {}: {error}", directory.display()));
    for entry in entries {
        let entry = entry.expect("a directory entry");
        let path = directory.join(entry.file_name());
        if entry.file_type().expect("a file type").is_dir() {
            rust_files(root, &path, files);
        } else if path.extension().is_some_and(|extension| extension == "rs") {
            files.push(path);
        }
    }
}
