//! Exponential density on the range.

use super::{ParameterSyntax, Shape, ShapeKind, finite, mark_invalid, normalise_masses, range_of};

/// Below this |slope| × range width the density differs from a flat one by
/// less than double-precision rounding.
const FLAT_LIMIT: f64 = f64::EPSILON;

/// Below this argument the Langevin function is summed from its series.
const LANGEVIN_SERIES_LIMIT: f64 = 0.1;

/// Bins between exact evaluations of exp(-k d); the running product in
/// between gathers at most this many roundings (a relative 7e-15).
const ANCHOR_INTERVAL: usize = 32;

/// Half widths agreeing to this relative amount share one Langevin evaluation:
/// the bin mean h L(slope h) moves by at most |dh| (its derivative in h is
/// bounded by one), so by less than 1e-12 of the half width.
const SHARED_HALF_WIDTH: f64 = 1e-12;

/// Density proportional to exp(slope x), normalised on the range:
/// slope exp(slope x) / (exp(slope high) - exp(slope low)).
///
/// Seen from the edge r where the density is highest (`high` for a rising
/// density, `low` for a falling one), with k = |slope| and d = |x - r|, the
/// density is proportional to exp(-k d) and the mass between r and x is
/// V(d) = -expm1(-k d) / k, which tends to d as k tends to 0 (closed form).
/// A bin of width w whose nearer edge lies at distance d holds the mass
/// exp(-k d) V(w): nothing exceeds the range width, so no slope overflows,
/// expm1 keeps slopes near zero exact, and every bin keeps its relative
/// precision, however far from r. Walking outwards from r, exp(-k d) is carried
/// from bin to bin by the factor exp(-k w) and recomputed exactly every
/// `ANCHOR_INTERVAL` bins, and equal widths share one expm1, so a uniform
/// binning costs a multiplication per bin. Parameters: `["slope"]`.
#[derive(Debug, Clone, PartialEq)]
pub struct Exponential {
    slope: f64,
}

/// `{exponential: {slope: K}}`: any finite slope.
pub(super) const KIND: ShapeKind = ShapeKind {
    key: "exponential",
    parameters: &[ParameterSyntax::number("slope")],
    example: "{exponential: {slope: K}}",
    explanation: &["density proportional to exp(K x); K in 1/`unit`"],
    build: |values, _| {
        let slope = finite("exponential.slope", values[0].number())?;
        Ok(Box::new(Exponential::new(slope)))
    },
    rows: None,
};

impl Exponential {
    pub fn new(slope: f64) -> Exponential {
        Exponential { slope }
    }
}

impl Shape for Exponential {
    fn parameter_names(&self) -> Vec<String> {
        vec!["slope".to_string()]
    }

    fn nominal_parameters(&self) -> Vec<f64> {
        vec![self.slope]
    }

    fn bin_fractions(&self, params: &[f64], edges: &[f64], fractions: &mut [f64]) {
        debug_assert_eq!(edges.len(), fractions.len() + 1);
        let (low, high) = range_of(edges);
        let Some(frame) = Frame::new(params[0], low, high) else {
            mark_invalid(fractions);
            return;
        };
        if frame.flat {
            for (mass, bin) in fractions.iter_mut().zip(edges.windows(2)) {
                *mass = bin[1] - bin[0];
            }
        } else if let Some(width) = equal_width(edges) {
            frame.fill_equal_masses(edges, width, fractions);
        } else if frame.peak_edge == low {
            frame.fill_masses(edges.iter().copied(), fractions.iter_mut());
        } else {
            frame.fill_masses(edges.iter().rev().copied(), fractions.iter_mut().rev());
        }
        normalise_masses(fractions);
    }

    /// Analytic derivative: d ln m / d slope is the mean of x over the bin, so
    ///
    /// ```text
    /// d f_i / d slope = f_i (<x>_bin - <x>_range).
    /// ```
    ///
    /// On an interval of centre c and half width h, `<x> = c + h L(slope h)`,
    /// with L(y) = coth(y) - 1/y the Langevin function (closed form of the
    /// truncated exponential mean).
    fn bin_fractions_with_gradient(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &mut [f64],
        gradient: &mut [f64],
    ) {
        debug_assert_eq!(gradient.len(), fractions.len());
        self.bin_fractions(params, edges, fractions);
        let fractions = &*fractions;
        for_each_bin_moment(params[0], edges, |i, shift, _| {
            gradient[i] = fractions[i] * shift;
        });
    }

