//! Scenario: the YAML file a user writes, parsed into typed, validated values.
//!
//! Parsing rejects unknown keys and wrong types (with line and column from the
//! YAML parser); `validate` then rejects values that parse but make no physical
//! sense, naming the field. Nothing downstream re-checks these invariants.

mod deserialize;
mod detector_signal;
mod error;
mod file;
pub mod limits;
mod rate;
mod resolution;
mod rows_file;
mod scan;
mod template;
mod validate;

pub use detector_signal::{ChannelResponse, DetectorSignal, SIGNAL_YIELD_SHARED};
pub use error::ScenarioError;
pub use rate::{DAYS_PER_WEEK, DAYS_PER_YEAR, Detector, RateUnit};
pub use resolution::Resolution;
pub use rows_file::TableFile;
pub use scan::{MIN_SCAN_POSITIONS, Scan, SignalScan, WidthLaw};
pub use template::TEMPLATE;

use crate::calendar::CalendarDate;
use crate::shapes::{ParameterValue, Placement, Shape, ShapeError, ShapeKind};
use crate::warning::Warning;
use rate::WrittenRate;
use rows_file::TableSource;
use serde::Deserialize;
use std::collections::BTreeMap;
use std::io::Read;
use std::path::Path;

/// A whole search scenario: one or more channels sharing one signal strength,
/// the data-taking schedule and the projection plan.
///
/// Read from the file as written (`ScenarioFile`): either one channel written at the top level
/// (`observable`, `signal`, `backgrounds`) or a `channels` list.
#[derive(Debug, Clone)]
pub struct Scenario {
    /// Used in plot titles and the summary.
    pub title: String,
    /// The searched spectra, in file order; never empty.
    pub channels: Vec<Channel>,
    /// How the channels were written, which sets the dotted paths of errors.
    pub channel_syntax: ChannelSyntax,
    /// Relative widths of yield factors N(1, width) shared by every signal or
    /// background that names them in its `shared` list, in any channel.
    pub shared_uncertainties: BTreeMap<String, f64>,
    /// The top-level detector, whose mass turns rates per kg·day into rates
    /// per day in every channel without its own.
    pub detector: Option<Detector>,
    /// The detector-level signal, when one is written beside `channels`:
    /// each channel's `signal` is then made from it (`detector_signal.rs`).
    pub detector_signal: Option<DetectorSignal>,
    pub schedule: Schedule,
    pub plan: Plan,
    /// The files of rows the shapes name, each once, in the order first named.
    pub table_files: Vec<TableFile>,
}

/// One searched spectrum: a binned observable with its signal and backgrounds.
#[derive(Debug, Clone)]
pub struct Channel {
    /// The channel's own name; a single channel written at the top level is
    /// named after its observable.
    pub name: String,
    pub observable: Observable,
    /// The channel's own detector, whose mass turns its rates per kg·day
    /// into rates per day; absent: the scenario's top-level one, if any.
    pub detector: Option<Detector>,
    pub signal: Signal,
    pub backgrounds: Vec<Background>,
}

/// How a scenario file writes its channels.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ChannelSyntax {
    /// One channel at the top level: `observable`, `signal`, `backgrounds`.
    Single,
    /// A `channels` list, each entry with its `name`.
    List,
}

impl Channel {
    /// Sets every rate of the channel in events per live day from the rate
    /// as written, with the channel's detector or else `shared` (the
    /// top-level one); `path` is the channel's dotted path. The signal's
    /// only when `own_signal` (a detector-level signal converts its own).
    fn convert_rates(
        &mut self,
        path: &str,
        shared: Option<Detector>,
        own_signal: bool,
    ) -> Result<(), ScenarioError> {
        let detector = match self.detector {
            Some(own) => Some(own.checked(path)?),
            None => shared,
        };
        if own_signal {
            let signal = &mut self.signal;
            (signal.events_per_day, signal.rate_unit) = signal
                .written_rate()
                .per_day(&format!("{path}signal"), detector)?;
        }
        for (index, background) in self.backgrounds.iter_mut().enumerate() {
            let owner = format!("{path}backgrounds[{index}]");
            (background.events_per_day, background.rate_unit) =
                background.written_rate().per_day(&owner, detector)?;
        }
        Ok(())
    }
}

