//! Likelihood and fit: the binned Poisson negative log-likelihood with constraint
//! terms, its derivatives, a bounded Newton minimiser and the test statistics.
//!
//! The negative log-likelihood is written in its saturated (deviance) form,
//!
//!   -ln L(theta) = sum_j [nu_j - n_j + n_j ln(n_j / nu_j)] + sum_k C_k(theta),
//!
//! which differs from -ln L only by a constant independent of theta, so every
//! likelihood ratio is unchanged, while each term stays of order one even when
//! the counts are in the millions (Baker and Cousins, Nucl. Instrum. Meth. 221
//! (1984) 437).

mod dataset;
mod fit;
mod linear;
mod test_statistic;
mod upper_limit;

pub use dataset::Dataset;
pub use fit::{FitFailure, Fitter};
pub use test_statistic::{DiscoveryFit, DiscoveryTest, q0_from_fits};
pub use upper_limit::{UpperLimitTest, q_tilde_from_fits};

use crate::model::{Constraint, Model, ShapeParameters};

/// One component of one channel, flattened for the hot loop.
#[derive(Debug)]
struct Term<'m> {
    /// First bin of the term's channel in the concatenated bin vector.
    offset: usize,
    bins: usize,
    events_per_live_day: f64,
    yield_parameters: &'m [usize],
    shape: &'m dyn crate::model::shapes::Shape,
    edges: &'m [f64],
    /// Shape parameter indices when floating; None when fixed.
    floating: Option<&'m [usize]>,
    fixed_parameters: &'m [f64],
}

/// The likelihood of a model, ready to evaluate at any exposure.
#[derive(Debug)]
pub struct Likelihood<'m> {
    model: &'m Model,
    terms: Vec<Term<'m>>,
    bins: usize,
}

/// Per-thread scratch space: nothing in the fit loop allocates.
#[derive(Debug, Clone)]
pub struct Workspace {
    /// Bin fractions of each term (fixed ones filled once).
    fractions: Vec<Vec<f64>>,
    /// d fraction / d shape parameter of each floating term, `k * bins + i`.
    fraction_gradients: Vec<Vec<f64>>,
    /// Expected counts per bin.
    pub expected: Vec<f64>,
    /// d expected_j / d theta_a, `a * bins + j`.
    expected_gradient: Vec<f64>,
    /// Values of one floating shape's parameters.
    shape_parameters: Vec<f64>,
    /// Gradient and Hessian (row-major) of -ln L.
    gradient: Vec<f64>,
    hessian: Vec<f64>,
}

impl<'m> Likelihood<'m> {
    pub fn new(model: &'m Model) -> Likelihood<'m> {
        let mut terms = Vec::new();
        let mut offset = 0;
        for channel in &model.channels {
            let bins = channel.edges.len() - 1;
            for component in &channel.components {
                let (floating, fixed_parameters) = match &component.shape_parameters {
                    ShapeParameters::Fixed(values) => (None, values.as_slice()),
                    ShapeParameters::Floating(indices) => (Some(indices.as_slice()), &[][..]),
                };
                terms.push(Term {
                    offset,
                    bins,
                    events_per_live_day: component.events_per_live_day,
                    yield_parameters: &component.yield_parameters,
                    shape: component.shape.as_ref(),
                    edges: &channel.edges,
                    floating,
                    fixed_parameters,
                });
            }
            offset += bins;
        }
        Likelihood {
            model,
            terms,
            bins: offset,
        }
    }

    pub fn model(&self) -> &'m Model {
        self.model
    }

    pub fn parameter_count(&self) -> usize {
        self.model.parameters.len()
    }

    pub fn bin_count(&self) -> usize {
        self.bins
    }

