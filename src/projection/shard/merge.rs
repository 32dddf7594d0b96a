//! Merging: every shard of one run checked, then read point by point.

use super::check::{check_point, check_settings, point_name};
use super::encoding::{Decoder, HashingWriter, decode_ensemble, decode_point};
use super::{
    CHECKSUM_BYTES, DescribeInputs, MAGIC, MAGIC_PREFIX, PROJECT_COMMAND, SHARD_EXTENSION,
    ShardError, ShardRun, ShardSpec,
};
use crate::ensemble::EnsembleOutcome;
use crate::input_file::open_regular;
use crate::likelihood::Likelihood;
use crate::message::show;
use crate::model::Model;
use crate::projection::Projection;
use crate::projection::ensembles::{PointRequest, PointToys, ToySource};
use crate::scenario::Scenario;
use sha2::Digest;
use std::io::{self, BufReader, Read, Write};
use std::path::{Path, PathBuf};

/// The first missing shards named in an error; the rest are counted.
const MISSING_NAMED: usize = 10;

/// The shard files of one run, all N of them, checked and sorted by K,
/// each read section by section.
pub struct ShardSet {
    shards: Vec<ShardReader>,
}

impl ShardSet {
    /// Every shard file of `directory`: checks that they are all N shards of
    /// one run of one command, unchanged and written by this build, naming
    /// a difference in the command's inputs with `describe_inputs`.
    pub fn open(
        directory: &Path,
        describe_inputs: &DescribeInputs,
    ) -> Result<ShardSet, ShardError> {
        open_shards(directory, describe_inputs).map(|shards| ShardSet { shards })
    }

    /// The run, as the first shard states it (all agree).
    pub fn run(&self) -> &ShardRun {
        &self.shards[0].run
    }

    /// The path of the first shard, for messages about the run.
    pub fn first_path(&self) -> &Path {
        &self.shards[0].path
    }

    /// The run's scenario, read from the shards alone, with the settings
    /// checked against it for the largest of the N shards, and the settings
    /// that are not stored (day spacing, detector mass) filled from it.
    pub(crate) fn scenario(&self) -> Result<(ShardRun, Scenario), ShardError> {
        let first = &self.shards[0];
        let mut run = first.run.clone();
        let scenario = Scenario::from_text_and_tables(&run.scenario_text, &run.table_files)
            .map_err(|source| ShardError::Scenario {
                path: first.path.clone(),
                source,
            })?;
        let count = first.shard.count;
        let largest = ShardSpec {
            index: count,
            count,
        };
        check_settings(&run.settings, &scenario, largest)
            .map_err(|impossible| impossible.in_file(&first.path))?;
        run.settings.day_spacing = scenario.plan.days.axis_spacing();
        run.settings.detector_mass_kg = scenario.detector_mass_kg();
        Ok((run, scenario))
    }

    /// The grid points' pseudo-experiments of all shards, read point by
    /// point in the order of K; `max_upcrossings` is the most upcrossings
    /// one look-elsewhere scan can count.
    pub(crate) fn toy_source(&mut self, max_upcrossings: u64) -> MergeSource<'_> {
        MergeSource {
            shards: &mut self.shards,
            max_upcrossings,
        }
    }

    /// The next section of every shard as one ensemble of `total`
    /// pseudo-experiments in all, `what` naming it: each shard's part
    /// checked to hold its share of the toys ([`ShardSpec::toys`]) and only
    /// finite values, then appended in the order of K.
    pub(crate) fn ensemble(
        &mut self,
        what: &str,
        total: usize,
    ) -> Result<EnsembleOutcome, ShardError> {
        let mut merged = EnsembleOutcome {
            values: Vec::new(),
            failed_fits: 0,
        };
        for shard in &mut self.shards {
            let outcome = shard.section(what, decode_ensemble)?;
            let share = shard.shard.toys(total).len();
            let problem = if outcome.values.len() + outcome.failed_fits != share {
                Some(format!(
                    "{} converged and {} failed pseudo-experiments where shard {} runs {share}",
                    outcome.values.len(),
                    outcome.failed_fits,
                    shard.shard
                ))
            } else {
                outcome
                    .values
                    .iter()
                    .find(|value| !value.is_finite())
                    .map(|&value| {
                        format!("a value {}, where finite values are expected", show(value))
                    })
            };
            if let Some(problem) = problem {
                return Err(ShardError::Impossible {
                    path: shard.path.clone(),
                    place: what.to_string(),
                    problem,
                });
            }
            merged.values.extend(outcome.values);
            merged.failed_fits += outcome.failed_fits;
        }
        Ok(merged)
    }

    /// Checks that every section of every shard has been read.
    pub(crate) fn expect_end(&self) -> Result<(), ShardError> {
        self.shards.iter().try_for_each(ShardReader::expect_end)
    }
}