impl ChannelSyntax {
    /// The dotted path of channel `index`'s fields: none for a single
    /// channel written at the top level, `channels[index].` in a list.
    pub(super) fn path(self, index: usize) -> String {
        match self {
            ChannelSyntax::Single => String::new(),
            ChannelSyntax::List => format!("channels[{index}]."),
        }
    }
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
    /// Expected signal events per live day over the whole range, after
    /// efficiency: converted once from the rate as written when the scenario is read.
    #[serde(skip)]
    pub events_per_day: f64,
    /// The unit the rate was written in.
    #[serde(skip)]
    pub rate_unit: RateUnit,
    /// The rate as written: exactly one of these four keys (see [`WrittenRate`]).
    #[serde(default, rename = "events_per_day")]
    written_per_day: Option<f64>,
    #[serde(default, rename = "events_per_week")]
    written_per_week: Option<f64>,
    #[serde(default, rename = "events_per_year")]
    written_per_year: Option<f64>,
    #[serde(default, rename = "events_per_kg_day")]
    written_per_kg_day: Option<f64>,
    pub shape: ShapeSpec,
    /// Relative width of a Gaussian constraint N(1, width) on a factor on the signal yield.
    #[serde(default)]
    pub yield_uncertainty: Option<f64>,
    /// Uncertainty on the peak position, in the observable's unit (an
    /// energy-scale uncertainty): the position is fitted with a Gaussian
    /// constraint of this width. Absent or 0: known exactly.
    #[serde(default)]
    pub position_uncertainty: Option<f64>,
    /// Relative uncertainty on the peak width (a Gaussian's sigma, a
    /// Breit-Wigner's width: the resolution): the width is fitted with a
    /// Gaussian constraint of this fraction of it. Absent or 0: known exactly.
    #[serde(default)]
    pub width_uncertainty: Option<f64>,
    /// Names of shared uncertainties whose factors multiply the signal yield.
    #[serde(default)]
    pub shared: Vec<String>,
    /// The positions a search for a peak of unknown position tests; the
    /// shape's own position stays the one of the local projection.
    #[serde(default)]
    pub scan: Option<Scan>,
}

impl Signal {
    /// The value of the rate key the file gives (in [`Self::rate_unit`]);
    /// None for a rate the program made (a detector-level signal's share).
    pub fn written_rate_value(&self) -> Option<f64> {
        self.written_rate().value()
    }

    /// The rate as written.
    fn written_rate(&self) -> WrittenRate {
        WrittenRate {
            events_per_day: self.written_per_day,
            events_per_week: self.written_per_week,
            events_per_year: self.written_per_year,
            events_per_kg_day: self.written_per_kg_day,
        }
    }
}

/// One background component.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Background {
    pub name: String,
    /// Expected events per live day over the whole range: converted once
    /// from the rate as written when the scenario is read.
    #[serde(skip)]
    pub events_per_day: f64,
    /// The unit the rate was written in.
    #[serde(skip)]
    pub rate_unit: RateUnit,
    /// The rate as written: exactly one of these four keys (see [`WrittenRate`]).
    #[serde(default, rename = "events_per_day")]
    written_per_day: Option<f64>,
    #[serde(default, rename = "events_per_week")]
    written_per_week: Option<f64>,
    #[serde(default, rename = "events_per_year")]
    written_per_year: Option<f64>,
    #[serde(default, rename = "events_per_kg_day")]
    written_per_kg_day: Option<f64>,
    pub shape: ShapeSpec,
    /// How well the normalisation is known; absent means known exactly.
    #[serde(default)]
    pub norm_uncertainty: Option<NormUncertainty>,
    /// When true, the shape's parameters are fitted in every fit, with no
    /// constraint term, each held inside its domain (`Shape::parameter_lower_bounds`).
    #[serde(default)]
    pub float_shape: bool,
    /// A signal-free control region that measures this background's normalisation.
    #[serde(default)]
    pub control: Option<ControlRegion>,
    /// Names of shared uncertainties whose factors multiply this yield.
    #[serde(default)]
    pub shared: Vec<String>,
}

