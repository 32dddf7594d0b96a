//! Building the model from a validated scenario.

use super::{
    Channel, Component, Constraint, LiveTime, Model, Parameter, SIGNAL_STRENGTH, ShapeParameters,
};
use crate::scenario::{self, Background, NormUncertainty, Scenario, ShapeSpec, Signal};
use crate::shapes::{self, Shape};
use std::collections::{BTreeMap, BTreeSet};
use std::sync::Arc;

impl Model {
    /// The model of a scenario: mu, common to all channels, one factor per
    /// shared uncertainty that some yield names (in name order), then per channel
    /// an optional constrained signal yield factor, one factor per background
    /// whose normalisation is uncertain, the parameters of every background
    /// shape marked `float_shape`, and the signal's position and width where
    /// they are uncertain.
    pub fn from_scenario(scenario: &Scenario) -> Model {
        let live_time = LiveTime::from_schedule(&scenario.schedule);
        let mut builder = Builder {
            parameters: Vec::new(),
            constraints: Vec::new(),
            range: scenario.observable().range,
            prefix: String::new(),
            shared: BTreeMap::new(),
            live_time: &live_time,
        };
        builder.parameters.push(Parameter {
            name: "signal_strength".into(),
            nominal: 1.0,
            lower: 0.0,
            upper: f64::INFINITY,
        });
        debug_assert_eq!(builder.parameters.len() - 1, SIGNAL_STRENGTH);
        builder.shared_factors(scenario);

        let several = scenario.channels.len() > 1;
        let channels = scenario
            .channels
            .iter()
            .map(|channel| {
                builder.range = channel.observable.range;
                builder.prefix = if several {
                    format!("{}.", channel.name)
                } else {
                    String::new()
                };
                builder.channel(channel)
            })
            .collect();
        Model {
            parameters: builder.parameters,
            channels,
            constraints: builder.constraints,
            live_time,
        }
    }
}

/// Uniform bin edges over `range`; the scenario guarantees that `width` divides it.
pub fn bin_edges(range: [f64; 2], width: f64) -> Vec<f64> {
    let bins = ((range[1] - range[0]) / width).round() as usize;
    (0..=bins)
        .map(|i| {
            if i == bins {
                range[1]
            } else {
                range[0] + i as f64 * width
            }
        })
        .collect()
}

struct Builder<'s> {
    parameters: Vec<Parameter>,
    constraints: Vec<Constraint>,
    /// The channel's range, on which every shape is normalised.
    range: [f64; 2],
    /// Put before every parameter name: the channel's name when there are several.
    prefix: String,
    /// The parameter of each shared uncertainty in use, by name.
    shared: BTreeMap<String, usize>,
    /// The schedule, from which each component's exposure comes.
    live_time: &'s LiveTime,
}

