//! `runcast new FILE`: a commented template scenario.

use crate::error::Error;
use crate::stdout;
use runcast::report;
use runcast::scenario::TEMPLATE;
use std::path::Path;

/// Writes the template to `file`, refusing to replace anything
/// (`report::write_new`: a temporary file hard-linked into place, so no
/// half-written template is ever visible).
pub fn run(file: &Path) -> Result<(), Error> {
    if file.exists() {
        return Err(Error::Exists {
            path: file.to_path_buf(),
        });
    }
    if file.file_name().is_none() {
        return Err(Error::Usage(format!(
            "{} is not a file name",
            file.display()
        )));
    }
    match report::write_new(file, TEMPLATE.as_bytes()) {
        Ok(()) => stdout::print(&format!("wrote template scenario {}\n", file.display())),
        Err(source) if source.kind() == std::io::ErrorKind::AlreadyExists => Err(Error::Exists {
            path: file.to_path_buf(),
        }),
        Err(source) => Err(Error::Write {
            path: file.to_path_buf(),
            source,
        }),
    }
}
