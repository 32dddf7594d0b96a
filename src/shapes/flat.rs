//! Flat density on the range.

use super::{Shape, ShapeKind, normalise_masses};

/// Uniform density 1 / (high - low) on the range; each bin holds its width over
/// the range width. No parameters.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Flat;

/// `{flat: {}}`.
pub(super) const KIND: ShapeKind = ShapeKind {
    key: "flat",
    parameters: &[],
    example: "{flat: {}}",
    explanation: &["uniform on the range"],
    build: |_, _| Ok(Box::new(Flat)),
    rows: None,
};

impl Shape for Flat {
    fn parameter_names(&self) -> Vec<String> {
        Vec::new()
    }

    fn nominal_parameters(&self) -> Vec<f64> {
        Vec::new()
    }

    fn bin_fractions(&self, _params: &[f64], edges: &[f64], fractions: &mut [f64]) {
        debug_assert_eq!(edges.len(), fractions.len() + 1);
        for (width, bin) in fractions.iter_mut().zip(edges.windows(2)) {
            *width = bin[1] - bin[0];
        }
        normalise_masses(fractions);
    }

    fn density(&self, _params: &[f64], low: f64, high: f64, x: f64) -> f64 {
        if (low..=high).contains(&x) {
            1.0 / (high - low)
        } else {
            0.0
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::assert_normalised;

    // No parameters, so nothing lies outside the domain.
    shape_contract_tests! {
        shape: Flat,
        inside: [(&[], &[0.0, 1.0, 3.0, 8.0])],
        outside: [],
    }

    /// Equal bins of a uniform density hold equal fractions; unequal bins hold
    /// their width over the range width (closed form).
    #[test]
    fn fractions_are_relative_widths() {
        let mut equal = [0.0; 4];
        Flat.bin_fractions(&[], &[10.0, 12.5, 15.0, 17.5, 20.0], &mut equal);
        assert_normalised(&equal);
        assert!(equal.iter().all(|fraction| (fraction - 0.25).abs() < 1e-15));
        let mut unequal = [0.0; 3];
        Flat.bin_fractions(&[], &[0.0, 1.0, 3.0, 8.0], &mut unequal);
        for (fraction, expected) in unequal.iter().zip([0.125, 0.25, 0.625]) {
            assert!((fraction - expected).abs() < 1e-15);
        }
    }

    #[test]
    fn density_is_inverse_range_width() {
        assert!((Flat.density(&[], 2.0, 6.0, 3.0) - 0.25).abs() < 1e-15);
        assert_eq!(Flat.density(&[], 2.0, 6.0, 7.0), 0.0);
        assert!(Flat.parameter_names().is_empty());
    }
}
