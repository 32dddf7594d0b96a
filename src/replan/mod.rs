//! Re-plan: from the data taken so far, how much longer.
//!
//! `data.rs` reads the data files into counts on the channels' bins;
//! `observed.rs` fits them (mu-hat, q0, background rates against the plan,
//! the observed limit, the goodness of fit); here the conditional
//! projection: pseudo-experiments that keep the counts taken and draw only
//! those still to come, fitted as one data set with the model of both
//! blocks ([`Model::taken_and_to_come`]), in two hypotheses (the scenario's
//! signal, no signal). Each hypothesis is a [`Projection`] made by the
//! projection's own code ([`project_with`]) with a [`ToySource`] that draws
//! the future alone, so its quantiles, probabilities and solved days are
//! those of `runcast project`. Conditional power in sequential monitoring:
//! Proschan, Lan and Wittes, Statistical Monitoring of Clinical Trials,
//! Springer 2006, ch. 3.

mod data;
mod observed;

pub use data::{BINNED_HEADER, ChannelData, DataError, DataForm, read_channel_data};
pub use observed::{
    AS_PLANNED_WITHIN, BackgroundRate, FittedParameter, GoodnessOfFit, ObservedFit, ObservedLimit,
    ObservedScan, observed_fit,
};

use crate::ensemble::{EnsemblePlan, Family, Generator, significance_ensemble};
use crate::likelihood::{Dataset, FitFailure, Fitter, Likelihood};
use crate::limits::limit_ensemble;
use crate::model::{Constraint, Model, SIGNAL_STRENGTH};
use crate::projection::{
    Origin, PointRequest, PointToys, Projection, ProjectionError, ProjectionSettings, ToySource,
    project, project_with,
};
use crate::scenario::SignalScan;
use std::fmt;

/// Where the future data are drawn from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Future {
    /// The parameters fitted to the data taken, with mu fixed at the
    /// hypothesis's value (the background as measured).
    Fitted,
    /// The scenario's values (the background as planned).
    Nominal,
}

impl Future {
    pub fn name(self) -> &'static str {
        match self {
            Future::Fitted => "fitted",
            Future::Nominal => "nominal",
        }
    }
}

/// A hypothesis of the conditional projection.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Hypothesis {
    /// The scenario's signal (mu = 1).
    Signal,
    /// No signal (mu = 0).
    NoSignal,
}

impl Hypothesis {
    pub const BOTH: [Hypothesis; 2] = [Hypothesis::Signal, Hypothesis::NoSignal];

    pub fn signal_strength(self) -> f64 {
        match self {
            Hypothesis::Signal => 1.0,
            Hypothesis::NoSignal => 0.0,
        }
    }

    /// The key of the hypothesis in the outputs.
    pub fn key(self) -> &'static str {
        match self {
            Hypothesis::Signal => "signal",
            Hypothesis::NoSignal => "no_signal",
        }
    }

    /// The families of its significance and limit pseudo-experiments.
    fn families(self) -> (Family, Family) {
        match self {
            Hypothesis::Signal => (Family::ReplanSignalDiscovery, Family::ReplanSignalExclusion),
            Hypothesis::NoSignal => (
                Family::ReplanBackgroundDiscovery,
                Family::ReplanBackgroundExclusion,
            ),
        }
    }
}

/// What to re-plan.
#[derive(Debug, Clone, PartialEq)]
pub struct ReplanSettings {
    /// The plan as `runcast project` runs it (grid, targets, CL, toys,
    /// seed); its `at_days`, calibration and look-elsewhere toys are unused.
    pub plan: ProjectionSettings,
    /// The calendar day the data stopped.
    pub taken_days: f64,
    pub future: Future,
    /// Whether the observed limit is also found with pseudo-experiments
    /// (`--toys` given): `plan.toys` per hypothesis and tested mu.
    pub toy_limit: bool,
}

impl ReplanSettings {
    /// The calendar days of the conditional projection: the day the data
    /// stopped (where nothing is left to draw), then every grid day after it.
    pub fn conditional_days(&self) -> Vec<f64> {
        std::iter::once(self.taken_days)
            .chain(
                self.plan
                    .days
                    .iter()
                    .copied()
                    .filter(|&d| d > self.taken_days),
            )
            .collect()
    }

