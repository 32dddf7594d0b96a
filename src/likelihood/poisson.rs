//! One bin's Poisson term of -ln L and its derivative factors, in a form the
//! compiler can run over many bins at once (no calls, no branches it cannot
//! turn into selects).

use super::linear::LANES;
use std::f64::consts::LN_2;

/// The deviance term nu - n + n ln(n / nu) of one bin (with 0 ln 0 = 0), the
/// gradient weight 1 - n/nu and the curvature n/nu^2, for a valid expectation
/// (see [`is_valid`]). A bin without counts gives (nu, 1, 0).
///
/// With e = (nu - n)/nu, the logarithm is ln(n/nu) = ln(1 - e), evaluated by
/// [`ReducedLogarithm`] from e itself when n/nu is near one, and the term itself by
/// [`deviance`] without cancellation, so it stays accurate to rounding even
/// when nu and n are in the billions and differ by a fraction of an event.
#[inline(always)]
pub fn bin_terms(n: f64, nu: f64) -> (f64, f64, f64) {
    let inverse = 1.0 / nu;
    let excess = (nu - n) * inverse;
    let ratio = n * inverse;
    if n > 0.0 {
        (deviance(n, nu, ratio, excess), excess, ratio * inverse)
    } else {
        (nu, 1.0, 0.0)
    }
}

/// The deviance term nu - n + n ln(n/nu) of a bin with n > 0, given ratio =
/// n/nu and excess = (nu - n)/nu.
///
/// With the reduction of [`ReducedLogarithm`], ln(n/nu) = k ln 2 + 2s +
/// 2 s^3 P(s^2), so the term is
///
///   nu - n + n (k ln 2 + 2s) + 2 n s^3 P(s^2).
///
/// Near one (k = 0, f = r = n/nu - 1, s = r/(2 + r)) the first part is about
/// nu r^2/2 and would cancel; there r = 2s/(1 - s) and n = nu (1 + s)/(1 - s)
/// give exactly nu - n + 2 n s = nu s r, so the term is
///
///   nu s r + 2 n s^3 P(s^2),
///
/// whose second part is below 0.05 of the first: no cancellation, and the
/// term keeps its relative precision however close n is to nu. (The series:
/// Abramowitz and Stegun, Handbook of Mathematical Functions, 4.1.28, from
/// memory; the algebra by hand.)
#[inline(always)]
fn deviance(n: f64, nu: f64, ratio: f64, excess: f64) -> f64 {
    let log = ReducedLogarithm::of(ratio, -excess);
    let s = log.s;
    let leading = if log.exponent == 0.0 {
        nu * s * log.f
    } else {
        nu - n + n * (log.exponent * LN_2 + 2.0 * s)
    };
    leading + 2.0 * n * s * (s * s) * log.series
}

/// Whether nu can be the expectation of a bin that observed n: positive, or
/// zero when nothing was observed.
#[inline(always)]
pub fn is_valid(n: f64, nu: f64) -> bool {
    nu > 0.0 || (nu == 0.0 && n == 0.0)
}

