//! A bounded Newton minimiser for -ln L.
//!
//! Parameters have bounds (mu >= 0, yield factors >= 0, shape parameters as
//! their shape declares) and the minimiser keeps to them as bounds: each
//! iteration holds the parameters that sit at a bound with the gradient
//! pointing outwards (the active set), solves H d = -g on the others, adding a
//! Levenberg-Marquardt damping term to H when it is not positive definite,
//! then backtracks along the projection of theta + s d on the bounds until
//! the Armijo condition holds for the projected point (Bertsekas, SIAM J.
//! Control Optim. 20 (1982) 221; Nocedal and Wright, Numerical Optimization,
//! 2nd ed., Springer 2006, ch. 3, 10 and 16.7). Convergence is declared when the Newton
//! decrement -g.d, the expected drop of -ln L, falls below 1e-10, or below
//! the rounding of -ln L itself where that is larger (a huge signal).

use super::linear::solve_positive_definite;
use super::{Dataset, Likelihood, Workspace};
use crate::model::SIGNAL_STRENGTH;
use std::fmt;

const MAX_ITERATIONS: usize = 200;
const MAX_HALVINGS: usize = 40;
const CONVERGED_DECREMENT: f64 = 1e-10;
/// Below this decrement a step that cannot lower -ln L is rounding, not failure.
const ROUNDING_DECREMENT: f64 = 1e-6;
/// The same two thresholds relative to |-ln L|, for fits whose -ln L is so
/// large that its rounding exceeds them: every term of the deviance form is
/// non-negative and computed to a few units in the last place, so -ln L is
/// known to a few times 1e-16 of itself. With 10^13 events in a bin a
/// background-only fit of a huge peak has -ln L near 10^13 and a rounding of
/// about 10^-3, which no step of 1e-6 can beat. Below |-ln L| = 10^5 (for
/// convergence) and 10^6 (for rounding) the absolute thresholds rule.
const RELATIVE_CONVERGED_DECREMENT: f64 = 1e-15;
const RELATIVE_ROUNDING_DECREMENT: f64 = 1e-12;
const ARMIJO: f64 = 1e-4;
/// Full Newton steps [`Fitter::polish`] takes at most.
const POLISHING_STEPS: usize = 3;
/// First damping (relative to the largest diagonal of H) tried when H is not
/// positive definite, and after a step that no backtracking could accept.
const INDEFINITE_DAMPING: f64 = 1e-8;
const FAILED_STEP_DAMPING: f64 = 1e-4;
/// Beyond this damping the step is the gradient shrunk a hundred-millionfold:
/// nothing left to try.
const MAX_DAMPING: f64 = 1e8;
/// Damping is proportional to each diagonal entry of H, but at least this
/// fraction of the largest, so that a flat direction is damped too.
const SMALLEST_DAMPED_DIAGONAL: f64 = 1e-12;

/// Why a fit did not converge.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FitFailure {
    /// -ln L is not finite at the starting point.
    InvalidStart,
    /// No step along the Newton direction lowered -ln L.
    LineSearch,
    /// The Hessian could not be made positive definite.
    Curvature,
    /// The iteration limit was reached.
    IterationLimit,
    /// A test statistic never crosses the threshold sought (no upper limit):
    /// it stays below or jumps across it.
    NoCrossing,
}

impl fmt::Display for FitFailure {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let text = match self {
            FitFailure::InvalidStart => "the likelihood is not finite at the starting point",
            FitFailure::LineSearch => "no step lowered the negative log-likelihood",
            FitFailure::Curvature => "the Hessian could not be made positive definite",
            FitFailure::IterationLimit => "the iteration limit was reached",
            FitFailure::NoCrossing => {
                "no upper limit: the test statistic does not cross its CLs threshold"
            }
        };
        f.write_str(text)
    }
}

/// Minimises -ln L for one likelihood, reusing its scratch space between fits.
#[derive(Debug)]
pub struct Fitter<'l, 'm> {
    likelihood: &'l Likelihood<'m>,
    work: Workspace,
    theta: Vec<f64>,
    trial: Vec<f64>,
    start: Vec<f64>,
    free: Vec<usize>,
    reduced_hessian: Vec<f64>,
    reduced_step: Vec<f64>,
    step: Vec<f64>,
    /// The gradient at theta, kept while the line search overwrites the workspace's.
    gradient: Vec<f64>,
}

impl<'l, 'm> Fitter<'l, 'm> {
    pub fn new(likelihood: &'l Likelihood<'m>) -> Fitter<'l, 'm> {
        let parameters = likelihood.parameter_count();
        Fitter {
            likelihood,
            work: likelihood.workspace(),
            theta: vec![0.0; parameters],
            trial: vec![0.0; parameters],
            start: vec![0.0; parameters],
            free: Vec::with_capacity(parameters),
            reduced_hessian: vec![0.0; parameters * parameters],
            reduced_step: vec![0.0; parameters],
            step: vec![0.0; parameters],
            gradient: vec![0.0; parameters],
        }
    }

