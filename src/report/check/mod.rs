//! What `runcast check` prints: `summary.rs`, the terminal text of a valid
//! scenario and its Asimov-only projection. `check` writes no files.

mod summary;

pub use summary::check_summary;
