//! `signal.scan`: the positions a search for a peak of unknown position tests.
//!
//! A search that does not know where its peak sits fits the signal at every
//! position of a grid; its local significance must then be corrected for the
//! look-elsewhere effect (Gross and Vitells, Eur. Phys. J. C 70 (2010) 525).
//! The scenario's own signal position stays the one of the local projection.

use super::limits::MAX_SCAN_POSITIONS;
use super::validate::{require_finite, require_positive};
use super::{Scenario, ScenarioError, ShapeSpec};
use crate::message::show;
use crate::shapes::{MovablePeak, ParameterValue, Placement};
use serde::Deserialize;

/// Fewest positions of a scan: fewer than three cannot show an upcrossing
/// between two neighbours that are both below the level.
pub const MIN_SCAN_POSITIONS: usize = 3;

/// Share of the peak's width taken as the default step: a fifth of the width
/// samples q0(position), whose correlation length is about the width, finely
/// enough that few upcrossings fall between two positions (common practice).
const DEFAULT_STEPS_PER_WIDTH: f64 = 5.0;

/// Relative slack when counting steps, so that a step dividing the interval
/// in decimal (0.2 over 80) gives its last position at `to`.
const STEP_COUNT_TOLERANCE: f64 = 1e-9;

/// `signal.scan` as written: `{from, to, step, width_at_to}`.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Scan {
    pub from: f64,
    pub to: f64,
    /// Distance between neighbouring positions; absent: a fifth of the
    /// shape's width at `from`.
    #[serde(default)]
    pub step: Option<f64>,
    /// The width at `to`; absent: the shape's own width everywhere.
    #[serde(default)]
    pub width_at_to: Option<f64>,
}

/// A checked scan: the positions and the width at each of them.
///
/// Position i is `from + i step`, i = 0 .. positions - 1; the width grows
/// linearly from the shape's own width at `from` to `width_at_to` at `to`.
#[derive(Debug, Clone, PartialEq)]
pub struct SignalScan {
    from: f64,
    to: f64,
    step: f64,
    width_at_from: f64,
    width_at_to: f64,
    positions: usize,
    /// The signal shape whose position and width move.
    shape: ShapeSpec,
    position_parameter: usize,
    width_parameter: usize,
}

impl SignalScan {
    /// The checked scan of `scan` over the signal `shape` on `range`, or the
    /// error naming the field of `signal.scan` that is wrong.
    pub(super) fn new(
        scan: &Scan,
        shape: &ShapeSpec,
        range: [f64; 2],
    ) -> Result<SignalScan, ScenarioError> {
        // The shape names its movable peak (`Shape::movable_peak`); validation
        // has built it on this range before.
        let peak = shape
            .build(Placement {
                range,
                floated: false,
            })
            .ok()
            .and_then(|built| built.movable_peak());
        let Some(MovablePeak {
            position: position_parameter,
            width: width_parameter,
        }) = peak
        else {
            return Err(ScenarioError::invalid(
                "signal.scan",
                format!(
                    "applies to gaussian and breit_wigner signals (their mean moves), not to a {} signal",
                    shape.kind.key
                ),
            ));
        };
        let width_at_from = shape.values[width_parameter].number();
        require_finite("signal.scan.from", scan.from)?;
        require_finite("signal.scan.to", scan.to)?;
        if scan.from >= scan.to {
            return Err(ScenarioError::invalid(
                "signal.scan",
                format!(
                    "from must be below to, got from {} and to {}",
                    show(scan.from),
                    show(scan.to)
                ),
            ));
        }
        for (field, value) in [("signal.scan.from", scan.from), ("signal.scan.to", scan.to)] {
            if value < range[0] || value > range[1] {
                return Err(ScenarioError::invalid(
                    field,
                    format!(
                        "must lie inside the observable range [{}, {}], got {}",
                        show(range[0]),
                        show(range[1]),
                        show(value)
                    ),
                ));
            }
        }
        let length = scan.to - scan.from;
        let step = match scan.step {
            Some(step) => {
                require_positive("signal.scan.step", step)?;
                if step > length {
                    return Err(ScenarioError::invalid(
                        "signal.scan.step",
                        format!(
                            "must not be larger than the scanned interval to - from = {}, got {}",
                            show(length),
                            show(step)
                        ),
                    ));
                }
                step
            }
            None => width_at_from / DEFAULT_STEPS_PER_WIDTH,
        };
        let width_at_to = match scan.width_at_to {
            Some(width) => {
                require_positive("signal.scan.width_at_to", width)?;
                width
            }
            None => width_at_from,
        };
        let steps = (length / step * (1.0 + STEP_COUNT_TOLERANCE)).floor();
        if steps + 1.0 > MAX_SCAN_POSITIONS as f64 {
            return Err(ScenarioError::invalid(
                "signal.scan.step",
                format!(
                    "gives {} positions over [{}, {}], more than the {MAX_SCAN_POSITIONS} allowed",
                    show(steps + 1.0),
                    show(scan.from),
                    show(scan.to)
                ),
            ));
        }
        let positions = steps as usize + 1;
        if positions < MIN_SCAN_POSITIONS {
            return Err(ScenarioError::invalid(
                "signal.scan.step",
                format!(
                    "gives {positions} positions over [{}, {}], fewer than the {MIN_SCAN_POSITIONS} needed",
                    show(scan.from),
                    show(scan.to)
                ),
            ));
        }
        Ok(SignalScan {
            from: scan.from,
            to: scan.to,
            step,
            width_at_from,
            width_at_to,
            positions,
            shape: shape.clone(),
            position_parameter,
            width_parameter,
        })
    }

