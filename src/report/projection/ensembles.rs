//! The ensembles of pseudo-experiments a projection runs, as the figures'
//! footnotes and the summary name and count them: one description each, so
//! every report counts the same toys.

use crate::projection::{ExposurePoint, Projection};

/// One ensemble of pseudo-experiments.
pub(super) struct Ensemble {
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
    /// Pseudo-experiments requested per exposure point.
    pub toys: usize,
    pub failed_fits: fn(&ExposurePoint) -> usize,
}

impl Ensemble {
    /// Signal-plus-background toys for the discovery significance.
    pub fn discovery(projection: &Projection) -> Ensemble {
        Ensemble {
            heading: "Failed fits",
            figure_heading: "Failed fits",
            thrown: "pseudo-experiments",
            fits: "fits",
            results: "the quantiles",
            toys: projection.toys,
            failed_fits: |point| point.failed_fits,
        }
    }

    /// Background-only toys for the expected limits.
    pub fn limits(projection: &Projection) -> Ensemble {
        Ensemble {
            heading: "Failed fits (limits)",
            figure_heading: "Failed limit fits",
            thrown: "background-only pseudo-experiments",
            fits: "limit fits",
            results: "the limit quantiles",
            toys: projection.toys,
            failed_fits: |point| point.limit_failed_fits,
        }
    }

    /// Background-only toys for the q0 calibration.
    pub fn calibration(projection: &Projection) -> Ensemble {
        Ensemble {
            heading: "Failed fits (q0 calibration)",
            figure_heading: "Failed calibration fits",
            thrown: "background-only pseudo-experiments",
            fits: "calibration fits",
            results: "the toy p-values",
            toys: projection.calibration_toys,
            failed_fits: |point| point.calibration.as_ref().map_or(0, |c| c.failed_fits),
        }
    }

    /// The ensembles the projection ran, in this order: discovery, limits
    /// (with toys and a confidence level), calibration.
    pub fn ran(projection: &Projection) -> Vec<Ensemble> {
        let with_toys = projection.toys > 0;
        [
            with_toys.then(|| Ensemble::discovery(projection)),
            (with_toys && projection.cl.is_some()).then(|| Ensemble::limits(projection)),
            (projection.calibration_toys > 0).then(|| Ensemble::calibration(projection)),
        ]
        .into_iter()
        .flatten()
        .collect()
    }

    /// Pseudo-experiments requested over the whole grid.
    pub fn total_toys(&self, projection: &Projection) -> usize {
        self.toys * projection.points.len()
    }

    /// Failed fits over the whole grid.
    pub fn total_failed(&self, projection: &Projection) -> usize {
        projection.points.iter().map(self.failed_fits).sum()
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
        let limits = Ensemble::limits(&projection);
        assert_eq!(limits.total_toys(&projection), 62000);
        assert_eq!(limits.total_failed(&projection), 8);
        assert_eq!(
            limits.footnote(&projection).unwrap(),
            "Failed limit fits: 8 of 62000 background-only pseudo-experiments, \
             excluded from the median and bands."
        );
        assert_eq!(
            Ensemble::calibration(&projection).total_toys(&projection),
            155000
        );
    }

    #[test]
    fn no_failure_no_footnote() {
        let projection = example::asimov_only_with_limits();
        assert!(Ensemble::ran(&projection).is_empty());
        assert_eq!(Ensemble::discovery(&projection).footnote(&projection), None);
    }
}