    /// A workspace with the fixed-shape fractions already computed.
    pub fn workspace(&self) -> Workspace {
        let parameters = self.parameter_count();
        let fractions = self
            .terms
            .iter()
            .map(|term| {
                let mut fractions = vec![0.0; term.bins];
                if term.floating.is_none() {
                    term.shape
                        .bin_fractions(term.fixed_parameters, term.edges, &mut fractions);
                }
                fractions
            })
            .collect();
        let fraction_gradients = self
            .terms
            .iter()
            .map(|term| vec![0.0; term.floating.map_or(0, |p| p.len()) * term.bins])
            .collect();
        Workspace {
            fractions,
            fraction_gradients,
            expected: vec![0.0; self.bins],
            shape_parameters: vec![0.0; parameters],
            expected_gradient: vec![0.0; parameters * self.bins],
            gradient: vec![0.0; parameters],
            hessian: vec![0.0; parameters * parameters],
        }
    }

    /// Fills `work.expected` with the expected counts at `theta` after `live_days`.
    /// Returns false when a shape cannot be evaluated at `theta`.
    pub fn expected_counts(&self, theta: &[f64], live_days: f64, work: &mut Workspace) -> bool {
        self.update_fractions(theta, work, false);
        work.expected.iter_mut().for_each(|nu| *nu = 0.0);
        for (term, fractions) in self.terms.iter().zip(&work.fractions) {
            let yield_ = term.yield_at(theta, live_days);
            let bins = &mut work.expected[term.offset..term.offset + term.bins];
            for (nu, f) in bins.iter_mut().zip(fractions) {
                *nu += yield_ * f;
            }
        }
        work.expected.iter().all(|nu| nu.is_finite())
    }

    /// The Asimov dataset: expected counts at `theta` and global observables at
    /// their nominal values (Cowan et al., Eur. Phys. J. C 71 (2011) 1554, sec. 3.1).
    pub fn asimov_dataset(&self, theta: &[f64], live_days: f64, work: &mut Workspace) -> Dataset {
        self.expected_counts(theta, live_days, work);
        Dataset {
            counts: work.expected.clone(),
            global_observables: self
                .model
                .constraints
                .iter()
                .map(|c| c.expected_global_observable(theta[c.parameter()], live_days))
                .collect(),
        }
    }

    fn update_fractions(&self, theta: &[f64], work: &mut Workspace, with_gradient: bool) {
        for (index, term) in self.terms.iter().enumerate() {
            let Some(floating) = term.floating else {
                continue;
            };
            let parameters = &mut work.shape_parameters[..floating.len()];
            for (value, &p) in parameters.iter_mut().zip(floating) {
                *value = theta[p];
            }
            if with_gradient {
                term.shape.bin_fractions_with_gradient(
                    parameters,
                    term.edges,
                    &mut work.fractions[index],
                    &mut work.fraction_gradients[index],
                );
            } else {
                term.shape
                    .bin_fractions(parameters, term.edges, &mut work.fractions[index]);
            }
        }
    }

    /// -ln L at `theta` (saturated form, see module docs); infinite where the
    /// expectation is invalid (negative, NaN, or zero in a bin with counts).
    pub fn negative_log_likelihood(
        &self,
        theta: &[f64],
        live_days: f64,
        data: &Dataset,
        work: &mut Workspace,
    ) -> f64 {
        if !self.expected_counts(theta, live_days, work) {
            return f64::INFINITY;
        }
        let mut total = 0.0;
        for (&nu, &n) in work.expected.iter().zip(&data.counts) {
            total += poisson_deviance_term(n, nu);
        }
        total + self.constraint_terms(theta, live_days, data)
    }

    /// -ln of the constraint terms: a Gaussian (theta - g)^2 / (2 width^2), a
    /// control region the Poisson deviance of its count m given a = theta A.
    fn constraint_terms(&self, theta: &[f64], live_days: f64, data: &Dataset) -> f64 {
        self.model
            .constraints
            .iter()
            .zip(&data.global_observables)
            .map(|(constraint, &observed)| match *constraint {
                Constraint::Gaussian { parameter, width } => {
                    let pull = (theta[parameter] - observed) / width;
                    0.5 * pull * pull
                }
                Constraint::ControlRegion { parameter, .. } => poisson_deviance_term(
                    observed,
                    constraint.expected_global_observable(theta[parameter], live_days),
                ),
            })
            .sum()
    }