    /// Best-fit parameters of the last successful fit.
    pub fn parameters(&self) -> &[f64] {
        &self.theta
    }

    /// A start for a fit with `parameter` fixed at `value`, written to `start`:
    /// the last best fit theta-hat with the other parameters r moved to the
    /// minimum of the quadratic approximation of -ln L around it,
    ///
    ///   r = r-hat - H_rr^-1 H_rp (value - theta-hat_p)
    ///
    /// (one Newton step of the constrained fit, from the Hessian H at the best
    /// fit; Nocedal and Wright, Numerical Optimization, 2nd ed., ch. 3), then
    /// clamped to the bounds. Where that system cannot be solved the start is
    /// theta-hat itself with the parameter set to `value`.
    pub fn conditional_start(&mut self, parameter: usize, value: f64, start: &mut [f64]) {
        let parameters = self.likelihood.parameter_count();
        let shift = value - self.theta[parameter];
        start.copy_from_slice(&self.theta);
        start[parameter] = value;
        self.free.clear();
        self.free
            .extend((0..parameters).filter(|&a| a != parameter));
        let free = self.free.len();
        for (i, &a) in self.free.iter().enumerate() {
            for (k, &b) in self.free.iter().enumerate() {
                self.reduced_hessian[i * free + k] = self.work.hessian[a * parameters + b];
            }
            self.reduced_step[i] = -self.work.hessian[a * parameters + parameter] * shift;
        }
        let step = &mut self.reduced_step[..free];
        if solve_positive_definite(&mut self.reduced_hessian[..free * free], step, free) {
            let bounds = &self.likelihood.model().parameters;
            for (&a, &delta) in self.free.iter().zip(&*step) {
                let moved = start[a] + delta;
                if moved.is_finite() {
                    start[a] = moved.clamp(bounds[a].lower, bounds[a].upper);
                }
            }
        }
    }

    /// The expected counts at the parameters of the last successful fit:
    /// every fit ends with the derivatives at its minimum in the workspace.
    pub fn expected_counts(&self) -> &[f64] {
        &self.work.expected
    }

    /// d(-ln L)/d mu at the parameters of the last successful fit, whether
    /// or not it held mu fixed ([`Likelihood::signal_strength_gradient`]).
    pub fn signal_strength_gradient(&self, live_days: f64) -> f64 {
        self.likelihood
            .signal_strength_gradient(&self.theta, live_days, &self.work)
    }

    /// The scratch space, for evaluating expectations outside fits.
    pub fn workspace(&mut self) -> &mut Workspace {
        &mut self.work
    }

    /// The minimum of -ln L with the signal strength fixed at `fixed_mu` (or
    /// free when None), starting from `start`; when that fails, retried from
    /// the model's nominal values with the signal strength at 0 and at 3.
    /// Returns the last failure when every start fails.
    pub fn minimise(
        &mut self,
        live_days: f64,
        data: &Dataset,
        fixed_mu: Option<f64>,
        start: &[f64],
    ) -> Result<f64, FitFailure> {
        self.start.copy_from_slice(start);
        let first = self.minimise_from_start(live_days, data, fixed_mu);
        if first.is_ok() {
            return first;
        }
        let mut failure = first;
        for retry_mu in [0.0, 3.0] {
            for (value, parameter) in self
                .start
                .iter_mut()
                .zip(&self.likelihood.model().parameters)
            {
                *value = parameter.nominal;
            }
            self.start[SIGNAL_STRENGTH] = retry_mu;
            failure = self.minimise_from_start(live_days, data, fixed_mu);
            if failure.is_ok() {
                return failure;
            }
        }
        failure
    }

    /// Full Newton steps from the last minimum (of the same `data` and
    /// `fixed_mu`), each kept while it does not raise -ln L, at most
    /// three; returns -ln L at the point kept. The convergence
    /// of [`Fitter::minimise`] is judged by the expected drop of -ln L,
    /// quadratic in the parameters, so they are converged only to about the
    /// square root of its tolerance; near the minimum each full step squares
    /// their error (Nocedal and Wright, Numerical Optimization, 2nd ed., thm.
    /// 3.5), so a few give the fitted values of a reported fit to rounding.
    pub fn polish(&mut self, live_days: f64, data: &Dataset, fixed_mu: Option<f64>) -> f64 {
        let likelihood = self.likelihood;
        let mut nll = likelihood.negative_log_likelihood_with_derivatives(
            &self.theta,
            live_days,
            data,
            &mut self.work,
        );
        for _ in 0..POLISHING_STEPS {
            self.select_free_parameters(fixed_mu.is_some());
            if self.free.is_empty() || self.newton_step(0.0).is_err() {
                break;
            }
            self.set_trial(1.0);
            let trial_nll = likelihood.negative_log_likelihood_with_derivatives(
                &self.trial,
                live_days,
                data,
                &mut self.work,
            );
            if trial_nll.is_nan() || trial_nll > nll {
                break;
            }
            std::mem::swap(&mut self.theta, &mut self.trial);
            nll = trial_nll;
        }
        // The workspace holds the derivatives at the point kept.
        likelihood.negative_log_likelihood_with_derivatives(
            &self.theta,
            live_days,
            data,
            &mut self.work,
        )
    }