/// Sum of the deviance terms of all bins, with each bin's weight and curvature
/// written out (and each term left in `terms`); infinite when an expectation
/// is invalid. Same terms as [`bin_terms`].
///
/// The work is two simple passes over the arrays, each of which the compiler
/// turns into vector instructions; the sum is taken in [`LANES`] partial
/// sums, since the compiler may not reorder one sum itself. Where the
/// processor has 256-bit vectors (AVX2) the same code is compiled for them
/// too and chosen at run time; it does the same operations in the same order,
/// so the results are identical to the last bit.
pub fn terms_with_weights(
    counts: &[f64],
    expected: &[f64],
    weights: &mut [f64],
    curvatures: &mut [f64],
    terms: &mut [f64],
) -> f64 {
    #[cfg(target_arch = "x86_64")]
    if std::is_x86_feature_detected!("avx2") {
        // SAFETY: the processor was just found to support AVX2.
        return unsafe { terms_with_weights_avx2(counts, expected, weights, curvatures, terms) };
    }
    terms_with_weights_portable(counts, expected, weights, curvatures, terms)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn terms_with_weights_avx2(
    counts: &[f64],
    expected: &[f64],
    weights: &mut [f64],
    curvatures: &mut [f64],
    terms: &mut [f64],
) -> f64 {
    terms_with_weights_portable(counts, expected, weights, curvatures, terms)
}

#[inline(always)]
fn terms_with_weights_portable(
    counts: &[f64],
    expected: &[f64],
    weights: &mut [f64],
    curvatures: &mut [f64],
    terms: &mut [f64],
) -> f64 {
    let bins = counts.len();
    let (expected, weights) = (&expected[..bins], &mut weights[..bins]);
    let (curvatures, terms) = (&mut curvatures[..bins], &mut terms[..bins]);
    for j in 0..bins {
        let (n, nu) = (counts[j], expected[j]);
        let inverse = 1.0 / nu;
        let ratio = n * inverse;
        let excess = (nu - n) * inverse;
        let term = if n > 0.0 {
            deviance(n, nu, ratio, excess)
        } else {
            nu
        };
        terms[j] = if is_valid(n, nu) { term } else { f64::INFINITY };
        (weights[j], curvatures[j]) = if n > 0.0 {
            (excess, ratio * inverse)
        } else {
            (1.0, 0.0)
        };
    }
    let mut totals = [0.0; LANES];
    let mut chunks = terms.chunks_exact(LANES);
    for chunk in &mut chunks {
        for lane in 0..LANES {
            totals[lane] += chunk[lane];
        }
    }
    let tail: f64 = chunks.remainder().iter().sum();
    (totals[0] + totals[2]) + (totals[1] + totals[3]) + tail
}

/// bits(sqrt(1/2)): a positive double x lies in [2^k sqrt(1/2), 2^(k+1) sqrt(1/2))
/// exactly when (bits(x) - bits(sqrt(1/2))) >> 52 = k, because the bits of
/// positive normal doubles are ordered like their values and 2^k scales the
/// exponent field alone.
const REDUCTION_ORIGIN: u64 = 0x3FE6_A09E_667F_3BCD;

/// 1/(2j + 1) for j = 1..9: the series below, truncated where the next term
/// of ln, 2 s z^10 / 21 with z = s^2 <= (3 - 2 sqrt 2)^2 = 0.0294, is below
/// 3e-17 of 2s, a quarter of the double-precision rounding.
const ODD_RECIPROCALS: [f64; 9] = [
    1.0 / 3.0,
    1.0 / 5.0,
    1.0 / 7.0,
    1.0 / 9.0,
    1.0 / 11.0,
    1.0 / 13.0,
    1.0 / 15.0,
    1.0 / 17.0,
    1.0 / 19.0,
];

/// ln(ratio) for a positive normal `ratio` in pieces, given `ratio_minus_one`,
/// its difference from one computed without cancellation.
///
/// With ratio = 2^k m, m in [sqrt(1/2), sqrt(2)) and f = m - 1 (exact, or
/// `ratio_minus_one` itself when k = 0), s = f / (2 + f) and
///
///   ln(ratio) = k ln 2 + ln((1 + s)/(1 - s)) = k ln 2 + 2 (s + s^3/3 + s^5/5 + ...)
///           = k ln 2 + 2 s + 2 s z P(z),  z = s^2,  P(z) = sum_j z^j / (2j + 3)
///
/// (Abramowitz and Stegun, Handbook of Mathematical Functions, 4.1.28, from
/// memory); |s| <= 3 - 2 sqrt 2 = 0.172 makes the series converge fast.
struct ReducedLogarithm {
    /// k.
    exponent: f64,
    f: f64,
    s: f64,
    /// P(s^2).
    series: f64,
}

impl ReducedLogarithm {
    #[inline(always)]
    fn of(ratio: f64, ratio_minus_one: f64) -> ReducedLogarithm {
        let bits = ratio.to_bits();
        let offset = bits.wrapping_sub(REDUCTION_ORIGIN);
        // k + 1023 as the exponent field of an integer shifted logically, so that no
        // 64-bit signed shift or integer-to-float conversion is needed.
        let biased_exponent = (offset >> 52).wrapping_add(1023) & 0x7FF;
        let mantissa = f64::from_bits(bits.wrapping_sub(offset & 0xFFF0_0000_0000_0000));
        let exponent = f64::from_bits(0x4330_0000_0000_0000 | biased_exponent)
            - (4_503_599_627_370_496.0 + 1023.0);
        let f = if exponent == 0.0 {
            ratio_minus_one
        } else {
            mantissa - 1.0
        };
        let s = f / (2.0 + f);
        ReducedLogarithm {
            exponent,
            f,
            s,
            series: odd_series(s * s),
        }
    }

    /// ln(ratio) = k ln 2 + 2 s + 2 s z P(z): the logarithm [`deviance`] is
    /// built from, checked on its own by the tests.
    #[cfg(test)]
    fn ln(&self) -> f64 {
        let (s, z) = (self.s, self.s * self.s);
        self.exponent * LN_2 + (2.0 * s + 2.0 * s * z * self.series)
    }
}

/// sum_j z^j / (2j + 3) over [`ODD_RECIPROCALS`], in pairs and powers of z
/// (Estrin's scheme; Knuth, The Art of Computer Programming, vol. 2, sec. 4.6.4),
/// so that the chain of dependent operations is short.
#[inline(always)]
fn odd_series(z: f64) -> f64 {
    let c = &ODD_RECIPROCALS;
    let z2 = z * z;
    let z4 = z2 * z2;
    let low = (c[0] + c[1] * z) + (c[2] + c[3] * z) * z2;
    let high = (c[4] + c[5] * z) + (c[6] + c[7] * z) * z2;
    low + (high + c[8] * z4) * z4
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::{FRAC_1_SQRT_2, SQRT_2};

    /// Relative difference, or absolute below one.
    fn difference(a: f64, b: f64) -> f64 {
        (a - b).abs() / b.abs().max(1.0)
    }

    /// Against the standard library's ln, accurate to within an ulp (common
    /// practice for checking a series implementation), over many decades.
    #[test]
    fn logarithm_matches_the_library_logarithm() {
        let mut x = 1e-300_f64;
        while x < 1e300 {
            for y in [
                x,
                x * 1.37,
                x * FRAC_1_SQRT_2,
                x * SQRT_2,
                x * (SQRT_2 - 1e-9),
            ] {
                let got = ReducedLogarithm::of(y, y - 1.0).ln();
                assert!(
                    difference(got, y.ln()) < 4e-16,
                    "ln({y}) = {got}, {}",
                    y.ln()
                );
            }
            x *= 3.7;
        }
    }

    /// Near one the answer comes from ratio - 1 alone: ln(1 + e) = e - e^2/2 + e^3/3
    /// (Taylor series), to full relative precision for tiny e.
    #[test]
    fn logarithm_keeps_relative_precision_near_one() {
        for e in [1e-3_f64, -1e-3, 1e-9, -1e-9, 1e-17, 3e-300] {
            let expected = e.ln_1p();
            let got = ReducedLogarithm::of(1.0 + e, e).ln();
            assert!(
                (got - expected).abs() <= 4e-16 * expected.abs(),
                "ln(1 + {e}) = {got}, {expected}"
            );
        }
    }

    /// The bin terms against the definitions nu - n + n ln(n/nu) (written as
    /// nu - n - n ln_1p((nu - n)/n), whose logarithm keeps its relative
    /// precision), 1 - n/nu and n/nu^2, and the empty-bin case. The sum still
    /// cancels when nu is close to n: it is good to rounding times its
    /// condition number
    /// (|nu - n| + |n ln(n/nu)|) / term, which sets the tolerance (precision
    /// near one is checked against a series below).
    #[test]
    fn bin_terms_match_direct_formulas() {
        for (n, nu) in [
            (3.0_f64, 2.5_f64),
            (1.0, 1e4),
            (1e6, 1e6 + 1e3),
            (7.0, 0.01),
        ] {
            let (term, weight, curvature) = bin_terms(n, nu);
            let logarithm = -n * ((nu - n) / n).ln_1p();
            let direct = nu - n + logarithm;
            let condition = ((nu - n).abs() + logarithm.abs()) / direct;
            assert!(
                difference(term, direct) < 1e-14 * condition.max(1.0),
                "{n}, {nu}: {term} vs {direct}"
            );
            assert!(difference(weight, 1.0 - n / nu) < 1e-15);
            assert!(difference(curvature, n / (nu * nu)) < 1e-15);
        }
        assert_eq!(bin_terms(0.0, 2.5), (2.5, 1.0, 0.0));
        assert_eq!(bin_terms(0.0, 0.0), (0.0, 1.0, 0.0));
    }

    /// n ln(n/nu) - (n - nu) = nu h(r), r = (n - nu)/nu, against the Taylor
    /// series h(r) = sum_{k>=2} (-1)^k r^k / (k (k - 1)) (from ln(1 + r) =
    /// sum_{k>=1} (-1)^(k+1) r^k / k; common practice), with n and nu a
    /// whole number of double spacings apart so that r is exact: the term is
    /// about nu r^2/2 and must keep its relative precision as r shrinks.
    #[test]
    fn deviance_near_one_keeps_relative_precision() {
        let nu = 2f64.powi(30);
        let spacing = nu.next_up() - nu;
        for steps in [1e7, -1e7, 4e3, -4e3, 9.0, -9.0, 1.0] {
            let n = nu + steps * spacing;
            let r = (n - nu) / nu;
            let mut series = 0.0;
            let mut power = r * r;
            for k in 2..30 {
                let sign = if k % 2 == 0 { 1.0 } else { -1.0 };
                series += sign * power / f64::from(k * (k - 1));
                power *= r;
            }
            let (term, _, _) = bin_terms(n, nu);
            // A handful of roundings in the product form (1.1e-16 each).
            assert!(
                (term / (nu * series) - 1.0).abs() < 1e-15,
                "r = {r}: {term} vs {}",
                nu * series
            );
        }
    }

    /// The 256-bit build of the Poisson pass against the portable one, bit for
    /// bit, on counts and expectations of every kind (identical arithmetic).
    #[cfg(target_arch = "x86_64")]
    #[test]
    fn vector_build_gives_identical_bits() {
        if !std::is_x86_feature_detected!("avx2") {
            return;
        }
        let counts: Vec<f64> = (0..103).map(|j| f64::from((j * 37) % 23)).collect();
        let expected: Vec<f64> = (0..103).map(|j| 0.01 + f64::from(j % 17) * 1.37).collect();
        let run = |vector: bool| {
            let (mut w, mut c, mut l) = (vec![0.0; 103], vec![0.0; 103], vec![0.0; 103]);
            let total = if vector {
                // SAFETY: AVX2 was detected above.
                unsafe { terms_with_weights_avx2(&counts, &expected, &mut w, &mut c, &mut l) }
            } else {
                terms_with_weights_portable(&counts, &expected, &mut w, &mut c, &mut l)
            };
            let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
            (total.to_bits(), bits(&w), bits(&c), bits(&l))
        };
        assert_eq!(run(true), run(false));
    }

    #[test]
    fn invalid_expectations_give_infinity() {
        let mut weights = [0.0; 2];
        let mut curvatures = [0.0; 2];
        let mut terms = [0.0; 2];
        for expected in [[1.0, 0.0], [1.0, -1.0], [1.0, f64::NAN]] {
            let total = terms_with_weights(
                &[1.0, 2.0],
                &expected,
                &mut weights,
                &mut curvatures,
                &mut terms,
            );
            assert_eq!(total, f64::INFINITY);
        }
        let total = terms_with_weights(
            &[1.0, 0.0],
            &[1.0, 0.0],
            &mut weights,
            &mut curvatures,
            &mut terms,
        );
        assert_eq!(total, 0.0);
    }
}
