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
mod shard;

pub use data::{BINNED_HEADER, ChannelData, DataError, DataForm, read_channel_data};
pub use observed::{
    AS_PLANNED_WITHIN, BackgroundRate, FittedParameter, GoodnessOfFit, GoodnessOfFitToys,
    ObservedFit, ObservedLimit, ObservedScan, observed_fit,
};
pub use shard::{
    REPLAN_COMMAND, ReplanInputs, ReplanShardError, describe_shard_inputs, merge_replan_shards,
    run_replan_shard,
};

use crate::ensemble::{EnsembleOutcome, EnsemblePlan, Family, Generator, significance_ensemble};
use crate::likelihood::{Dataset, FitFailure, Fitter, Likelihood};
use crate::limits::limit_ensemble;
use crate::model::{Constraint, Model, SIGNAL_STRENGTH};
use crate::projection::{
    Origin, PointRequest, PointToys, Projection, ProjectionError, ProjectionSettings, ShardSpec,
    ToySource, project, project_with,
};
use crate::provenance::{Provenance, ScenarioFile};
use crate::scenario::SignalScan;
use serde_json::{Map, json};
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

    /// What made a re-plan: the `scenario` file, the options that change a
    /// number, and each file of `data`'s name and SHA-256 by channel (the
    /// same for the unsharded re-plan and its merged shards).
    pub fn provenance(&self, scenario: ScenarioFile, data: &[ChannelData]) -> Provenance {
        let mut options = Map::new();
        options.insert("seed".into(), json!(self.plan.seed));
        options.insert("toys".into(), json!(self.plan.toys));
        options.insert("cl".into(), json!(self.plan.cl));
        options.insert("taken_days".into(), json!(self.taken_days));
        options.insert("future".into(), json!(self.future.name()));
        let data: Vec<_> = data
            .iter()
            .map(|data| json!({"channel": data.channel, "file": data.file.file, "sha256": data.file.sha256}))
            .collect();
        options.insert("data".into(), json!(data));
        Provenance::new(vec![scenario], options)
    }

    /// Every pseudo-experiment the re-plan runs on its grid (the days it
    /// solves run more), for progress reporting: the goodness of fit's, and
    /// per hypothesis and point the significance and limit toys.
    pub fn total_toys(&self) -> u64 {
        self.total_toys_in(ShardSpec::WHOLE)
    }

    /// The pseudo-experiments of [`ReplanSettings::total_toys`] that shard
    /// `shard` runs (the toy limit and the days solved run at the merge).
    pub fn total_toys_in(&self, shard: ShardSpec) -> u64 {
        let toys = shard.toys(self.plan.toys).len();
        let per_point = toys * (1 + usize::from(self.plan.cl.is_some()));
        (toys + 2 * per_point * self.conditional_days().len()) as u64
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
/// one [`ChannelData`] per channel in the model's order, every
/// pseudo-experiment run here.
pub fn replan(
    model: &Model,
    scan: Option<&SignalScan>,
    data: Vec<ChannelData>,
    settings: &ReplanSettings,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<Replan, ReplanError> {
    let mut source = RunReplanToys {
        seed: settings.plan.seed,
        shard: ShardSpec::WHOLE,
        taken: None,
        hypothesis: None,
        progress,
    };
    replan_with(model, scan, data, settings, &mut source, progress)
}

/// Where a re-plan's pseudo-experiments that shards split come from: run
/// in this process ([`replan`]) or merged from shards (`shard.rs`). As a
/// [`ToySource`], the conditional projections' grid points, those of the
/// signal hypothesis first.
pub(crate) trait ReplanToys: ToySource {
    /// The goodness of fit's ensemble (all of `toys.toys`).
    fn goodness_of_fit(&mut self, toys: &GoodnessOfFitToys)
    -> Result<EnsembleOutcome, Self::Error>;

    /// The grid points that follow keep the counts `taken` and draw the
    /// future under `hypothesis` at `generating`.
    fn conditional(&mut self, hypothesis: Hypothesis, generating: &[f64], taken: &Dataset);
}

/// What every re-plan and every shard of one computes alike, before any
/// pseudo-experiment: the data as one dataset, their fit, and the
/// parameters each hypothesis draws its future from.
pub(crate) struct Prepared {
    pub taken: Dataset,
    pub taken_live_days: f64,
    pub observed: ObservedFit,
    pub generating: Vec<(Hypothesis, Vec<f64>)>,
    /// The conditional projections' settings: the grid from the day the data stopped.
    pub conditional_settings: ProjectionSettings,
}

impl Prepared {
    /// Fits `data` with `model`; the toy limit only when `toy_limit` (a
    /// shard leaves it to the merge, where it runs whole).
    pub fn new(
        model: &Model,
        scan: Option<&SignalScan>,
        data: &[ChannelData],
        settings: &ReplanSettings,
        toy_limit: bool,
        progress: &(dyn Fn(u64) + Sync),
    ) -> Result<Prepared, ReplanError> {
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
            toy_limit,
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
        let conditional_settings = ProjectionSettings {
            days: settings.conditional_days(),
            at_days: Vec::new(),
            calibration_toys: 0,
            scan: None,
            look_elsewhere_toys: 0,
            ..plan.clone()
        };
        Ok(Prepared {
            taken,
            taken_live_days,
            observed,
            generating,
            conditional_settings,
        })
    }

    /// The goodness of fit's pseudo-experiments on the likelihood of the
    /// data taken.
    pub fn goodness_of_fit_toys<'l, 'm>(
        &'l self,
        likelihood: &'l Likelihood<'m>,
        fitted: &'l [f64],
    ) -> GoodnessOfFitToys<'l, 'm> {
        GoodnessOfFitToys {
            likelihood,
            fitted,
            live_days: self.taken_live_days,
            seed: self.conditional_settings.seed,
            toys: self.conditional_settings.toys,
        }
    }
}

/// The re-plan with the pseudo-experiments shards split from `source`; the
/// toy limit and the points solving the days run here, whole.
pub(crate) fn replan_with<S, E>(
    model: &Model,
    scan: Option<&SignalScan>,
    data: Vec<ChannelData>,
    settings: &ReplanSettings,
    source: &mut S,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<Replan, E>
where
    S: ReplanToys,
    E: From<ReplanError> + From<S::Error>,
{
    let prepared = Prepared::new(model, scan, &data, settings, settings.toy_limit, progress)?;
    let plan = &settings.plan;
    let likelihood = Likelihood::new(model);
    let fitted = prepared.observed.fitted_parameters();
    let goodness_of_fit =
        source.goodness_of_fit(&prepared.goodness_of_fit_toys(&likelihood, &fitted))?;
    let Prepared {
        taken,
        taken_live_days,
        mut observed,
        generating,
        conditional_settings,
    } = prepared;
    observed.goodness_of_fit = observed.goodness_of_fit.with_toys(&goodness_of_fit);
    let both = model.taken_and_to_come(taken_live_days);
    let mut conditional = Vec::new();
    for (hypothesis, theta) in &generating {
        source.conditional(*hypothesis, theta, &taken);
        let solving = ConditionalToys {
            seed: plan.seed,
            shard: ShardSpec::WHOLE,
            hypothesis: *hypothesis,
            generating: theta,
            taken: &taken,
            progress,
        };
        let projection = project_with(
            &both,
            &conditional_settings,
            source,
            solving,
            Origin::FirstPoint,
        )?;
        conditional.push((*hypothesis, projection));
    }
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
    )
    .map_err(ReplanError::from)?;
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

/// A re-plan's pseudo-experiments run in this process: shard `shard`'s part
/// of each ensemble (all of it for [`ShardSpec::WHOLE`]).
pub(crate) struct RunReplanToys<'a> {
    pub seed: u64,
    pub shard: ShardSpec,
    /// The counts taken and the hypothesis with its generating parameters
    /// of the points to come ([`ReplanToys::conditional`]).
    pub taken: Option<Dataset>,
    pub hypothesis: Option<(Hypothesis, Vec<f64>)>,
    pub progress: &'a (dyn Fn(u64) + Sync),
}

impl RunReplanToys<'_> {
    fn points(&self) -> ConditionalToys<'_> {
        let (hypothesis, generating) = self
            .hypothesis
            .as_ref()
            .expect("a hypothesis is set before its points");
        ConditionalToys {
            seed: self.seed,
            shard: self.shard,
            hypothesis: *hypothesis,
            generating,
            taken: self
                .taken
                .as_ref()
                .expect("the counts taken are set with it"),
            progress: self.progress,
        }
    }
}

