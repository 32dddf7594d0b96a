//! Model: expected counts per bin as a function of the parameters.
//!
//! A model is a set of channels (each with its own binned observable and
//! components) sharing one parameter vector. Parameter 0 is always the signal
//! strength mu. Each component contributes
//!
//!   nu_j = (product of its yield parameters) x events_per_live_day x E(live_days) x f_j(shape parameters)
//!
//! to bin j of its channel, where f_j is the shape's exact bin fraction and
//! E the component's exposure (its live days weighted by the schedule's
//! factors on it; E(L) = L when no period scales it). Constraint
//! terms tie nuisance parameters to auxiliary measurements (global observables).

mod build;
mod schedule;

pub use build::{bin_edges, fraction_inside, shape_from_spec};
pub use schedule::{Exposure, LiveTime};

use crate::shapes::Shape;
use std::sync::Arc;

/// Index of the signal strength mu in every parameter vector.
pub const SIGNAL_STRENGTH: usize = 0;

/// A fit parameter with its nominal (generating) value and bounds.
#[derive(Debug, Clone, PartialEq)]
pub struct Parameter {
    pub name: String,
    pub nominal: f64,
    pub lower: f64,
    pub upper: f64,
}

/// How a component's shape parameters enter: fixed at scenario values, or
/// some or all of them floated.
#[derive(Debug, Clone, PartialEq)]
pub enum ShapeParameters {
    Fixed(Vec<f64>),
    /// In the shape's parameter order: `parameters[k]` is the index of
    /// parameter k in the parameter vector, or None where it is held at
    /// `values[k]`. A scale-free shape floats all of its parameters.
    Floating {
        values: Vec<f64>,
        parameters: Vec<Option<usize>>,
    },
}

/// One signal or background contribution to a channel.
#[derive(Debug, Clone)]
pub struct Component {
    pub name: String,
    pub is_signal: bool,
    /// Expected events per live day over the channel's range at unit yield parameters.
    pub events_per_live_day: f64,
    /// Its exposure as a function of live days, from the schedule.
    pub exposure: Exposure,
    /// Shared, not copied, by the model of a channel alone ([`Model::channel_alone`]).
    pub shape: Arc<dyn Shape>,
    /// Parameters whose product multiplies the yield (mu and a signal factor, or a background factor).
    pub yield_parameters: Vec<usize>,
    pub shape_parameters: ShapeParameters,
}

impl Component {
    /// Expected events after `live_days` at unit yield parameters:
    /// events_per_live_day x E(live_days).
    pub fn events(&self, live_days: f64) -> f64 {
        self.events_per_live_day * self.exposure.at(live_days)
    }
}

/// A binned observable with its components.
#[derive(Debug, Clone)]
pub struct Channel {
    pub name: String,
    pub unit: String,
    /// Bin edges, increasing; `edges.len() - 1` bins.
    pub edges: Vec<f64>,
    pub components: Vec<Component>,
}

impl Channel {
    /// True when the channel expects some signal at nominal rates.
    pub fn sees_signal(&self) -> bool {
        self.components
            .iter()
            .any(|component| component.is_signal && component.events_per_live_day > 0.0)
    }
}

/// A constraint term on one nuisance parameter, with its global observable.
#[derive(Debug, Clone, PartialEq)]
pub enum Constraint {
    /// Gaussian auxiliary measurement g ~ N(theta, width): -ln L = (theta - g)^2 / (2 width^2).
    Gaussian { parameter: usize, width: f64 },
    /// Signal-free control-region count m ~ Poisson(theta x events_per_live_day x E(live days)),
    /// where events_per_live_day is the ratio times the background's nominal
    /// rate and E the background's exposure (the schedule scales both alike):
    /// the on/off measurement of Li and Ma, Astrophys. J. 272 (1983) 317, and of
    /// Cowan et al., Eur. Phys. J. C 71 (2011) 1554, sec. 4.
    ControlRegion {
        parameter: usize,
        events_per_live_day: f64,
        exposure: Exposure,
    },
}

