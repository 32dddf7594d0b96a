//! Report: results turned into files a person reads.
//!
//! One folder per product, each turning its result into bytes and nothing
//! else: `projection/` (significance, probability and limit figures, CSV,
//! JSON, and the terminal summary), `spectrum/` (pseudo-data figure, CSV and
//! the terminal summary) and `binning/` (figure, JSON and the terminal table).
//! They draw and format with `kit/` (figures over any x axis, legends, bands,
//! markers, footnotes, number formatting, CSV and JSON encoding).
//!
//! `check/` is the terminal text of `runcast check`, and `warnings.rs` words
//! every typed warning of a scenario or a projection.
//!
//! Every output file is a [`Render`]: a name, a [`Kind`] and its bytes. A
//! product lists its outputs and [`render`] makes them all in memory, so a
//! rendering error leaves nothing written; [`write_all`] alone touches the
//! disk, writing a product's files as one set.

mod binning;
mod check;
mod compare;
mod convert;
mod error;
#[cfg(test)]
mod figure_layout;
mod interrupt;
mod kit;
mod levers;
mod projection;
mod reach;
mod replan;
mod spectrum;
mod warnings;
mod writer;

pub use binning::{BINNING_FILES, BINNING_JSON, BINNING_SVG, binning_table, render_binning};
pub use check::check_summary;
pub use compare::{
    COMPARE_CSV, COMPARE_FILES, COMPARE_JSON, COMPARE_LIMITS_SVG, COMPARE_PROBABILITY_SVG,
    COMPARE_REACH_CSV, COMPARE_REACH_JSON, COMPARE_REACH_SVG, COMPARE_SVG, ComparedPlan,
    Comparison, comparison_table, render_comparison,
};
pub use convert::{DEFAULT_DPI, DPI_RANGE, FigureFormat, FigureFormats};
pub use error::ReportError;
pub use levers::{
    LEVERS_CSV, LEVERS_FILES, LEVERS_JSON, LEVERS_SVG, levers_summary, render_levers,
};
pub use projection::{
    AT_CSV, LIMITS_SVG, PROBABILITY_SVG, PROJECTION_CSV, PROJECTION_FILES, PROJECTION_JSON,
    PROJECTION_SVG, render_all, summary,
};
pub use reach::{REACH_FILES, REACH_JSON, reach_summary, render_reach};
pub use replan::{REPLAN_FILES, REPLAN_JSON, render_replan, replan_summary};
pub use spectrum::{render_spectrum, spectrum_summary};
pub use warnings::warning_text;
pub use writer::{Leftover, Written, write_all, write_new};

use crate::provenance::Provenance;

/// What an output file holds. Figures are marked so that the writer can turn
/// every figure into another format in one place.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Kind {
    /// A drawing (SVG).
    Figure,
    /// Rows of numbers (CSV).
    Table,
    /// A structured document (JSON).
    Document,
}

/// One output file of a product: its name inside the output directory, what
/// it holds, and its bytes (only turned out of the product: no I/O, clock or
/// randomness, so the same product always gives the same bytes).
pub trait Render {
    fn name(&self) -> String;
    fn kind(&self) -> Kind;
    fn bytes(&self) -> Result<Vec<u8>, ReportError>;
}

/// An output made from `product` by a renderer function.
struct Output<'p, P> {
    name: String,
    kind: Kind,
    product: &'p P,
    render: fn(&P) -> Result<Vec<u8>, ReportError>,
}

impl<'p, P> Output<'p, P> {
    fn new(
        name: impl Into<String>,
        kind: Kind,
        product: &'p P,
        render: fn(&P) -> Result<Vec<u8>, ReportError>,
    ) -> Self {
        Output {
            name: name.into(),
            kind,
            product,
            render,
        }
    }
}

impl<P> Render for Output<'_, P> {
    fn name(&self) -> String {
        self.name.clone()
    }

    fn kind(&self) -> Kind {
        self.kind
    }

    fn bytes(&self) -> Result<Vec<u8>, ReportError> {
        (self.render)(self.product)
    }
}

/// One rendered output file.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Report {
    /// File name, without directory.
    pub name: String,
    pub kind: Kind,
    pub bytes: Vec<u8>,
}

/// The one render path: every output in order, rendered in memory, each
/// table and document stamped with `provenance` (`kit::encode::stamped`).
pub fn render(
    outputs: &[&dyn Render],
    provenance: &Provenance,
) -> Result<Vec<Report>, ReportError> {
    outputs
        .iter()
        .map(|output| {
            let kind = output.kind();
            Ok(Report {
                name: output.name(),
                kind,
                bytes: kit::encode::stamped(kind, output.bytes()?, provenance),
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn twice(value: &u8) -> Result<Vec<u8>, ReportError> {
        Ok(vec![*value, *value])
    }

    fn failing(_: &u8) -> Result<Vec<u8>, ReportError> {
        Err(ReportError::Render {
            file: "b.csv",
            message: "no rows".into(),
        })
    }

    fn provenance() -> Provenance {
        Provenance::new(Vec::new(), serde_json::Map::new())
    }

    #[test]
    fn outputs_render_in_order_with_their_kind() {
        let product = 7;
        let figure = Output::new("a.svg", Kind::Figure, &product, twice);
        let table = Output::new("b.csv", Kind::Table, &product, twice);
        let reports = render(&[&figure, &table], &provenance()).unwrap();
        let summary: Vec<(&str, Kind)> = reports
            .iter()
            .map(|report| (report.name.as_str(), report.kind))
            .collect();
        assert_eq!(summary, [("a.svg", Kind::Figure), ("b.csv", Kind::Table)]);
        assert_eq!(reports[0].bytes, [7, 7]);
        let comment = format!("# provenance: {}\n", provenance().compact());
        assert_eq!(reports[1].bytes, [comment.as_bytes(), &[7, 7]].concat());
    }

    #[test]
    fn one_failure_renders_nothing() {
        let product = 7;
        let figure = Output::new("a.svg", Kind::Figure, &product, twice);
        let table = Output::new("b.csv", Kind::Table, &product, failing);
        let error = render(&[&figure, &table], &provenance()).unwrap_err();
        assert_eq!(error.to_string(), "cannot render b.csv: no rows");
    }
}
