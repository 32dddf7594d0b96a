//! Bin masses of a density symmetric about its centre, from the tail mass beyond each edge.
//!
//! Far from the centre a cumulative distribution F is within rounding of 0 or 1,
//! and a difference F(b) - F(a) keeps only its absolute precision. The mass
//! T(u) beyond |u| on the side of u, which is small exactly where F is close to
//! 0 or 1, keeps its relative precision instead. With u the standardised
//! position of an edge and H the mass on each side of the centre, the mass of a
//! bin [a, b] is
//!
//! - T(a) - T(b) when 0 <= a < b,
//! - T(b) - T(a) when a < b <= 0,
//! - 2H - T(a) - T(b) when a < 0 < b,
//!
//! which loses no digits in either tail (common practice for tail integrals).

/// A bin edge seen from the centre of a symmetric density.
#[derive(Debug, Clone, Copy)]
pub(super) struct TailEdge {
    /// Standardised position (x - centre) / scale.
    pub position: f64,
    /// Mass beyond |position| on the side of `position`, in the shape's own units.
    pub tail: f64,
}

/// Mass between two edges, `lower.position < upper.position`; `half_mass` is
/// the mass on each side of the centre in the same units as the tails.
///
/// Rounding can make a difference of two nearly equal tails a few ulps below
/// zero; such a difference is a zero mass.
pub(super) fn mass_between(lower: TailEdge, upper: TailEdge, half_mass: f64) -> f64 {
    let mass = if lower.position >= 0.0 {
        lower.tail - upper.tail
    } else if upper.position <= 0.0 {
        upper.tail - lower.tail
    } else {
        2.0 * half_mass - lower.tail - upper.tail
    };
    mass.max(0.0)
}

/// Writes the mass of every bin to `masses`, evaluating `edge_at` once per edge.
pub(super) fn fill_masses(
    edges: &[f64],
    masses: &mut [f64],
    half_mass: f64,
    edge_at: impl Fn(f64) -> TailEdge,
) {
    debug_assert_eq!(edges.len(), masses.len() + 1);
    let mut lower = edge_at(edges[0]);
    for (mass, &x) in masses.iter_mut().zip(&edges[1..]) {
        let upper = edge_at(x);
        *mass = mass_between(lower, upper, half_mass);
        lower = upper;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The uniform density on [-1, 1] has T(u) = (1 - |u|) / 2 and H = 1/2, so
    /// every bin holds half its width (closed form).
    #[test]
    fn uniform_density_masses_are_half_widths() {
        let edge_at = |u: f64| TailEdge {
            position: u,
            tail: 0.5 * (1.0 - u.abs()),
        };
        let edges = [-1.0, -0.6, -0.1, 0.0, 0.3, 1.0];
        let mut masses = [0.0; 5];
        fill_masses(&edges, &mut masses, 0.5, edge_at);
        for (mass, bin) in masses.iter().zip(edges.windows(2)) {
            assert!((mass - 0.5 * (bin[1] - bin[0])).abs() < 1e-15);
        }
    }
}
