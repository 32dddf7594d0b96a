//! `runcast new FILE`: a commented template scenario.

use crate::error::Error;
use crate::stdout;
use runcast::scenario::TEMPLATE;
use std::io::Write;
use std::path::Path;

/// Writes the template to `file`, refusing to replace anything: the text goes
/// to a temporary file first and is then hard-linked into place, which fails
/// if `file` exists, so no half-written template is ever visible.
pub fn run(file: &Path) -> Result<(), Error> {
    if file.exists() {
        return Err(Error::Exists {
            path: file.to_path_buf(),
        });
    }
    let write_error = |source| Error::Write {
        path: file.to_path_buf(),
        source,
    };
    let directory = file
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = file
        .file_name()
        .ok_or_else(|| Error::Usage(format!("{} is not a file name", file.display())))?;
    let temporary = directory.join(format!(
        ".{}.tmp-{}",
        name.to_string_lossy(),
        std::process::id()
    ));
    let result = std::fs::File::create(&temporary)
        .and_then(|mut out| {
            out.write_all(TEMPLATE.as_bytes())?;
            out.sync_all()
        })
        .and_then(|()| std::fs::hard_link(&temporary, file));
    let _ = std::fs::remove_file(&temporary);
    match result {
        Ok(()) => stdout::print(&format!("wrote template scenario {}\n", file.display())),
        Err(source) if source.kind() == std::io::ErrorKind::AlreadyExists => Err(Error::Exists {
            path: file.to_path_buf(),
        }),
        Err(source) => Err(write_error(source)),
    }
}
