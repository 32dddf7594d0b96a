//! runcast: how long a search must run to reach evidence or discovery.
//!
//! The engine is a pipeline; each module is one stage:
//! scenario (file -> typed, validated) -> model (expected counts per bin)
//! -> likelihood (negative log-likelihood, fits, test statistics)
//! -> ensemble (seeded pseudo-experiments) -> projection (exposure scan, days to target)
//! -> report (SVG, CSV, JSON, terminal summary).

pub mod projection;