    /// d2 ln m / d slope2 is the variance of x over the bin, so
    ///
    /// ```text
    /// d2 f_i / d slope2 = f_i [(<x>_bin - <x>_range)^2 + Var_bin - Var_range].
    /// ```
    ///
    /// On an interval of half width h, Var = h^2 L'(slope h) with
    /// L'(y) = 1/y^2 - 1/sinh^2 y, the derivative of the Langevin function.
    fn bin_fraction_curvatures(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &[f64],
        curvatures: &mut [f64],
    ) -> bool {
        for_each_bin_moment(params[0], edges, |i, shift, variance_excess| {
            curvatures[i] = fractions[i] * (shift * shift + variance_excess);
        });
        true
    }

    fn density(&self, params: &[f64], low: f64, high: f64, x: f64) -> f64 {
        let Some(frame) = Frame::new(params[0], low, high) else {
            return f64::NAN;
        };
        if !(low..=high).contains(&x) {
            return 0.0;
        }
        let total = frame.mass_from_peak_edge(frame.far_edge);
        frame.relative_density(x) / total
    }
}

/// The density seen from the edge where it is highest.
struct Frame {
    steepness: f64,
    peak_edge: f64,
    far_edge: f64,
    flat: bool,
}

impl Frame {
    /// `None` when the slope is not finite.
    fn new(slope: f64, low: f64, high: f64) -> Option<Frame> {
        if !slope.is_finite() {
            return None;
        }
        let (peak_edge, far_edge) = if slope > 0.0 {
            (high, low)
        } else {
            (low, high)
        };
        Some(Frame {
            steepness: slope.abs(),
            peak_edge,
            far_edge,
            flat: slope.abs() * (high - low) < FLAT_LIMIT,
        })
    }

    /// V(d) = -expm1(-k d) / k, or d for a density flat within rounding.
    fn mass_from_peak_edge(&self, x: f64) -> f64 {
        let distance = (x - self.peak_edge).abs();
        if self.flat {
            distance
        } else {
            -(-self.steepness * distance).exp_m1() / self.steepness
        }
    }

    /// exp(-k d), the density relative to its value at the peak edge.
    fn relative_density(&self, x: f64) -> f64 {
        (-self.steepness * (x - self.peak_edge).abs()).exp()
    }

    /// Bin masses exp(-k d) V(w) of bins that all have width w: within each
    /// run of [`ANCHOR_INTERVAL`] bins walked from the peak edge, the mass of
    /// the j-th is the run's first times exp(-k w)^j, the powers formed once
    /// (the same products as the walk below, without its chain from bin to bin).
    fn fill_equal_masses(&self, edges: &[f64], width: f64, masses: &mut [f64]) {
        let first = BinWidth::new(self.steepness, width);
        let mut powers = [first.mass; ANCHOR_INTERVAL];
        for j in 1..ANCHOR_INTERVAL {
            powers[j] = powers[j - 1] * first.decay;
        }
        let bins = masses.len();
        let from_low = self.peak_edge == edges[0];
        for start in (0..bins).step_by(ANCHOR_INTERVAL) {
            let run = ANCHOR_INTERVAL.min(bins - start);
            let (near, run_masses) = if from_low {
                (edges[start], &mut masses[start..start + run])
            } else {
                (
                    edges[bins - start],
                    &mut masses[bins - start - run..bins - start],
                )
            };
            let density = self.relative_density(near);
            if from_low {
                for (mass, power) in run_masses.iter_mut().zip(&powers) {
                    *mass = density * power;
                }
            } else {
                for (mass, power) in run_masses.iter_mut().rev().zip(&powers) {
                    *mass = density * power;
                }
            }
        }
    }

    /// Bin masses exp(-k d) V(w), walking from the peak edge outwards: `edges`
    /// start at the peak edge and `masses` are the bins in the same order.
    fn fill_masses<'a>(
        &self,
        mut edges: impl Iterator<Item = f64>,
        masses: impl Iterator<Item = &'a mut f64>,
    ) {
        let Some(mut near) = edges.next() else {
            return;
        };
        let mut width = BinWidth::new(self.steepness, 0.0);
        let mut density = 1.0;
        let mut until_anchor = 0;
        for (mass, far) in masses.zip(edges) {
            if until_anchor == 0 {
                density = self.relative_density(near);
                until_anchor = ANCHOR_INTERVAL;
            }
            until_anchor -= 1;
            let (bin_mass, decay) = width.mass_and_decay((far - near).abs());
            *mass = density * bin_mass;
            density *= decay;
            near = far;
        }
    }
}

