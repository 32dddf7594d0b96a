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

mod asimov;
mod dataset;
mod fit;
mod fit_path;
mod information;
mod linear;
mod poisson;
mod test_statistic;
mod upper_limit;

pub use asimov::{AsimovDiscovery, AsimovQ0};
pub use dataset::Dataset;
pub use fit::{FitFailure, Fitter};
pub use fit_path::FitPath;
pub use information::{MetricFailure, ProfiledMetric, SignalShapes};
pub use test_statistic::{DiscoveryFit, DiscoveryTest, q0_from_fits};
pub use upper_limit::{UpperLimitTest, q_tilde_from_fits};

use crate::model::{Component, Constraint, Model, SIGNAL_STRENGTH, ShapeParameters};
use linear::{add_scaled, dot, weighted_dot};
use std::ops::Range;

/// One component of one channel, flattened for the hot loop.
#[derive(Debug)]
struct Term<'m> {
    /// First bin of the term's channel in the concatenated bin vector.
    offset: usize,
    bins: usize,
    component: &'m Component,
    yield_parameters: &'m [usize],
    shape: &'m dyn crate::shapes::Shape,
    edges: &'m [f64],
    /// When the shape floats, the index in the parameter vector of each of
    /// its parameters (None for one held at its value in `fixed_parameters`);
    /// None when the whole shape is fixed.
    floating: Option<&'m [Option<usize>]>,
    /// The shape's parameter values where they do not float.
    fixed_parameters: &'m [f64],
}

/// The likelihood of a model, ready to evaluate at any exposure.
#[derive(Debug)]
pub struct Likelihood<'m> {
    model: &'m Model,
    terms: Vec<Term<'m>>,
    bins: usize,
    /// For each parameter, the bins whose expectation can depend on it
    /// (empty for a parameter no component uses).
    columns: Vec<Range<usize>>,
    /// The parameters of each floating scale-free shape, whose common scale
    /// the gauge term fixes (see [`Likelihood::gauge_terms`]).
    gauges: Vec<Vec<usize>>,
    /// The bin fractions of each fixed term (zeros for a floating one), as
    /// every workspace starts: computed once here, copied by
    /// [`Likelihood::workspace`], since a scan or reach makes many.
    initial_fractions: Vec<Vec<f64>>,
}

/// Per-thread scratch space: nothing in the fit loop allocates.
#[derive(Debug, Clone)]
pub struct Workspace {
    /// Bin fractions of each term (fixed ones filled once).
    fractions: Vec<Vec<f64>>,
    /// d fraction / d shape parameter of each floating term, `k * bins + i`.
    fraction_gradients: Vec<Vec<f64>>,
    /// d2 fraction / d shape parameters k, l of each floating term,
    /// `(k * n + l) * bins + i`, and whether its shape provides them.
    fraction_curvatures: Vec<Vec<f64>>,
    has_curvatures: Vec<bool>,
    /// Expected counts per bin.
    pub expected: Vec<f64>,
    /// d expected_j / d theta_a, `a * bins + j`.
    expected_gradient: Vec<f64>,
    /// 1 - n_j / nu_j and n_j / nu_j^2 of each bin (see [`poisson_weights`]).
    weights: Vec<f64>,
    curvatures: Vec<f64>,
    /// Each bin's deviance term, scratch of the Poisson pass.
    deviance_terms: Vec<f64>,
    /// Values of one floating shape's parameters.
    shape_parameters: Vec<f64>,
    /// For each term, the shape parameters its fractions were last computed
    /// at (NaN before the first time), and whether its gradients were too.
    fractions_at: Vec<Vec<f64>>,
    gradients_current: Vec<bool>,
    /// Parameters held fixed by the fit in progress: the bin sums of their
    /// gradient and Hessian rows, which that fit does not use, are skipped.
    fixed: Vec<bool>,
    /// Gradient and Hessian (row-major) of -ln L.
    gradient: Vec<f64>,
    hessian: Vec<f64>,
}

