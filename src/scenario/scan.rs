//! `signal.scan`: the positions a search for a peak of unknown position tests.
//!
//! A search that does not know where its peak sits fits the signal at every
//! position of a grid; its local significance must then be corrected for the
//! look-elsewhere effect (Gross and Vitells, Eur. Phys. J. C 70 (2010) 525).
//! The scenario's own signal position stays the one of the local projection.

use super::limits::MAX_SCAN_POSITIONS;
use super::validate::values::{require_finite, require_positive};
use super::{Resolution, Scenario, ScenarioError, ShapeSpec};
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
    /// The width at `to`; absent: the shape's own width everywhere (or,
    /// with a detector-level signal, each channel's resolution).
    #[serde(default)]
    pub width_at_to: Option<f64>,
}

/// A checked scan: the positions and, in every channel, the signal's width
/// at each of them.
///
/// Position i is `from + i step`, i = 0 .. positions - 1. The peak moves
/// together in every channel; each channel's width follows its own
/// [`WidthLaw`].
#[derive(Debug, Clone, PartialEq)]
pub struct SignalScan {
    from: f64,
    to: f64,
    step: f64,
    positions: usize,
    /// One per channel, in channel order.
    peaks: Vec<ScannedPeak>,
}

/// How a channel's signal width follows the position.
#[derive(Debug, Clone, PartialEq)]
pub enum WidthLaw {
    /// Linear from the shape's own width at `from` to `width_at_to` at `to`
    /// (`scan.width_at_to`; the same width everywhere without it).
    Linear { at_from: f64, at_to: f64 },
    /// The channel's `resolution` at the position.
    Resolution(Resolution),
}

/// One channel's signal shape as the scan moves it.
#[derive(Debug, Clone, PartialEq)]
struct ScannedPeak {
    /// The signal shape whose position and width move.
    shape: ShapeSpec,
    position_parameter: usize,
    width_parameter: usize,
    width: WidthLaw,
}

impl ScannedPeak {
    /// The peak of `shape`, or the error naming `signal.scan` when it has
    /// no movable peak; its width at `from` is the shape's own.
    fn of(shape: &ShapeSpec, range: [f64; 2]) -> Result<ScannedPeak, ScenarioError> {
        // The shape names its movable peak (`Shape::movable_peak`); validation
        // has built it on this range before.
        let peak = shape
            .build(Placement {
                range,
                floated: false,
            })
            .ok()
            .and_then(|built| built.movable_peak());
        let Some(MovablePeak { position, width }) = peak else {
            return Err(ScenarioError::invalid(
                "signal.scan",
                format!(
                    "applies to gaussian and breit_wigner signals (their mean moves), not to a {} signal",
                    shape.kind.key
                ),
            ));
        };
        let own = shape.values[width].number();
        Ok(ScannedPeak {
            shape: shape.clone(),
            position_parameter: position,
            width_parameter: width,
            width: WidthLaw::Linear {
                at_from: own,
                at_to: own,
            },
        })
    }
}

impl SignalScan {
    /// The checked scan of `scan` over the signal `shape` on `range`, or the
    /// error naming the field of `signal.scan` that is wrong.
    pub(super) fn new(
        scan: &Scan,
        shape: &ShapeSpec,
        range: [f64; 2],
    ) -> Result<SignalScan, ScenarioError> {
        let mut peak = ScannedPeak::of(shape, range)?;
        if let Some(width) = scan.width_at_to {
            require_positive("signal.scan.width_at_to", width)?;
            if let WidthLaw::Linear { at_to, .. } = &mut peak.width {
                *at_to = width;
            }
        }
        SignalScan::of_peaks(scan, vec![peak], range)
    }

