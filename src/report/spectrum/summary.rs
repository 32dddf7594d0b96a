//! The text of `runcast spectrum`: per exposure, the pseudo-data count
//! against the expected background and signal + background, and what the fit
//! of the pseudo-data reports.

use crate::spectrum::{ExposureSpectrum, Spectrum, SpectrumBin};
use std::fmt::Write;

/// What `spectrum` prints before naming the files it wrote.
pub fn spectrum_summary(spectrum: &Spectrum) -> String {
    let mut text = format!(
        "{}\nPseudo-data with seed {}\n",
        spectrum.title, spectrum.seed
    );
    for exposure in &spectrum.exposures {
        let expected =
            |value: fn(&SpectrumBin) -> f64| -> f64 { exposure.bins.iter().map(value).sum() };
        let _ = writeln!(
            text,
            "  {} d ({:.1} live days): {} events; expected {:.1} background, {:.1} signal + background; {}",
            exposure.days,
            exposure.live_days,
            exposure.total_counts(),
            expected(|bin| bin.background),
            expected(|bin| bin.signal_plus_background),
            fit_text(exposure),
        );
    }
    text
}

/// The fitted signal strength and local significance sqrt(q0) of the
/// exposure's pseudo-dataset, or that its fit failed.
fn fit_text(exposure: &ExposureSpectrum) -> String {
    match &exposure.fit {
        Some(fit) => format!(
            "fit: mu-hat = {:.2}, local Z = {:.2} sigma",
            fit.signal_strength, fit.local_z
        ),
        None => "the fit failed".to_string(),
    }
}
