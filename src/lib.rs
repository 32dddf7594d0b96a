//! runcast: how long a search must run to reach evidence or discovery.
//!
//! The engine is a pipeline; each module is one stage:
//! shapes (densities and their registry, which the scenario reads with)
//! -> scenario (file -> typed, validated) -> model (expected counts per bin)
//! -> likelihood (negative log-likelihood, fits, test statistics)
//! -> ensemble (seeded pseudo-experiments) -> projection (exposure scan, days to target)
//! -> report (SVG, CSV, JSON, terminal summary).
//! `asymptotic` holds the Asimov answers the projection cross-checks against,
//! `look_elsewhere` the global p-values of a scan over signal positions;
//! `levers` prices each input a user can act on in Asimov days;
//! `replan` projects onward from the data taken so far;
//! `spectrum` draws pseudo-data spectra and `binning` scans bin widths and
//! counting windows, both for planning beside the projection;
//! `provenance` records what made each output file;
//! `created_directories` removes the directories a failed run made;
//! `warning` types what may be wrong with a scenario or results;
//! `message` words the numbers in error messages; `input_file` opens the
//! files read (regular files only); `benchmark` measures the engine. The command-line front end lives with the binary (`src/main.rs` and
//! its modules), so the engine does not depend on the argument parser or the
//! progress bar.

pub mod asymptotic;
pub mod benchmark;
pub mod binning;
pub mod calendar;
pub mod created_directories;
pub mod ensemble;
pub mod input_file;
pub mod levers;
pub mod likelihood;
pub mod limits;
pub mod look_elsewhere;
pub mod message;
pub mod model;
pub mod numeric;
pub mod projection;
pub mod provenance;
pub mod reach;
pub mod replan;
pub mod report;
pub mod scenario;
pub mod shapes;
pub mod spectrum;
pub mod upcrossings;
pub mod warning;
