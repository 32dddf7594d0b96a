//! The pseudo-data spectra's files: `figure.rs` (`spectrum-<D>d.svg`) and
//! `csv.rs` (`spectrum-<D>d.csv`), and `summary.rs` for the terminal.

mod csv;
mod figure;
mod summary;

pub use summary::spectrum_summary;

use super::{Kind, Output, Report, ReportError, render};
use crate::provenance::Provenance;
use crate::spectrum::Spectrum;

/// Renders the spectra in memory: `<stem>.svg` and `<stem>.csv`, named by
/// [`Spectrum::file_stem`] (`spectrum-3d-30d.svg`). The same spectra always
/// give byte-identical files.
pub fn render_spectrum(
    spectrum: &Spectrum,
    provenance: &Provenance,
) -> Result<Vec<Report>, ReportError> {
    let stem = spectrum.file_stem();
    render(
        &[
            &Output::new(
                format!("{stem}.svg"),
                Kind::Figure,
                spectrum,
                figure::render,
            ),
            &Output::new(format!("{stem}.csv"), Kind::Table, spectrum, csv::render),
        ],
        provenance,
    )
}