    fn minimise_from_start(
        &mut self,
        live_days: f64,
        data: &Dataset,
        fixed_mu: Option<f64>,
    ) -> Result<f64, FitFailure> {
        let likelihood = self.likelihood;
        let parameters = &likelihood.model().parameters;
        for ((theta, &start), parameter) in self.theta.iter_mut().zip(&self.start).zip(parameters) {
            *theta = start.clamp(parameter.lower, parameter.upper);
        }
        if let Some(mu) = fixed_mu {
            self.theta[SIGNAL_STRENGTH] = mu;
        }
        self.work.hold_fixed(SIGNAL_STRENGTH, fixed_mu.is_some());
        let mut nll = likelihood.negative_log_likelihood_with_derivatives(
            &self.theta,
            live_days,
            data,
            &mut self.work,
        );
        if !nll.is_finite() {
            return Err(FitFailure::InvalidStart);
        }
        let mut damping_floor = 0.0;
        for _ in 0..MAX_ITERATIONS {
            self.select_free_parameters(fixed_mu.is_some());
            if self.free.is_empty() {
                return Ok(nll);
            }
            let decrement = self.newton_step(damping_floor)?;
            let magnitude = nll.abs();
            if decrement < CONVERGED_DECREMENT.max(RELATIVE_CONVERGED_DECREMENT * magnitude)
                && damping_floor == 0.0
            {
                return Ok(nll);
            }
            match self.line_search(live_days, data, nll) {
                Some(trial_nll) => {
                    std::mem::swap(&mut self.theta, &mut self.trial);
                    nll = trial_nll;
                    damping_floor = 0.0;
                }
                None if decrement
                    < ROUNDING_DECREMENT.max(RELATIVE_ROUNDING_DECREMENT * magnitude)
                    && damping_floor == 0.0 =>
                {
                    // The search left the derivatives of a rejected point behind.
                    likelihood.negative_log_likelihood_with_derivatives(
                        &self.theta,
                        live_days,
                        data,
                        &mut self.work,
                    );
                    return Ok(nll);
                }
                None => {
                    damping_floor = next_damping(damping_floor, FAILED_STEP_DAMPING);
                    if damping_floor > MAX_DAMPING {
                        return Err(FitFailure::LineSearch);
                    }
                    // The search left the derivatives of a rejected point behind.
                    likelihood.negative_log_likelihood_with_derivatives(
                        &self.theta,
                        live_days,
                        data,
                        &mut self.work,
                    );
                }
            }
        }
        Err(FitFailure::IterationLimit)
    }

    /// Free parameters: not fixed, and not held at a bound by a gradient pointing outwards.
    fn select_free_parameters(&mut self, mu_fixed: bool) {
        let parameters = &self.likelihood.model().parameters;
        self.free.clear();
        for (index, parameter) in parameters.iter().enumerate() {
            if mu_fixed && index == SIGNAL_STRENGTH {
                continue;
            }
            let gradient = self.work.gradient[index];
            let at_lower = self.theta[index] <= parameter.lower && gradient > 0.0;
            let at_upper = self.theta[index] >= parameter.upper && gradient < 0.0;
            if !at_lower && !at_upper {
                self.free.push(index);
            }
        }
    }

