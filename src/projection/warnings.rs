//! The warnings a projection carries, derived from its results: ensembles
//! that lost more than [`FAILED_FRACTION_WARNING`] of their fits at some
//! exposure point.

use super::{ExposurePoint, Projection};
use crate::warning::{Ensemble, FAILED_FRACTION_WARNING, Warning};

impl Projection {
    /// Every warning about the results, in the order of [`Projection::ensembles`].
    pub fn warnings(&self) -> Vec<Warning> {
        self.ensembles()
            .into_iter()
            .filter_map(|ensemble| self.failed_fit_warning(ensemble))
            .collect()
    }

    /// The ensembles the projection ran: discovery toys, background-only toys
    /// for the limits, and background-only toys for the q0 calibration.
    pub fn ensembles(&self) -> Vec<Ensemble> {
        [
            (self.toys > 0).then_some(Ensemble::Discovery),
            (self.toys > 0 && self.cl.is_some()).then_some(Ensemble::Limits),
            (self.calibration_toys > 0).then_some(Ensemble::Calibration),
        ]
        .into_iter()
        .flatten()
        .collect()
    }

    /// Pseudo-experiments of `ensemble` requested at each point.
    pub fn ensemble_toys(&self, ensemble: Ensemble) -> usize {
        match ensemble {
            Ensemble::Discovery | Ensemble::Limits => self.toys,
            Ensemble::Calibration => self.calibration_toys,
        }
    }

    /// The warning for `ensemble` when any point lost more than
    /// [`FAILED_FRACTION_WARNING`] of its fits, naming the worst point (the
    /// earliest of equals).
    pub fn failed_fit_warning(&self, ensemble: Ensemble) -> Option<Warning> {
        let toys = self.ensemble_toys(ensemble);
        let fraction = |failed: usize| failed as f64 / toys as f64;
        let flagged: Vec<&ExposurePoint> = self
            .points
            .iter()
            .filter(|point| fraction(point.failed_fits_of(ensemble)) > FAILED_FRACTION_WARNING)
            .collect();
        // `max_by_key` keeps the last of equals; reversed, that is the earliest day.
        let worst = flagged
            .iter()
            .rev()
            .max_by_key(|point| point.failed_fits_of(ensemble))?;
        Some(Warning::FailedFits {
            ensemble,
            flagged_points: flagged.len(),
            points: self.points.len(),
            worst_failed: worst.failed_fits_of(ensemble),
            toys,
            worst_days: worst.days,
        })
    }
}

impl ExposurePoint {
    /// Failed fits of `ensemble` at this point.
    pub fn failed_fits_of(&self, ensemble: Ensemble) -> usize {
        match ensemble {
            Ensemble::Discovery => self.failed_fits,
            Ensemble::Limits => self.limit_failed_fits,
            Ensemble::Calibration => self
                .calibration
                .as_ref()
                .map_or(0, |calibration| calibration.failed_fits),
        }
    }
}
