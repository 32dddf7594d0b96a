//! The Fisher information at an Asimov point, with the nuisance parameters
//! profiled: the metric in which the signal templates of a position scan are
//! compared.
//!
//! On the Asimov dataset of parameters theta (n_j = nu_j, global observables
//! at their expected values) the Hessian of -ln L is the expected (Fisher)
//! information, I_ab = sum_j dnu_j/dtheta_a dnu_j/dtheta_b / nu_j plus the
//! constraint terms, since every term proportional to (1 - n_j/nu_j) vanishes
//! (Cowan, Cranmer, Gross, Vitells, Eur. Phys. J. C 71 (2011) 1554, sec. 3.1
//! and eq. 18). Profiling the nuisance parameters eta replaces the inner
//! product of two signal directions a, b (vectors over bins) by
//!
//!   <a, b>_profiled = sum_j a_j b_j / nu_j - c_a^T I_eta^-1 c_b,  c_a = (sum_j a_j dnu_j/deta_k / nu_j)_k,
//!
//! the information left for the signal once the nuisance parameters have
//! absorbed what they can (the Schur complement of the nuisance block; Cowan
//! et al. 2011, eq. 18 inverted for the variance of mu-hat).

use super::Likelihood;
use super::linear::{dot, solve_positive_definite, weighted_dot};
use crate::model::SIGNAL_STRENGTH;

/// The Fisher metric over bins at an Asimov point, the nuisance parameters
/// profiled.
#[derive(Debug, Clone)]
pub struct ProfiledMetric {
    /// 1 / nu_j of every bin (all channels).
    weights: Vec<f64>,
    /// dnu_j/deta_k / nu_j for each nuisance parameter k that moves some bin,
    /// `k * bins + j`.
    weighted_directions: Vec<f64>,
    /// The Cholesky factor's input: the information of those nuisance
    /// parameters, row-major.
    nuisance_information: Vec<f64>,
    nuisances: usize,
}

/// Why the metric cannot be formed at a point.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum MetricFailure {
    /// A bin expects no events (or an invalid number) under the Asimov point.
    EmptyBin { bin: usize, expected: f64 },
    /// The nuisance parameters' information is singular: some combination of
    /// them changes no expectation and no constraint.
    SingularNuisances,
}

impl Likelihood<'_> {
    /// The profiled Fisher metric at `theta` after `live_days` (see the module
    /// docs). Every parameter but the signal strength whose derivative moves
    /// some bin is profiled; parameters that move nothing at `theta` (a signal
    /// yield factor at mu = 0) decouple and are left out.
    pub fn profiled_metric(
        &self,
        theta: &[f64],
        live_days: f64,
    ) -> Result<ProfiledMetric, MetricFailure> {
        let mut work = self.workspace();
        let data = self.asimov_dataset(theta, live_days, &mut work);
        self.negative_log_likelihood_with_derivatives(theta, live_days, &data, &mut work);
        let bins = self.bins;
        let mut weights = Vec::with_capacity(bins);
        for (bin, &expected) in work.expected.iter().enumerate() {
            if !(expected > 0.0 && expected.is_finite()) {
                return Err(MetricFailure::EmptyBin { bin, expected });
            }
            weights.push(expected.recip());
        }
        let parameters = self.parameter_count();
        let profiled: Vec<usize> = (0..parameters)
            .filter(|&a| a != SIGNAL_STRENGTH)
            .filter(|&a| {
                work.expected_gradient[a * bins..(a + 1) * bins]
                    .iter()
                    .any(|&d| d != 0.0)
            })
            .collect();
        let mut weighted_directions = Vec::with_capacity(profiled.len() * bins);
        for &a in &profiled {
            let column = &work.expected_gradient[a * bins..(a + 1) * bins];
            weighted_directions.extend(column.iter().zip(&weights).map(|(d, w)| d * w));
        }
        let nuisance_information = profiled
            .iter()
            .flat_map(|&a| profiled.iter().map(move |&b| (a, b)))
            .map(|(a, b)| work.hessian[a * parameters + b])
            .collect();
        let metric = ProfiledMetric {
            weights,
            weighted_directions,
            nuisance_information,
            nuisances: profiled.len(),
        };
        let mut probe = vec![0.0; metric.nuisances];
        if !metric.solve(&mut probe) {
            return Err(MetricFailure::SingularNuisances);
        }
        Ok(metric)
    }

    /// The signal shapes' bin fractions at `placement` (their parameters one
    /// after the other, channel after channel, as for
    /// [`Likelihood::place_signal`]) with their gradients in those
    /// parameters: what [`SignalShapes::template_along`] needs at any exposure.
    pub fn signal_shapes(&self, placement: &[f64]) -> SignalShapes {
        let terms = self
            .signal_placements(placement)
            .map(|(_, term, shape_parameters)| {
                let mut fractions = vec![0.0; term.bins];
                let mut gradient = vec![0.0; shape_parameters.len() * term.bins];
                term.shape.bin_fractions_with_gradient(
                    shape_parameters,
                    term.edges,
                    &mut fractions,
                    &mut gradient,
                );
                (fractions, gradient)
            })
            .collect();
        SignalShapes { terms }
    }
}

