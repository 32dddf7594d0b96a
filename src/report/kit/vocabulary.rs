//! The words every command, table and document share, written once: the
//! suffixes of band columns, the phrase for a day the grid does not reach,
//! the sign for what a run did not compute, and the name of the
//! look-elsewhere effect's upcrossing count.

/// The suffixes of the four columns of a band, in the order of the bands
/// themselves: the quantiles 2.3%, 15.9%, 84.1% and 97.7%, where a normal
/// variable stands at -2, -1, +1 and +2 standard deviations (common
/// practice). Every band in every CSV is written `<quantity>_<suffix>`.
pub const BAND_SUFFIXES: [&str; 4] = ["q02_3", "q15_9", "q84_1", "q97_7"];

/// The four column names of the band of `quantity`: `z_q02_3`, ...
pub fn band_columns(quantity: &str) -> [String; 4] {
    BAND_SUFFIXES.map(|suffix| format!("{quantity}_{suffix}"))
}

/// A day past the last point of the grid, with that point's label ("365 d"):
/// "not within the grid (last point 365 d)". The grid is for the figures,
/// and no day is guessed beyond it.
pub fn not_within_grid(last_point: &str) -> String {
    format!("not within the grid (last point {last_point})")
}

/// A quantity this run did not compute (the toy columns of an Asimov-only
/// run). The sign means nothing else.
pub const NOT_COMPUTED: &str = "—";

/// The look-elsewhere effect's reference count, named as what it is: the
/// mean number of upcrossings of the level u0 by q0 along one scan of the
/// positions, N(u0) (Gross and Vitells, Eur. Phys. J. C 70 (2010) 525).
pub fn upcrossings_name(reference_level: &str) -> String {
    format!("mean upcrossings of q0 = {reference_level} per scan, N(u0)")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn bands_are_named_by_their_quantiles() {
        assert_eq!(
            band_columns("limit_rate"),
            [
                "limit_rate_q02_3",
                "limit_rate_q15_9",
                "limit_rate_q84_1",
                "limit_rate_q97_7"
            ]
        );
        // The quantiles of -2, -1, +1, +2 sigma of the standard normal
        // (Particle Data Group, statistics review): 2.275%, 15.866%, 84.134%, 97.725%.
        let quantiles = crate::projection::BAND_QUANTILES;
        for (suffix, quantile) in BAND_SUFFIXES.iter().zip(quantiles) {
            let written = format!("q{:04.1}", 100.0 * quantile).replace('.', "_");
            assert_eq!(*suffix, written);
        }
    }
}
