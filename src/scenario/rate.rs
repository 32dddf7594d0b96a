//! Event rates as written: per live day, per week, per year, or per kg·day of
//! detector mass. Each is turned into events per live day once, when the
//! scenario is read, so everything downstream works in events per live day
//! and a scenario written per day reads exactly as before.

use super::ScenarioError;
use super::validate::values::require_positive;
use serde::Deserialize;

pub use crate::calendar::{DAYS_PER_WEEK, DAYS_PER_YEAR};

/// The detector whose mass turns rates per kg·day into rates per day.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Detector {
    /// Detector (fiducial) mass in kg; finite and positive.
    pub mass_kg: f64,
}

impl Detector {
    /// The detector, or a located error when its mass is not a finite
    /// positive number; `path` is the dotted path of its owner (`""` at the top level).
    pub(super) fn checked(self, path: &str) -> Result<Detector, ScenarioError> {
        require_positive(&format!("{path}detector.mass_kg"), self.mass_kg)?;
        Ok(self)
    }
}

/// The unit a rate was written in.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum RateUnit {
    #[default]
    PerDay,
    PerWeek,
    PerYear,
    PerKgDay,
}

impl RateUnit {
    /// Every unit, in the order of its key.
    const ALL: [RateUnit; 4] = [
        RateUnit::PerDay,
        RateUnit::PerWeek,
        RateUnit::PerYear,
        RateUnit::PerKgDay,
    ];

    /// The scenario key of a rate in this unit, e.g. `events_per_year`.
    pub fn key(self) -> &'static str {
        match self {
            RateUnit::PerDay => "events_per_day",
            RateUnit::PerWeek => "events_per_week",
            RateUnit::PerYear => "events_per_year",
            RateUnit::PerKgDay => "events_per_kg_day",
        }
    }

    /// The unit in words, e.g. "per year of 365.25 live days".
    pub fn label(self) -> &'static str {
        match self {
            RateUnit::PerDay => "per live day",
            RateUnit::PerWeek => "per week of 7 live days",
            RateUnit::PerYear => "per year of 365.25 live days",
            RateUnit::PerKgDay => "per kg·day",
        }
    }
}

/// A rate as written: the values of the rate keys, of which exactly one must be given.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct WrittenRate {
    pub events_per_day: Option<f64>,
    pub events_per_week: Option<f64>,
    pub events_per_year: Option<f64>,
    pub events_per_kg_day: Option<f64>,
}

impl WrittenRate {
    /// The written value with its unit, or a located error (`owner` is the
    /// dotted path of the signal or background) when no key or more than one is given.
    fn single(&self, owner: &str) -> Result<(f64, RateUnit), ScenarioError> {
        let given: Vec<(f64, RateUnit)> = [
            (self.events_per_day, RateUnit::PerDay),
            (self.events_per_week, RateUnit::PerWeek),
            (self.events_per_year, RateUnit::PerYear),
            (self.events_per_kg_day, RateUnit::PerKgDay),
        ]
        .into_iter()
        .filter_map(|(value, unit)| value.map(|value| (value, unit)))
        .collect();
        let keys = || {
            let keys: Vec<&str> = RateUnit::ALL.iter().map(|unit| unit.key()).collect();
            keys.join(", ")
        };
        match given.as_slice() {
            [one] => Ok(*one),
            [] => Err(ScenarioError::invalid(
                format!("{owner}.events_per_day"),
                format!("a rate is needed: write exactly one of {}", keys()),
            )),
            [first, second, ..] => Err(ScenarioError::invalid(
                format!("{owner}.{}", second.1.key()),
                format!(
                    "give the rate once: {} is already given; write exactly one of {}",
                    first.1.key(),
                    keys()
                ),
            )),
        }
    }

    /// The value of the one rate key given; None unless exactly one is.
    pub(super) fn value(&self) -> Option<f64> {
        self.single("").ok().map(|(value, _)| value)
    }

    /// Events per live day: a rate per week divided by 7, per year by
    /// [`DAYS_PER_YEAR`], per kg·day multiplied by the detector mass. A
    /// located error when the key is missing or repeated, the value not a
    /// finite positive number, or a rate per kg·day has no detector mass.
    pub(super) fn per_day(
        &self,
        owner: &str,
        detector: Option<Detector>,
    ) -> Result<(f64, RateUnit), ScenarioError> {
        let (value, unit) = self.single(owner)?;
        let field = format!("{owner}.{}", unit.key());
        require_positive(&field, value)?;
        let per_day = match unit {
            RateUnit::PerDay => value,
            RateUnit::PerWeek => value / DAYS_PER_WEEK,
            RateUnit::PerYear => value / DAYS_PER_YEAR,
            RateUnit::PerKgDay => {
                let Some(detector) = detector else {
                    return Err(ScenarioError::invalid(
                        field,
                        "a rate per kg·day needs the detector mass: add `detector: {mass_kg: ...}` at the top level or in the channel",
                    ));
                };
                value * detector.mass_kg
            }
        };
        Ok((per_day, unit))
    }
}