    /// The scan reduced to the one position `position`, with the width
    /// there: a search that knows where its signal sits, whose global
    /// p-value is its local one.
    pub fn single_position(&self, position: f64) -> SignalScan {
        let width = self.width_at(position);
        SignalScan {
            from: position,
            to: position,
            width_at_from: width,
            width_at_to: width,
            positions: 1,
            ..self.clone()
        }
    }

    /// The number of positions tested.
    pub fn len(&self) -> usize {
        self.positions
    }

    /// Always false: a scan has at least one position.
    pub fn is_empty(&self) -> bool {
        self.positions == 0
    }

    /// The distance between neighbouring positions.
    pub fn step(&self) -> f64 {
        self.step
    }

    /// `[from, to]`, the interval scanned.
    pub fn interval(&self) -> [f64; 2] {
        [self.from, self.to]
    }

    /// Position `index` (0-based), `from + index step`.
    pub fn position(&self, index: usize) -> f64 {
        self.from + index as f64 * self.step
    }

    /// Every position, in increasing order.
    pub fn positions(&self) -> impl ExactSizeIterator<Item = f64> + '_ {
        (0..self.positions).map(|index| self.position(index))
    }

    /// The width at `position`: linear from the shape's own width at `from`
    /// to `width_at_to` at `to`.
    pub fn width_at(&self, position: f64) -> f64 {
        if self.positions == 1 {
            return self.width_at_from;
        }
        let t = (position - self.from) / (self.to - self.from);
        self.width_at_from + t * (self.width_at_to - self.width_at_from)
    }

    /// The signal shape with its peak at `position` and the given `width`.
    pub fn shape_at(&self, position: f64, width: f64) -> ShapeSpec {
        let mut shape = self.shape.clone();
        shape.values[self.position_parameter] = ParameterValue::Number(position);
        shape.values[self.width_parameter] = ParameterValue::Number(width);
        shape
    }

    /// The signal shape's parameter values (in its parameter order) with its
    /// peak at `position` and the width of the scan there.
    pub fn shape_parameters_at(&self, position: f64) -> Vec<f64> {
        self.shape_at(position, self.width_at(position))
            .values
            .iter()
            .map(ParameterValue::number)
            .collect()
    }
}

impl Scenario {
    /// The scan of the signal position, when `signal.scan` is given.
    pub fn signal_scan(&self) -> Option<SignalScan> {
        let scan = self.signal().scan.as_ref()?;
        let checked = SignalScan::new(scan, &self.signal().shape, self.observable().range);
        Some(checked.expect("validation refuses a scan that is not valid"))
    }