impl Constraint {
    /// The parameter this constraint acts on.
    pub fn parameter(&self) -> usize {
        match self {
            Constraint::Gaussian { parameter, .. }
            | Constraint::ControlRegion { parameter, .. } => *parameter,
        }
    }

    /// The same constraint acting on parameter `parameter`.
    fn on(&self, parameter: usize) -> Constraint {
        match self {
            Constraint::Gaussian { width, .. } => Constraint::Gaussian {
                parameter,
                width: *width,
            },
            Constraint::ControlRegion {
                events_per_live_day,
                exposure,
                ..
            } => Constraint::ControlRegion {
                parameter,
                events_per_live_day: *events_per_live_day,
                exposure: exposure.clone(),
            },
        }
    }

    /// The global observable's expected value at parameter value `theta_p` after `live_days`.
    pub fn expected_global_observable(&self, theta_p: f64, live_days: f64) -> f64 {
        match self {
            Constraint::Gaussian { .. } => theta_p,
            Constraint::ControlRegion {
                events_per_live_day,
                exposure,
                ..
            } => theta_p * events_per_live_day * exposure.at(live_days),
        }
    }
}

/// The full statistical model of a scenario.
#[derive(Debug)]
pub struct Model {
    pub parameters: Vec<Parameter>,
    pub channels: Vec<Channel>,
    pub constraints: Vec<Constraint>,
    pub live_time: LiveTime,
}

impl Model {
    /// Nominal (generating) parameter values, mu = 1.
    pub fn nominal_parameters(&self) -> Vec<f64> {
        self.parameters.iter().map(|p| p.nominal).collect()
    }

    /// The model of channel `index` alone: its components, the parameters
    /// they use (mu first, in their order) renumbered, and the constraints on
    /// those. Its Asimov q0 is the channel's own, as if it were the only one.
    pub fn channel_alone(&self, index: usize) -> Model {
        let channel = &self.channels[index];
        let mut used = vec![false; self.parameters.len()];
        used[SIGNAL_STRENGTH] = true;
        for component in &channel.components {
            let floating = match &component.shape_parameters {
                ShapeParameters::Floating { parameters, .. } => parameters.as_slice(),
                ShapeParameters::Fixed(_) => &[],
            };
            let floating = floating.iter().flatten();
            for &parameter in component.yield_parameters.iter().chain(floating) {
                used[parameter] = true;
            }
        }
        let mut renumbered = vec![None; used.len()];
        let mut parameters = Vec::new();
        for (old, parameter) in self.parameters.iter().enumerate() {
            if used[old] {
                renumbered[old] = Some(parameters.len());
                parameters.push(parameter.clone());
            }
        }
        let at = |parameter: usize| renumbered[parameter].expect("a parameter the channel uses");
        let components = channel
            .components
            .iter()
            .map(|component| Component {
                yield_parameters: component.yield_parameters.iter().map(|&p| at(p)).collect(),
                shape_parameters: match &component.shape_parameters {
                    ShapeParameters::Floating { values, parameters } => ShapeParameters::Floating {
                        values: values.clone(),
                        parameters: parameters.iter().map(|p| p.map(at)).collect(),
                    },
                    fixed => fixed.clone(),
                },
                ..component.clone()
            })
            .collect();
        let constraints = self
            .constraints
            .iter()
            .filter_map(|constraint| renumbered[constraint.parameter()].map(|p| constraint.on(p)))
            .collect();
        Model {
            parameters,
            channels: vec![Channel {
                components,
                ..channel.clone()
            }],
            constraints,
            live_time: self.live_time.clone(),
        }
    }

