//! Scenario: the YAML file a user writes, parsed into typed, validated values.
//!
//! Parsing rejects unknown keys and wrong types (with line and column from the
//! YAML parser); [`validate`] then rejects values that parse but make no physical
//! sense, naming the field. Nothing downstream re-checks these invariants.

mod error;
mod template;
mod validate;

pub use error::ScenarioError;
pub use template::TEMPLATE;

use serde::Deserialize;
use std::path::Path;

/// A whole search scenario: one observable, one signal, one or more backgrounds,
/// the data-taking schedule and the projection plan.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    /// Used in plot titles and the summary.
    pub title: String,
    pub observable: Observable,
    pub signal: Signal,
    pub backgrounds: Vec<Background>,
    #[serde(default)]
    pub schedule: Schedule,
    pub plan: Plan,
}

/// The binned observable (mass, energy, ...) on which the search is made.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Observable {
    pub name: String,
    pub unit: String,
    /// `[low, high]` edges of the fitted range.
    pub range: [f64; 2],
    /// Width of every bin; must divide the range.
    pub bin_width: f64,
}

/// The hypothesised signal at nominal signal strength (mu = 1).
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Signal {
    /// Expected signal events per live day over the whole range, after efficiency.
    pub events_per_day: f64,
    pub shape: ShapeSpec,
    /// Relative width of a Gaussian constraint N(1, width) on a factor on the signal yield.
    #[serde(default)]
    pub yield_uncertainty: Option<f64>,
}

/// One background component.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Background {
    pub name: String,
    /// Expected events per live day over the whole range.
    pub events_per_day: f64,
    pub shape: ShapeSpec,
    /// How well the normalisation is known; absent means known exactly.
    #[serde(default)]
    pub norm_uncertainty: Option<NormUncertainty>,
    /// When true, the shape's parameters are fitted, unconstrained, in every fit.
    #[serde(default)]
    pub float_shape: bool,
}

/// Knowledge of a background normalisation factor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum NormUncertainty {
    /// Gaussian constraint N(1, relative) on the factor.
    Relative(f64),
    /// Unconstrained factor, fitted from the data alone.
    Free,
}

/// A density on the observable range; each is normalised on the range.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
pub enum ShapeSpec {
    Gaussian { mean: f64, sigma: f64 },
    /// Non-relativistic Breit-Wigner (Cauchy); `width` is the full width at half maximum.
    BreitWigner { mean: f64, width: f64 },
    /// Density proportional to exp(slope * x).
    Exponential { slope: f64 },
    /// Density proportional to sum_k c_k x^k.
    Polynomial { coefficients: Vec<f64> },
    Flat {},
}

/// When data are taken: a live fraction and optional reduced-rate periods at the start.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Schedule {
    #[serde(default = "one")]
    pub live_fraction: f64,
    #[serde(default)]
    pub periods: Vec<Period>,
}

impl Default for Schedule {
    fn default() -> Self {
        Schedule {
            live_fraction: 1.0,
            periods: Vec::new(),
        }
    }
}

fn one() -> f64 {
    1.0
}

/// A calendar period during which all rates are scaled by `rate_scale`.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Period {
    pub days: f64,
    pub rate_scale: f64,
}

/// What to project: the grid of calendar days, the ensemble size, seed and targets.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Plan {
    pub days: DaysGrid,
    pub toys: usize,
    pub seed: u64,
    /// Target significances in sigma.
    pub targets: Vec<f64>,
}

/// The grid of calendar days at which the projection is evaluated.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DaysGrid {
    pub first: f64,
    pub last: f64,
    pub points: usize,
    pub spacing: Spacing,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Spacing {
    Log,
    Linear,
}

impl Scenario {
    /// Reads, parses and validates a scenario file.
    pub fn load(path: &Path) -> Result<Scenario, ScenarioError> {
        let text = std::fs::read_to_string(path).map_err(|source| ScenarioError::Read {
            path: path.to_path_buf(),
            source,
        })?;
        Scenario::from_yaml(&text)
    }

    /// Parses and validates scenario text.
    pub fn from_yaml(text: &str) -> Result<Scenario, ScenarioError> {
        let scenario: Scenario = serde_yaml::from_str(text).map_err(ScenarioError::from_yaml)?;
        validate::validate(&scenario)?;
        Ok(scenario)
    }

    /// Non-fatal remarks about a valid scenario (e.g. a signal peak outside the range).
    pub fn warnings(&self) -> Vec<String> {
        validate::warnings(self)
    }
}

impl DaysGrid {
    /// The calendar days of the grid, in increasing order.
    pub fn days(&self) -> Vec<f64> {
        if self.points == 1 {
            return vec![self.first];
        }
        let steps = (self.points - 1) as f64;
        (0..self.points)
            .map(|i| {
                let t = i as f64 / steps;
                match self.spacing {
                    Spacing::Linear => self.first + t * (self.last - self.first),
                    Spacing::Log => self.first * (self.last / self.first).powf(t),
                }
            })
            .collect()
    }
}