impl Background {
    /// The value of the rate key the file gives (in [`Self::rate_unit`]);
    /// None for a rate the program made (a detector-level signal's share).
    pub fn written_rate_value(&self) -> Option<f64> {
        self.written_rate().value()
    }

    /// The rate as written.
    fn written_rate(&self) -> WrittenRate {
        WrittenRate {
            events_per_day: self.written_per_day,
            events_per_week: self.written_per_week,
            events_per_year: self.written_per_year,
            events_per_kg_day: self.written_per_kg_day,
        }
    }
}

/// An auxiliary, signal-free count of `ratio` times a background's expected
/// yield in the signal region (a sideband, an off-source pointing, a blank run).
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ControlRegion {
    pub ratio: f64,
}

/// Knowledge of a background normalisation factor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum NormUncertainty {
    /// Gaussian constraint N(1, relative) on the factor.
    Relative(f64),
    /// Unconstrained factor, fitted from the data alone.
    Free,
}

/// A density on the observable range, normalised on the range: one of the
/// registered [`SHAPE_KINDS`](crate::shapes::SHAPE_KINDS) with the values of its parameters.
///
/// Written in YAML as a one-key mapping, e.g. `{gaussian: {mean: 67.0, sigma: 0.8}}`
/// or `{flat: {}}`; the key and the parameter names come from the registry, and
/// validation checks the values with the kind's own constructor. A kind read
/// from rows may name a file instead, `{table: {file: continuum.csv}}`,
/// whose rows loading turns into the values.
#[derive(Debug, Clone, PartialEq)]
pub struct ShapeSpec {
    pub kind: &'static ShapeKind,
    /// One value per parameter of `kind`, in its order (read from `file` when
    /// one is named).
    pub values: Vec<ParameterValue>,
    /// The file of rows the values come from, as written (relative to the
    /// scenario file's folder).
    pub file: Option<String>,
}

impl ShapeSpec {
    /// The shape at `placement`, or why its values make no density there.
    pub fn build(&self, placement: Placement) -> Result<Box<dyn Shape>, ShapeError> {
        self.kind.build(&self.values, placement)
    }
}

/// When data are taken: a live fraction, optional periods with their own
/// rates anywhere in the run, and optionally the date of the first day and
/// planned breaks.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Schedule {
    #[serde(default = "one")]
    pub live_fraction: f64,
    #[serde(default)]
    pub periods: Vec<Period>,
    /// Date of calendar day 0 (ISO 8601 text, checked by validation); with it
    /// every calendar day is also shown as a date.
    #[serde(default)]
    pub start: Option<String>,
    /// Date ranges without data (both ends included); they need `start`.
    #[serde(default)]
    pub breaks: Vec<Break>,
}

impl Default for Schedule {
    fn default() -> Self {
        Schedule {
            live_fraction: 1.0,
            periods: Vec::new(),
            start: None,
            breaks: Vec::new(),
        }
    }
}

fn one() -> f64 {
    1.0
}

/// A stretch of calendar days with its own rates: every rate is multiplied by
/// `rate_scale` (the detector's live time accrues at that rate), and on top of
/// it the signal by `signal_scale` (an efficiency change) and each background
/// named in `background_scale` by its factor (shielding added, a source
/// removed). Periods follow one another from day 0; after the last one every
/// factor is 1, unless the last one has no `days` and lasts to the end of the run.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Period {
    /// Length in calendar days; absent only on the last period.
    #[serde(default)]
    pub days: Option<f64>,
    #[serde(default = "one")]
    pub rate_scale: f64,
    #[serde(default = "one")]
    pub signal_scale: f64,
    /// Factors on backgrounds by name; a background not named keeps factor 1.
    #[serde(default)]
    pub background_scale: BTreeMap<String, f64>,
}

