//! Background-only pseudo-experiments fitted at every scanned signal position,
//! for the look-elsewhere effect.
//!
//! Each pseudo-experiment is fitted once without signal, then with the signal
//! at every position of the scan (mu >= 0 free, nuisance parameters profiled,
//! each fit started from its neighbour's best fit). Of the local q0(position)
//! only what the global p-value needs is kept, as the scan goes: the number
//! of upcrossings of a reference level and the largest q0. Nothing grows with
//! the number of positions.

use super::{EnsembleOutcome, EnsemblePlan, Family, Generator, ToyValue, run_ensemble};
use crate::likelihood::{Dataset, FitFailure, Fitter, Likelihood, q0_from_fits};
use crate::model::SIGNAL_STRENGTH;
use crate::scenario::SignalScan;

/// What one background-only scan leaves: the upcrossings of the reference
/// level by q0(position), and the largest q0 over the positions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScanToy {
    pub upcrossings: u32,
    pub max_q0: f64,
}

impl ToyValue for ScanToy {
    const FAILED: ScanToy = ScanToy {
        upcrossings: 0,
        max_q0: f64::NAN,
    };

    fn is_failed(&self) -> bool {
        self.max_q0.is_nan()
    }
}

/// Counts upcrossings of `level` along a sequence of q0 values: steps from
/// below the level to at or above it (Rice, Bell Syst. Tech. J. 23 (1944)
/// 282; Gross and Vitells, Eur. Phys. J. C 70 (2010) 525). A sequence that
/// starts above the level has not crossed it there: that case is the
/// p_local term of the global p-value.
#[derive(Debug, Clone, Copy)]
pub struct UpcrossingCount {
    level: f64,
    previous: f64,
    upcrossings: u32,
    max_q0: f64,
}

impl UpcrossingCount {
    pub fn new(level: f64) -> UpcrossingCount {
        UpcrossingCount {
            level,
            previous: f64::NAN,
            upcrossings: 0,
            max_q0: f64::NEG_INFINITY,
        }
    }

    /// Takes the next q0 of the sequence.
    pub fn push(&mut self, q0: f64) {
        if self.previous < self.level && q0 >= self.level {
            self.upcrossings += 1;
        }
        self.previous = q0;
        self.max_q0 = self.max_q0.max(q0);
    }

    pub fn finish(self) -> ScanToy {
        ScanToy {
            upcrossings: self.upcrossings,
            max_q0: self.max_q0,
        }
    }
}

/// Most numbers of a table of signal bin fractions (positions x bins) kept
/// for a scan: 2^22, 32 MiB. Beyond it each fit computes its placement.
const MAX_TABLE_ENTRIES: usize = 1 << 22;

/// Where the signal sits at each position of a scan, made once per
/// ensemble and shared by its workers: the signal's bin fractions at every
/// position (a table of positions x bins, at most `MAX_TABLE_ENTRIES`),
/// or, for larger scans, the shape parameters from which each fit computes
/// them. Both give the same fractions bit for bit.
#[derive(Debug)]
pub enum ScanPlacements {
    Table { fractions: Vec<f64>, row: usize },
    Parameters { values: Vec<f64>, row: usize },
}

impl ScanPlacements {
    pub fn new(likelihood: &Likelihood, scan: &SignalScan) -> ScanPlacements {
        let parameters: Vec<Vec<f64>> = scan
            .positions()
            .map(|position| scan.shape_parameters_at(position))
            .collect();
        let bins = likelihood.signal_bins();
        if bins * scan.len() <= MAX_TABLE_ENTRIES {
            let mut fractions = vec![0.0; bins * scan.len()];
            for (row, placement) in fractions.chunks_exact_mut(bins).zip(&parameters) {
                likelihood.signal_fractions(placement, row);
            }
            ScanPlacements::Table {
                fractions,
                row: bins,
            }
        } else {
            ScanPlacements::Parameters {
                row: parameters.first().map_or(0, Vec::len),
                values: parameters.concat(),
            }
        }
    }

    /// Moves the signal in the fitter's workspace to each position in turn,
    /// calling `fit` there.
    fn for_each<E>(
        &self,
        likelihood: &Likelihood,
        fitter: &mut Fitter,
        mut fit: impl FnMut(&mut Fitter) -> Result<(), E>,
    ) -> Result<(), E> {
        let (values, row, table) = match self {
            ScanPlacements::Table { fractions, row } => (fractions, *row, true),
            ScanPlacements::Parameters { values, row } => (values, *row, false),
        };
        for placement in values.chunks_exact(row) {
            if table {
                likelihood.set_signal_fractions(placement, fitter.workspace());
            } else {
                likelihood.place_signal(placement, fitter.workspace());
            }
            fit(fitter)?;
        }
        Ok(())
    }
}

