//! `resolution`: a channel's Gaussian width as a function of the signal
//! position, so that a peak moved along a scan keeps the width the detector
//! gives it there.
//!
//! Two forms: a table of `points` `[[x, sigma], ...]`, linear between them
//! and constant beyond the end points, or the usual energy-resolution form
//! sigma(x)/x = a/sqrt(x) ⊕ b ⊕ c/x, i.e.
//!
//!   sigma(x) = sqrt(a² x + b² x² + c²),
//!
//! with a the stochastic, b the constant and c the noise term, x in the
//! observable's unit (Particle Data Group, Review of Particle Physics,
//! "Calorimetry").

use super::ScenarioError;
use super::validate::values::require_finite;
use crate::message::show;
use serde::Deserialize;

/// `resolution` as written: `{points: [[x, sigma], ...]}` or
/// `{stochastic: a, constant: b, noise: c}` (absent terms are 0).
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ResolutionFile {
    #[serde(default)]
    points: Option<Vec<[f64; 2]>>,
    #[serde(default)]
    stochastic: Option<f64>,
    #[serde(default)]
    constant: Option<f64>,
    #[serde(default)]
    noise: Option<f64>,
}

/// A checked resolution: sigma at every position.
#[derive(Debug, Clone, PartialEq)]
pub enum Resolution {
    /// Sorted by position; linear between points, constant beyond the ends.
    Points(Vec<[f64; 2]>),
    /// sigma(x) = sqrt(a² x + b² x² + c²) (module docs).
    Terms {
        stochastic: f64,
        constant: f64,
        noise: f64,
    },
}

impl ResolutionFile {
    /// The checked resolution, or an error naming the field under `path`
    /// (the owner's dotted path, e.g. `channels[1].`): points sorted by
    /// position with finite positive widths, or non-negative finite terms,
    /// not all zero.
    pub(super) fn checked(&self, path: &str) -> Result<Resolution, ScenarioError> {
        let field = |name: &str| format!("{path}resolution.{name}");
        let terms = [self.stochastic, self.constant, self.noise];
        match (&self.points, terms.iter().any(Option::is_some)) {
            (Some(_), true) => Err(ScenarioError::invalid(
                format!("{path}resolution"),
                "write either points or stochastic/constant/noise terms, not both",
            )),
            (None, false) => Err(ScenarioError::invalid(
                format!("{path}resolution"),
                "write points: [[x, sigma], ...] or {stochastic: a, constant: b, noise: c}",
            )),
            (Some(points), false) => {
                if points.is_empty() {
                    return Err(ScenarioError::invalid(
                        field("points"),
                        "at least one point [x, sigma] is needed, got an empty list",
                    ));
                }
                for (index, &[x, sigma]) in points.iter().enumerate() {
                    require_finite(&field(&format!("points[{index}][0]")), x)?;
                    if !(sigma.is_finite() && sigma > 0.0) {
                        return Err(ScenarioError::invalid(
                            field(&format!("points[{index}][1]")),
                            format!("a width must be finite and positive, got {}", show(sigma)),
                        ));
                    }
                    if index > 0 && points[index - 1][0] >= x {
                        return Err(ScenarioError::invalid(
                            field(&format!("points[{index}][0]")),
                            format!(
                                "points must be sorted by position, each above the one before: got {} after {}",
                                show(x),
                                show(points[index - 1][0])
                            ),
                        ));
                    }
                }
                Ok(Resolution::Points(points.clone()))
            }
            (None, true) => {
                for (name, value) in [
                    ("stochastic", self.stochastic),
                    ("constant", self.constant),
                    ("noise", self.noise),
                ] {
                    let value = value.unwrap_or(0.0);
                    if !(value.is_finite() && value >= 0.0) {
                        return Err(ScenarioError::invalid(
                            field(name),
                            format!("must be finite and not negative, got {}", show(value)),
                        ));
                    }
                }
                Ok(Resolution::Terms {
                    stochastic: self.stochastic.unwrap_or(0.0),
                    constant: self.constant.unwrap_or(0.0),
                    noise: self.noise.unwrap_or(0.0),
                })
            }
        }
    }
}

impl Resolution {
    /// sigma at position `x` (module docs); NaN where the terms give a
    /// negative square.
    pub fn sigma_at(&self, x: f64) -> f64 {
        match self {
            Resolution::Points(points) => {
                let last = points.len() - 1;
                if x <= points[0][0] {
                    return points[0][1];
                }
                if x >= points[last][0] {
                    return points[last][1];
                }
                let upper = points.partition_point(|point| point[0] <= x);
                let ([x0, s0], [x1, s1]) = (points[upper - 1], points[upper]);
                s0 + (x - x0) / (x1 - x0) * (s1 - s0)
            }
            Resolution::Terms {
                stochastic,
                constant,
                noise,
            } => (stochastic * stochastic * x + constant * constant * x * x + noise * noise).sqrt(),
        }
    }