/// The width shared exactly by every bin, if there is one.
fn equal_width(edges: &[f64]) -> Option<f64> {
    let width = edges[1] - edges[0];
    let mut equal = true;
    for bin in edges.windows(2) {
        equal &= bin[1] - bin[0] == width;
    }
    equal.then_some(width)
}

/// V(w) = -expm1(-k w) / k and exp(-k w) for the last bin width computed.
struct BinWidth {
    steepness: f64,
    width: f64,
    mass: f64,
    decay: f64,
}

impl BinWidth {
    fn new(steepness: f64, width: f64) -> BinWidth {
        let change = (-steepness * width).exp_m1();
        BinWidth {
            steepness,
            width,
            mass: -change / steepness,
            decay: 1.0 + change,
        }
    }

    /// (V(w), exp(-k w)). A width within rounding of the last one is taken to
    /// first order, V(w + e) = V(w) + e exp(-k w) and exp(-k (w + e)) =
    /// exp(-k w)(1 - k e), when the neglected terms, k e^2 / 2 relative to V
    /// and (k e)^2 / 2, are below double precision (Taylor expansion).
    fn mass_and_decay(&mut self, width: f64) -> (f64, f64) {
        if width == self.width {
            return (self.mass, self.decay);
        }
        let change = width - self.width;
        let steepness_change = self.steepness * change.abs();
        let first_order = steepness_change < 1e-8
            && steepness_change * change.abs() < f64::EPSILON * width.min(self.width);
        if first_order {
            (
                self.mass + change * self.decay,
                self.decay * (1.0 - self.steepness * change),
            )
        } else {
            *self = BinWidth::new(self.steepness, width);
            (self.mass, self.decay)
        }
    }
}

/// Calls `visit(i, <x>_bin - <x>_range, Var_bin - Var_range)` for every bin i
/// in order. When all bins share their half width (to [`SHARED_HALF_WIDTH`]),
/// one evaluation of the moments serves every bin and the loop is plain
/// arithmetic the compiler can vectorise.
#[inline(always)]
fn for_each_bin_moment(slope: f64, edges: &[f64], mut visit: impl FnMut(usize, f64, f64)) {
    let (low, high) = range_of(edges);
    let range = BinMoments::new(slope).at(0.5 * (high - low));
    let range_mean = 0.5 * (low + high) + range.offset;
    let bins = edges.len() - 1;
    let first = BinMoments::new(slope).at(0.5 * (edges[1] - edges[0]));
    let tolerance = SHARED_HALF_WIDTH * first.half_width;
    let mut shared = true;
    for i in 0..bins {
        shared &= (0.5 * (edges[i + 1] - edges[i]) - first.half_width).abs() <= tolerance;
    }
    if shared {
        let offset = first.offset - range_mean;
        let variance_excess = first.variance - range.variance;
        for i in 0..bins {
            visit(i, 0.5 * (edges[i] + edges[i + 1]) + offset, variance_excess);
        }
    } else {
        let mut moments = BinMoments::new(slope);
        for i in 0..bins {
            let bin = moments.at(0.5 * (edges[i + 1] - edges[i]));
            let shift = 0.5 * (edges[i] + edges[i + 1]) + bin.offset - range_mean;
            visit(i, shift, bin.variance - range.variance);
        }
    }
}

/// The offset of an interval's mean from its centre, h L(slope h), and its
/// variance, h^2 L'(slope h), for the last half width h evaluated.
#[derive(Debug, Clone, Copy)]
struct BinMoments {
    slope: f64,
    half_width: f64,
    offset: f64,
    variance: f64,
}

impl BinMoments {
    fn new(slope: f64) -> BinMoments {
        BinMoments {
            slope,
            half_width: f64::NAN,
            offset: f64::NAN,
            variance: f64::NAN,
        }
    }

    fn at(&mut self, half_width: f64) -> BinMoments {
        if (half_width - self.half_width).abs() > SHARED_HALF_WIDTH * half_width
            || self.half_width.is_nan()
        {
            let y = self.slope * half_width;
            self.half_width = half_width;
            self.offset = half_width * langevin(y);
            self.variance = half_width * half_width * langevin_derivative(y);
        }
        *self
    }
}