/// Fits datasets with the signal at every position of a scan, with one
/// fitter whose workspace the signal is moved in.
#[derive(Debug)]
pub struct PositionScan<'l, 'm, 'p> {
    likelihood: &'l Likelihood<'m>,
    fitter: Fitter<'l, 'm>,
    placements: &'p ScanPlacements,
    /// Nominal parameters with mu = 0: the start of the background-only fit.
    background_only: Vec<f64>,
    null_parameters: Vec<f64>,
    start: Vec<f64>,
}

impl<'l, 'm, 'p> PositionScan<'l, 'm, 'p> {
    pub fn new(
        likelihood: &'l Likelihood<'m>,
        placements: &'p ScanPlacements,
    ) -> PositionScan<'l, 'm, 'p> {
        let mut background_only = likelihood.model().nominal_parameters();
        background_only[SIGNAL_STRENGTH] = 0.0;
        PositionScan {
            likelihood,
            fitter: Fitter::new(likelihood),
            placements,
            null_parameters: background_only.clone(),
            start: background_only.clone(),
            background_only,
        }
    }

    /// q0 of `data` after `live_days` with the signal at each position in
    /// turn, given to `visit` in position order.
    ///
    /// q0 = 2 [min(-ln L | mu = 0) - min_{mu >= 0}(-ln L)] (Cowan, Cranmer,
    /// Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, eq. 12): the
    /// background-only minimum does not depend on the position, so it is
    /// fitted once; each signal fit starts from the previous position's best
    /// fit, and is repeated from the background-only solution when it lands
    /// above that minimum (a subset of its parameter space).
    pub fn scan(
        &mut self,
        live_days: f64,
        data: &Dataset,
        mut visit: impl FnMut(f64),
    ) -> Result<(), FitFailure> {
        let null_nll = self
            .fitter
            .minimise(live_days, data, Some(0.0), &self.background_only)?;
        self.null_parameters
            .copy_from_slice(self.fitter.parameters());
        self.start.copy_from_slice(&self.null_parameters);
        let (start, null_parameters) = (&mut self.start, &self.null_parameters);
        self.placements
            .for_each(self.likelihood, &mut self.fitter, |fitter| {
                let mut free_nll = fitter.minimise(live_days, data, None, start)?;
                if free_nll > null_nll {
                    free_nll = fitter.minimise(live_days, data, None, null_parameters)?;
                }
                let fitted_mu = fitter.parameters()[SIGNAL_STRENGTH];
                visit(q0_from_fits(null_nll, free_nll, fitted_mu));
                start.copy_from_slice(fitter.parameters());
                Ok(())
            })
    }
}

/// The upcrossings of `reference_level` and the largest q0 of the
/// background-only pseudo-experiments `plan.toys` (mu = 0, nuisance
/// parameters nominal) after `live_days`, each fitted at every position of
/// `scan`.
pub fn look_elsewhere_ensemble(
    likelihood: &Likelihood,
    scan: &SignalScan,
    live_days: f64,
    exposure_index: usize,
    plan: &EnsemblePlan,
    reference_level: f64,
) -> EnsembleOutcome<ScanToy> {
    let mut background_only = likelihood.model().nominal_parameters();
    background_only[SIGNAL_STRENGTH] = 0.0;
    let generator = Generator::new(likelihood, &background_only, live_days);
    let placements = ScanPlacements::new(likelihood, scan);
    run_ensemble(
        &generator,
        Family::LookElsewhere.stream_index(exposure_index),
        plan,
        || PositionScan::new(likelihood, &placements),
        |positions, data| {
            let mut count = UpcrossingCount::new(reference_level);
            positions
                .scan(live_days, data, |q0| count.push(q0))
                .ok()
                .map(|()| count.finish())
        },
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn count(level: f64, sequence: &[f64]) -> ScanToy {
        let mut count = UpcrossingCount::new(level);
        sequence.iter().for_each(|&q0| count.push(q0));
        count.finish()
    }

    /// An upcrossing is a step from below the level to at or above it
    /// (Rice 1944): a sequence starting above it, or only touching it from
    /// above, has none there.
    #[test]
    fn upcrossings_are_steps_from_below_to_at_or_above() {
        assert_eq!(count(1.0, &[0.0, 2.0, 0.5, 1.0, 3.0, 0.0]).upcrossings, 2);
        assert_eq!(count(1.0, &[2.0, 3.0, 1.5]).upcrossings, 0);
        assert_eq!(count(1.0, &[2.0, 0.0, 0.0, 4.0]).upcrossings, 1);
        assert_eq!(count(1.0, &[0.0, 0.9, 0.99]).upcrossings, 0);
        assert_eq!(count(1.0, &[0.0, 2.0, 7.5, 0.0]).max_q0, 7.5);
    }
}
