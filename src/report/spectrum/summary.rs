//! The text of `runcast spectrum`: per exposure, the pseudo-data count
//! against the expected background and signal + background.

use crate::spectrum::{Spectrum, SpectrumBin};
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
            "  {} d ({:.1} live days): {} events; expected {:.1} background, {:.1} signal + background",
            exposure.days,
            exposure.live_days,
            exposure.total_counts(),
            expected(|bin| bin.background),
            expected(|bin| bin.signal_plus_background),
        );
    }
    text
}