/// Merges the projection shards in `directory`: checks that they are all N
/// shards of one `runcast project` run, unchanged, written by this build,
/// with settings that agree with their scenario and each point's counts
/// and values possible (`check.rs`), then runs the projection with their
/// pseudo-experiments. Returns the run (scenario, settings) and the
/// projection.
pub fn merge_shards(directory: &Path) -> Result<(ShardRun, Projection), ShardError> {
    let shards = ShardSet::open(directory, &|command, _, _| {
        format!("the inputs of runcast {command}")
    })?;
    merge_shard_set(shards)
}

/// [`merge_shards`] of shards already opened.
pub fn merge_shard_set(mut shards: ShardSet) -> Result<(ShardRun, Projection), ShardError> {
    if shards.run().command != PROJECT_COMMAND {
        return Err(ShardError::Malformed {
            path: shards.first_path().to_path_buf(),
            what: format!(
                "a shard of runcast {}, merged as one of runcast {PROJECT_COMMAND}",
                shards.run().command
            ),
        });
    }
    let (mut run, scenario) = shards.scenario()?;
    let model = Model::from_scenario(&scenario);
    run.settings.scan = scenario.signal_scan();
    let max_upcrossings = run
        .settings
        .scan
        .as_ref()
        .map_or(0, |scan| scan.positions().len() as u64 / 2);
    let projection = crate::projection::project_from(
        &model,
        &run.settings,
        &mut shards.toy_source(max_upcrossings),
        &|_| {},
    )?;
    shards.expect_end()?;
    Ok((run, projection))
}

/// Every shard file of `directory`, checked and sorted by K.
fn open_shards(
    directory: &Path,
    describe_inputs: &DescribeInputs,
) -> Result<Vec<ShardReader>, ShardError> {
    let io_error = |source| ShardError::Io {
        path: directory.to_path_buf(),
        source,
    };
    let mut paths = Vec::new();
    for entry in std::fs::read_dir(directory).map_err(io_error)? {
        let path = entry.map_err(io_error)?.path();
        if path.extension().is_some_and(|ext| ext == SHARD_EXTENSION) {
            paths.push(path);
        }
    }
    paths.sort();
    let mut shards = paths
        .into_iter()
        .map(ShardReader::open)
        .collect::<Result<Vec<_>, _>>()?;
    let Some(first) = shards.first() else {
        return Err(ShardError::NoShards {
            directory: directory.to_path_buf(),
        });
    };
    if let Some(other) = shards.iter().find(|shard| !shard.run.of_this_build()) {
        return Err(ShardError::OtherBuild {
            path: other.path.clone(),
            version: other.run.version.clone(),
            build: other.run.build.clone(),
        });
    }
    for shard in &shards[1..] {
        let difference = first
            .run
            .difference(&shard.run, describe_inputs)
            .or_else(|| {
                (shard.shard.count != first.shard.count)
                    .then(|| format!("N = {} instead of {}", shard.shard.count, first.shard.count))
            });
        if let Some(difference) = difference {
            return Err(ShardError::Mixed {
                path: shard.path.clone(),
                first: first.path.clone(),
                difference,
            });
        }
    }
    shards.sort_by_key(|shard| shard.shard.index);
    for pair in shards.windows(2) {
        if pair[0].shard == pair[1].shard {
            return Err(ShardError::Duplicate {
                path: pair[1].path.clone(),
                other: pair[0].path.clone(),
                shard: pair[1].shard,
            });
        }
    }
    let count = shards[0].shard.count;
    if shards.len() != count {
        // Sorted and distinct: the K not among them, in order, stopping
        // after a few (N may be huge).
        let mut present = shards.iter().map(|shard| shard.shard.index).peekable();
        let first_missing = (1..=count)
            .filter(|&k| {
                let found = present.peek() == Some(&k);
                if found {
                    present.next();
                }
                !found
            })
            .take(MISSING_NAMED)
            .collect();
        return Err(ShardError::Missing {
            directory: directory.to_path_buf(),
            first_missing,
            missing: count - shards.len(),
            count,
        });
    }
    Ok(shards)
}

/// The pseudo-experiments of all shards, read point by point in the order of K.
pub(crate) struct MergeSource<'a> {
    shards: &'a mut [ShardReader],
    /// The most upcrossings one look-elsewhere scan can count.
    max_upcrossings: u64,
}

impl ToySource for MergeSource<'_> {
    type Error = ShardError;

    fn toys(&mut self, _: &Likelihood, request: &PointRequest) -> Result<PointToys, ShardError> {
        let mut merged = PointToys::default();
        for shard in self.shards.iter_mut() {
            let toys = shard.point(request, self.max_upcrossings)?;
            merged
                .append(toys)
                .map_err(|field| ShardError::Impossible {
                    path: shard.path.clone(),
                    place: format!("{}, {field}", point_name(request)),
                    problem: "the shards' counts add up past 2^64".into(),
                })?;
        }
        Ok(merged)
    }

    fn skip(&mut self, _: usize) {}
}

