//! `spectrum-<D>d.csv`: one row per bin and exposure.
//!
//! Columns (after `channel`, each row's channel, when there are several):
//! `days, live_days, low, high, counts, background,
//! signal_plus_background, error_low, error_high, fitted,
//! fitted_signal_strength, local_z`. `background` and
//! `signal_plus_background` are expected counts; `error_low` and `error_high`
//! are the lengths of the error bar below and above `counts`; `fitted` is the
//! expected count at the fit of the pseudo-dataset, whose fitted signal
//! strength and local significance sqrt(q0) fill the last two columns (all
//! three empty when the fit failed). Numbers are
//! shortest round-trip decimals, as in `projection.csv`, so the same spectrum
//! always gives the same bytes.

use crate::report::ReportError;
use crate::report::kit::encode::csv_bytes;
use crate::report::kit::format::number;
use crate::spectrum::Spectrum;

/// Name used in rendering errors.
const FILE: &str = "spectrum CSV";

const COLUMNS: [&str; 12] = [
    "days",
    "live_days",
    "low",
    "high",
    "counts",
    "background",
    "signal_plus_background",
    "error_low",
    "error_high",
    "fitted",
    "fitted_signal_strength",
    "local_z",
];

/// The CSV table of the spectra, exposures in order, each exposure's channels
/// in order; with several channels a first column `channel` names each row's.
pub(super) fn render(spectrum: &Spectrum) -> Result<Vec<u8>, ReportError> {
    let named = spectrum.channels.len() > 1;
    let rows = spectrum.exposures.iter().flat_map(|exposure| {
        spectrum.channels.iter().flat_map(move |channel| {
            let first = channel.bins.start;
            channel
                .bins_of(exposure)
                .iter()
                .enumerate()
                .map(move |(index, bin)| {
                    let fit = exposure.fit.as_ref();
                    let cell = |value: Option<f64>| value.map_or_else(String::new, number);
                    let name = named.then(|| channel.name.clone());
                    name.into_iter()
                        .chain([
                            number(exposure.days),
                            number(exposure.live_days),
                            number(bin.low),
                            number(bin.high),
                            bin.counts.to_string(),
                            number(bin.background),
                            number(bin.signal_plus_background),
                            number(bin.error_low),
                            number(bin.error_high),
                            cell(fit.map(|fit| fit.expected[first + index])),
                            cell(fit.map(|fit| fit.signal_strength)),
                            cell(fit.map(|fit| fit.local_z)),
                        ])
                        .collect::<Vec<String>>()
                })
        })
    });
    let columns = named.then_some("channel").into_iter().chain(COLUMNS);
    csv_bytes(FILE, columns, rows)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::spectrum::{ExposureSpectrum, SpectrumBin, SpectrumChannel, SpectrumFit};

    #[test]
    fn rows_follow_the_documented_columns() {
        let spectrum = Spectrum {
            title: "t".into(),
            channels: vec![SpectrumChannel {
                name: "x".into(),
                observable: "x".into(),
                unit: "keV".into(),
                bin_width: 2.0,
                bins: 0..1,
                window: None,
            }],
            seed: 1,
            exposures: vec![ExposureSpectrum {
                days: 10.0,
                live_days: 9.5,
                bins: vec![SpectrumBin {
                    low: 0.0,
                    high: 2.0,
                    counts: 0,
                    background: 0.25,
                    signal_plus_background: 0.5,
                    error_low: 0.0,
                    error_high: 1.8410216450092636,
                }],
                fit: Some(SpectrumFit {
                    signal_strength: 0.5,
                    local_z: 0.25,
                    expected: vec![0.375],
                }),
            }],
        };
        let text = String::from_utf8(render(&spectrum).unwrap()).unwrap();
        assert_eq!(
            text,
            "days,live_days,low,high,counts,background,signal_plus_background,error_low,error_high,fitted,fitted_signal_strength,local_z\n\
             10,9.5,0,2,0,0.25,0.5,0,1.8410216450092636,0.375,0.5,0.25\n"
        );
    }
}
