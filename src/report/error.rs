//! Errors of the report stage: a projection the reports cannot show, a
//! renderer that failed, or a file that could not be written.

use std::fmt;
use std::io;
use std::path::PathBuf;

#[derive(Debug)]
pub enum ReportError {
    /// A value of the projection no report can show faithfully.
    InvalidProjection {
        /// Path of the value inside the projection, e.g. `points[3].z_median`.
        field: String,
        value: String,
        expected: &'static str,
    },
    /// A renderer (plotting, CSV or JSON encoding) failed.
    Render { file: &'static str, message: String },
    /// A figure could not be converted to another format (PDF, PNG).
    Convert { file: String, message: String },
    /// A file-system operation on a report file or directory failed.
    Io {
        /// What was being done, e.g. "create directory", "write".
        action: &'static str,
        path: PathBuf,
        source: io::Error,
    },
    /// SIGINT or SIGTERM arrived while the reports were written; nothing of
    /// this run was left in the directory.
    Interrupted { path: PathBuf },
}

impl fmt::Display for ReportError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ReportError::InvalidProjection {
                field,
                value,
                expected,
            } => write!(
                f,
                "cannot report the projection: {field} is {value}, expected {expected}"
            ),
            ReportError::Render { file, message } => {
                write!(f, "cannot render {file}: {message}")
            }
            ReportError::Convert { file, message } => {
                write!(f, "cannot render {file}: {message}")
            }
            ReportError::Io {
                action,
                path,
                source,
            } => write!(f, "cannot {action} {}: {source}", path.display()),
            ReportError::Interrupted { path } => write!(
                f,
                "interrupted while writing {}: none of this run's files were written",
                path.display()
            ),
        }
    }
}

impl std::error::Error for ReportError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            ReportError::Io { source, .. } => Some(source),
            ReportError::InvalidProjection { .. }
            | ReportError::Render { .. }
            | ReportError::Convert { .. }
            | ReportError::Interrupted { .. } => None,
        }
    }
}