/// The signal terms' bin fractions and their gradients at one placement
/// ([`Likelihood::signal_shapes`]), in the order of the terms.
pub struct SignalShapes {
    terms: Vec<(Vec<f64>, Vec<f64>)>,
}

impl SignalShapes {
    /// d nu_j / d mu of every bin (all channels) of `likelihood` after
    /// `live_days` with the signal shapes here, and its derivative as their
    /// parameters move by `direction` (laid out as the placement) per unit
    /// of a path parameter s, written to `template` and `slope`. The yield
    /// is that of `theta` without the signal strength.
    pub fn template_along(
        &self,
        likelihood: &Likelihood,
        theta: &[f64],
        live_days: f64,
        direction: &[f64],
        template: &mut [f64],
        slope: &mut [f64],
    ) {
        template.fill(0.0);
        slope.fill(0.0);
        let mut offset = 0;
        let terms = likelihood
            .terms
            .iter()
            .filter(|term| term.component.is_signal);
        for (term, (fractions, gradient)) in terms.zip(&self.terms) {
            let count = term.fixed_parameters.len();
            let direction = &direction[offset..offset + count];
            offset += count;
            let Some(scale) = term.per_unit_strength(theta, live_days) else {
                continue;
            };
            let range = term.offset..term.offset + term.bins;
            for (t, f) in template[range.clone()].iter_mut().zip(fractions) {
                *t += scale * f;
            }
            for (row, &along) in gradient.chunks_exact(term.bins).zip(direction) {
                for (s, d) in slope[range.clone()].iter_mut().zip(row) {
                    *s += scale * along * d;
                }
            }
        }
    }
}

impl ProfiledMetric {
    /// <a, b> with the nuisance parameters profiled (module docs).
    pub fn inner(&self, a: &[f64], b: &[f64]) -> f64 {
        let bins = self.weights.len();
        let mut projection_a: Vec<f64> = self
            .weighted_directions
            .chunks_exact(bins)
            .map(|direction| dot(direction, a))
            .collect();
        let projection_b: Vec<f64> = self
            .weighted_directions
            .chunks_exact(bins)
            .map(|direction| dot(direction, b))
            .collect();
        let unprofiled = weighted_dot(&self.weights, a, b);
        if self.nuisances == 0 {
            return unprofiled;
        }
        self.solve(&mut projection_a);
        unprofiled - dot(&projection_a, &projection_b)
    }

    /// The number of bins the metric spans.
    pub fn bins(&self) -> usize {
        self.weights.len()
    }

    /// 1 / nu_j of every bin: the metric before profiling.
    pub fn weights(&self) -> &[f64] {
        &self.weights
    }

    /// dnu_j/deta_k / nu_j over the bins, for each profiled nuisance
    /// parameter k in turn: c_a of the module docs is their inner product
    /// with a.
    pub fn weighted_directions(&self) -> impl ExactSizeIterator<Item = &[f64]> {
        self.weighted_directions.chunks_exact(self.weights.len())
    }

    /// Solves I_eta x = rhs in place (the nuisance parameters in the order
    /// of [`ProfiledMetric::weighted_directions`]); false when I_eta is not
    /// positive definite.
    pub fn solve(&self, rhs: &mut [f64]) -> bool {
        let mut factor = self.nuisance_information.clone();
        solve_positive_definite(&mut factor, rhs, self.nuisances)
    }
}
