//! What `runcast check` prints: `summary.rs`, the terminal text of a valid
//! scenario and its Asimov-only projection, with `timeline.rs`, the schedule
//! stretch by stretch. `check` writes no files.

mod summary;
mod timeline;

pub use summary::check_summary;
