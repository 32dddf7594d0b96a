//! Shards: one projection split over processes or machines, merged exactly.
//!
//! Shard K of N runs the toy indices `[(K-1)·T/N, K·T/N)` (integer division)
//! of every ensemble of T pseudo-experiments, at every grid point, whatever
//! the thread count; each toy has its own random stream, so the toys of all
//! shards together are those of the unsharded run. A shard file holds what
//! merging needs and nothing else:
//!
//! - a header: the runcast version and build identifier (a SHA-256 of the
//!   sources, made by `build.rs`), the scenario text and its SHA-256, each
//!   file of rows the scenario names (name, SHA-256, text), the
//!   projection settings (seed, toys, limits, calibration, look-elsewhere
//!   toys, grid, `--at` days), K and N;
//! - per grid point with live time, then per `--at` day with live time, the
//!   shard's part of each ensemble: the
//!   failed fits and the converged values (8 bytes a toy, in toy order) of
//!   the discovery and limit ensembles, whose quantiles need every value,
//!   and three counts for the calibration, whose p-value needs only how
//!   many toys reached the Asimov q0 (so 10⁸ calibration toys cost 24 bytes
//!   a point); with a scan of the signal position, five exact counts for
//!   the look-elsewhere scans (converged, sums of upcrossings and of their
//!   squares, scans reaching the Asimov q0, failed), 40 bytes a point;
//! - the SHA-256 of all the bytes before it.
//!
//! Merging believes nothing a shard says before checking it: the build
//! against its own, the settings against the scenario and the input limits,
//! and every point's counts and values against what this runcast can write
//! (`check.rs`). It reads the shards point by point, in the order of K, so
//! that a point's values are those of the unsharded run in the same order;
//! it holds one point's ensembles at a time, as the unsharded run does, and
//! from there runs the same code ([`super::project_from`]).

mod check;
mod encoding;
mod error;
mod merge;
mod write;

pub(crate) use encoding::{Decoder, Encoder};
pub use error::ShardError;
pub use merge::{ShardSet, merge_shard_set, merge_shards};
pub use write::run_shard;
pub(crate) use write::write_shard_file;

use super::ProjectionSettings;
use crate::message::{show, show_list};
use crate::provenance::{Provenance, ScenarioFile};
use crate::scenario::Spacing;
use crate::scenario::TableFile;
use encoding::hex;
use sha2::{Digest, Sha256};
use std::fmt;
use std::ops::Range;
use std::str::FromStr;

/// The first bytes of every shard file, with the format number.
const MAGIC: &[u8; 16] = b"runcast-shard 6\n";
/// The first bytes of a shard file of any format, before its number.
const MAGIC_PREFIX: &[u8] = b"runcast-shard ";
/// The extension of shard files; `merge` reads every file of a directory with it.
pub const SHARD_EXTENSION: &str = "runcast-shard";
/// Bytes of the SHA-256 checksum at the end of a shard file.
const CHECKSUM_BYTES: u64 = 32;
/// This runcast's version and build identifier (`build.rs`), written into
/// every shard; `merge` reads only shards that carry both.
const VERSION: &str = env!("CARGO_PKG_VERSION");
const BUILD: &str = env!("RUNCAST_BUILD_ID");

/// Shard K of N (1 <= K <= N).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ShardSpec {
    /// K, from 1.
    pub index: usize,
    /// N.
    pub count: usize,
}

impl ShardSpec {
    /// The whole ensemble: shard 1 of 1.
    pub const WHOLE: ShardSpec = ShardSpec { index: 1, count: 1 };

    /// The toy indices of this shard in an ensemble of `total`:
    /// `[(K-1)·total/N, K·total/N)` with integer division, so the N shards
    /// cover `0..total` in order, each within one toy of `total/N`.
    pub fn toys(&self, total: usize) -> Range<usize> {
        let bound = |k: usize| (k as u128 * total as u128 / self.count as u128) as usize;
        bound(self.index - 1)..bound(self.index)
    }
}

impl fmt::Display for ShardSpec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}/{}", self.index, self.count)
    }
}

impl FromStr for ShardSpec {
    type Err = String;

    /// Parses `K/N` with 1 <= K <= N.
    fn from_str(text: &str) -> Result<ShardSpec, String> {
        let expected = || format!("{text}: expected K/N with 1 <= K <= N, e.g. 3/8");
        let (index, count) = text.split_once('/').ok_or_else(expected)?;
        let number = |part: &str| part.trim().parse::<usize>().map_err(|_| expected());
        let shard = ShardSpec {
            index: number(index)?,
            count: number(count)?,
        };
        if shard.index == 0 || shard.index > shard.count {
            return Err(expected());
        }
        Ok(shard)
    }
}