    /// The model of a re-plan: every channel twice, as two data blocks
    /// sharing all parameters. First each channel's data taken by
    /// `taken_live_days` (its components' exposure held at E(taken),
    /// [`Exposure::taken`]), then, in the same order, each channel's data
    /// still to come (E(L) - E(taken), [`Exposure::to_come`]); the
    /// constraints are those of the model. At L live days the two blocks
    /// expect together what one block expects after L, so a fit of both is
    /// the fit of all the data, while the counts of the first block can be
    /// kept as observed and only those of the second drawn.
    ///
    /// Two blocks rather than the sum of both counts: the product of the
    /// blocks' Poisson terms equals that of their sums (up to a factor free
    /// of the parameters) only when every component splits its exposure in
    /// the same ratio, which a period scaling one background breaks.
    /// Control-region constraints, whose counts grow with live time, are
    /// not split: the caller refuses them.
    pub fn taken_and_to_come(&self, taken_live_days: f64) -> Model {
        let block = |suffix: &str, exposure: &dyn Fn(&Exposure) -> Exposure| -> Vec<Channel> {
            self.channels
                .iter()
                .map(|channel| Channel {
                    name: format!("{}{suffix}", channel.name),
                    components: channel
                        .components
                        .iter()
                        .map(|component| Component {
                            exposure: exposure(&component.exposure),
                            ..component.clone()
                        })
                        .collect(),
                    ..channel.clone()
                })
                .collect()
        };
        let mut channels = block("", &|e| e.taken(taken_live_days));
        channels.extend(block(" (to come)", &|e| e.to_come(taken_live_days)));
        Model {
            parameters: self.parameters.clone(),
            channels,
            constraints: self.constraints.clone(),
            live_time: self.live_time.clone(),
        }
    }

    /// Expected events per live day at nominal parameters outside any
    /// period, split into (signal, background).
    pub fn nominal_rates(&self) -> (f64, f64) {
        self.nominal_split(|component| component.events_per_live_day, |_| true)
    }

    /// Expected events after `live_days` at nominal parameters, each
    /// component through its exposure, split into (signal, background).
    pub fn nominal_events(&self, live_days: f64) -> (f64, f64) {
        self.nominal_split(|component| component.events(live_days), |_| true)
    }

    /// sqrt(b)/s for the expected signal s and background b after
    /// `live_days` (b at least one event): the standard deviation of the
    /// fitted signal strength for one count of all the model's events with a
    /// known background, in the Gaussian approximation (common practice);
    /// infinite when no signal is expected. Searches for a signal strength
    /// start from it, since a peak on a broad background or systematic
    /// uncertainties change it by a modest factor only, while a huge or tiny
    /// signal changes it by many decades. Only channels that expect some
    /// signal count: a channel of signal efficiency 0 measures backgrounds
    /// as a control region does, and must start no search elsewhere than
    /// that control region would (the searches stop within a relative
    /// 1e-7 of the root, so another start moves a result by up to that).
    pub fn counting_sigma(&self, live_days: f64) -> f64 {
        let (signal, background) = self.nominal_split(
            |component| component.events(live_days),
            Channel::sees_signal,
        );
        background.max(1.0).sqrt() / signal
    }

    /// The sums over signal and over background components of `events` in
    /// the channels `counted` keeps, each times the component's nominal
    /// yield factors.
    fn nominal_split(
        &self,
        events: impl Fn(&Component) -> f64,
        counted: impl Fn(&Channel) -> bool,
    ) -> (f64, f64) {
        let nominal = self.nominal_parameters();
        let mut signal = 0.0;
        let mut background = 0.0;
        let channels = self.channels.iter().filter(|channel| counted(channel));
        for component in channels.flat_map(|c| &c.components) {
            let factor: f64 = component
                .yield_parameters
                .iter()
                .map(|&p| nominal[p])
                .product();
            let rate = factor * events(component);
            if component.is_signal {
                signal += rate;
            } else {
                background += rate;
            }
        }
        (signal, background)
    }
}