impl Period {
    /// A period of `days` calendar days with every rate scaled by `rate_scale`.
    pub fn uniform(days: f64, rate_scale: f64) -> Period {
        Period {
            days: Some(days),
            rate_scale,
            signal_scale: 1.0,
            background_scale: BTreeMap::new(),
        }
    }

    /// The factor on the background named `name` (1 when not named).
    pub fn background_factor(&self, name: &str) -> f64 {
        self.background_scale.get(name).copied().unwrap_or(1.0)
    }

    /// True when the period changes no rate (every factor 1), so it is the
    /// same as no period at all.
    pub fn is_neutral(&self) -> bool {
        self.rate_scale == 1.0
            && self.signal_scale == 1.0
            && self.background_scale.values().all(|&factor| factor == 1.0)
    }
}

/// A planned break in data-taking from `from` to `to`, both days included.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct Break {
    pub from: String,
    pub to: String,
}

impl Schedule {
    /// The date of calendar day 0, when given.
    pub fn start_date(&self) -> Option<CalendarDate> {
        self.start.as_deref().and_then(CalendarDate::parse)
    }

    /// The breaks as (first, last) dates, in the order given.
    pub fn break_dates(&self) -> Vec<(CalendarDate, CalendarDate)> {
        self.breaks
            .iter()
            .filter_map(|pause| {
                Some((
                    CalendarDate::parse(&pause.from)?,
                    CalendarDate::parse(&pause.to)?,
                ))
            })
            .collect()
    }
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
    /// Confidence level of the expected exclusion limits.
    #[serde(default = "default_confidence_level")]
    pub cl: f64,
}

fn default_confidence_level() -> f64 {
    0.95
}

/// The calendar days at which the projection is evaluated: a spaced grid
/// `{first, last, points, spacing}` or an explicit list `[30, 91, 182, 365]`
/// (read by `deserialize.rs`, whose error for another form shows both).
#[derive(Debug, Clone, PartialEq)]
pub enum DaysGrid {
    Spaced(SpacedDays),
    /// Calendar days as written, increasing (checked by validation).
    List(Vec<f64>),
}