    /// The scan of `peaks` (one per channel), whose default step is a fifth
    /// of the narrowest width at `from`.
    fn of_peaks(
        scan: &Scan,
        peaks: Vec<ScannedPeak>,
        range: [f64; 2],
    ) -> Result<SignalScan, ScenarioError> {
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
            None => {
                let narrowest = peaks
                    .iter()
                    .map(|peak| peak.width_at(scan.from, [scan.from, scan.to]))
                    .fold(f64::INFINITY, f64::min);
                narrowest / DEFAULT_STEPS_PER_WIDTH
            }
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
            positions,
            peaks,
        })
    }

    /// The scan reduced to the one position `position`, with the widths
    /// there: a search that knows where its signal sits, whose global
    /// p-value is its local one.
    pub fn single_position(&self, position: f64) -> SignalScan {
        let peaks = (0..self.peaks.len())
            .map(|channel| {
                let width = self.width_at(channel, position);
                ScannedPeak {
                    width: WidthLaw::Linear {
                        at_from: width,
                        at_to: width,
                    },
                    ..self.peaks[channel].clone()
                }
            })
            .collect();
        SignalScan {
            from: position,
            to: position,
            positions: 1,
            peaks,
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

    /// The number of channels whose signal moves.
    pub fn channels(&self) -> usize {
        self.peaks.len()
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

    /// Channel `channel`'s signal width at `position` (its [`WidthLaw`]).
    pub fn width_at(&self, channel: usize, position: f64) -> f64 {
        self.peaks[channel].width_at(position, [self.from, self.to])
    }

    /// The narrowest width of any channel at either end of the scan.
    pub fn narrowest_width(&self) -> f64 {
        (0..self.peaks.len())
            .flat_map(|channel| [self.from, self.to].map(|at| self.width_at(channel, at)))
            .fold(f64::INFINITY, f64::min)
    }

    /// Channel `channel`'s signal shape with its peak at `position` and the
    /// given `width`.
    pub fn shape_at(&self, channel: usize, position: f64, width: f64) -> ShapeSpec {
        let peak = &self.peaks[channel];
        let mut shape = peak.shape.clone();
        shape.values[peak.position_parameter] = ParameterValue::Number(position);
        shape.values[peak.width_parameter] = ParameterValue::Number(width);
        shape
    }

    /// Every channel's signal shape parameters (each in its parameter
    /// order, channel after channel) with the peak at `position` and each
    /// channel's width there: the placement of `Likelihood::place_signal`.
    pub fn shape_parameters_at(&self, position: f64) -> Vec<f64> {
        (0..self.peaks.len())
            .flat_map(|channel| {
                self.shape_at(channel, position, self.width_at(channel, position))
                    .values
                    .iter()
                    .map(ParameterValue::number)
                    .collect::<Vec<f64>>()
            })
            .collect()
    }

    /// d parameters / d position at `position`, laid out as
    /// [`SignalScan::shape_parameters_at`]: 1 for each position, the
    /// width's slope there for each width, 0 for the rest.
    pub fn direction_at(&self, position: f64) -> Vec<f64> {
        self.peaks
            .iter()
            .flat_map(|peak| {
                let mut direction = vec![0.0; peak.shape.values.len()];
                direction[peak.position_parameter] = 1.0;
                direction[peak.width_parameter] = peak.width_slope(position, [self.from, self.to]);
                direction
            })
            .collect()
    }
}

impl ScannedPeak {
    fn width_at(&self, position: f64, [from, to]: [f64; 2]) -> f64 {
        match &self.width {
            WidthLaw::Linear { at_from, at_to } => {
                if to == from {
                    return *at_from;
                }
                let t = (position - from) / (to - from);
                at_from + t * (at_to - at_from)
            }
            WidthLaw::Resolution(resolution) => resolution.sigma_at(position),
        }
    }

    fn width_slope(&self, position: f64, [from, to]: [f64; 2]) -> f64 {
        match &self.width {
            WidthLaw::Linear { at_from, at_to } => {
                if to == from {
                    0.0
                } else {
                    (at_to - at_from) / (to - from)
                }
            }
            WidthLaw::Resolution(resolution) => resolution.slope_at(position),
        }
    }
}

impl Scenario {
    /// The scan of the signal position, when `signal.scan` is given.
    pub fn signal_scan(&self) -> Option<SignalScan> {
        let checked = self.checked_signal_scan()?;
        Some(checked.expect("validation refuses a scan that is not valid"))
    }

    /// The scan of the signal position, or the error naming what is wrong:
    /// with a detector-level signal the peak moves in every channel, each
    /// with the width its resolution gives.
    pub(super) fn checked_signal_scan(&self) -> Option<Result<SignalScan, ScenarioError>> {
        let scan = self.signal().scan.as_ref()?;
        let range = self.observable().range;
        Some(match &self.detector_signal {
            None => SignalScan::new(scan, &self.signal().shape, range),
            Some(detector_signal) => self
                .channels
                .iter()
                .zip(&detector_signal.channels)
                .map(|(channel, response)| {
                    let peak = ScannedPeak::of(&channel.signal.shape, channel.observable.range)?;
                    Ok(ScannedPeak {
                        width: WidthLaw::Resolution(response.resolution.clone()),
                        ..peak
                    })
                })
                .collect::<Result<Vec<_>, ScenarioError>>()
                .and_then(|peaks| {
                    let range = self.channels.iter().fold(range, |[low, high], channel| {
                        let [l, h] = channel.observable.range;
                        [low.max(l), high.min(h)]
                    });
                    SignalScan::of_peaks(scan, peaks, range)
                }),
        })
    }

    /// This scenario with the signal peak moved to `position` in every
    /// channel, each with its width there; everything else unchanged. Build
    /// its model with [`Model::from_scenario`](crate::model::Model::from_scenario).
    pub fn with_signal_at(&self, scan: &SignalScan, position: f64) -> Scenario {
        let mut moved = self.clone();
        for (index, channel) in moved.channels.iter_mut().take(scan.channels()).enumerate() {
            channel.signal.shape = scan.shape_at(index, position, scan.width_at(index, position));
        }
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
        assert_eq!(scan.width_at(0, 50.0), 1.5, "constant width by default");
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
        assert_eq!(scan.width_at(0, 10.0), 1.5);
        assert!((scan.width_at(0, 50.0) - 2.5).abs() < 1e-12);
        assert!((scan.width_at(0, 90.0) - 3.5).abs() < 1e-12);
        assert_eq!(scan.shape_parameters_at(50.0), vec![50.0, 2.5]);
        let moved = scenario.with_signal_at(&scan, 30.0);
        assert_eq!(moved.signal().shape, scan.shape_at(0, 30.0, 2.0));
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