    /// This scenario with the signal peak moved to `position`, of width
    /// `width`; everything else unchanged. Build its model with
    /// [`Model::from_scenario`](crate::model::Model::from_scenario).
    pub fn with_signal_at(&self, scan: &SignalScan, position: f64, width: f64) -> Scenario {
        let mut moved = self.clone();
        moved.channel_mut().signal.shape = scan.shape_at(position, width);
        moved
    }
}

#[cfg(test)]
mod tests {
    use super::super::{Scenario, ScenarioError};

    /// A valid scenario with a scanned Gaussian signal, edited by the tests below.
    const SCANNED: &str = "\
title: Scan test
observable: {name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.5}
signal:
  events_per_day: 2.0
  shape: {gaussian: {mean: 50.0, sigma: 1.5}}
  scan: {from: 10.0, to: 90.0, step: 0.5}
backgrounds:
  - {name: continuum, events_per_day: 40, shape: {flat: {}}}
plan:
  days: {first: 1, last: 365, points: 4, spacing: log}
  toys: 100
  seed: 7
  targets: [3, 5]
";

    fn with(from: &str, to: &str) -> String {
        assert!(SCANNED.contains(from), "test text {from:?} not in SCANNED");
        SCANNED.replacen(from, to, 1)
    }

    fn rejected_field(text: &str) -> String {
        match Scenario::from_yaml(text) {
            Err(ScenarioError::Invalid { field, .. }) => field,
            other => panic!("expected an Invalid error, got {other:?}"),
        }
    }

    /// 80 keV in steps of 0.5 keV: 161 positions, both ends included
    /// (arithmetic).
    #[test]
    fn positions_run_from_from_to_to_in_steps() {
        let scenario = Scenario::from_yaml(SCANNED).unwrap();
        let scan = scenario.signal_scan().unwrap();
        assert_eq!(scan.len(), 161);
        assert_eq!(scan.position(0), 10.0);
        assert_eq!(scan.position(160), 90.0);
        assert_eq!(scan.positions().len(), 161);
        assert_eq!(scan.width_at(50.0), 1.5, "constant width by default");
    }

    /// A decimal step (0.2 over 80) still ends at `to`: 401 positions.
    #[test]
    fn decimal_steps_reach_the_end() {
        let scenario = Scenario::from_yaml(&with("step: 0.5", "step: 0.2")).unwrap();
        let scan = scenario.signal_scan().unwrap();
        assert_eq!(scan.len(), 401);
        assert!((scan.position(400) - 90.0).abs() < 1e-9);
    }

    /// Without a step: a fifth of sigma (0.3 keV), so 80 / 0.3 = 266.7 gives
    /// 267 positions.
    #[test]
    fn default_step_is_a_fifth_of_the_width() {
        let scenario = Scenario::from_yaml(&with(", step: 0.5", "")).unwrap();
        let scan = scenario.signal_scan().unwrap();
        assert!((scan.step() - 0.3).abs() < 1e-15);
        assert_eq!(scan.len(), 267);
    }

    /// The width grows linearly from sigma at `from` to `width_at_to` at `to`:
    /// halfway it is the mean of the two.
    #[test]
    fn width_grows_linearly_to_width_at_to() {
        let text = with("step: 0.5}", "step: 0.5, width_at_to: 3.5}");
        let scenario = Scenario::from_yaml(&text).unwrap();
        let scan = scenario.signal_scan().unwrap();
        assert_eq!(scan.width_at(10.0), 1.5);
        assert!((scan.width_at(50.0) - 2.5).abs() < 1e-12);
        assert!((scan.width_at(90.0) - 3.5).abs() < 1e-12);
        assert_eq!(scan.shape_parameters_at(50.0), vec![50.0, 2.5]);
        let moved = scenario.with_signal_at(&scan, 30.0, 2.0);
        assert_eq!(moved.signal().shape, scan.shape_at(30.0, 2.0));
        assert_eq!(moved.backgrounds().len(), scenario.backgrounds().len());
    }