/// `points` days from `first` to `last`, evenly spaced in the day or in its logarithm.
#[derive(Debug, Clone, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SpacedDays {
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
    /// Reads, parses and validates a scenario file of at most
    /// [`limits::MAX_SCENARIO_BYTES`]; no more than that is ever read. Shape
    /// files it names are read from the file's folder.
    pub fn load(path: &Path) -> Result<Scenario, ScenarioError> {
        Scenario::from_file_text(&Scenario::read_text(path)?, path)
    }

    /// The text of a scenario file, refused above [`limits::MAX_SCENARIO_BYTES`].
    pub fn read_text(path: &Path) -> Result<String, ScenarioError> {
        let read_error = |source| ScenarioError::Read {
            path: path.to_path_buf(),
            source,
        };
        let mut text = String::new();
        crate::input_file::open_regular(path)
            .and_then(|file| {
                file.take(limits::MAX_SCENARIO_BYTES + 1)
                    .read_to_string(&mut text)
            })
            .map_err(read_error)?;
        if text.len() as u64 > limits::MAX_SCENARIO_BYTES {
            return Err(ScenarioError::TooLarge {
                path: path.to_path_buf(),
                limit: limits::MAX_SCENARIO_BYTES,
            });
        }
        Ok(text)
    }

    /// Parses and validates scenario text; brackets nested deeper than
    /// [`limits::MAX_NESTING_DEPTH`] are refused before parsing. A shape that
    /// names a file is refused: without the scenario's path it cannot be found.
    pub fn from_yaml(text: &str) -> Result<Scenario, ScenarioError> {
        Scenario::parse(text, TableSource::Nowhere)
    }

    /// Parses and validates the text of the scenario file at `path`, reading
    /// the shape files it names from the file's folder.
    pub fn from_file_text(text: &str, path: &Path) -> Result<Scenario, ScenarioError> {
        let directory = path.parent().unwrap_or(Path::new(""));
        Scenario::parse(text, TableSource::Directory(directory))
    }

    /// Parses and validates scenario text whose shape files are among
    /// `files` (those a shard carries), reading nothing from disk.
    pub fn from_text_and_tables(
        text: &str,
        files: &[TableFile],
    ) -> Result<Scenario, ScenarioError> {
        Scenario::parse(text, TableSource::Carried(files))
    }

    fn parse(text: &str, tables: TableSource) -> Result<Scenario, ScenarioError> {
        let (depth, line) = limits::bracket_depth(text);
        if depth > limits::MAX_NESTING_DEPTH {
            return Err(ScenarioError::Parse {
                message: format!(
                    "brackets nested {depth} deep, more than the {} levels allowed",
                    limits::MAX_NESTING_DEPTH
                ),
                line: Some(line),
                column: None,
            });
        }
        let mut scenario = file::read(text)?;
        scenario.read_shape_files(tables)?;
        validate::validate(&scenario)?;
        Ok(scenario)
    }

    /// Reads the rows of every shape that names a file, through `tables`,
    /// and records each file read in [`Scenario::table_files`].
    fn read_shape_files(&mut self, tables: TableSource) -> Result<(), ScenarioError> {
        let syntax = self.channel_syntax;
        for (index, channel) in self.channels.iter_mut().enumerate() {
            let path = syntax.path(index);
            let signal = std::iter::once(("signal".to_string(), &mut channel.signal.shape));
            let backgrounds =
                channel
                    .backgrounds
                    .iter_mut()
                    .enumerate()
                    .map(|(index, background)| {
                        (format!("backgrounds[{index}]"), &mut background.shape)
                    });
            for (owner, shape) in signal.chain(backgrounds) {
                let field = format!("{path}{owner}.shape.{}.file", shape.kind.key);
                let read = rows_file::resolve(shape, tables, &field)?;
                if let Some(read) = read
                    .filter(|read| !self.table_files.iter().any(|known| known.name == read.name))
                {
                    self.table_files.push(read);
                }
            }
        }
        Ok(())
    }

    /// The detector mass in kg when every channel has the same one (its
    /// own `detector` or the top-level one); None without a mass or when the
    /// channels' masses differ, where one mass per kg·day would be ambiguous.
    pub fn detector_mass_kg(&self) -> Option<f64> {
        let mut masses = self
            .channels
            .iter()
            .map(|channel| channel.detector.or(self.detector).map(|d| d.mass_kg));
        let first = masses.next().flatten()?;
        masses.all(|mass| mass == Some(first)).then_some(first)
    }

    /// The first channel: the only one of a single-channel scenario. For code
    /// that handles one channel.
    pub fn channel(&self) -> &Channel {
        &self.channels[0]
    }

    /// The first channel's observable.
    pub fn observable(&self) -> &Observable {
        &self.channel().observable
    }

    /// The first channel's signal.
    pub fn signal(&self) -> &Signal {
        &self.channel().signal
    }

    /// The first channel's backgrounds.
    pub fn backgrounds(&self) -> &[Background] {
        &self.channel().backgrounds
    }

    /// This scenario with channel `index` alone (schedule, plan and shared
    /// uncertainties kept), for what handles one channel at a time.
    pub fn only_channel(&self, index: usize) -> Scenario {
        let detector_signal = self.detector_signal.as_ref().map(|signal| DetectorSignal {
            channels: vec![signal.channels[index].clone()],
            ..signal.clone()
        });
        Scenario {
            channels: vec![self.channels[index].clone()],
            detector_signal,
            ..self.clone()
        }
    }

    /// The first channel, to change it in a copy of the scenario.
    pub fn channel_mut(&mut self) -> &mut Channel {
        &mut self.channels[0]
    }

    /// Checks every value again, as reading the file does: for a scenario
    /// changed in code (a lever), so a change that makes it invalid is
    /// refused with the field named, never run.
    pub fn validate(&self) -> Result<(), ScenarioError> {
        validate::validate(self)
    }

    /// Non-fatal remarks about a valid scenario (e.g. a signal peak outside the range).
    pub fn warnings(&self) -> Vec<Warning> {
        validate::warnings(self)
    }
}

