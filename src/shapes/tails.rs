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

/// Derivatives of the distribution function F at one edge in a peak's two
/// parameters, its centre and its width, in the units of the tails.
#[derive(Debug, Clone, Copy)]
pub(super) struct EdgeSlopes {
    pub by_centre: f64,
    pub by_width: f64,
}

/// Bin fractions and their derivatives in the centre (first row of
/// `gradient`) and the width (second row) of a symmetric peak: bin masses m_i
/// from [`mass_between`], their derivatives dF(upper) - dF(lower) from
/// `slopes_at`, then fractions f_i = m_i / M with derivatives
/// f_i' = (m_i' - f_i M') / M, M' the sum of the m_i' (quotient rule).
/// Returns false, marking everything NaN, when the masses make no density.
pub(super) fn fill_fractions_with_gradient(
    edges: &[f64],
    fractions: &mut [f64],
    gradient: &mut [f64],
    half_mass: f64,
    edge_at: impl Fn(f64) -> TailEdge,
    slopes_at: impl Fn(f64) -> EdgeSlopes,
) -> bool {
    let bins = fractions.len();
    debug_assert_eq!(gradient.len(), 2 * bins);
    let (by_centre, by_width) = gradient.split_at_mut(bins);
    let mut lower = edge_at(edges[0]);
    let mut lower_slopes = slopes_at(lower.position);
    for (((mass, d_centre), d_width), &x) in fractions
        .iter_mut()
        .zip(by_centre.iter_mut())
        .zip(by_width.iter_mut())
        .zip(&edges[1..])
    {
        let upper = edge_at(x);
        let upper_slopes = slopes_at(upper.position);
        *mass = mass_between(lower, upper, half_mass);
        *d_centre = upper_slopes.by_centre - lower_slopes.by_centre;
        *d_width = upper_slopes.by_width - lower_slopes.by_width;
        lower = upper;
        lower_slopes = upper_slopes;
    }
    let Some(total) = super::normalise_masses(fractions) else {
        super::mark_invalid(gradient);
        return false;
    };
    for mass_derivatives in gradient.chunks_exact_mut(bins) {
        let total_derivative: f64 = mass_derivatives.iter().sum();
        for (derivative, fraction) in mass_derivatives.iter_mut().zip(&*fractions) {
            *derivative = (*derivative - fraction * total_derivative) / total;
        }
    }
    true
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