    #[test]
    fn breit_wigner_signals_scan_their_mean() {
        let text = with(
            "{gaussian: {mean: 50.0, sigma: 1.5}}",
            "{breit_wigner: {mean: 50.0, width: 2.0}}",
        );
        let scan = Scenario::from_yaml(&text).unwrap().signal_scan().unwrap();
        assert_eq!(scan.shape_parameters_at(20.0), vec![20.0, 2.0]);
    }

    #[test]
    fn invalid_scans_are_refused_naming_the_field() {
        for (from, to, field) in [
            (
                "{gaussian: {mean: 50.0, sigma: 1.5}}",
                "{exponential: {slope: -0.1}}",
                "signal.scan",
            ),
            (
                "from: 10.0, to: 90.0",
                "from: 90.0, to: 10.0",
                "signal.scan",
            ),
            (
                "from: 10.0, to: 90.0",
                "from: 10.0, to: 10.0",
                "signal.scan",
            ),
            ("from: 10.0", "from: -5.0", "signal.scan.from"),
            ("to: 90.0", "to: 100.5", "signal.scan.to"),
            ("from: 10.0", "from: .nan", "signal.scan.from"),
            ("step: 0.5", "step: 0", "signal.scan.step"),
            ("step: 0.5", "step: -1", "signal.scan.step"),
            ("step: 0.5", "step: 81", "signal.scan.step"),
            ("step: 0.5", "step: 79", "signal.scan.step"),
            ("step: 0.5", "step: 0.0001", "signal.scan.step"),
            (
                "step: 0.5}",
                "step: 0.5, width_at_to: 0}",
                "signal.scan.width_at_to",
            ),
        ] {
            assert_eq!(rejected_field(&with(from, to)), field, "{to}");
        }
    }

    #[test]
    fn unknown_scan_keys_are_parse_errors() {
        let text = with("step: 0.5}", "step: 0.5, stride: 1}");
        assert!(matches!(
            Scenario::from_yaml(&text),
            Err(ScenarioError::Parse { line: Some(6), .. })
        ));
    }

    /// Two steps of 40 give three positions, the fewest accepted; 100,000
    /// positions are accepted and 100,001 refused (limits.rs).
    #[test]
    fn position_counts_at_the_limits() {
        let three = Scenario::from_yaml(&with("step: 0.5", "step: 40")).unwrap();
        assert_eq!(three.signal_scan().unwrap().len(), 3);
        let beyond = with("to: 90.0, step: 0.5", "to: 20.0, step: 0.0001");
        assert_eq!(rejected_field(&beyond), "signal.scan.step");
        let at_limit =
            Scenario::from_yaml(&with("to: 90.0, step: 0.5", "to: 20.0, step: 0.000100001"))
                .unwrap();
        assert_eq!(at_limit.signal_scan().unwrap().len(), 100_000);
    }
}

#[cfg(test)]
mod channel_tests {
    use super::super::{Scenario, ScenarioError};

    /// Two channels, the second with a scan: refused at its path.
    #[test]
    fn a_scan_in_a_scenario_of_several_channels_is_refused() {
        let channel = |name: &str, scan: &str| {
            format!(
                "  - name: {name}\n    observable: {{name: energy, unit: keV, range: [0.0, 100.0], bin_width: 0.5}}\n    \
                 signal:\n      events_per_day: 2.0\n      shape: {{gaussian: {{mean: 50.0, sigma: 1.5}}}}\n{scan}    \
                 backgrounds:\n      - {{name: flat, events_per_day: 40, shape: {{flat: {{}}}}}}\n"
            )
        };
        let text = format!(
            "title: Two channels\nchannels:\n{}{}plan:\n  days: {{first: 1, last: 100, points: 4, spacing: log}}\n  \
             toys: 10\n  seed: 1\n  targets: [3]\n",
            channel("a", ""),
            channel("b", "      scan: {from: 10.0, to: 90.0, step: 0.5}\n")
        );
        match Scenario::from_yaml(&text) {
            Err(ScenarioError::Invalid { field, .. }) => {
                assert_eq!(field, "channels[1].signal.scan")
            }
            other => panic!("expected an Invalid error, got {other:?}"),
        }
    }
}
