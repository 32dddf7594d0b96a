//! Standard output: every command prints through [`print`], which takes a
//! closed pipe (`runcast check FILE | head -1`) as the reader having seen
//! enough, the normal end of the output, not as an error.

use crate::error::Error;
use std::io::{ErrorKind, Write};

/// Writes `text` to stdout and flushes it; a broken pipe ends the output quietly.
pub fn print(text: &str) -> Result<(), Error> {
    let mut stdout = std::io::stdout().lock();
    match stdout
        .write_all(text.as_bytes())
        .and_then(|()| stdout.flush())
    {
        Err(error) if error.kind() != ErrorKind::BrokenPipe => Err(Error::Stdout(error)),
        _ => Ok(()),
    }
}