impl Builder<'_> {
    /// One factor N(1, width) per shared uncertainty that a signal or
    /// background names; an unused one (a warning) adds nothing to the fits.
    fn shared_factors(&mut self, scenario: &Scenario) {
        let names = scenario.channels.iter().flat_map(|channel| {
            let backgrounds = channel.backgrounds.iter().flat_map(|b| &b.shared);
            channel.signal.shared.iter().chain(backgrounds)
        });
        let used: BTreeSet<&String> = names.collect();
        for (name, &width) in &scenario.shared_uncertainties {
            if used.contains(name) {
                let parameter = self.yield_factor(format!("shared.{name}"), Some(width));
                self.shared.insert(name.clone(), parameter);
            }
        }
    }

    /// The parameters of the shared uncertainties a yield names.
    fn shared_parameters<'a>(&'a self, names: &'a [String]) -> impl Iterator<Item = usize> + 'a {
        names.iter().map(|name| self.shared[name])
    }

    /// One channel's components (signal first), their parameters and constraints.
    fn channel(&mut self, channel: &scenario::Channel) -> Channel {
        let mut components = vec![self.signal_component(&channel.signal)];
        components.extend(
            channel
                .backgrounds
                .iter()
                .map(|b| self.background_component(b)),
        );
        // Last in the channel, so that in a single channel every other
        // parameter and global observable keeps its place (and its random
        // numbers) with or without them.
        components[0].shape_parameters =
            self.signal_shape_parameters(&channel.signal, components[0].shape.as_ref());
        let observable = &channel.observable;
        Channel {
            name: channel.name.clone(),
            unit: observable.unit.clone(),
            edges: bin_edges(observable.range, observable.bin_width),
            components,
        }
    }

    fn add_parameter(&mut self, name: String, nominal: f64, lower: f64) -> usize {
        self.parameters.push(Parameter {
            name: format!("{}{name}", self.prefix),
            nominal,
            lower,
            upper: f64::INFINITY,
        });
        self.parameters.len() - 1
    }

    /// A yield factor with nominal 1, constrained by N(1, width) when `width` is given.
    fn yield_factor(&mut self, name: String, width: Option<f64>) -> usize {
        let parameter = self.add_parameter(name, 1.0, 0.0);
        if let Some(width) = width {
            self.constraints
                .push(Constraint::Gaussian { parameter, width });
        }
        parameter
    }

    fn signal_component(&mut self, signal: &Signal) -> Component {
        let mut yield_parameters = vec![SIGNAL_STRENGTH];
        if let Some(width) = signal.yield_uncertainty {
            yield_parameters.push(self.yield_factor("signal.yield_factor".into(), Some(width)));
        }
        yield_parameters.extend(self.shared_parameters(&signal.shared));
        let shape = shape_from_spec(&signal.shape, self.range);
        Component {
            name: "signal".into(),
            is_signal: true,
            events_per_live_day: signal.events_per_day,
            exposure: self.live_time.exposure(|period| period.signal_scale),
            shape_parameters: ShapeParameters::Fixed(shape.nominal_parameters()),
            shape,
            yield_parameters,
        }
    }

    /// The signal shape fixed, or with its position (a Gaussian constraint
    /// of width `position_uncertainty`) and width (of width
    /// `width_uncertainty` times the nominal width) fitted where their
    /// uncertainties are above zero; the width held above its domain's edge.
    fn signal_shape_parameters(&mut self, signal: &Signal, shape: &dyn Shape) -> ShapeParameters {
        let values = shape.nominal_parameters();
        let mut parameters = vec![None; values.len()];
        if let Some(peak) = shape.movable_peak() {
            let (position, width) = (peak.position, peak.width);
            let uncertain = |uncertainty: Option<f64>| uncertainty.filter(|&value| value > 0.0);
            if let Some(sigma) = uncertain(signal.position_uncertainty) {
                parameters[position] = Some(self.constrained_parameter(
                    "signal.position",
                    values[position],
                    f64::NEG_INFINITY,
                    sigma,
                ));
            }
            if let Some(relative) = uncertain(signal.width_uncertainty) {
                parameters[width] = Some(self.constrained_parameter(
                    "signal.width",
                    values[width],
                    shape.parameter_lower_bounds()[width],
                    relative * values[width],
                ));
            }
        }
        match parameters.iter().all(Option::is_none) {
            true => ShapeParameters::Fixed(values),
            false => ShapeParameters::Floating { values, parameters },
        }
    }

    /// A parameter of nominal value `nominal` fitted above `lower` with the
    /// Gaussian constraint N(nominal, width) on its auxiliary measurement.
    fn constrained_parameter(&mut self, name: &str, nominal: f64, lower: f64, width: f64) -> usize {
        let parameter = self.add_parameter(name.into(), nominal, lower);
        self.constraints
            .push(Constraint::Gaussian { parameter, width });
        parameter
    }

    fn background_component(&mut self, background: &Background) -> Component {
        let factor_name = format!("{}.norm_factor", background.name);
        let exposure = self
            .live_time
            .exposure(|period| period.background_factor(&background.name));
        let width = match background.norm_uncertainty {
            Some(NormUncertainty::Relative(width)) => Some(width),
            Some(NormUncertainty::Free) | None => None,
        };
        let mut yield_parameters =
            if background.norm_uncertainty.is_none() && background.control.is_none() {
                Vec::new()
            } else {
                let parameter = self.yield_factor(factor_name, width);
                if let Some(control) = background.control {
                    self.constraints.push(Constraint::ControlRegion {
                        parameter,
                        events_per_live_day: control.ratio * background.events_per_day,
                        exposure: exposure.clone(),
                    });
                }
                vec![parameter]
            };
        yield_parameters.extend(self.shared_parameters(&background.shared));
        let shape = shape_from_spec(&background.shape, self.range);
        let shape_parameters = if background.float_shape {
            let names = shape.parameter_names();
            let parameters = names
                .iter()
                .zip(shape.nominal_parameters())
                .zip(shape.parameter_lower_bounds())
                .map(|((name, nominal), lower)| {
                    Some(self.add_parameter(
                        format!("{}.{}", background.name, name),
                        nominal,
                        lower,
                    ))
                })
                .collect();
            ShapeParameters::Floating {
                values: shape.nominal_parameters(),
                parameters,
            }
        } else {
            ShapeParameters::Fixed(shape.nominal_parameters())
        };
        Component {
            name: background.name.clone(),
            is_signal: false,
            events_per_live_day: background.events_per_day,
            exposure,
            shape,
            yield_parameters,
            shape_parameters,
        }
    }
}

/// Exact fraction of a shape (normalised on `range`) inside `[low, high]`, a
/// window within the range.
pub fn fraction_inside(spec: &ShapeSpec, range: [f64; 2], low: f64, high: f64) -> f64 {
    if high <= low {
        return 0.0;
    }
    let mut edges = vec![range[0]];
    for edge in [low, high, range[1]] {
        if edge > edges[edges.len() - 1] {
            edges.push(edge);
        }
    }
    let window = usize::from(low > range[0]);
    let shape = shape_from_spec(spec, range);
    let mut fractions = vec![0.0; edges.len() - 1];
    shape.bin_fractions(&shape.nominal_parameters(), &edges, &mut fractions);
    fractions[window]
}

/// The shape a validated scenario names, on the observable's `range`, built
/// by its kind's constructor (validation has run the same constructor).
pub fn shape_from_spec(spec: &ShapeSpec, range: [f64; 2]) -> Arc<dyn shapes::Shape> {
    let fixed = shapes::Placement {
        range,
        floated: false,
    };
    spec.build(fixed)
        .expect("validation refuses shapes that are no density on the range")
        .into()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A flat density on [0, 10] puts (high - low) / 10 inside [low, high]
    /// (definition), also when the window touches or covers the range edges.
    #[test]
    fn flat_fraction_inside_is_the_width_share() {
        let flat: ShapeSpec = serde_yaml::from_str("{flat: {}}").unwrap();
        for (low, high, expected) in [(2.0, 5.0, 0.3), (0.0, 4.0, 0.4), (6.0, 10.0, 0.4)] {
            let fraction = fraction_inside(&flat, [0.0, 10.0], low, high);
            assert!(
                (fraction - expected).abs() < 1e-15,
                "[{low}, {high}]: {fraction}"
            );
        }
        assert_eq!(fraction_inside(&flat, [0.0, 10.0], 0.0, 10.0), 1.0);
        assert_eq!(fraction_inside(&flat, [0.0, 10.0], 3.0, 3.0), 0.0);
    }
}