impl Workspace {
    /// Marks `parameter` as held fixed (or not) in the fits that follow; its
    /// gradient and Hessian rows are then incomplete.
    pub fn hold_fixed(&mut self, parameter: usize, fixed: bool) {
        self.fixed[parameter] = fixed;
    }
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
                    // A shape without floated parameters has nothing to
                    // float: its fractions are fixed, computed once per workspace.
                    ShapeParameters::Floating { values, parameters }
                        if parameters.iter().all(Option::is_none) =>
                    {
                        (None, values.as_slice())
                    }
                    ShapeParameters::Floating { values, parameters } => {
                        (Some(parameters.as_slice()), values.as_slice())
                    }
                };
                terms.push(Term {
                    offset,
                    bins,
                    component,
                    yield_parameters: &component.yield_parameters,
                    shape: component.shape.as_ref(),
                    edges: &channel.edges,
                    floating,
                    fixed_parameters,
                });
            }
            offset += bins;
        }
        let columns = (0..model.parameters.len())
            .map(|parameter| column_of(&terms, parameter))
            .collect();
        let gauges = terms
            .iter()
            .filter(|term| term.shape.scale_free())
            .filter_map(|term| term.floating)
            .map(|parameters| floated(parameters).map(|(_, p)| p).collect())
            .collect();
        let initial_fractions = terms
            .iter()
            .map(|term| {
                let mut fractions = vec![0.0; term.bins];
                if term.floating.is_none() {
                    term.shape
                        .bin_fractions(term.fixed_parameters, term.edges, &mut fractions);
                    raise_underflow(&mut fractions);
                }
                fractions
            })
            .collect();
        Likelihood {
            model,
            terms,
            bins: offset,
            columns,
            gauges,
            initial_fractions,
        }
    }

    pub fn model(&self) -> &'m Model {
        self.model
    }

    pub fn parameter_count(&self) -> usize {
        self.model.parameters.len()
    }

    /// A workspace with the fixed-shape fractions already computed.
    pub fn workspace(&self) -> Workspace {
        let parameters = self.parameter_count();
        let fractions = self.initial_fractions.clone();
        let fraction_gradients = self
            .terms
            .iter()
            .map(|term| vec![0.0; term.floating.map_or(0, |p| p.len()) * term.bins])
            .collect();
        let fraction_curvatures = self
            .terms
            .iter()
            .map(|term| vec![0.0; term.floating.map_or(0, |p| p.len() * p.len()) * term.bins])
            .collect();
        let fractions_at = self
            .terms
            .iter()
            .map(|term| vec![f64::NAN; term.floating.map_or(0, <[Option<usize>]>::len)])
            .collect();
        Workspace {
            fractions,
            fraction_gradients,
            fraction_curvatures,
            has_curvatures: vec![false; self.terms.len()],
            fractions_at,
            gradients_current: vec![false; self.terms.len()],
            expected: vec![0.0; self.bins],
            shape_parameters: vec![0.0; self.most_shape_parameters()],
            expected_gradient: vec![0.0; parameters * self.bins],
            weights: vec![0.0; self.bins],
            curvatures: vec![0.0; self.bins],
            deviance_terms: vec![0.0; self.bins],
            fixed: vec![false; parameters],
            gradient: vec![0.0; parameters],
            hessian: vec![0.0; parameters * parameters],
        }
    }

    /// The largest number of parameters of a floating shape.
    fn most_shape_parameters(&self) -> usize {
        self.terms
            .iter()
            .filter_map(|term| term.floating.map(<[Option<usize>]>::len))
            .max()
            .unwrap_or(0)
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

    /// d nu_j / d mu at `theta` after `live_days`, the signal's expected counts
    /// per unit signal strength (zero in bins without signal), written to `out`.
    pub fn signal_per_unit_strength(
        &self,
        theta: &[f64],
        live_days: f64,
        work: &mut Workspace,
        out: &mut [f64],
    ) {
        self.update_fractions(theta, work, false);
        out.fill(0.0);
        for (term, fractions) in self.terms.iter().zip(&work.fractions) {
            if let Some(partial) = term.per_unit_strength(theta, live_days) {
                add_scaled(
                    &mut out[term.offset..term.offset + term.bins],
                    partial,
                    fractions,
                );
            }
        }
    }

    /// d(-ln L)/d mu at `theta` after `live_days`: sum_j (1 - n_j/nu_j) dnu_j/dmu,
    /// the derivative of the deviance terms (the signal strength has no
    /// constraint), from a workspace that holds the derivatives at `theta`
    /// (its gradient weights 1 - n_j/nu_j and bin fractions), whether or
    /// not they were taken with mu held fixed.
    pub fn signal_strength_gradient(&self, theta: &[f64], live_days: f64, work: &Workspace) -> f64 {
        self.terms
            .iter()
            .zip(&work.fractions)
            .filter_map(|(term, fractions)| {
                let partial = term.per_unit_strength(theta, live_days)?;
                let weights = &work.weights[term.offset..term.offset + term.bins];
                Some(partial * dot(weights, fractions))
            })
            .sum()
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

    /// The signal terms (one per channel, in channel order), each with its
    /// slice of `placement`: the signal shapes' parameters one after the
    /// other, each shape's in its own parameter order.
    fn signal_placements<'a>(
        &'a self,
        placement: &'a [f64],
    ) -> impl Iterator<Item = (usize, &'a Term<'m>, &'a [f64])> + 'a {
        let mut offset = 0;
        self.terms
            .iter()
            .enumerate()
            .filter(|(_, term)| term.component.is_signal)
            .map(move |(index, term)| {
                let count = term.fixed_parameters.len();
                let parameters = &placement[offset..offset + count];
                offset += count;
                (index, term, parameters)
            })
    }

    /// Moves the signal: the bin fractions of every signal term in `work`
    /// become those of its shape at its parameters in `placement` (the
    /// signal shapes' parameters one after the other, channel after
    /// channel, as [`crate::scenario::SignalScan::shape_parameters_at`]
    /// gives them), so every later evaluation and fit with `work` sees the
    /// signal there; the model itself is unchanged. Used to scan the signal
    /// position with one workspace (validation refuses a scan beside a
    /// floated signal position or width, so a scanned signal never floats).
    pub fn place_signal(&self, placement: &[f64], work: &mut Workspace) {
        for (index, term, parameters) in self.signal_placements(placement) {
            if term.floating.is_none() {
                let fractions = &mut work.fractions[index];
                term.shape.bin_fractions(parameters, term.edges, fractions);
                raise_underflow(fractions);
            }
        }
    }

    /// Bins of all signal terms together: the length of a row of
    /// [`Likelihood::signal_fractions`].
    pub fn signal_bins(&self) -> usize {
        self.terms
            .iter()
            .filter(|term| term.component.is_signal && term.floating.is_none())
            .map(|term| term.bins)
            .sum()
    }

    /// The bin fractions [`Likelihood::place_signal`] would give the signal
    /// terms at `placement`, written into `row` (term after term), so
    /// that they can be computed once and set many times.
    pub fn signal_fractions(&self, placement: &[f64], row: &mut [f64]) {
        let mut offset = 0;
        for (_, term, parameters) in self.signal_placements(placement) {
            if term.floating.is_none() {
                let fractions = &mut row[offset..offset + term.bins];
                term.shape.bin_fractions(parameters, term.edges, fractions);
                raise_underflow(fractions);
                offset += term.bins;
            }
        }
    }

    /// Sets the signal terms' fractions in `work` to a row made by
    /// [`Likelihood::signal_fractions`]: the same as `place_signal` at its
    /// parameters, bit for bit.
    pub fn set_signal_fractions(&self, row: &[f64], work: &mut Workspace) {
        let mut offset = 0;
        for (term, fractions) in self.terms.iter().zip(&mut work.fractions) {
            if term.component.is_signal && term.floating.is_none() {
                fractions.copy_from_slice(&row[offset..offset + term.bins]);
                offset += term.bins;
            }
        }
    }

    /// Recomputes the fractions of floating shapes (and their gradients when
    /// asked), unless they are already at these shape parameters: every fit
    /// starts at the same nominal shape.
    fn update_fractions(&self, theta: &[f64], work: &mut Workspace, with_gradient: bool) {
        for (index, term) in self.terms.iter().enumerate() {
            let Some(floating) = term.floating else {
                continue;
            };
            let parameters = &mut work.shape_parameters[..floating.len()];
            for ((value, p), &held) in parameters
                .iter_mut()
                .zip(floating)
                .zip(term.fixed_parameters)
            {
                *value = p.map_or(held, |p| theta[p]);
            }
            let at = &mut work.fractions_at[index];
            if at.as_slice() == &*parameters && (work.gradients_current[index] || !with_gradient) {
                continue;
            }
            at.copy_from_slice(parameters);
            work.gradients_current[index] = with_gradient;
            if with_gradient {
                term.shape.bin_fractions_with_gradient(
                    parameters,
                    term.edges,
                    &mut work.fractions[index],
                    &mut work.fraction_gradients[index],
                );
                work.has_curvatures[index] = term.shape.bin_fraction_curvatures(
                    parameters,
                    term.edges,
                    &work.fractions[index],
                    &mut work.fraction_curvatures[index],
                );
            } else {
                term.shape
                    .bin_fractions(parameters, term.edges, &mut work.fractions[index]);
            }
            raise_underflow(&mut work.fractions[index]);
        }
    }

    /// The saturated-model deviance of the bins of `counts` at `theta`:
    /// D = 2 sum_j [nu_j - n_j + n_j ln(n_j/nu_j)] (Baker and Cousins, Nucl.
    /// Instrum. Meth. 221 (1984) 437, eq. 9 for Poisson counts), the
    /// constraint terms left out; infinite where an expectation is invalid.
    pub fn saturated_deviance(
        &self,
        theta: &[f64],
        live_days: f64,
        counts: &[f64],
        work: &mut Workspace,
    ) -> f64 {
        if !self.expected_counts(theta, live_days, work) {
            return f64::INFINITY;
        }
        2.0 * counts
            .iter()
            .zip(&work.expected)
            .map(|(&n, &nu)| poisson_deviance_term(n, nu))
            .sum::<f64>()
    }

    /// The covariance of the parameters at a minimum `theta` of -ln L: the
    /// inverse of its Hessian there (the Cramér-Rao bound; common practice),
    /// row-major; None when the Hessian is not positive definite (a
    /// parameter at a bound with no curvature, say).
    pub fn covariance(&self, theta: &[f64], live_days: f64, data: &Dataset) -> Option<Vec<f64>> {
        let n = theta.len();
        let mut work = self.workspace();
        self.negative_log_likelihood_with_derivatives(theta, live_days, data, &mut work);
        let mut inverse = vec![0.0; n * n];
        let mut unit = vec![0.0; n];
        for column in 0..n {
            let mut matrix = work.hessian.clone();
            unit.iter_mut().for_each(|value| *value = 0.0);
            unit[column] = 1.0;
            if !linear::solve_positive_definite(&mut matrix, &mut unit, n) {
                return None;
            }
            for (row, &value) in unit.iter().enumerate() {
                inverse[row * n + column] = value;
            }
        }
        Some(inverse)
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
        poisson_terms_with_weights(&data.counts, work)
            + self.constraint_terms(theta, live_days, data)
            + self.gauge_terms(theta)
    }

    /// The gauge term of each floating scale-free shape with parameters
    /// beta_1..beta_n: (mean_k beta_k - 1)^2 / 2. Its fractions do not change
    /// along beta -> c beta, so that direction leaves -ln L flat and its
    /// Hessian singular; the term fixes the scale at a mean of 1 (the nominal
    /// scale) and is zero at every minimum, since rescaling any point to mean
    /// 1 keeps its -ln L. Minima, and so every likelihood ratio, are those
    /// without it (fixing a gauge, common practice).
    fn gauge_terms(&self, theta: &[f64]) -> f64 {
        self.gauges
            .iter()
            .map(|parameters| {
                let offset = gauge_mean(theta, parameters) - 1.0;
                0.5 * offset * offset
            })
            .sum()
    }

    /// Gradient (mean - 1)/n and Hessian 1/n^2 (every pair, lower triangle)
    /// of the gauge terms.
    fn add_gauge_derivatives(&self, theta: &[f64], work: &mut Workspace) {
        let parameters = self.parameter_count();
        for gauge in &self.gauges {
            let n = gauge.len() as f64;
            let slope = (gauge_mean(theta, gauge) - 1.0) / n;
            for (k, &a) in gauge.iter().enumerate() {
                work.gradient[a] += slope;
                for &b in &gauge[..=k] {
                    add_lower(&mut work.hessian, parameters, a, b, 1.0 / (n * n));
                }
            }
        }
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
    /// the second-derivative term is kept for products of yield parameters, for
    /// yield-shape pairs and for pairs of shape parameters whose shape provides
    /// second derivatives; for other shapes it is dropped in their block (a
    /// Gauss-Newton step there; it vanishes at the minimum on average).
    ///
    /// Where the processor has 256-bit vectors (AVX2) the same code is compiled
    /// for them too and chosen at run time, with identical results.
    pub fn negative_log_likelihood_with_derivatives(
        &self,
        theta: &[f64],
        live_days: f64,
        data: &Dataset,
        work: &mut Workspace,
    ) -> f64 {
        #[cfg(target_arch = "x86_64")]
        if std::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor was just found to support AVX2.
            return unsafe { self.derivatives_avx2(theta, live_days, data, work) };
        }
        self.derivatives(theta, live_days, data, work)
    }

    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2")]
    fn derivatives_avx2(
        &self,
        theta: &[f64],
        live_days: f64,
        data: &Dataset,
        work: &mut Workspace,
    ) -> f64 {
        self.derivatives(theta, live_days, data, work)
    }

    #[inline(always)]
    fn derivatives(
        &self,
        theta: &[f64],
        live_days: f64,
        data: &Dataset,
        work: &mut Workspace,
    ) -> f64 {
        self.update_fractions(theta, work, true);
        self.fill_expected_with_gradient(theta, live_days, work);
        let total = poisson_terms_with_weights(&data.counts, work);
        if !total.is_finite() {
            return f64::INFINITY;
        }
        self.fill_gradient_and_hessian(work);
        self.add_second_derivative_terms(theta, live_days, work);
        self.add_constraint_derivatives(theta, live_days, data, work);
        self.add_gauge_derivatives(theta, work);
        let parameters = self.parameter_count();
        for a in 0..parameters {
            for b in 0..a {
                work.hessian[b * parameters + a] = work.hessian[a * parameters + b];
            }
        }
        total + self.constraint_terms(theta, live_days, data) + self.gauge_terms(theta)
    }

    /// Expected counts nu_j and their derivatives dnu_j/dtheta_a, from the
    /// fractions (and fraction gradients) already in `work`.
    #[inline(always)]
    fn fill_expected_with_gradient(&self, theta: &[f64], live_days: f64, work: &mut Workspace) {
        let bins = self.bins;
        work.expected.fill(0.0);
        for (a, column) in self.columns.iter().enumerate() {
            work.expected_gradient[a * bins..][column.clone()].fill(0.0);
        }
        for (index, term) in self.terms.iter().enumerate() {
            let base = term.component.events(live_days);
            let yield_ = base * product_except(theta, term.yield_parameters, usize::MAX);
            let fractions = &work.fractions[index];
            let range = term.offset..term.offset + term.bins;
            if yield_ != 0.0 {
                add_scaled(&mut work.expected[range.clone()], yield_, fractions);
            }
            for &a in term.yield_parameters.iter().filter(|&&a| !work.fixed[a]) {
                let partial = base * product_except(theta, term.yield_parameters, a);
                let row = &mut work.expected_gradient[a * bins..][range.clone()];
                add_scaled(row, partial, fractions);
            }
            if let Some(floating) = term.floating {
                let gradients = &work.fraction_gradients[index];
                for (k, s) in floated(floating).filter(|&(_, s)| !work.fixed[s]) {
                    let row = &mut work.expected_gradient[s * bins..][range.clone()];
                    add_scaled(row, yield_, &gradients[k * term.bins..(k + 1) * term.bins]);
                }
            }
        }
    }

    /// The Poisson part of the gradient, sum_j w_j dnu_j/dtheta_a, and of the
    /// Hessian, sum_j c_j dnu_j/dtheta_a dnu_j/dtheta_b (lower triangle), each
    /// over the bins where both derivatives can be non-zero; zero for
    /// parameters held fixed.
    #[inline(always)]
    fn fill_gradient_and_hessian(&self, work: &mut Workspace) {
        let parameters = self.parameter_count();
        let bins = self.bins;
        let columns = &work.expected_gradient;
        let fixed = &work.fixed;
        for (a, column_a) in self.columns.iter().enumerate() {
            let da = &columns[a * bins..(a + 1) * bins];
            work.gradient[a] = if fixed[a] {
                0.0
            } else {
                dot(&work.weights[column_a.clone()], &da[column_a.clone()])
            };
            for (b, column_b) in self.columns[..=a].iter().enumerate() {
                let common = column_a.start.max(column_b.start)..column_a.end.min(column_b.end);
                let db = &columns[b * bins..(b + 1) * bins];
                work.hessian[a * parameters + b] = if common.is_empty() || fixed[a] || fixed[b] {
                    0.0
                } else {
                    weighted_dot(
                        &work.curvatures[common.clone()],
                        &da[common.clone()],
                        &db[common],
                    )
                };
            }
        }
    }

    /// (1 - n_j/nu_j) d2nu_j terms for yield-yield, yield-shape and (where the
    /// shape provides them) shape-shape pairs (lower triangle).
    #[inline(always)]
    fn add_second_derivative_terms(&self, theta: &[f64], live_days: f64, work: &mut Workspace) {
        let parameters = self.parameter_count();
        for (index, term) in self.terms.iter().enumerate() {
            let weights = &work.weights[term.offset..term.offset + term.bins];
            if let (Some(floating), true) = (term.floating, work.has_curvatures[index]) {
                let yield_ = term.yield_at(theta, live_days);
                let curvatures = &work.fraction_curvatures[index];
                let n = floating.len();
                for (k, a) in floated(floating) {
                    for (l, b) in floated(&floating[..=k]) {
                        let curvature = &curvatures[(k * n + l) * term.bins..][..term.bins];
                        let value = yield_ * dot(weights, curvature);
                        add_lower(&mut work.hessian, parameters, a, b, value);
                    }
                }
            }
            let has_pairs = term.yield_parameters.len() > 1;
            if !has_pairs && (term.floating.is_none() || term.yield_parameters.is_empty()) {
                continue;
            }
            let weighted_fraction = dot(weights, &work.fractions[index]);
            let base = term.component.events(live_days);
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
                for (k, s) in floated(floating) {
                    let df = &work.fraction_gradients[index][k * term.bins..(k + 1) * term.bins];
                    let weighted_gradient = dot(weights, df);
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
                    ref exposure,
                } => {
                    // a = theta A: d/dtheta = (1 - m/a) A, d2/dtheta2 = (m/a^2) A^2.
                    let scale = events_per_live_day * exposure.at(live_days);
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
        self.component.events(live_days) * product_except(theta, self.yield_parameters, usize::MAX)
    }

    /// d yield / d mu: the yield without the signal strength, for a term that
    /// the signal strength scales; None for every other term.
    fn per_unit_strength(&self, theta: &[f64], live_days: f64) -> Option<f64> {
        self.yield_parameters.contains(&SIGNAL_STRENGTH).then(|| {
            self.component.events(live_days)
                * product_except(theta, self.yield_parameters, SIGNAL_STRENGTH)
        })
    }
}

/// The smallest bin fraction a shape is given, 1e-100.
const FRACTION_FLOOR: f64 = 1e-100;

/// Raises bin fractions between zero and [`FRACTION_FLOOR`] to it (leaving
/// NaN ones, which mark parameters outside the shape's domain). A density's
/// far tail (beyond about 38 sigma of a Gaussian) underflows to zero in double
/// precision, and a count in a bin that only such tails reach would make
/// -ln L infinite at every parameter value, so no fit could start. With the
/// floor one event there weighs against a hypothesis without other
/// components in that bin by about ln(1e100) = 230, a significance of about
/// 21 sigma: below the true, astronomically large one, but beyond any target
/// a projection is asked for. A fraction this small changes no expectation
/// that has any other component in it, even in its last bit. Expectations
/// that vanish because a yield parameter is zero stay zero.
fn raise_underflow(fractions: &mut [f64]) {
    for fraction in fractions.iter_mut() {
        if (0.0..FRACTION_FLOOR).contains(fraction) {
            *fraction = FRACTION_FLOOR;
        }
    }
}

/// nu - n + n ln(n/nu), with 0 ln 0 = 0; infinite for an invalid expectation.
fn poisson_deviance_term(n: f64, nu: f64) -> f64 {
    if poisson::is_valid(n, nu) {
        poisson::bin_terms(n, nu).0
    } else {
        f64::INFINITY
    }
}

/// (1 - n/nu, n/nu^2): the factors of dnu and of dnu dnu in the gradient and
/// Hessian of one bin's term. A bin without counts contributes nu alone, so
/// (1, 0), also where nu is zero.
fn poisson_weights(n: f64, nu: f64) -> (f64, f64) {
    let (_, weight, curvature) = poisson::bin_terms(n, nu);
    (weight, curvature)
}

/// Sum of the deviance terms of all bins, filling `work.weights` and
/// `work.curvatures` on the way; infinite when an expectation is invalid.
#[inline(always)]
fn poisson_terms_with_weights(counts: &[f64], work: &mut Workspace) -> f64 {
    poisson::terms_with_weights(
        counts,
        &work.expected,
        &mut work.weights,
        &mut work.curvatures,
        &mut work.deviance_terms,
    )
}

/// The bins whose expectation depends on `parameter`: the union of the
/// channels of the terms that use it.
fn column_of(terms: &[Term], parameter: usize) -> Range<usize> {
    terms
        .iter()
        .filter(|term| {
            term.yield_parameters.contains(&parameter)
                || term.floating.is_some_and(|p| p.contains(&Some(parameter)))
        })
        .map(|term| term.offset..term.offset + term.bins)
        .reduce(|a, b| a.start.min(b.start)..a.end.max(b.end))
        .unwrap_or(0..0)
}

/// The floated parameters of a shape: (index among the shape's parameters,
/// index in the parameter vector).
fn floated(parameters: &[Option<usize>]) -> impl Iterator<Item = (usize, usize)> + '_ {
    parameters
        .iter()
        .enumerate()
        .filter_map(|(k, p)| p.map(|p| (k, p)))
}

/// Mean of theta over `indices`.
fn gauge_mean(theta: &[f64], indices: &[usize]) -> f64 {
    indices.iter().map(|&p| theta[p]).sum::<f64>() / indices.len() as f64
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