/// Langevin function L(y) = coth(y) - 1/y. Near zero the difference cancels,
/// so it is summed from coth y = 1/y + y/3 - y³/45 + 2y⁵/945 - y⁷/4725 + 2y⁹/93555 - ...
/// (Abramowitz & Stegun 4.5.67); at |y| < 0.1 the first omitted term is below
/// 1e-15 of the sum.
fn langevin(y: f64) -> f64 {
    if y.abs() < LANGEVIN_SERIES_LIMIT {
        let y2 = y * y;
        y * (1.0 / 3.0
            + y2 * (-1.0 / 45.0 + y2 * (2.0 / 945.0 + y2 * (-1.0 / 4725.0 + y2 * (2.0 / 93555.0)))))
    } else {
        y.tanh().recip() - y.recip()
    }
}

/// L'(y) = 1/y^2 - 1/sinh^2 y. Near zero the difference cancels, so it is
/// summed from the derivative of the series of [`langevin`],
/// 1/3 - y^2/15 + 2y^4/189 - y^6/675 + 2y^8/10395 - ...; at |y| < 0.1 the
/// first omitted term is below 1e-13 of the sum, ample for a Hessian.
fn langevin_derivative(y: f64) -> f64 {
    if y.abs() < LANGEVIN_SERIES_LIMIT {
        let y2 = y * y;
        1.0 / 3.0
            + y2 * (-1.0 / 15.0 + y2 * (2.0 / 189.0 + y2 * (-1.0 / 675.0 + y2 * (2.0 / 10395.0))))
    } else {
        let sinh = y.sinh();
        (y * y).recip() - (sinh * sinh).recip()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::assert_normalised;

    // Both sides of zero slope and zero itself; a slope that is not finite
    // is outside the domain.
    shape_contract_tests! {
        shape: Exponential::new(1.0),
        inside: [
            (&[-3.0], &uniform_edges(0.0, 2.0, 20)),
            (&[-1e-9], &uniform_edges(0.0, 2.0, 20)),
            (&[0.0], &uniform_edges(0.0, 2.0, 20)),
            (&[1e-9], &uniform_edges(0.0, 2.0, 20)),
            (&[0.5], &uniform_edges(0.0, 2.0, 20)),
            (&[40.0], &uniform_edges(0.0, 2.0, 20)),
        ],
        outside: [&[f64::NAN], &[f64::INFINITY], &[f64::NEG_INFINITY]],
    }

    fn fractions(slope: f64, edges: &[f64]) -> Vec<f64> {
        let mut fractions = vec![0.0; edges.len() - 1];
        Exponential::new(slope).bin_fractions(&[slope], edges, &mut fractions);
        assert_normalised(&fractions);
        fractions
    }

    fn uniform_edges(low: f64, high: f64, bins: u32) -> Vec<f64> {
        (0..=bins)
            .map(|i| low + (high - low) * f64::from(i) / f64::from(bins))
            .collect()
    }

    /// Hand-derived closed form (common practice): a bin [a, b] of the range
    /// [low, high] holds (exp(s b) - exp(s a)) / (exp(s high) - exp(s low)).
    #[test]
    fn fractions_match_closed_form() {
        for (slope, edges) in [
            (-0.7_f64, vec![0.0, 0.5, 1.3, 2.0, 3.5, 5.0]),
            (1.9, vec![-1.0, 0.0, 0.4, 2.0]),
        ] {
            let (low, high) = (edges[0], edges[edges.len() - 1]);
            let total = (slope * high).exp() - (slope * low).exp();
            for (fraction, bin) in fractions(slope, &edges).iter().zip(edges.windows(2)) {
                let expected = ((slope * bin[1]).exp() - (slope * bin[0]).exp()) / total;
                assert!(
                    (fraction - expected).abs() < 1e-14,
                    "{fraction} vs {expected}"
                );
            }
        }
    }

    /// Bins of one exact width (0.5, a binary fraction) over [0, 100] against
    /// the closed form, for falling and rising densities, across several runs
    /// of anchored products.
    #[test]
    fn equal_width_binning_matches_closed_form() {
        let edges: Vec<f64> = (0..=200).map(|i| f64::from(i) * 0.5).collect();
        for slope in [-0.03_f64, 0.05, -1.0] {
            let total = (slope * 100.0).exp_m1() / slope;
            for (fraction, bin) in fractions(slope, &edges).iter().zip(edges.windows(2)) {
                let expected = (slope * bin[0]).exp() * (slope * 0.5).exp_m1() / slope / total;
                assert!(
                    (fraction / expected - 1.0).abs() < 1e-13,
                    "slope {slope}, bin at {}: {fraction} vs {expected}",
                    bin[0]
                );
            }
        }
    }

    /// Many near-uniform bins, their widths differing by rounding (0.05 is
    /// not a binary fraction), against the closed form (exp(s b) - exp(s a)) /
    /// (exp(s high) - exp(s low)) relative to each bin: the running product
    /// over 2000 bins and the shared widths keep relative precision.
    #[test]
    fn long_near_uniform_binning_matches_closed_form() {
        let edges: Vec<f64> = (0..=2000).map(|i| f64::from(i) * 0.05).collect();
        for slope in [-0.03_f64, 0.5, -2.0] {
            let total = (slope * 100.0).exp_m1() / slope;
            for (fraction, bin) in fractions(slope, &edges).iter().zip(edges.windows(2)) {
                let expected =
                    (slope * bin[0]).exp() * (slope * (bin[1] - bin[0])).exp_m1() / slope / total;
                assert!(
                    (fraction / expected - 1.0).abs() < 1e-12,
                    "slope {slope}, bin at {}: {fraction} vs {expected}",
                    bin[0]
                );
            }
        }
    }

    /// At zero slope the density is flat, each bin holds w / R, and expanding
    /// the closed form to first order in the slope gives d f / d slope =
    /// (w / R)(c_bin - c_range) (hand-derived; common practice).
    #[test]
    fn zero_slope_is_flat_with_linear_derivative() {
        let edges = [1.0, 1.5, 3.0, 5.0];
        let mut flat = [0.0; 3];
        let mut gradient = [0.0; 3];
        Exponential::new(0.0).bin_fractions_with_gradient(&[0.0], &edges, &mut flat, &mut gradient);
        let expected_fractions = [0.125, 0.375, 0.5];
        let expected_gradient = [
            0.125 * (1.25 - 3.0),
            0.375 * (2.25 - 3.0),
            0.5 * (4.0 - 3.0),
        ];
        for i in 0..3 {
            assert!((flat[i] - expected_fractions[i]).abs() < 1e-15);
            assert!((gradient[i] - expected_gradient[i]).abs() < 1e-15);
        }
        for (fraction, expected) in fractions(1e-12, &edges).iter().zip(expected_fractions) {
            assert!((fraction - expected).abs() < 1e-11);
        }
    }

    /// Slopes far beyond the range scale (|slope| × range up to 1e6) stay
    /// finite and normalised; the bin at the peak edge, of width w, holds
    /// (1 - exp(-k w)) / (1 - exp(-k R)) (closed form).
    #[test]
    fn extreme_slopes_stay_finite() {
        let edges = uniform_edges(0.0, 1.0, 100);
        for slope in [1e3, -1e3, 1e6, -1e6, 1e-300, -1e-300] {
            let fractions = fractions(slope, &edges);
            let steepness = f64::abs(slope);
            let expected = (-steepness * 0.01).exp_m1() / (-steepness).exp_m1();
            let peak_bin = if slope > 0.0 {
                fractions[99]
            } else {
                fractions[0]
            };
            assert!(
                (peak_bin - expected).abs() < 1e-14,
                "slope {slope}: {peak_bin} vs {expected}"
            );
            let mut recomputed = vec![0.0; 100];
            let mut gradient = vec![0.0; 100];
            let shape = Exponential::new(slope);
            shape.bin_fractions_with_gradient(&[slope], &edges, &mut recomputed, &mut gradient);
            assert!(gradient.iter().all(|derivative| derivative.is_finite()));
        }
    }

    /// Density slope exp(slope x) / (exp(slope high) - exp(slope low)) (closed
    /// form), 1 / (high - low) at zero slope, zero outside the range.
    #[test]
    fn density_matches_closed_form() {
        let shape = Exponential::new(-0.4);
        let total = (-0.4_f64 * 7.0).exp() - (-0.4_f64 * 2.0).exp();
        for x in [2.0_f64, 3.1, 7.0] {
            let expected = -0.4 * (-0.4 * x).exp() / total;
            let density = shape.density(&[-0.4], 2.0, 7.0, x);
            assert!(
                (density / expected - 1.0).abs() < 1e-14,
                "{density} vs {expected}"
            );
        }
        assert!((shape.density(&[0.0], 2.0, 7.0, 4.0) - 0.2).abs() < 1e-15);
        assert_eq!(shape.density(&[-0.4], 2.0, 7.0, 1.0), 0.0);
    }
}