/// One shard file, its checksum verified, read section by section. The file
/// is opened for each section only, so a merge of thousands of shards never
/// holds thousands of open files.
struct ShardReader {
    path: PathBuf,
    run: ShardRun,
    shard: ShardSpec,
    /// Where the next section starts.
    offset: u64,
    /// Where the checksum starts.
    body_length: u64,
}

impl ShardReader {
    /// Verifies the checksum of the file at `path` and reads its header.
    fn open(path: PathBuf) -> Result<ShardReader, ShardError> {
        let body_length = verify_checksum(&path)?;
        let mut input = Decoder::open(&path, 0, body_length).map_err(|source| ShardError::Io {
            path: path.clone(),
            source,
        })?;
        let malformed = |what: String| ShardError::Malformed {
            path: path.clone(),
            what,
        };
        let header = (|| {
            input.raw::<16>()?; // the magic, checked with the checksum
            let run = ShardRun::decode(&mut input)?;
            let shard = ShardSpec {
                index: input.count()?,
                count: input.count()?,
            };
            if shard.index == 0 || shard.index > shard.count {
                return Err(format!("shard {shard} is not a valid K/N"));
            }
            Ok((run, shard))
        })();
        let (run, shard) = header.map_err(malformed)?;
        Ok(ShardReader {
            path,
            run,
            shard,
            offset: body_length - input.remaining(),
            body_length,
        })
    }

    /// The next point's section, checked against what the point asks for
    /// ([`check_point`]) before any of it is used.
    fn point(
        &mut self,
        request: &PointRequest,
        max_upcrossings: u64,
    ) -> Result<PointToys, ShardError> {
        let toys = self.section(&point_name(request), decode_point)?;
        check_point(&toys, request, self.shard, max_upcrossings)
            .map_err(|impossible| impossible.in_file(&self.path))?;
        Ok(toys)
    }

    /// The next section, read by `decode`; `what` names it in messages.
    fn section<T>(
        &mut self,
        what: &str,
        decode: impl FnOnce(&mut Decoder) -> Result<T, String>,
    ) -> Result<T, ShardError> {
        let mut input =
            Decoder::open(&self.path, self.offset, self.body_length).map_err(|source| {
                ShardError::Io {
                    path: self.path.clone(),
                    source,
                }
            })?;
        let section = decode(&mut input);
        self.offset = self.body_length - input.remaining();
        section.map_err(|problem| ShardError::Malformed {
            path: self.path.clone(),
            what: format!("{what}: {problem}"),
        })
    }

    /// Checks that every section has been read.
    fn expect_end(&self) -> Result<(), ShardError> {
        if self.offset != self.body_length {
            return Err(ShardError::Malformed {
                path: self.path.clone(),
                what: "holds more grid points than its scenario".into(),
            });
        }
        Ok(())
    }
}

/// Why a file whose first bytes are not [`MAGIC`] is refused: a shard of
/// another format (its number read from the first line), or no shard.
fn other_format(path: &Path, magic: &[u8; 16]) -> ShardError {
    let format = magic
        .strip_prefix(MAGIC_PREFIX)
        .and_then(|rest| rest.split(|&byte| byte == b'\n').next())
        .and_then(|number| std::str::from_utf8(number).ok())
        .filter(|number| !number.is_empty() && number.bytes().all(|byte| byte.is_ascii_digit()));
    match format {
        Some(format) => ShardError::OtherFormat {
            path: path.to_path_buf(),
            format: format.to_string(),
        },
        None => ShardError::NotAShard {
            path: path.to_path_buf(),
        },
    }
}

/// Reads the whole file, compares the SHA-256 of all but its last 32 bytes
/// with those bytes, and returns the length they cover.
fn verify_checksum(path: &Path) -> Result<u64, ShardError> {
    let io_error = |source| ShardError::Io {
        path: path.to_path_buf(),
        source,
    };
    let mut file = open_regular(path).map_err(io_error)?;
    let length = file.metadata().map_err(io_error)?.len();
    let mut magic = [0u8; 16];
    if length < MAGIC.len() as u64 + CHECKSUM_BYTES || file.read_exact(&mut magic).is_err() {
        return Err(ShardError::NotAShard {
            path: path.to_path_buf(),
        });
    }
    if &magic != MAGIC {
        return Err(other_format(path, &magic));
    }
    let body_length = length - CHECKSUM_BYTES;
    let mut hasher = HashingWriter::new(io::sink());
    hasher.write_all(&magic).map_err(io_error)?;
    let mut file = BufReader::new(file);
    io::copy(
        &mut (&mut file).take(body_length - MAGIC.len() as u64),
        &mut hasher,
    )
    .map_err(io_error)?;
    let mut stored = [0u8; 32];
    file.read_exact(&mut stored).map_err(io_error)?;
    if stored != <[u8; 32]>::from(hasher.hasher.finalize()) {
        return Err(ShardError::Corrupted {
            path: path.to_path_buf(),
        });
    }
    Ok(body_length)
}
