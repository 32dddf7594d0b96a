//! Where a curve sampled on the days grid first reaches a level.

/// First exposure at which `values` (sampled at non-decreasing `exposures`)
/// reaches `level`, interpolating linearly in exposure between grid points
/// and, before the first point, from the origin (no exposure, value 0). None
/// when the level is not reached inside the grid. With the exposure in live
/// days, interpolating Z^2 (not Z) makes this exact for a statistics-limited
/// significance, where Z^2 is proportional to exposure (common practice).
pub fn first_crossing(exposures: &[f64], values: &[f64], level: f64) -> Option<f64> {
    let mut previous = (0.0, 0.0);
    for (&exposure, &value) in exposures.iter().zip(values) {
        if value >= level {
            let (previous_exposure, previous_value) = previous;
            if previous_value >= level {
                return Some(previous_exposure);
            }
            let fraction = (level - previous_value) / (value - previous_value);
            return Some(previous_exposure + fraction * (exposure - previous_exposure));
        }
        previous = (exposure, value);
    }
    None
}

/// Quantile `probability` of sorted `values`, linear between order statistics
/// (Hyndman and Fan, Am. Stat. 50 (1996) 361, definition 7).
pub fn quantile(sorted: &[f64], probability: f64) -> f64 {
    let position = probability * (sorted.len() - 1) as f64;
    let below = position.floor() as usize;
    let above = (below + 1).min(sorted.len() - 1);
    let weight = position - below as f64;
    sorted[below] + weight * (sorted[above] - sorted[below])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn statistics_limited_crossing_is_exact_in_z_squared() {
        // Z = sqrt(live days / 10): Z^2 = 9 at 90 live days (Z^2 proportional
        // to exposure; common practice).
        let live_days = [10.0, 40.0, 160.0];
        let z_squared: Vec<f64> = live_days.iter().map(|d| d / 10.0).collect();
        assert!((first_crossing(&live_days, &z_squared, 9.0).unwrap() - 90.0).abs() < 1e-12);
        // Before the first grid point, from the origin.
        assert!((first_crossing(&live_days, &z_squared, 0.5).unwrap() - 5.0).abs() < 1e-12);
        assert_eq!(first_crossing(&live_days, &z_squared, 25.0), None);
    }

    #[test]
    fn median_of_odd_and_even_samples() {
        assert_eq!(quantile(&[1.0, 2.0, 3.0], 0.5), 2.0);
        assert_eq!(quantile(&[1.0, 2.0, 3.0, 4.0], 0.5), 2.5);
    }
}