    /// Every pseudo-experiment the re-plan runs on its grid (the days it
    /// solves run more), for progress reporting: the goodness of fit's, and
    /// per hypothesis and point the significance and limit toys.
    pub fn total_toys(&self) -> u64 {
        let per_point = self.plan.toys * (1 + usize::from(self.plan.cl.is_some()));
        (self.plan.toys + 2 * per_point * self.conditional_days().len()) as u64
    }
}

/// A re-plan's results.
#[derive(Debug, Clone)]
pub struct Replan {
    pub title: String,
    pub taken_days: f64,
    pub taken_live_days: f64,
    pub future: Future,
    pub data: Vec<ChannelData>,
    pub observed: ObservedFit,
    /// The parameters each hypothesis draws its future from.
    pub generating: Vec<(Hypothesis, Vec<f64>)>,
    /// The conditional projections, signal first.
    pub conditional: Vec<(Hypothesis, Projection)>,
    /// The original forecast: the scenario's Asimov projection from day 0
    /// on its grid (no pseudo-experiments), as `project --asimov-only` gives it.
    pub forecast: Projection,
    /// The names of the parameters, in order.
    pub parameter_names: Vec<String>,
}

impl Replan {
    pub fn projection(&self, hypothesis: Hypothesis) -> &Projection {
        &self
            .conditional
            .iter()
            .find(|(h, _)| *h == hypothesis)
            .expect("both hypotheses are projected")
            .1
    }
}

/// Why a re-plan cannot be made.
#[derive(Debug, Clone, PartialEq)]
pub enum ReplanError {
    /// A fit of the data taken failed.
    Fit {
        what: &'static str,
        failure: FitFailure,
    },
    /// An asymptotic fit of a conditional projection failed.
    Projection(ProjectionError),
    /// A background measured in a control region: its count grows with
    /// live time and has no data file.
    ControlRegion { background: String },
}

impl fmt::Display for ReplanError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ReplanError::Fit { what, failure } => write!(f, "the {what} failed: {failure}"),
            ReplanError::Projection(error) => write!(f, "conditional projection: {error}"),
            ReplanError::ControlRegion { background } => write!(
                f,
                "background {background} is measured in a control region, whose counts replan does not read; expected backgrounds with norm_uncertainty (a number or free) only"
            ),
        }
    }
}

impl std::error::Error for ReplanError {}

impl From<ProjectionError> for ReplanError {
    fn from(error: ProjectionError) -> ReplanError {
        ReplanError::Projection(error)
    }
}

/// Refuses a model with a control-region constraint (see
/// [`ReplanError::ControlRegion`]).
pub fn check_model(model: &Model) -> Result<(), ReplanError> {
    for constraint in &model.constraints {
        if let Constraint::ControlRegion { parameter, .. } = constraint {
            let background = model
                .channels
                .iter()
                .flat_map(|channel| &channel.components)
                .find(|component| component.yield_parameters.contains(parameter))
                .map_or_else(
                    || model.parameters[*parameter].name.clone(),
                    |c| c.name.clone(),
                );
            return Err(ReplanError::ControlRegion { background });
        }
    }
    Ok(())
}