    /// This resolution with every width multiplied by `factor`: each
    /// point's sigma, or all three terms (sigma(x) = sqrt(a² x + b² x² + c²)
    /// scales with a, b and c together), as a file with those numbers
    /// written would read.
    pub fn scaled(&self, factor: f64) -> Resolution {
        match self {
            Resolution::Points(points) => Resolution::Points(
                points
                    .iter()
                    .map(|&[x, sigma]| [x, sigma * factor])
                    .collect(),
            ),
            Resolution::Terms {
                stochastic,
                constant,
                noise,
            } => Resolution::Terms {
                stochastic: stochastic * factor,
                constant: constant * factor,
                noise: noise * factor,
            },
        }
    }

    /// d sigma / d x at `x`: the slope of the segment holding x (0 beyond
    /// the end points), or (a² + 2 b² x) / (2 sigma) for the terms.
    pub fn slope_at(&self, x: f64) -> f64 {
        match self {
            Resolution::Points(points) => {
                let last = points.len() - 1;
                if x < points[0][0] || x >= points[last][0] {
                    return 0.0;
                }
                let upper = points.partition_point(|point| point[0] <= x);
                let ([x0, s0], [x1, s1]) = (points[upper - 1], points[upper]);
                (s1 - s0) / (x1 - x0)
            }
            Resolution::Terms {
                stochastic,
                constant,
                ..
            } => {
                (stochastic * stochastic + 2.0 * constant * constant * x) / (2.0 * self.sigma_at(x))
            }
        }
    }

    /// The error naming `field` when the width is not finite and positive
    /// somewhere on `[from, to]`: checked at the ends and, for the terms, at
    /// the smallest square inside (a quadratic in x, whose minimum is at
    /// x = −a²/(2b²)); points are positive everywhere once checked.
    pub(super) fn require_positive_on(
        &self,
        field: &str,
        [from, to]: [f64; 2],
    ) -> Result<(), ScenarioError> {
        let mut at = vec![from, to];
        if let Resolution::Terms {
            stochastic,
            constant,
            ..
        } = self
            && *constant > 0.0
        {
            let vertex = -stochastic * stochastic / (2.0 * constant * constant);
            if vertex > from && vertex < to {
                at.push(vertex);
            }
        }
        for x in at {
            let sigma = self.sigma_at(x);
            if !(sigma.is_finite() && sigma > 0.0) {
                return Err(ScenarioError::invalid(
                    field,
                    format!(
                        "gives the width {} at position {}, inside [{}, {}]; a width must be finite and positive over the whole scan",
                        show(sigma),
                        show(x),
                        show(from),
                        show(to)
                    ),
                ));
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn points(points: &[[f64; 2]]) -> Resolution {
        Resolution::Points(points.to_vec())
    }

    /// Linear between points, constant beyond the ends (the definition).
    #[test]
    fn points_interpolate_linearly_and_hold_beyond_the_ends() {
        let resolution = points(&[[100.0, 2.0], [300.0, 6.0], [400.0, 6.0]]);
        assert_eq!(resolution.sigma_at(50.0), 2.0);
        assert_eq!(resolution.sigma_at(200.0), 4.0);
        assert_eq!(resolution.slope_at(200.0), 0.02);
        assert_eq!(resolution.sigma_at(350.0), 6.0);
        assert_eq!(resolution.sigma_at(900.0), 6.0);
        assert_eq!(resolution.slope_at(900.0), 0.0);
    }

    /// A factor on the resolution multiplies every width: the points'
    /// widths, or sqrt((ka)² x + (kb)² x² + (kc)²) = k sigma(x) for the terms.
    #[test]
    fn a_scaled_resolution_multiplies_every_width() {
        let table = points(&[[100.0, 2.0], [300.0, 6.0]]).scaled(1.5);
        assert_eq!(table, points(&[[100.0, 3.0], [300.0, 9.0]]));
        let terms = Resolution::Terms {
            stochastic: 0.5,
            constant: 0.01,
            noise: 1.0,
        };
        let wider = terms.scaled(2.0);
        for x in [10.0, 400.0, 900.0] {
            assert!(
                (wider.sigma_at(x) - 2.0 * terms.sigma_at(x)).abs() < 1e-12 * terms.sigma_at(x)
            );
        }
    }

    /// sigma(x) = sqrt(a² x + b² x² + c²) (PDG, "Calorimetry"): a = 0.5,
    /// b = 0.01, c = 1 at x = 400 gives sqrt(100 + 16 + 1) = sqrt(117).
    #[test]
    fn terms_add_in_quadrature() {
        let resolution = Resolution::Terms {
            stochastic: 0.5,
            constant: 0.01,
            noise: 1.0,
        };
        assert!((resolution.sigma_at(400.0) - 117f64.sqrt()).abs() < 1e-12);
        let h = 1e-4;
        let numeric = (resolution.sigma_at(400.0 + h) - resolution.sigma_at(400.0 - h)) / (2.0 * h);
        assert!((resolution.slope_at(400.0) - numeric).abs() < 1e-8);
    }

    /// Only the stochastic term: sigma vanishes at 0, refused there.
    #[test]
    fn a_width_of_zero_on_the_scan_is_refused() {
        let resolution = Resolution::Terms {
            stochastic: 0.5,
            constant: 0.0,
            noise: 0.0,
        };
        assert!(
            resolution
                .require_positive_on("resolution", [1.0, 10.0])
                .is_ok()
        );
        assert!(
            resolution
                .require_positive_on("resolution", [0.0, 10.0])
                .is_err()
        );
    }
}