impl DaysGrid {
    /// The calendar days, in increasing order: a list as written; a spaced
    /// grid's day i of n as first + (i/(n-1))(last - first) (linear) or
    /// first (last/first)^(i/(n-1)) (log), each computed once from these
    /// formulae and reported as is, never rounded.
    pub fn days(&self) -> Vec<f64> {
        match self {
            DaysGrid::List(days) => days.clone(),
            DaysGrid::Spaced(grid) => grid.days(),
        }
    }

    /// The first day (0 for an empty list, which validation refuses).
    pub fn first(&self) -> f64 {
        match self {
            DaysGrid::List(days) => days.first().copied().unwrap_or_default(),
            DaysGrid::Spaced(grid) => grid.first,
        }
    }

    /// How many days.
    pub fn points(&self) -> usize {
        match self {
            DaysGrid::List(days) => days.len(),
            DaysGrid::Spaced(grid) => grid.points,
        }
    }

    /// The spacing of the figures' day axis: the grid's own for an evenly
    /// spaced grid; for a list, logarithmic when its last day is more than
    /// ten times its first, linear otherwise.
    pub fn axis_spacing(&self) -> Spacing {
        match self {
            DaysGrid::Spaced(grid) => grid.spacing,
            DaysGrid::List(days) => match (days.first(), days.last()) {
                (Some(&first), Some(&last)) if last > 10.0 * first => Spacing::Log,
                _ => Spacing::Linear,
            },
        }
    }

    /// The field holding the last day, for messages: `plan.days.last` or `plan.days[n-1]`.
    pub fn last_field(&self) -> String {
        match self {
            DaysGrid::List(days) => format!("plan.days[{}]", days.len().saturating_sub(1)),
            DaysGrid::Spaced(_) => "plan.days.last".to_string(),
        }
    }
}

