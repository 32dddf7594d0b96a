//! The ensembles of pseudo-experiments a projection runs, as the figures'
//! footnotes, the summary and the failed-fit warnings name them: one
//! description each, keyed by [`warning::Ensemble`]. What each ensemble
//! counts (toys per point, failed fits per point, which ran) comes from the
//! projection itself (`Projection::ensembles`, `ensemble_toys`,
//! `ExposurePoint::failed_fits_of`), so every report counts the same toys.

use crate::projection::Projection;
use crate::warning;

/// How the reports name one ensemble of pseudo-experiments.
pub(in crate::report) struct Ensemble {
    pub kind: warning::Ensemble,
    /// Start of the summary's total line: "Failed fits", "Failed fits (limits)".
    pub heading: &'static str,
    /// Start of a figure's footnote: "Failed fits", "Failed limit fits".
    pub figure_heading: &'static str,
    /// What was thrown: "pseudo-experiments", "background-only pseudo-experiments".
    pub thrown: &'static str,
    /// Which fits a warning speaks of: "fits", "limit fits".
    pub fits: &'static str,
    /// What the failed fits are left out of.
    pub results: &'static str,
    /// Why the ensemble runs at no toy at some points.
    pub not_run: &'static str,
}

impl Ensemble {
    /// The description of `kind`.
    pub fn of(kind: warning::Ensemble) -> Ensemble {
        match kind {
            warning::Ensemble::Discovery => Ensemble::discovery(),
            warning::Ensemble::Limits => Ensemble::limits(),
            warning::Ensemble::Calibration => Ensemble::calibration(),
            warning::Ensemble::LookElsewhere => Ensemble::look_elsewhere(),
        }
    }

    /// Signal-plus-background toys for the discovery significance.
    pub fn discovery() -> Ensemble {
        Ensemble {
            kind: warning::Ensemble::Discovery,
            heading: "Failed fits",
            figure_heading: "Failed fits",
            thrown: "pseudo-experiments",
            fits: "fits",
            results: "the quantiles",
            not_run: "no live time",
        }
    }

    /// Background-only toys for the expected limits.
    pub fn limits() -> Ensemble {
        Ensemble {
            kind: warning::Ensemble::Limits,
            heading: "Failed fits (limits)",
            figure_heading: "Failed limit fits",
            thrown: "background-only pseudo-experiments",
            fits: "limit fits",
            results: "the limit quantiles",
            not_run: "no live time, or no bounded Asimov limit",
        }
    }

    /// Background-only toys for the q0 calibration.
    pub fn calibration() -> Ensemble {
        Ensemble {
            kind: warning::Ensemble::Calibration,
            heading: "Failed fits (q0 calibration)",
            figure_heading: "Failed calibration fits",
            thrown: "background-only pseudo-experiments",
            fits: "calibration fits",
            results: "the toy p-values",
            not_run: "no live time",
        }
    }

    /// Background-only toys fitted at every scanned signal position.
    pub fn look_elsewhere() -> Ensemble {
        Ensemble {
            kind: warning::Ensemble::LookElsewhere,
            heading: "Failed fits (look-elsewhere scans)",
            figure_heading: "Failed scan fits",
            thrown: "background-only scans",
            fits: "scan fits",
            results: "the upcrossing counts",
            not_run: "no live time",
        }
    }

    /// The ensembles the projection ran, in the order of
    /// `Projection::ensembles`: discovery, limits (with toys and a confidence
    /// level), calibration.
    pub fn ran(projection: &Projection) -> Vec<Ensemble> {
        projection
            .ensembles()
            .into_iter()
            .map(Ensemble::of)
            .collect()
    }

    /// Pseudo-experiments run over the whole grid (none at points where
    /// the ensemble did not run, see `Projection::toys_run_at`).
    pub fn total_toys(&self, projection: &Projection) -> usize {
        projection.toys_run(self.kind)
    }

    /// Failed fits over the whole grid.
    pub fn total_failed(&self, projection: &Projection) -> usize {
        projection
            .points
            .iter()
            .map(|point| point.failed_fits_of(self.kind))
            .sum()
    }

    /// A figure's footnote when any fit failed: "Failed fits: 12 of 62000
    /// pseudo-experiments, excluded from the median and bands."
    pub fn footnote(&self, projection: &Projection) -> Option<String> {
        let failed = self.total_failed(projection);
        (failed > 0).then(|| {
            format!(
                "{}: {failed} of {} {}, excluded from the median and bands.",
                self.figure_heading,
                self.total_toys(projection),
                self.thrown
            )
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::projection::example;

    #[test]
    fn each_ensemble_counts_its_own_failures() {
        let mut projection = example::with_limits();
        projection.points[0].limit_failed_fits = 5;
        let names: Vec<&str> = Ensemble::ran(&projection)
            .iter()
            .map(|ensemble| ensemble.heading)
            .collect();
        assert_eq!(
            names,
            [
                "Failed fits",
                "Failed fits (limits)",
                "Failed fits (q0 calibration)"
            ]
        );
        // 31 points of 2000 toys; 12 discovery and 8 limit failures in the example.
        let limits = Ensemble::limits();
        assert_eq!(limits.total_toys(&projection), 62000);
        assert_eq!(limits.total_failed(&projection), 8);
        assert_eq!(
            limits.footnote(&projection).unwrap(),
            "Failed limit fits: 8 of 62000 background-only pseudo-experiments, \
             excluded from the median and bands."
        );
        assert_eq!(Ensemble::calibration().total_toys(&projection), 155000);
    }

    #[test]
    fn no_failure_no_footnote() {
        let projection = example::asimov_only_with_limits();
        assert!(Ensemble::ran(&projection).is_empty());
        assert_eq!(Ensemble::discovery().footnote(&projection), None);
    }
}