    /// -ln L with its gradient and an approximate Hessian, left in `work`.
    ///
    /// Gradient: d/dtheta_a = sum_j (1 - n_j/nu_j) dnu_j/dtheta_a + constraints.
    /// Hessian: sum_j [n_j/nu_j^2 dnu_j/dtheta_a dnu_j/dtheta_b + (1 - n_j/nu_j) d2nu_j/dtheta_a dtheta_b];
    /// the second-derivative term is kept for products of yield parameters and for
    /// yield-shape pairs, and dropped for pairs of shape parameters (a Gauss-Newton
    /// step in that block; it vanishes at the minimum on average).
    pub fn negative_log_likelihood_with_derivatives(
        &self,
        theta: &[f64],
        live_days: f64,
        data: &Dataset,
        work: &mut Workspace,
    ) -> f64 {
        let parameters = self.parameter_count();
        let bins = self.bins;
        self.update_fractions(theta, work, true);
        work.expected.iter_mut().for_each(|v| *v = 0.0);
        work.expected_gradient.iter_mut().for_each(|v| *v = 0.0);

        for (index, term) in self.terms.iter().enumerate() {
            let base = term.events_per_live_day * live_days;
            let yield_ = base * product_except(theta, term.yield_parameters, usize::MAX);
            let fractions = &work.fractions[index];
            let range = term.offset..term.offset + term.bins;
            for (nu, f) in work.expected[range.clone()].iter_mut().zip(fractions) {
                *nu += yield_ * f;
            }
            for &a in term.yield_parameters {
                let partial = base * product_except(theta, term.yield_parameters, a);
                let row = &mut work.expected_gradient[a * bins..][range.clone()];
                for (d, f) in row.iter_mut().zip(fractions) {
                    *d += partial * f;
                }
            }
            if let Some(floating) = term.floating {
                let gradients = &work.fraction_gradients[index];
                for (k, &s) in floating.iter().enumerate() {
                    let row = &mut work.expected_gradient[s * bins..][range.clone()];
                    let df = &gradients[k * term.bins..(k + 1) * term.bins];
                    for (d, g) in row.iter_mut().zip(df) {
                        *d += yield_ * g;
                    }
                }
            }
        }

        let mut total = 0.0;
        work.gradient.iter_mut().for_each(|v| *v = 0.0);
        work.hessian.iter_mut().for_each(|v| *v = 0.0);
        for j in 0..bins {
            let nu = work.expected[j];
            let n = data.counts[j];
            total += poisson_deviance_term(n, nu);
            if !total.is_finite() {
                return f64::INFINITY;
            }
            let (weight, curvature) = poisson_weights(n, nu);
            for a in 0..parameters {
                let da = work.expected_gradient[a * bins + j];
                if da == 0.0 {
                    continue;
                }
                work.gradient[a] += weight * da;
                for b in 0..=a {
                    work.hessian[a * parameters + b] +=
                        curvature * da * work.expected_gradient[b * bins + j];
                }
            }
        }
        self.add_second_derivative_terms(theta, live_days, data, work);
        self.add_constraint_derivatives(theta, live_days, data, work);
        for a in 0..parameters {
            for b in 0..a {
                work.hessian[b * parameters + a] = work.hessian[a * parameters + b];
            }
        }
        total + self.constraint_terms(theta, live_days, data)
    }

    /// (1 - n_j/nu_j) d2nu_j terms for yield-yield and yield-shape pairs (lower triangle).
    fn add_second_derivative_terms(
        &self,
        theta: &[f64],
        live_days: f64,
        data: &Dataset,
        work: &mut Workspace,
    ) {
        let parameters = self.parameter_count();
        for (index, term) in self.terms.iter().enumerate() {
            let has_pairs = term.yield_parameters.len() > 1;
            if !has_pairs && (term.floating.is_none() || term.yield_parameters.is_empty()) {
                continue;
            }
            let range = term.offset..term.offset + term.bins;
            let weights = || {
                work.expected[range.clone()]
                    .iter()
                    .zip(&data.counts[range.clone()])
                    .map(|(&nu, &n)| poisson_weights(n, nu).0)
            };
            let weighted_fraction: f64 = weights()
                .zip(&work.fractions[index])
                .map(|(w, f)| w * f)
                .sum();
            let base = term.events_per_live_day * live_days;
            for (i, &a) in term.yield_parameters.iter().enumerate() {
                for &b in &term.yield_parameters[..i] {
                    let mixed = base * product_except_two(theta, term.yield_parameters, a, b);
                    add_lower(
                        &mut work.hessian,
                        parameters,
                        a,
                        b,
                        mixed * weighted_fraction,
                    );
                }
            }
            if let Some(floating) = term.floating {
                for (k, &s) in floating.iter().enumerate() {
                    let df = &work.fraction_gradients[index][k * term.bins..(k + 1) * term.bins];
                    let weighted_gradient: f64 = weights().zip(df).map(|(w, g)| w * g).sum();
                    for &a in term.yield_parameters {
                        let partial = base * product_except(theta, term.yield_parameters, a);
                        add_lower(
                            &mut work.hessian,
                            parameters,
                            a,
                            s,
                            partial * weighted_gradient,
                        );
                    }
                }
            }
        }
    }

