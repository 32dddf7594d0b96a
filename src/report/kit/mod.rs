//! The kit every report is made with: figures over any x axis (`figure.rs`,
//! `axis.rs`), what is drawn on them (`marks.rs`: curves, bands, reference
//! lines, markers, text; `legend.rs`: legends drawn off the plot;
//! `layout.rs`: what was drawn where, so labels avoid each other and tests
//! check the layout; `schedule.rs`:
//! stretches at reduced or zero rate shaded on figures against days), the palette
//! (`palette.rs`), number formatting (`format.rs`), calendar dates beside
//! days (`dates.rs`), CSV and JSON encoding (`encode.rs`) and the words all
//! outputs share (`vocabulary.rs`).

pub mod axis;
pub mod dates;
pub mod encode;
pub mod figure;
pub mod format;
pub mod layout;
pub mod legend;
pub mod marks;
pub mod palette;
pub mod schedule;
pub mod vocabulary;
