//! The look-elsewhere effect without pseudo-experiments: the mean number of
//! upcrossings of the local significance over a position scan, from the
//! geometry of the signal templates at the background-only Asimov point.
//!
//! In the large-sample limit the local significance Z(m) of a signal at
//! position m is a unit-variance Gaussian process under the background-only
//! hypothesis, with correlation <u_m, u_m'> between positions, where u_m is
//! the signal template t_m = dnu/dmu at m made orthogonal to the nuisance
//! directions and normalised, both in the Fisher metric of the
//! background-only Asimov point (see `likelihood::ProfiledMetric`). Its mean
//! number of upcrossings of a level c over the scan is
//!
//!   E N(c) = exp(-c²/2) / (2 pi) * integral of sqrt(lambda2(m)) dm,  lambda2(m) = |du_m/dm|²
//!
//! (Rice, Bell Syst. Tech. J. 23 (1944) 282; Cramér and Leadbetter,
//! "Stationary and Related Stochastic Processes", 1967, for the non-stationary
//! form). With t' = dt_m/dm, from the shapes' analytic derivatives in their
//! position and width (the width moving with the position when it grows
//! along the scan),
//!
//!   lambda2 = (<t', t'> <t, t> - <t, t'>²) / <t, t>²,
//!
//! the squared derivative of the unit vector. For q0 = Z² (one-sided) an
//! upcrossing of a level u by q0 is one of sqrt(u) by Z, and the global
//! p-value of a local q0 = q is p_global ≈ p_local(q) + E N(sqrt q) (Gross
//! and Vitells, Eur. Phys. J. C 70 (2010) 525, with N taken at q itself),
//! which is the formula of `look_elsewhere` with N(u0) = E N(sqrt u0), since
//! E N(sqrt q) = E N(sqrt u0) exp(-(q - u0)/2).
//! Channels stack: the template runs over the bins of every channel, so their
//! information adds in the metric.
//!
//! [`scan_geometry`] computes the integral at one exposure from scratch;
//! [`GeometryTable`] (`table.rs`) tabulates the quadrature nodes once and
//! gives it at any exposure, as a projection needs at every grid point and
//! day-solving step.

mod quadrature;
mod table;

pub use table::GeometryTable;

use crate::likelihood::{Likelihood, MetricFailure, ProfiledMetric};
use crate::look_elsewhere::{REFERENCE_LEVEL, global_p_value, global_significance};
use crate::model::SIGNAL_STRENGTH;
use crate::scenario::SignalScan;
use std::f64::consts::PI;
use std::fmt;

/// Relative accuracy asked of the integral of sqrt(lambda2).
const INTEGRATION_TOLERANCE: f64 = 1e-10;

/// Panels per peak width in the first cut of the scan interval: lambda2
/// changes on the scale of a width near the edges of the range.
const PANELS_PER_WIDTH: f64 = 1.0;

/// Most panels in the first cut, so a scan of many widths stays fast; the
/// adaptive halving refines where needed.
const MAX_PANELS: usize = 4096;

/// The positions of a scan as a path of the signal shape's parameters.
pub struct PeakPath<'a> {
    /// The interval scanned; empty (from = to) for a single position.
    pub interval: [f64; 2],
    /// The signal shapes' parameters with the peak at a position (channel
    /// after channel, as `Likelihood::place_signal` takes them).
    pub parameters_at: Box<dyn Fn(f64) -> Vec<f64> + 'a>,
    /// d parameters / d position at a position, laid out alike: 1 for each
    /// position, the width's slope there for each width, 0 for the rest.
    pub direction_at: Box<dyn Fn(f64) -> Vec<f64> + 'a>,
    /// The narrowest width along the path, in the units of the position.
    pub narrowest_width: f64,
}

/// The Asimov geometry of a scan at one exposure.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScanGeometry {
    /// Integral of sqrt(lambda2(m)) over the scan.
    pub rice_length: f64,
}

/// Why the geometry of a scan cannot be computed.
#[derive(Debug, Clone, PartialEq)]
pub enum UpcrossingError {
    /// The Fisher metric of the background-only Asimov point is degenerate.
    Metric(MetricFailure),
    /// The nuisance parameters absorb the whole signal template at this
    /// position, which leaves it no significance.
    SignalAbsorbed { position: f64 },
}

impl fmt::Display for UpcrossingError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            UpcrossingError::Metric(MetricFailure::EmptyBin { bin, expected }) => write!(
                f,
                "bin {bin} expects {expected} background events, so the look-elsewhere geometry is undefined"
            ),
            UpcrossingError::Metric(MetricFailure::SingularNuisances) => write!(
                f,
                "the nuisance parameters are not all constrained by the data at the background-only point"
            ),
            UpcrossingError::SignalAbsorbed { position } => write!(
                f,
                "at position {position} the nuisance parameters absorb the whole signal"
            ),
        }
    }
}

impl std::error::Error for UpcrossingError {}

/// The path of the scan `scan`: every channel's signal moved together.
pub fn scan_path(scan: &SignalScan) -> PeakPath<'_> {
    PeakPath {
        interval: scan.interval(),
        parameters_at: Box::new(|m| scan.shape_parameters_at(m)),
        direction_at: Box::new(|m| scan.direction_at(m)),
        narrowest_width: scan.narrowest_width(),
    }
}

