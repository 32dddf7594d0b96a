//! Input files (scenarios, their tables, shards), opened for reading:
//! regular files only. Opening a FIFO waits for a writer that may never
//! come, and a device or socket has no end or another meaning, so each is
//! refused at once, named for what it is.

use std::fs::{File, Metadata, OpenOptions};
use std::io;
use std::path::Path;

/// Opens the regular file at `path` (symbolic links followed) for reading.
/// Anything else is refused with an `InvalidInput` error saying what it is,
/// before it is opened; the file opened is checked again, and opened
/// without blocking, so that a FIFO put in its place between the two checks
/// is refused as well instead of waited on.
pub fn open_regular(path: &Path) -> io::Result<File> {
    regular(&std::fs::metadata(path)?)?;
    let file = open_without_blocking(path)?;
    regular(&file.metadata()?)?;
    Ok(file)
}

#[cfg(unix)]
fn open_without_blocking(path: &Path) -> io::Result<File> {
    use std::os::unix::fs::OpenOptionsExt;
    // Reads of a regular file never block: the flag only matters for the
    // open of a FIFO, which then returns at once.
    OpenOptions::new()
        .read(true)
        .custom_flags(libc::O_NONBLOCK)
        .open(path)
}

#[cfg(not(unix))]
fn open_without_blocking(path: &Path) -> io::Result<File> {
    OpenOptions::new().read(true).open(path)
}

fn regular(metadata: &Metadata) -> io::Result<()> {
    if metadata.is_file() {
        return Ok(());
    }
    Err(io::Error::new(
        io::ErrorKind::InvalidInput,
        format!("{}, not a regular file", kind(metadata)),
    ))
}

/// What a file that is not regular is, for messages.
fn kind(metadata: &Metadata) -> &'static str {
    let file_type = metadata.file_type();
    if file_type.is_dir() {
        return "a directory";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if file_type.is_fifo() {
            return "a FIFO (named pipe)";
        }
        if file_type.is_socket() {
            return "a socket";
        }
        if file_type.is_block_device() || file_type.is_char_device() {
            return "a device";
        }
    }
    "a special file"
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn directories_and_devices_are_refused_by_kind() {
        let refused = |path: &str| open_regular(Path::new(path)).unwrap_err();
        let directory = refused(".");
        assert_eq!(directory.kind(), io::ErrorKind::InvalidInput);
        assert_eq!(directory.to_string(), "a directory, not a regular file");
        #[cfg(unix)]
        assert_eq!(
            refused("/dev/null").to_string(),
            "a device, not a regular file"
        );
        assert_eq!(refused("no such file").kind(), io::ErrorKind::NotFound);
    }
}