/// Everything that must agree between the shards of one run.
#[derive(Debug, Clone, PartialEq)]
pub struct ShardRun {
    /// The version of runcast that ran the shard.
    pub version: String,
    /// The build of runcast that ran the shard (`build.rs`): shards of two
    /// builds may hold different numbers under the same version.
    pub build: String,
    /// The scenario's file name, for messages and the summary.
    pub scenario_name: String,
    /// The scenario file's text, from which merging rebuilds the model.
    pub scenario_text: String,
    /// The files of rows the scenario names, which merging reads from here.
    pub table_files: Vec<TableFile>,
    pub settings: ProjectionSettings,
    /// The command whose shard this is (`project`, `replan`): shards of two
    /// commands are never merged together.
    pub command: String,
    /// What the command adds to the run besides the scenario and settings,
    /// encoded and compared by the command's own type (empty for `project`).
    pub inputs: Vec<u8>,
}

/// Names the first difference between two shards' [`ShardRun::inputs`] of
/// one command (the command, this run's inputs, the other's), for messages.
pub type DescribeInputs = dyn Fn(&str, &[u8], &[u8]) -> String;

/// The command of a projection's shards.
pub const PROJECT_COMMAND: &str = "project";

impl ShardRun {
    /// A run of this runcast build on the scenario `text` read from `name`,
    /// whose shapes name the files of rows `table_files`.
    pub fn new(
        scenario_name: String,
        scenario_text: String,
        table_files: Vec<TableFile>,
        settings: ProjectionSettings,
    ) -> Self {
        ShardRun {
            version: VERSION.to_string(),
            build: BUILD.to_string(),
            scenario_name,
            scenario_text,
            table_files,
            settings,
            command: PROJECT_COMMAND.to_string(),
            inputs: Vec::new(),
        }
    }

    /// The same run, of `command` with its `inputs` (see [`ShardRun::inputs`]).
    pub fn of_command(self, command: &str, inputs: Vec<u8>) -> Self {
        ShardRun {
            command: command.to_string(),
            inputs,
            ..self
        }
    }

    /// What made the merged outputs: the provenance of the unsharded run.
    pub fn provenance(&self) -> Provenance {
        self.settings.provenance(
            ScenarioFile::new(&self.scenario_name, &self.scenario_text)
                .with_tables(&self.table_files),
        )
    }

    /// SHA-256 of the scenario file's bytes.
    pub fn scenario_hash(&self) -> [u8; 32] {
        Sha256::digest(self.scenario_text.as_bytes()).into()
    }

    /// Each file of rows as its name and SHA-256 in hex, for messages.
    fn table_hashes(&self) -> Vec<(String, String)> {
        self.table_files
            .iter()
            .map(|file| {
                (
                    file.name.clone(),
                    hex(&Sha256::digest(file.text.as_bytes())),
                )
            })
            .collect()
    }

    /// The header bytes of this run (everything but K).
    fn encode(&self, out: &mut Encoder) {
        let settings = &self.settings;
        out.text(&self.version);
        out.text(&self.build);
        out.text(&self.command);
        out.bytes(&self.inputs);
        out.text(&self.scenario_name);
        out.bytes(&self.scenario_hash());
        out.text(&self.scenario_text);
        out.count(self.table_files.len());
        for file in &self.table_files {
            out.text(&file.name);
            out.bytes(&Sha256::digest(file.text.as_bytes()));
            out.text(&file.text);
        }
        out.text(&settings.title);
        out.floats(&settings.days);
        out.floats(&settings.at_days);
        out.count(settings.toys);
        out.u64(settings.seed);
        out.floats(&settings.targets);
        out.flag(settings.cl.is_some());
        out.f64(settings.cl.unwrap_or_default());
        out.count(settings.calibration_toys);
        out.count(settings.look_elsewhere_toys);
    }

    fn decode(input: &mut Decoder) -> Result<ShardRun, String> {
        let version = input.text()?;
        let build = input.text()?;
        let command = input.text()?;
        let inputs = input.bytes()?;
        let scenario_name = input.text()?;
        let hash = input.bytes()?;
        let scenario_text = input.text()?;
        let table_files = decode_table_files(input)?;
        let title = input.text()?;
        let days = input.floats()?;
        let at_days = input.floats()?;
        let toys = input.count()?;
        let seed = input.u64()?;
        let targets = input.floats()?;
        let with_limits = input.flag()?;
        let cl = input.f64()?;
        let calibration_toys = input.count()?;
        let look_elsewhere_toys = input.count()?;
        let run = ShardRun {
            version,
            build,
            scenario_name,
            scenario_text,
            table_files,
            command,
            inputs,
            settings: ProjectionSettings {
                title,
                days,
                // Both rebuilt from the scenario text when merging.
                day_spacing: Spacing::Log,
                detector_mass_kg: None,
                at_days,
                toys,
                seed,
                targets,
                cl: with_limits.then_some(cl),
                calibration_toys,
                // Rebuilt from the scenario text when merging.
                scan: None,
                look_elsewhere_toys,
            },
        };
        if hash != run.scenario_hash() {
            return Err("the scenario text does not match its SHA-256".into());
        }
        Ok(run)
    }

    /// A short name of the run (the first 12 hex digits of the SHA-256 of its
    /// header), so shards of different runs in one directory never collide.
    fn id(&self) -> String {
        let mut header = Encoder::default();
        self.encode(&mut header);
        hex(&Sha256::digest(&header.bytes)[..6])
    }