impl ToySource for RunReplanToys<'_> {
    type Error = ProjectionError;

    fn toys(
        &mut self,
        likelihood: &Likelihood,
        request: &PointRequest,
    ) -> Result<PointToys, ProjectionError> {
        self.points().toys(likelihood, request)
    }

    fn skip(&mut self, toys: usize) {
        (self.progress)(toys as u64);
    }
}

impl ReplanToys for RunReplanToys<'_> {
    fn goodness_of_fit(
        &mut self,
        toys: &GoodnessOfFitToys,
    ) -> Result<EnsembleOutcome, ProjectionError> {
        Ok(toys.run(self.shard.toys(toys.toys), self.progress))
    }

    fn conditional(&mut self, hypothesis: Hypothesis, generating: &[f64], taken: &Dataset) {
        self.hypothesis = Some((hypothesis, generating.to_vec()));
        self.taken = Some(taken.clone());
    }
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
/// streams: shard `shard`'s part of each ensemble, each toy on its own
/// stream, so neither the thread count nor the split changes a number.
pub(crate) struct ConditionalToys<'a> {
    pub seed: u64,
    pub shard: ShardSpec,
    pub hypothesis: Hypothesis,
    pub generating: &'a [f64],
    pub taken: &'a Dataset,
    pub progress: &'a (dyn Fn(u64) + Sync),
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
            toys: self.shard.toys(toys),
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