impl SpacedDays {
    fn days(&self) -> Vec<f64> {
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

#[cfg(test)]
mod tests {
    use super::*;
    use std::path::PathBuf;

    fn demo_directory() -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR")).join("scenarios")
    }

    fn load_demo(name: &str) -> Scenario {
        let path = demo_directory().join(name);
        Scenario::load(&path).unwrap_or_else(|error| panic!("{}: {error}", path.display()))
    }

    #[test]
    fn every_demo_scenario_loads_without_warnings() {
        let mut loaded = Vec::new();
        for entry in std::fs::read_dir(demo_directory()).expect("scenarios/ directory") {
            let path = entry.expect("directory entry").path();
            if path
                .extension()
                .is_some_and(|extension| extension == "yaml")
            {
                let scenario = Scenario::load(&path)
                    .unwrap_or_else(|error| panic!("{}: {error}", path.display()));
                assert!(
                    scenario.warnings().is_empty(),
                    "{}: {:?}",
                    path.display(),
                    scenario.warnings()
                );
                let text = std::fs::read_to_string(&path).expect("readable demo");
                assert!(
                    text.contains("INVENTED"),
                    "{} must say its numbers are invented",
                    path.display()
                );
                loaded.push(path.file_name().unwrap().to_string_lossy().into_owned());
            }
        }
        for name in [
            "narrow_peak.yaml",
            "faint_line.yaml",
            "counting_window.yaml",
        ] {
            assert!(
                loaded.iter().any(|l| l == name),
                "{name} missing from {loaded:?}"
            );
        }
    }

    #[test]
    fn counting_window_demo_saturates_between_three_and_five_sigma() {
        let scenario = load_demo("counting_window.yaml");
        let [low, high] = scenario.observable().range;
        assert_eq!(scenario.observable().bin_width, high - low, "one bin");
        let signal = scenario.signal().events_per_day;
        let background = &scenario.backgrounds()[0];
        let Some(NormUncertainty::Relative(delta)) = background.norm_uncertainty else {
            panic!("the demo needs a constrained background normalisation");
        };
        // Significance limit s / (delta b) as exposure grows (common practice; follows
        // from Cowan et al., EPJC 71 (2011) 1554, with sigma_b = delta b).
        let limit = signal / (delta * background.events_per_day);
        assert!(limit > 3.0 && limit < 5.0, "limit {limit}");
    }

    #[test]
    fn counting_window_demo_reaches_three_sigma_within_its_grid() {
        let scenario = load_demo("counting_window.yaml");
        let last_day = *scenario.plan.days.days().last().unwrap();
        let live_days = last_day * scenario.schedule.live_fraction;
        let s = scenario.signal().events_per_day * live_days;
        let background = &scenario.backgrounds()[0];
        let b = background.events_per_day * live_days;
        let Some(NormUncertainty::Relative(delta)) = background.norm_uncertainty else {
            panic!("the demo needs a constrained background normalisation");
        };
        let z = median_significance_with_background_uncertainty(s, b, delta * b);
        assert!(z > 3.0, "Z_A = {z} at the last day of the grid");
    }

    /// Z_A = sqrt(2[(s+b) ln((s+b)(b+σ²)/(b²+(s+b)σ²)) - (b²/σ²) ln(1 + σ² s/(b(b+σ²)))])
    /// (Cowan et al., EPJC 71 (2011) 1554; G. Cowan, "Discovery sensitivity for a
    /// counting experiment with background uncertainty", 2012).
    fn median_significance_with_background_uncertainty(s: f64, b: f64, sigma_b: f64) -> f64 {
        let variance = sigma_b * sigma_b;
        let first = (s + b) * ((s + b) * (b + variance) / (b * b + (s + b) * variance)).ln();
        let second = b * b / variance * (1.0 + variance * s / (b * (b + variance))).ln();
        (2.0 * (first - second)).sqrt()
    }

    #[test]
    fn background_uncertainty_formula_matches_published_values() {
        // Cowan 2012 (published values): s=10, b=100, sigma_b=10 -> 0.690196;
        // s=20, b=50, sigma_b=5 -> 2.133224.
        let low = median_significance_with_background_uncertainty(10.0, 100.0, 10.0);
        assert!((low - 0.690196).abs() < 1e-6, "{low}");
        let high = median_significance_with_background_uncertainty(20.0, 50.0, 5.0);
        assert!((high - 2.133224).abs() < 1e-6, "{high}");
    }

    #[test]
    fn log_grid_runs_from_first_to_last_evenly_in_ratio() {
        let grid = DaysGrid::Spaced(SpacedDays {
            first: 1.0,
            last: 100.0,
            points: 3,
            spacing: Spacing::Log,
        });
        let days = grid.days();
        assert_eq!(days.len(), 3);
        assert!((days[1] - 10.0).abs() < 1e-12 && (days[2] - 100.0).abs() < 1e-12);
    }

    #[test]
    fn the_day_axis_follows_the_grid() {
        let spaced = |spacing| {
            DaysGrid::Spaced(SpacedDays {
                first: 1.0,
                last: 5.0,
                points: 3,
                spacing,
            })
        };
        assert_eq!(spaced(Spacing::Log).axis_spacing(), Spacing::Log);
        assert_eq!(spaced(Spacing::Linear).axis_spacing(), Spacing::Linear);
        let list = |days: &[f64]| DaysGrid::List(days.to_vec()).axis_spacing();
        assert_eq!(list(&[30.0, 91.0, 182.0, 300.0]), Spacing::Linear);
        assert_eq!(list(&[30.0, 91.0, 182.0, 365.0]), Spacing::Log);
    }
}
