//! Poisson counts for one fixed mean, drawn many times.
//!
//! A pseudo-experiment draws every bin from the same mean again and again, so
//! the distribution is tabulated once and each count costs one uniform variate
//! and a short search: inversion of the cumulative distribution with a guide
//! table (Chen and Asau, AIIE Transactions 6 (1974) 163; Devroye,
//! Non-Uniform Random Variate Generation, Springer 1986, ch. III, from memory).

use rand::RngExt;
use rand_distr::{Distribution, Poisson};
use rand_pcg::Pcg64;

/// Means up to this are tabulated (about 1,300 entries, 16 kB, at the limit);
/// larger ones use the rejection sampler of rand_distr.
const TABLE_MEAN_LIMIT: f64 = 4096.0;

/// Counts whose probability is below this fraction of the most probable
/// count's are left out of the table. Their total probability is below
/// 1e-19, under the 2^-53 = 1.1e-16 spacing of the uniform variates, so no
/// inversion with double-precision variates could reach them.
const NEGLIGIBLE: f64 = 1e-21;

/// Draws Poisson counts with one fixed mean.
#[derive(Debug, Clone)]
pub enum PoissonCounts {
    /// A mean of zero (or an invalid one): always no count.
    Zero,
    Table(InversionTable),
    Rejection(Poisson<f64>),
}

impl PoissonCounts {
    pub fn new(mean: f64) -> PoissonCounts {
        if !(mean > 0.0 && mean.is_finite()) {
            PoissonCounts::Zero
        } else if mean <= TABLE_MEAN_LIMIT {
            PoissonCounts::Table(InversionTable::new(mean))
        } else {
            Poisson::new(mean).map_or(PoissonCounts::Zero, PoissonCounts::Rejection)
        }
    }

    /// One count, as a float.
    #[inline]
    pub fn sample(&self, rng: &mut Pcg64) -> f64 {
        match self {
            PoissonCounts::Zero => 0.0,
            PoissonCounts::Table(table) => table.sample(rng),
            PoissonCounts::Rejection(poisson) => poisson.sample(rng),
        }
    }
}

/// The cumulative distribution over the counts that matter, and the guide.
#[derive(Debug, Clone)]
pub struct InversionTable {
    /// The smallest tabulated count.
    first: u32,
    /// P(K <= first + i), the last entry exactly one.
    cumulative: Vec<f64>,
    /// For slot g of the guide, the index to start the search from, flagged
    /// with [`SETTLED`] when every variate of the slot has that answer (see
    /// [`guide_table`]).
    guide: Vec<u16>,
}

impl InversionTable {
    /// The table of Poisson(mean), from p(k+1) = p(k) mean / (k+1) walked both
    /// ways from the most probable count and normalised by the sum (so no
    /// factorial or exponential of the mean is ever formed).
    fn new(mean: f64) -> InversionTable {
        let mode = mean.floor();
        let mut below = Vec::new();
        let mut weight = 1.0;
        let mut count = mode;
        while count > 0.0 {
            weight *= count / mean;
            if weight < NEGLIGIBLE {
                break;
            }
            count -= 1.0;
            below.push(weight);
        }
        let first = count as u32;
        let mut weights: Vec<f64> = below.into_iter().rev().collect();
        weights.push(1.0);
        let mut weight = 1.0;
        let mut count = mode;
        loop {
            count += 1.0;
            weight *= mean / count;
            if weight < NEGLIGIBLE {
                break;
            }
            weights.push(weight);
        }
        let total: f64 = weights.iter().sum();
        let mut sum = 0.0;
        let mut cumulative: Vec<f64> = weights
            .iter()
            .map(|w| {
                sum += w;
                sum / total
            })
            .collect();
        *cumulative.last_mut().expect("the mode is tabulated") = 1.0;
        debug_assert!(cumulative.len() < usize::from(SETTLED));
        let guide = guide_table(&cumulative);
        InversionTable {
            first,
            cumulative,
            guide,
        }
    }