/// The geometry of the scan `scan` of the model's signal at `live_days`.
pub fn scan_geometry_of(
    likelihood: &Likelihood,
    scan: &SignalScan,
    live_days: f64,
) -> Result<ScanGeometry, UpcrossingError> {
    scan_geometry(likelihood, &scan_path(scan), live_days)
}

/// The geometry of `path` at `live_days`: the integral of sqrt(lambda2) by
/// adaptive Gauss-Legendre quadrature, starting from panels of about one
/// width (module docs).
pub fn scan_geometry(
    likelihood: &Likelihood,
    path: &PeakPath,
    live_days: f64,
) -> Result<ScanGeometry, UpcrossingError> {
    let theta = background_only(likelihood);
    let metric = likelihood
        .profiled_metric(&theta, live_days)
        .map_err(UpcrossingError::Metric)?;
    let [from, to] = path.interval;
    let panels = ((to - from) / path.narrowest_width * PANELS_PER_WIDTH).ceil();
    let panels = (panels as usize).clamp(1, MAX_PANELS);
    let (mut template, mut slope) = (vec![0.0; metric.bins()], vec![0.0; metric.bins()]);
    let mut absorbed_at = None;
    let node = |m: f64| {
        let shapes = likelihood.signal_shapes(&(path.parameters_at)(m));
        shapes.template_along(
            likelihood,
            &theta,
            live_days,
            &(path.direction_at)(m),
            &mut template,
            &mut slope,
        );
        let value = root_lambda2(&metric, &template, &slope);
        if value.is_none() {
            absorbed_at.get_or_insert(m);
        }
        value
    };
    let rule = quadrature::common_rule(
        from,
        to,
        panels,
        INTEGRATION_TOLERANCE,
        1,
        node,
        |&value, _| value,
    );
    if let Some(position) = absorbed_at {
        return Err(UpcrossingError::SignalAbsorbed { position });
    }
    let rice_length = rule
        .into_iter()
        .map(|(value, weight)| weight * value.unwrap_or(0.0))
        .sum();
    Ok(ScanGeometry { rice_length })
}

/// The model's nominal parameters with no signal: the background-only
/// Asimov point whose metric the geometry is taken in.
fn background_only(likelihood: &Likelihood) -> Vec<f64> {
    let mut theta = likelihood.model().nominal_parameters();
    theta[SIGNAL_STRENGTH] = 0.0;
    theta
}

/// sqrt(lambda2) of a template and its slope (module docs); None when the
/// profiled template vanishes.
fn root_lambda2(metric: &ProfiledMetric, template: &[f64], slope: &[f64]) -> Option<f64> {
    root_lambda2_of(
        metric.inner(template, template),
        metric.inner(template, slope),
        metric.inner(slope, slope),
    )
}

/// sqrt(lambda2) from the profiled <t, t>, <t, t'> and <t', t'> (module
/// docs); None when <t, t> is not positive: the profiled template vanishes.
fn root_lambda2_of(norm: f64, cross: f64, slope_norm: f64) -> Option<f64> {
    if !(norm > 0.0 && norm.is_finite()) {
        return None;
    }
    let lambda2 = (slope_norm - cross * cross / norm) / norm;
    Some(lambda2.max(0.0).sqrt())
}

impl ScanGeometry {
    /// E N(c) = exp(-c²/2) rice_length / (2 pi): the mean number of
    /// upcrossings of the level `z` by the local significance (Rice 1944).
    pub fn mean_upcrossings(&self, z: f64) -> f64 {
        (-0.5 * z * z).exp() * self.rice_length / (2.0 * PI)
    }

    /// The mean number of upcrossings of the level `u` by q0 = Z²: those of
    /// sqrt(u) by Z.
    pub fn mean_upcrossings_of_q0(&self, u: f64) -> f64 {
        self.mean_upcrossings(u.max(0.0).sqrt())
    }

    /// The global significance of a local one, with the upcrossings of the
    /// reference level from this geometry (`look_elsewhere`).
    pub fn global_significance(&self, local_z: f64) -> f64 {
        global_significance(local_z, REFERENCE_LEVEL, self.reference_upcrossings())
    }

    /// E N at `look_elsewhere::REFERENCE_LEVEL`.
    pub fn reference_upcrossings(&self) -> f64 {
        self.mean_upcrossings_of_q0(REFERENCE_LEVEL)
    }

    fn global_p_value(&self, local_z: f64) -> f64 {
        global_p_value(
            local_z * local_z,
            REFERENCE_LEVEL,
            self.reference_upcrossings(),
        )
    }

    /// The local significance whose global significance is `global_z`: the
    /// root of p_local(z) + E N(z) = p(global_z), decreasing in z, by
    /// bisection to 1e-12.
    pub fn local_significance_for(&self, global_z: f64) -> f64 {
        let target = crate::asymptotic::p_value(global_z);
        let mut low = global_z;
        let mut high = global_z + 1.0;
        while self.global_p_value(high) > target {
            low = high;
            high += 1.0;
        }
        while high - low > 1e-12 * high.max(1.0) {
            let middle = 0.5 * (low + high);
            if self.global_p_value(middle) > target {
                low = middle;
            } else {
                high = middle;
            }
        }
        0.5 * (low + high)
    }
}

#[cfg(test)]
mod tests;