    fn add_constraint_derivatives(
        &self,
        theta: &[f64],
        live_days: f64,
        data: &Dataset,
        work: &mut Workspace,
    ) {
        let parameters = self.parameter_count();
        for (constraint, &observed) in self.model.constraints.iter().zip(&data.global_observables) {
            match *constraint {
                Constraint::Gaussian { parameter, width } => {
                    let precision = 1.0 / (width * width);
                    work.gradient[parameter] += (theta[parameter] - observed) * precision;
                    work.hessian[parameter * parameters + parameter] += precision;
                }
                Constraint::ControlRegion {
                    parameter,
                    events_per_live_day,
                } => {
                    // a = theta A: d/dtheta = (1 - m/a) A, d2/dtheta2 = (m/a^2) A^2.
                    let scale = events_per_live_day * live_days;
                    let expected = theta[parameter] * scale;
                    let (weight, curvature) = poisson_weights(observed, expected);
                    work.gradient[parameter] += weight * scale;
                    work.hessian[parameter * parameters + parameter] += curvature * scale * scale;
                }
            }
        }
    }
}

impl Term<'_> {
    fn yield_at(&self, theta: &[f64], live_days: f64) -> f64 {
        self.events_per_live_day
            * live_days
            * product_except(theta, self.yield_parameters, usize::MAX)
    }
}

/// nu - n + n ln(n/nu), with 0 ln 0 = 0; infinite for an invalid expectation.
fn poisson_deviance_term(n: f64, nu: f64) -> f64 {
    if nu > 0.0 {
        if n > 0.0 {
            // n ln(n/nu) = -n ln(1 + (nu - n)/n), accurate when nu is close to n.
            nu - n - n * ((nu - n) / n).ln_1p()
        } else {
            nu
        }
    } else if nu == 0.0 && n == 0.0 {
        0.0
    } else {
        f64::INFINITY
    }
}

/// (1 - n/nu, n/nu^2): the factors of dnu and of dnu dnu in the gradient and
/// Hessian of one bin's term. A bin without counts contributes nu alone, so
/// (1, 0), also where nu is zero.
fn poisson_weights(n: f64, nu: f64) -> (f64, f64) {
    if n > 0.0 {
        (1.0 - n / nu, n / (nu * nu))
    } else {
        (1.0, 0.0)
    }
}

/// Product of theta over `indices`, skipping index `skip`.
fn product_except(theta: &[f64], indices: &[usize], skip: usize) -> f64 {
    indices
        .iter()
        .filter(|&&p| p != skip)
        .map(|&p| theta[p])
        .product()
}

/// Product of theta over `indices`, skipping indices `a` and `b`.
fn product_except_two(theta: &[f64], indices: &[usize], a: usize, b: usize) -> f64 {
    indices
        .iter()
        .filter(|&&p| p != a && p != b)
        .map(|&p| theta[p])
        .product()
}

/// Adds `value` to the lower-triangle element (max(a,b), min(a,b)).
fn add_lower(hessian: &mut [f64], parameters: usize, a: usize, b: usize, value: f64) {
    let (row, column) = if a >= b { (a, b) } else { (b, a) };
    hessian[row * parameters + column] += value;
}