    /// The smallest count whose cumulative probability exceeds a uniform
    /// variate u in [0, 1); the guide entry of u is never past it, and is it
    /// when settled.
    #[inline]
    fn sample(&self, rng: &mut Pcg64) -> f64 {
        let u: f64 = rng.random();
        let slot = ((u * self.guide.len() as f64) as usize).min(self.guide.len() - 1);
        let entry = self.guide[slot];
        let mut index = (entry & !SETTLED) as usize;
        if entry & SETTLED == 0 {
            while self.cumulative[index] <= u {
                index += 1;
            }
        }
        f64::from(self.first + index as u32)
    }
}

/// Guide entries per table entry: with four, most slots lie inside the
/// probability of a single count.
const GUIDE_SLOTS_PER_ENTRY: usize = 4;

/// Flag of a guide entry whose slot holds a single answer. Tables stay far
/// below the 2^15 entries the other bits can index (about 1,300 at the
/// largest tabulated mean), so a guide entry takes two bytes and the guide of
/// a few hundred bins stays in the processor's cache.
const SETTLED: u16 = 1 << 15;

/// Widening of each slot on both sides, far above the rounding of u x slots
/// (at most slots x 2^-53, about 1e-12 for the largest tables), so that a
/// variate assigned to a slot by rounded arithmetic lies inside the widened slot.
const SLOT_MARGIN: f64 = 1e-9;