    /// Solves the damped Newton system (H + lambda D) d = -g on the free
    /// parameters into `self.step` (full length, zero on held parameters),
    /// with lambda the smallest of `damping_floor` and its tenfold steps for
    /// which the matrix is positive definite; returns the decrement -g.d. D is
    /// the diagonal of |H| (raised to 1e-12 of its largest entry), so damping
    /// treats parameters of very different scales alike (a signal strength
    /// whose unit is a million events beside shape coefficients of order
    /// one; Marquardt, J. SIAM 11 (1963) 431). A floor above zero follows a step that failed: where
    /// -ln L is nearly flat or concave along some direction (a shape fitted
    /// to a handful of events) the Newton step can be absurdly long, and
    /// damping turns it towards the gradient until it is short enough
    /// (Levenberg-Marquardt; Nocedal and Wright, ch. 10.3).
    fn newton_step(&mut self, damping_floor: f64) -> Result<f64, FitFailure> {
        let parameters = self.likelihood.parameter_count();
        let free = self.free.len();
        let largest_diagonal = self
            .free
            .iter()
            .map(|&a| self.work.hessian[a * parameters + a].abs())
            .fold(0.0, f64::max)
            .max(1e-300);
        let mut damping = damping_floor;
        let reduced_step = &mut self.reduced_step[..free];
        loop {
            for (i, &a) in self.free.iter().enumerate() {
                for (k, &b) in self.free.iter().enumerate() {
                    self.reduced_hessian[i * free + k] = self.work.hessian[a * parameters + b];
                }
                let diagonal = self.work.hessian[a * parameters + a].abs();
                self.reduced_hessian[i * free + i] +=
                    damping * diagonal.max(SMALLEST_DAMPED_DIAGONAL * largest_diagonal);
                reduced_step[i] = -self.work.gradient[a];
            }
            if solve_positive_definite(&mut self.reduced_hessian[..free * free], reduced_step, free)
            {
                break;
            }
            damping = next_damping(damping, INDEFINITE_DAMPING);
            if damping > MAX_DAMPING {
                return Err(FitFailure::Curvature);
            }
        }
        self.step.iter_mut().for_each(|s| *s = 0.0);
        let mut decrement = 0.0;
        for (i, &a) in self.free.iter().enumerate() {
            self.step[a] = reduced_step[i];
            decrement -= self.work.gradient[a] * reduced_step[i];
        }
        Ok(decrement)
    }

    /// Backtracks from a full Newton step along the projected path
    /// P(theta + s d), P clamping to the bounds; leaves the accepted point in
    /// `self.trial` and its derivatives in the workspace. A point is accepted
    /// when -ln L falls by at least ARMIJO g.(theta - trial), the decrease
    /// predicted for the projected point itself, so a step cut short by a
    /// bound is judged by what it moved (Bertsekas, SIAM J. Control Optim. 20
    /// (1982) 221, the Armijo rule along the projection arc). The full step,
    /// which is almost always accepted, is evaluated with its derivatives at
    /// once. A step too short to change any parameter is no step: the search
    /// stops there rather than accept the starting point again.
    fn line_search(&mut self, live_days: f64, data: &Dataset, nll: f64) -> Option<f64> {
        let likelihood = self.likelihood;
        self.gradient.copy_from_slice(&self.work.gradient);
        self.set_trial(1.0);
        let predicted = self.predicted_decrease();
        let full_nll = likelihood.negative_log_likelihood_with_derivatives(
            &self.trial,
            live_days,
            data,
            &mut self.work,
        );
        if sufficient_decrease(nll, full_nll, predicted) {
            return Some(full_nll);
        }
        let mut scale = 1.0;
        for _ in 1..MAX_HALVINGS {
            scale *= 0.5;
            self.set_trial(scale);
            if self.trial == self.theta {
                return None;
            }
            let predicted = self.predicted_decrease();
            let trial_nll =
                likelihood.negative_log_likelihood(&self.trial, live_days, data, &mut self.work);
            if sufficient_decrease(nll, trial_nll, predicted) {
                return Some(likelihood.negative_log_likelihood_with_derivatives(
                    &self.trial,
                    live_days,
                    data,
                    &mut self.work,
                ));
            }
        }
        None
    }

    /// g.(theta - trial): the first-order decrease of -ln L from theta to the trial point.
    fn predicted_decrease(&self) -> f64 {
        self.gradient
            .iter()
            .zip(self.theta.iter().zip(&self.trial))
            .map(|(g, (theta, trial))| g * (theta - trial))
            .sum()
    }

    /// `self.trial` = theta + scale x step, projected on the bounds.
    fn set_trial(&mut self, scale: f64) {
        let parameters = &self.likelihood.model().parameters;
        for (index, parameter) in parameters.iter().enumerate() {
            self.trial[index] = (self.theta[index] + scale * self.step[index])
                .clamp(parameter.lower, parameter.upper);
        }
    }
}

/// The Armijo condition: -ln L fell from `nll` to `trial_nll` by at least
/// ARMIJO times the first-order `predicted` decrease, which must be positive
/// (a projected point that is no descent to first order is not accepted).
fn sufficient_decrease(nll: f64, trial_nll: f64, predicted: f64) -> bool {
    predicted > 0.0 && trial_nll <= nll - ARMIJO * predicted
}

/// The damping after `damping`: `first` from zero, then tenfold.
fn next_damping(damping: f64, first: f64) -> f64 {
    if damping == 0.0 {
        first
    } else {
        damping * 10.0
    }
}