/// The re-plan of `model` (the scenario's, with its `scan`) given `data`,
/// one [`ChannelData`] per channel in the model's order.
pub fn replan(
    model: &Model,
    scan: Option<&SignalScan>,
    data: Vec<ChannelData>,
    settings: &ReplanSettings,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<Replan, ReplanError> {
    check_model(model)?;
    let plan = &settings.plan;
    let taken_live_days = model.live_time.live_days(settings.taken_days);
    let likelihood = Likelihood::new(model);
    let nominal = model.nominal_parameters();
    let taken = Dataset {
        counts: data.iter().flat_map(|d| d.counts.iter().copied()).collect(),
        // The auxiliary measurements as the scenario states them.
        global_observables: likelihood
            .asimov_dataset(&nominal, taken_live_days, &mut likelihood.workspace())
            .global_observables,
    };
    let observed = observed_fit(
        model,
        scan,
        &taken,
        taken_live_days,
        plan,
        settings.toy_limit,
        progress,
    )?;
    let generating: Vec<(Hypothesis, Vec<f64>)> = Hypothesis::BOTH
        .iter()
        .map(|&hypothesis| {
            let theta = match settings.future {
                Future::Nominal => nominal.clone(),
                Future::Fitted => {
                    conditional_fit(&likelihood, &taken, taken_live_days, hypothesis)?
                }
            };
            let mut theta = theta;
            theta[SIGNAL_STRENGTH] = hypothesis.signal_strength();
            Ok((hypothesis, theta))
        })
        .collect::<Result<_, ReplanError>>()?;
    let both = model.taken_and_to_come(taken_live_days);
    let conditional_settings = ProjectionSettings {
        days: settings.conditional_days(),
        at_days: Vec::new(),
        calibration_toys: 0,
        scan: None,
        look_elsewhere_toys: 0,
        ..plan.clone()
    };
    let conditional = generating
        .iter()
        .map(|(hypothesis, theta)| {
            let source = || ConditionalToys {
                seed: plan.seed,
                hypothesis: *hypothesis,
                generating: theta,
                taken: &taken,
                progress,
            };
            let projection = project_with(
                &both,
                &conditional_settings,
                &mut source(),
                source(),
                Origin::FirstPoint,
            )?;
            Ok((*hypothesis, projection))
        })
        .collect::<Result<_, ReplanError>>()?;
    let forecast_settings = ProjectionSettings {
        toys: 0,
        ..conditional_settings.clone()
    };
    let forecast = project(
        model,
        &ProjectionSettings {
            days: plan.days.clone(),
            ..forecast_settings
        },
        progress,
    )?;
    Ok(Replan {
        title: plan.title.clone(),
        taken_days: settings.taken_days,
        taken_live_days,
        future: settings.future,
        data,
        observed,
        generating,
        conditional,
        forecast,
        parameter_names: model.parameters.iter().map(|p| p.name.clone()).collect(),
    })
}

/// The parameters fitted to the data taken with mu fixed at the
/// hypothesis's value: the background as measured under it.
fn conditional_fit(
    likelihood: &Likelihood,
    taken: &Dataset,
    live_days: f64,
    hypothesis: Hypothesis,
) -> Result<Vec<f64>, ReplanError> {
    let mut fitter = Fitter::new(likelihood);
    let mut start = likelihood.model().nominal_parameters();
    start[SIGNAL_STRENGTH] = hypothesis.signal_strength();
    fitter
        .minimise(live_days, taken, Some(hypothesis.signal_strength()), &start)
        .map_err(|failure| ReplanError::Fit {
            what: match hypothesis {
                Hypothesis::Signal => {
                    "fit of the data taken with the signal fixed at the scenario's"
                }
                Hypothesis::NoSignal => "fit of the data taken without signal",
            },
            failure,
        })?;
    Ok(fitter.parameters().to_vec())
}

/// The pseudo-experiments of a conditional projection: the counts taken
/// kept, the future drawn from the model of both blocks at `generating`
/// (mu at the hypothesis's value), from the hypothesis's own families of
/// streams. Whole ensembles, so the thread count changes nothing.
struct ConditionalToys<'a> {
    seed: u64,
    hypothesis: Hypothesis,
    generating: &'a [f64],
    taken: &'a Dataset,
    progress: &'a (dyn Fn(u64) + Sync),
}

impl ToySource for ConditionalToys<'_> {
    type Error = ProjectionError;

    fn toys(
        &mut self,
        likelihood: &Likelihood,
        request: &PointRequest,
    ) -> Result<PointToys, ProjectionError> {
        let live_days = request.live_days;
        let generator = Generator::new(likelihood, self.generating, live_days).keeping(self.taken);
        let (discovery, exclusion) = self.hypothesis.families();
        let plan = |toys: usize| EnsemblePlan {
            toys: 0..toys,
            seed: self.seed,
            progress: self.progress,
        };
        let discovery = (request.discovery_toys > 0).then(|| {
            significance_ensemble(
                likelihood,
                &generator,
                live_days,
                discovery.stream_index(request.index),
                &plan(request.discovery_toys),
            )
        });
        let limits = request.limits.map(|limits| {
            limit_ensemble(
                likelihood,
                &generator,
                live_days,
                exclusion.stream_index(request.index),
                &plan(limits.toys),
                limits.alpha,
                limits.sigma,
            )
        });
        Ok(PointToys {
            discovery,
            limits,
            calibration: None,
            look_elsewhere: None,
        })
    }

    fn skip(&mut self, toys: usize) {
        (self.progress)(toys as u64);
    }
}