/// [`GUIDE_SLOTS_PER_ENTRY`] guide entries per table entry. Slot g covers
/// the variates in [g/slots, (g+1)/slots), widened by [`SLOT_MARGIN`]; its
/// entry is the first index whose cumulative probability exceeds the lower
/// end, and it is [`SETTLED`] when that probability exceeds the upper end too,
/// so that every variate of the slot has that index as its answer.
fn guide_table(cumulative: &[f64]) -> Vec<u16> {
    let slots = GUIDE_SLOTS_PER_ENTRY * cumulative.len();
    let mut index = 0;
    (0..slots)
        .map(|g| {
            let lower = g as f64 / slots as f64 - SLOT_MARGIN;
            let upper = (g + 1) as f64 / slots as f64 + SLOT_MARGIN;
            while cumulative[index] <= lower {
                index += 1;
            }
            let settled = if cumulative[index] > upper {
                SETTLED
            } else {
                0
            };
            index as u16 | settled
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::ensemble::toy_stream;
    use statrs::distribution::{Discrete, DiscreteCDF, Poisson as Reference};

    fn table(mean: f64) -> InversionTable {
        match PoissonCounts::new(mean) {
            PoissonCounts::Table(table) => table,
            other => panic!("mean {mean}: expected a table, got {other:?}"),
        }
    }

    /// Every tabulated cumulative probability against statrs (a reference
    /// library for distribution functions), whose regularised incomplete gamma
    /// function is itself only good to about 1e-13 at a mean of 400 and 1e-12
    /// at 4096 (see the 40-digit values below).
    #[test]
    fn table_matches_reference_distribution() {
        for mean in [0.01, 0.7, 3.0, 29.5, 400.0, 4096.0] {
            let table = table(mean);
            let reference = Reference::new(mean).unwrap();
            for (i, &cumulative) in table.cumulative.iter().enumerate() {
                let count = u64::from(table.first) + i as u64;
                let expected = reference.cdf(count);
                assert!(
                    (cumulative - expected).abs() < 1e-11,
                    "mean {mean}, P(K <= {count}) = {cumulative}, reference {expected}"
                );
            }
            // What lies outside the table is negligible.
            let below = if table.first > 0 {
                reference.cdf(u64::from(table.first) - 1)
            } else {
                0.0
            };
            let last = u64::from(table.first) + table.cumulative.len() as u64 - 1;
            assert!(
                below < 1e-18 && reference.pmf(last + 1) < 1e-18,
                "mean {mean}"
            );
        }
    }

    /// P(K <= 389) for mean 400 = 0.30189794467029246, the sum of
    /// exp(-400) 400^k / k! for k <= 389, and P(K <= 4016) for mean 4096 =
    /// 0.10681863667809343, the regularised upper incomplete gamma Q(4017, 4096),
    /// both in 40-digit arithmetic (mpmath).
    #[test]
    fn table_is_accurate_to_rounding() {
        for (mean, count, expected) in [
            (400.0, 389, 0.301_897_944_670_292_46),
            (4096.0, 4016, 0.106_818_636_678_093_43),
        ] {
            let table = table(mean);
            let cumulative = table.cumulative[(count - table.first) as usize];
            assert!((cumulative - expected).abs() < 1e-15, "{cumulative}");
        }
    }

    /// Drawn frequencies of a small mean against the reference probabilities:
    /// each within 4 binomial standard deviations sqrt(p(1-p)/N) (common practice).
    #[test]
    fn frequencies_follow_the_distribution() {
        let mean = 2.5;
        let counts = PoissonCounts::new(mean);
        let draws = 200_000;
        let mut histogram = [0usize; 16];
        for toy in 0..draws {
            let k = counts.sample(&mut toy_stream(3, 1, toy)) as usize;
            histogram[k.min(15)] += 1;
        }
        let reference = Reference::new(mean).unwrap();
        for (k, &seen) in histogram[..15].iter().enumerate() {
            let p = reference.pmf(k as u64);
            let frequency = seen as f64 / draws as f64;
            let error = (p * (1.0 - p) / draws as f64).sqrt();
            assert!(
                (frequency - p).abs() < 4.0 * error + 1e-12,
                "P(K = {k}) = {p}, drawn {frequency}"
            );
        }
    }

    /// Mean and variance of a tabulated large mean and of one beyond the table
    /// limit: both equal the mean; errors sqrt(mean/N) and mean sqrt(2/N) (common practice).
    #[test]
    fn large_means_have_poisson_moments() {
        for mean in [3000.0, 20_000.0] {
            let counts = PoissonCounts::new(mean);
            let draws = 50_000;
            let values: Vec<f64> = (0..draws)
                .map(|toy| counts.sample(&mut toy_stream(5, 2, toy)))
                .collect();
            let average = values.iter().sum::<f64>() / draws as f64;
            let variance =
                values.iter().map(|v| (v - average).powi(2)).sum::<f64>() / (draws - 1) as f64;
            let n = draws as f64;
            assert!(
                (average - mean).abs() < 4.0 * (mean / n).sqrt(),
                "mean {average}"
            );
            assert!(
                (variance - mean).abs() < 4.0 * mean * (2.0 / n).sqrt(),
                "variance {variance}"
            );
        }
    }

    /// Each settled guide slot holds one answer: the inverse of the
    /// distribution (common practice) at both ends of the slot is its index.
    #[test]
    fn settled_slots_hold_one_count() {
        for mean in [0.3, 12.0, 400.0] {
            let table = table(mean);
            let slots = table.guide.len() as f64;
            let inverse = |u: f64| table.cumulative.iter().position(|&c| c > u).unwrap() as u16;
            let mut settled = 0;
            for (g, &entry) in table.guide.iter().enumerate() {
                let index = entry & !SETTLED;
                assert!(inverse(g as f64 / slots) >= index, "mean {mean}, slot {g}");
                if entry & SETTLED != 0 {
                    settled += 1;
                    assert_eq!(inverse(g as f64 / slots), index);
                    assert_eq!(inverse(((g + 1) as f64 / slots).min(1.0 - 1e-16)), index);
                }
            }
            assert!(
                settled * 2 > table.guide.len(),
                "mean {mean}: {settled} settled"
            );
        }
    }

    #[test]
    fn zero_and_invalid_means_give_no_count() {
        let mut rng = toy_stream(1, 0, 0);
        for mean in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert_eq!(PoissonCounts::new(mean).sample(&mut rng), 0.0);
        }
    }
}
