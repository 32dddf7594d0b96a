//! The pseudo-data spectra's files: `figure.rs` (`spectrum-<D>d.svg`) and
//! `csv.rs` (`spectrum-<D>d.csv`).

mod csv;
mod figure;

use super::{Kind, Output, Report, ReportError, render};
use crate::spectrum::Spectrum;

/// Renders the spectra in memory: `spectrum-<D>d.svg` and `spectrum-<D>d.csv`,
/// with one `-<D>d` per exposure in the order given (`spectrum-3d-30d.svg`).
/// The same spectra always give byte-identical files.
pub fn render_spectrum(spectrum: &Spectrum) -> Result<Vec<Report>, ReportError> {
    let stem = file_stem(spectrum);
    render(&[
        &Output::new(
            format!("{stem}.svg"),
            Kind::Figure,
            spectrum,
            figure::render,
        ),
        &Output::new(format!("{stem}.csv"), Kind::Table, spectrum, csv::render),
    ])
}

/// `spectrum-3d-30d` for exposures at 3 and 30 calendar days.
fn file_stem(spectrum: &Spectrum) -> String {
    spectrum
        .exposures
        .iter()
        .fold("spectrum".to_string(), |stem, exposure| {
            format!("{stem}-{}d", exposure.days)
        })
}