    /// The file name of shard `shard` of this run.
    pub fn file_name(&self, shard: ShardSpec) -> String {
        let width = shard.count.to_string().len();
        format!(
            "shard-{}-{:0width$}-of-{}.{SHARD_EXTENSION}",
            self.id(),
            shard.index,
            shard.count
        )
    }

    /// Whether this run's shards were written by this build of runcast.
    fn of_this_build(&self) -> bool {
        self.version == VERSION && self.build == BUILD
    }

    /// The first field in which `other` differs from this run, for messages
    /// (both of this build, see [`ShardRun::of_this_build`]); the command's
    /// inputs named by `describe_inputs` (this run's, then the other's).
    fn difference(&self, other: &ShardRun, describe_inputs: &DescribeInputs) -> Option<String> {
        let (a, b) = (&self.settings, &other.settings);
        let named = |what: &str, mine: String, theirs: String| {
            (mine != theirs).then(|| format!("{what} {theirs} instead of {mine}"))
        };
        named(
            "a shard of runcast",
            self.command.clone(),
            other.command.clone(),
        )
        .or_else(|| {
            named(
                "scenario (SHA-256)",
                hex(&self.scenario_hash()),
                hex(&other.scenario_hash()),
            )
        })
        .or_else(|| {
            named(
                "scenario file name",
                self.scenario_name.clone(),
                other.scenario_name.clone(),
            )
        })
        .or_else(|| self.table_difference(other))
        .or_else(|| {
            (self.inputs != other.inputs)
                .then(|| describe_inputs(&self.command, &self.inputs, &other.inputs))
        })
        .or_else(|| named("seed", a.seed.to_string(), b.seed.to_string()))
        .or_else(|| named("--toys", a.toys.to_string(), b.toys.to_string()))
        .or_else(|| {
            named(
                "--calibrate",
                a.calibration_toys.to_string(),
                b.calibration_toys.to_string(),
            )
        })
        .or_else(|| {
            named(
                "--lee-toys",
                a.look_elsewhere_toys.to_string(),
                b.look_elsewhere_toys.to_string(),
            )
        })
        .or_else(|| {
            let cl = |cl: Option<f64>| cl.map_or_else(|| "none (no limits)".to_string(), show);
            named("limits (CL)", cl(a.cl), cl(b.cl))
        })
        .or_else(|| named("--at", show_list(&a.at_days), show_list(&b.at_days)))
        .or_else(|| (self != other).then(|| "projection settings".to_string()))
    }

    /// The first file of rows that `other` carries with other bytes, or
    /// carries and this run does not (or the reverse), for messages.
    fn table_difference(&self, other: &ShardRun) -> Option<String> {
        let (mine, theirs) = (self.table_hashes(), other.table_hashes());
        let find = |hashes: &[(String, String)], name: &str| {
            hashes
                .iter()
                .find(|(known, _)| known == name)
                .map(|(_, hash)| hash.clone())
        };
        let mut names = mine.iter().chain(&theirs).map(|(name, _)| name.as_str());
        names.find_map(|name| {
            let (a, b) = (find(&mine, name), find(&theirs, name));
            let shown = |hash: Option<String>| hash.unwrap_or_else(|| "none".into());
            (a != b).then(|| {
                format!(
                    "table file `{name}` (SHA-256) {} instead of {}",
                    shown(b),
                    shown(a)
                )
            })
        })
    }
}

/// The files of rows of a shard header, each checked against its SHA-256.
fn decode_table_files(input: &mut Decoder) -> Result<Vec<TableFile>, String> {
    let count = input.length(1)?;
    (0..count)
        .map(|_| {
            let name = input.text()?;
            let hash = input.bytes()?;
            let text = input.text()?;
            if hash != Sha256::digest(text.as_bytes()).as_slice() {
                return Err(format!(
                    "the table file `{name}` does not match its SHA-256"
                ));
            }
            Ok(TableFile { name, text })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shards_cover_the_toys_in_order_and_within_one_toy_of_each_other() {
        for total in [0, 1, 5, 7, 100, 1001] {
            for count in [1, 2, 3, 7, 12] {
                let ranges: Vec<_> = (1..=count)
                    .map(|index| ShardSpec { index, count }.toys(total))
                    .collect();
                assert_eq!(ranges[0].start, 0);
                assert_eq!(ranges[count - 1].end, total);
                for pair in ranges.windows(2) {
                    assert_eq!(pair[0].end, pair[1].start);
                }
                let sizes: Vec<_> = ranges.iter().map(|range| range.len()).collect();
                let (min, max) = (sizes.iter().min().unwrap(), sizes.iter().max().unwrap());
                assert!(max - min <= 1, "{total} toys in {count}: {sizes:?}");
            }
        }
    }

    #[test]
    fn shard_specs_parse_as_k_of_n() {
        assert_eq!("3/7".parse(), Ok(ShardSpec { index: 3, count: 7 }));
        for bad in ["0/3", "4/3", "3", "a/b", "1/0", "-1/2"] {
            assert!(bad.parse::<ShardSpec>().is_err(), "{bad}");
        }
    }
}
