//! Starts for a series of fits of datasets that move with one number (the
//! signal strength tested or generated): the fitted parameters extrapolated
//! linearly from the last two fits of the series.

/// The last two fits along a path and the start they predict for the next.
/// Near a root, where a search's steps shrink quadratically, the linear
/// extrapolation misses the next minimum by the square of the step, so the
/// fit often converges at its start (Allgower and Georg, Numerical
/// Continuation Methods, Springer 1990, ch. 2, the secant predictor).
#[derive(Debug, Clone)]
pub struct FitPath {
    /// The start before any fit of the series.
    first: Vec<f64>,
    /// (position on the path, fitted parameters) of the last fit and the one before.
    last: Option<(f64, Vec<f64>)>,
    before: Option<(f64, Vec<f64>)>,
    start: Vec<f64>,
}

/// The extrapolation is used only for a step at most this many times the
/// last one; beyond, the last fit itself is the start.
const LONGEST_EXTRAPOLATION: f64 = 2.0;

impl FitPath {
    pub fn new(first: &[f64]) -> FitPath {
        FitPath {
            first: first.to_vec(),
            last: None,
            before: None,
            start: first.to_vec(),
        }
    }

    /// Starts a new series (a new dataset or exposure): the last fit stays
    /// the next start, but nothing is extrapolated across the two series.
    pub fn new_series(&mut self) {
        self.before = None;
    }

    /// The start of a fit at `at`: extrapolated from the last two fits when
    /// `at` is within `LONGEST_EXTRAPOLATION` of their step, else the last
    /// fit, else the first start.
    pub fn start_for(&mut self, at: f64) -> &[f64] {
        match (&self.last, &self.before) {
            (Some((last_at, last)), Some((before_at, before)))
                if (at - last_at).abs() <= LONGEST_EXTRAPOLATION * (last_at - before_at).abs() =>
            {
                let ratio = (at - last_at) / (last_at - before_at);
                for ((start, last), before) in self.start.iter_mut().zip(last).zip(before) {
                    *start = last + ratio * (last - before);
                }
            }
            (Some((_, last)), _) => self.start.copy_from_slice(last),
            (None, _) => self.start.copy_from_slice(&self.first),
        }
        &self.start
    }

    /// Records the parameters fitted at `at`.
    pub fn record(&mut self, at: f64, fitted: &[f64]) {
        // The oldest fit's vector is reused: a search records one fit per step.
        let values = match self.before.take() {
            Some((_, mut values)) => {
                values.copy_from_slice(fitted);
                values
            }
            None => fitted.to_vec(),
        };
        self.before = self.last.take();
        self.last = Some((at, values));
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Parameters linear in the path are predicted exactly; a step beyond
    /// twice the last falls back to the last fit.
    #[test]
    fn linear_paths_are_predicted_exactly() {
        let mut path = FitPath::new(&[0.0, 0.0]);
        assert_eq!(path.start_for(1.0), &[0.0, 0.0]);
        path.record(1.0, &[2.0, -1.0]);
        assert_eq!(path.start_for(1.5), &[2.0, -1.0]);
        path.record(1.5, &[3.0, -1.5]);
        assert_eq!(path.start_for(2.0), &[4.0, -2.0]);
        assert_eq!(path.start_for(3.0), &[3.0, -1.5]);
        path.new_series();
        assert_eq!(path.start_for(2.0), &[3.0, -1.5]);
    }
}
