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
            (self.look_elsewhere_toys() > 0).then_some(Ensemble::LookElsewhere),
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
            Ensemble::LookElsewhere => self.look_elsewhere_toys(),
        }
    }

    /// Background-only scans requested per point; 0 without a scan.
    pub fn look_elsewhere_toys(&self) -> usize {
        self.scan
            .as_ref()
            .map_or(0, |scan| scan.look_elsewhere_toys)
    }

    /// Pseudo-experiments of `ensemble` run at `point`: the requested number
    /// where the ensemble ran, 0 where it did not. No toy runs before any live
    /// time (every discovery toy is then the empty dataset, Z = 0), and limit
    /// toys run only where the Asimov median limit is bounded (`limit_asimov`
    /// present; `PointRunner::point` skips them otherwise).
    pub fn toys_run_at(&self, point: &ExposurePoint, ensemble: Ensemble) -> usize {
        let ran = point.live_days > 0.0
            && match ensemble {
                Ensemble::Discovery => true,
                Ensemble::Limits => self.cl.is_some() && point.limit_asimov.is_some(),
                Ensemble::Calibration => point.calibration.is_some(),
                Ensemble::LookElsewhere => point
                    .global
                    .as_ref()
                    .is_some_and(|global| global.look_elsewhere.is_some()),
            };
        if ran { self.ensemble_toys(ensemble) } else { 0 }
    }

    /// Pseudo-experiments of `ensemble` run over the whole grid.
    pub fn toys_run(&self, ensemble: Ensemble) -> usize {
        self.points
            .iter()
            .map(|point| self.toys_run_at(point, ensemble))
            .sum()
    }

    /// Grid points where `ensemble` ran.
    pub fn points_run(&self, ensemble: Ensemble) -> usize {
        self.points
            .iter()
            .filter(|point| self.toys_run_at(point, ensemble) > 0)
            .count()
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
            points: self.points_run(ensemble),
            worst_failed: worst.failed_fits_of(ensemble),
            toys,
            worst_days: worst.days,
            start: self.start,
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
            Ensemble::LookElsewhere => self
                .global
                .as_ref()
                .and_then(|global| global.look_elsewhere.as_ref())
                .map_or(0, |measured| measured.failed_fits),
        }
    }
}
