//! Shards: one projection split over processes or machines, merged exactly.
//!
//! Shard K of N runs the toy indices `[(K-1)·T/N, K·T/N)` (integer division)
//! of every ensemble of T pseudo-experiments, at every grid point, whatever
//! the thread count; each toy has its own random stream, so the toys of all
//! shards together are those of the unsharded run. A shard file holds what
//! merging needs and nothing else:
//!
//! - a header: the runcast version, the scenario text and its SHA-256, the
//!   projection settings (seed, toys, limits, calibration, grid), K and N;
//! - per grid point with live time, the shard's part of each ensemble: the
//!   failed fits and the converged values (8 bytes a toy, in toy order) of
//!   the discovery and limit ensembles, whose quantiles need every value,
//!   and three counts for the calibration, whose p-value needs only how
//!   many toys reached the Asimov q0 (so 10⁸ calibration toys cost 24 bytes
//!   a point);
//! - the SHA-256 of all the bytes before it.
//!
//! Merging reads the shards point by point, in the order of K, so that a
//! point's values are those of the unsharded run in the same order; it holds
//! one point's ensembles at a time, as the unsharded run does, and from there
//! runs the same code ([`super::project_from`]).

use super::ensembles::{CalibrationCount, PointRequest, PointToys, RunToys, ToySource};
use super::{Projection, ProjectionError, ProjectionSettings};
use crate::ensemble::EnsembleOutcome;
use crate::likelihood::Likelihood;
use crate::model::Model;
use crate::scenario::{Scenario, ScenarioError};
use sha2::{Digest, Sha256};
use std::fmt;
use std::fs::File;
use std::io::{self, BufReader, BufWriter, Read, Write};
use std::ops::Range;
use std::path::{Path, PathBuf};
use std::str::FromStr;

/// The first bytes of every shard file, with the format number.
const MAGIC: &[u8; 16] = b"runcast-shard 1\n";
/// The extension of shard files; `merge` reads every file of a directory with it.
pub const SHARD_EXTENSION: &str = "runcast-shard";
/// Bytes of the SHA-256 checksum at the end of a shard file.
const CHECKSUM_BYTES: u64 = 32;

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
    /// The scenario's file name, for messages and the summary.
    pub scenario_name: String,
    /// The scenario file's text, from which merging rebuilds the model.
    pub scenario_text: String,
    pub settings: ProjectionSettings,
}

impl ShardRun {
    /// A run of this runcast version on the scenario `text` read from `name`.
    pub fn new(scenario_name: String, scenario_text: String, settings: ProjectionSettings) -> Self {
        ShardRun {
            version: env!("CARGO_PKG_VERSION").to_string(),
            scenario_name,
            scenario_text,
            settings,
        }
    }

    /// SHA-256 of the scenario file's bytes.
    pub fn scenario_hash(&self) -> [u8; 32] {
        Sha256::digest(self.scenario_text.as_bytes()).into()
    }

    /// The header bytes of this run (everything but K).
    fn encode(&self, out: &mut Encoder) {
        let settings = &self.settings;
        out.text(&self.version);
        out.text(&self.scenario_name);
        out.bytes(&self.scenario_hash());
        out.text(&self.scenario_text);
        out.text(&settings.title);
        out.floats(&settings.days);
        out.count(settings.toys);
        out.u64(settings.seed);
        out.floats(&settings.targets);
        out.flag(settings.cl.is_some());
        out.f64(settings.cl.unwrap_or_default());
        out.count(settings.calibration_toys);
    }

    fn decode(input: &mut Decoder) -> Result<ShardRun, String> {
        let version = input.text()?;
        let scenario_name = input.text()?;
        let hash = input.bytes()?;
        let scenario_text = input.text()?;
        let title = input.text()?;
        let days = input.floats()?;
        let toys = input.count()?;
        let seed = input.u64()?;
        let targets = input.floats()?;
        let with_limits = input.flag()?;
        let cl = input.f64()?;
        let calibration_toys = input.count()?;
        let run = ShardRun {
            version,
            scenario_name,
            scenario_text,
            settings: ProjectionSettings {
                title,
                days,
                toys,
                seed,
                targets,
                cl: with_limits.then_some(cl),
                calibration_toys,
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

    /// The first field in which `other` differs from this run, for messages.
    fn difference(&self, other: &ShardRun) -> Option<String> {
        let (a, b) = (&self.settings, &other.settings);
        let named = |what: &str, mine: String, theirs: String| {
            (mine != theirs).then(|| format!("{what} {theirs} instead of {mine}"))
        };
        named(
            "runcast version",
            self.version.clone(),
            other.version.clone(),
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
        .or_else(|| named("seed", a.seed.to_string(), b.seed.to_string()))
        .or_else(|| named("--toys", a.toys.to_string(), b.toys.to_string()))
        .or_else(|| {
            named(
                "--calibrate",
                a.calibration_toys.to_string(),
                b.calibration_toys.to_string(),
            )
        })
        .or_else(|| named("limits (CL)", format!("{:?}", a.cl), format!("{:?}", b.cl)))
        .or_else(|| (self != other).then(|| "projection settings".to_string()))
    }
}

/// Why a shard could not be written, or shards not merged.
#[derive(Debug)]
pub enum ShardError {
    /// A shard file or directory could not be read or written.
    Io { path: PathBuf, source: io::Error },
    /// Not a shard file of this format.
    NotAShard { path: PathBuf },
    /// The file's bytes do not match its checksum.
    Corrupted { path: PathBuf },
    /// The checksum matches but the content does not make sense.
    Malformed { path: PathBuf, what: String },
    /// No shard files in the directory.
    NoShards { directory: PathBuf },
    /// A shard of another run.
    Mixed {
        path: PathBuf,
        first: PathBuf,
        difference: String,
    },
    /// Two files for the same K.
    Duplicate {
        path: PathBuf,
        other: PathBuf,
        shard: ShardSpec,
    },
    /// Shards missing from the set.
    Missing {
        directory: PathBuf,
        missing: Vec<usize>,
        count: usize,
    },
    /// The scenario stored in the shards is not valid for this runcast.
    Scenario {
        path: PathBuf,
        source: ScenarioError,
    },
    /// An asymptotic fit failed.
    Projection(ProjectionError),
}

impl fmt::Display for ShardError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ShardError::Io { path, source } => write!(f, "{}: {source}", path.display()),
            ShardError::NotAShard { path } => {
                write!(
                    f,
                    "{}: not a runcast shard file of this format",
                    path.display()
                )
            }
            ShardError::Corrupted { path } => write!(
                f,
                "{}: truncated or corrupted (its checksum does not match); rerun this shard",
                path.display()
            ),
            ShardError::Malformed { path, what } => write!(f, "{}: {what}", path.display()),
            ShardError::NoShards { directory } => write!(
                f,
                "{}: no shard files (*.{SHARD_EXTENSION}) to merge",
                directory.display()
            ),
            ShardError::Mixed {
                path,
                first,
                difference,
            } => write!(
                f,
                "{}: a shard of another run than {} ({difference}); merge the shards of one run only",
                path.display(),
                first.display()
            ),
            ShardError::Duplicate { path, other, shard } => write!(
                f,
                "{}: shard {shard} is also in {}",
                path.display(),
                other.display()
            ),
            ShardError::Missing {
                directory,
                missing,
                count,
            } => {
                let list: Vec<String> = missing.iter().map(|k| format!("{k}/{count}")).collect();
                write!(
                    f,
                    "{}: missing shard{} {}; run them with --shard K/{count}",
                    directory.display(),
                    if missing.len() == 1 { "" } else { "s" },
                    list.join(", ")
                )
            }
            ShardError::Scenario { path, source } => {
                write!(f, "{}: the scenario it holds: {source}", path.display())
            }
            ShardError::Projection(error) => error.fmt(f),
        }
    }
}

impl std::error::Error for ShardError {}

impl From<ProjectionError> for ShardError {
    fn from(error: ProjectionError) -> Self {
        ShardError::Projection(error)
    }
}

/// Runs shard `shard` of `run` and writes it into `directory` (created if
/// needed) under [`ShardRun::file_name`], atomically: a hidden temporary file
/// renamed into place, so a rerun replaces it with the same bytes. Returns
/// the path written.
pub fn run_shard(
    model: &Model,
    run: &ShardRun,
    shard: ShardSpec,
    directory: &Path,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<PathBuf, ShardError> {
    let io_error = |path: &Path| {
        let path = path.to_path_buf();
        move |source| ShardError::Io { path, source }
    };
    std::fs::create_dir_all(directory).map_err(io_error(directory))?;
    let name = run.file_name(shard);
    let path = directory.join(&name);
    let temporary = directory.join(format!(".{name}.partial"));
    let file = File::create(&temporary).map_err(io_error(&temporary))?;
    let mut writer = ShardWriter {
        output: HashingWriter::new(BufWriter::new(file)),
        runner: RunToys {
            seed: run.settings.seed,
            shard,
            progress,
        },
        path: temporary.clone(),
    };
    let written = write_shard(model, run, shard, &mut writer)
        .and_then(|()| writer.finish())
        .and_then(|()| std::fs::rename(&temporary, &path).map_err(io_error(&path)));
    if written.is_err() {
        let _ = std::fs::remove_file(&temporary);
    }
    written.map(|()| path)
}

fn write_shard(
    model: &Model,
    run: &ShardRun,
    shard: ShardSpec,
    writer: &mut ShardWriter,
) -> Result<(), ShardError> {
    let mut header = Encoder::default();
    header.raw(MAGIC);
    run.encode(&mut header);
    header.count(shard.index);
    header.count(shard.count);
    writer.write(&header.bytes)?;
    let likelihood = Likelihood::new(model);
    let mut asimov = crate::asymptotic::AsimovSignificance::new(&likelihood);
    super::points(&likelihood, &mut asimov, &run.settings, writer)?;
    Ok(())
}

/// Runs a shard's toys and writes each point's outcomes as they come.
struct ShardWriter<'a> {
    output: HashingWriter<BufWriter<File>>,
    runner: RunToys<'a>,
    path: PathBuf,
}

impl ShardWriter<'_> {
    fn write(&mut self, bytes: &[u8]) -> Result<(), ShardError> {
        self.output
            .write_all(bytes)
            .map_err(|source| ShardError::Io {
                path: self.path.clone(),
                source,
            })
    }

    /// Appends the checksum and flushes the file to disk.
    fn finish(&mut self) -> Result<(), ShardError> {
        let checksum: [u8; 32] = self.output.hasher.clone().finalize().into();
        let path = self.path.clone();
        let io_error = |source| ShardError::Io { path, source };
        let output = &mut self.output.inner;
        output
            .write_all(&checksum)
            .and_then(|()| output.flush())
            .and_then(|()| output.get_ref().sync_all())
            .map_err(io_error)
    }
}

impl ToySource for ShardWriter<'_> {
    type Error = ShardError;

    fn toys(
        &mut self,
        likelihood: &Likelihood,
        request: &PointRequest,
    ) -> Result<PointToys, ShardError> {
        let toys = self.runner.toys(likelihood, request)?;
        let mut section = Encoder::default();
        encode_point(&toys, &mut section);
        self.write(&section.bytes)?;
        Ok(toys)
    }

    fn skip(&mut self, toys: usize) {
        self.runner.skip(toys);
    }
}

/// A point's section: each ensemble as a presence flag, then its failed fits
/// and converged values, or (calibration) converged, exceeding and failed.
fn encode_point(toys: &PointToys, out: &mut Encoder) {
    for outcome in [&toys.discovery, &toys.limits] {
        out.flag(outcome.is_some());
        if let Some(outcome) = outcome {
            out.count(outcome.failed_fits);
            out.floats(&outcome.values);
        }
    }
    out.flag(toys.calibration.is_some());
    if let Some(count) = toys.calibration {
        out.count(count.converged);
        out.count(count.exceeding);
        out.count(count.failed_fits);
    }
}

fn decode_point(input: &mut Decoder) -> Result<PointToys, String> {
    let discovery = decode_outcome(input)?;
    let limits = decode_outcome(input)?;
    let calibration = if input.flag()? {
        Some(CalibrationCount {
            converged: input.count()?,
            exceeding: input.count()?,
            failed_fits: input.count()?,
        })
    } else {
        None
    };
    Ok(PointToys {
        discovery,
        limits,
        calibration,
    })
}

fn decode_outcome(input: &mut Decoder) -> Result<Option<EnsembleOutcome>, String> {
    if !input.flag()? {
        return Ok(None);
    }
    let failed_fits = input.count()?;
    let values = input.floats()?;
    Ok(Some(EnsembleOutcome {
        values,
        failed_fits,
    }))
}

/// Merges the shards in `directory`: checks that they are all N shards of
/// one run, unchanged, then runs the projection with their pseudo-experiments.
/// Returns the run (scenario, settings) and the projection.
pub fn merge_shards(directory: &Path) -> Result<(ShardRun, Projection), ShardError> {
    let mut shards = open_shards(directory)?;
    let first = &shards[0];
    let run = first.run.clone();
    let scenario =
        Scenario::from_yaml(&run.scenario_text).map_err(|source| ShardError::Scenario {
            path: first.path.clone(),
            source,
        })?;
    let model = Model::from_scenario(&scenario);
    let projection = super::project_from(&model, &run.settings, &mut MergeSource(&mut shards))?;
    for shard in &mut shards {
        shard.expect_end()?;
    }
    Ok((run, projection))
}

/// Every shard file of `directory`, checked and sorted by K.
fn open_shards(directory: &Path) -> Result<Vec<ShardReader>, ShardError> {
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
    for shard in &shards[1..] {
        let difference = first.run.difference(&shard.run).or_else(|| {
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
        let present: Vec<usize> = shards.iter().map(|shard| shard.shard.index).collect();
        return Err(ShardError::Missing {
            directory: directory.to_path_buf(),
            missing: (1..=count).filter(|k| !present.contains(k)).collect(),
            count,
        });
    }
    Ok(shards)
}

/// The pseudo-experiments of all shards, read point by point in the order of K.
struct MergeSource<'a>(&'a mut [ShardReader]);

impl ToySource for MergeSource<'_> {
    type Error = ShardError;

    fn toys(&mut self, _: &Likelihood, request: &PointRequest) -> Result<PointToys, ShardError> {
        let mut merged = PointToys::default();
        for shard in self.0.iter_mut() {
            merged.append(shard.point(request)?);
        }
        Ok(merged)
    }

    fn skip(&mut self, _: usize) {}
}

/// One shard file, its checksum verified, read section by section.
struct ShardReader {
    path: PathBuf,
    run: ShardRun,
    shard: ShardSpec,
    input: Decoder,
}

impl ShardReader {
    /// Verifies the checksum of the file at `path` and reads its header.
    fn open(path: PathBuf) -> Result<ShardReader, ShardError> {
        let body_length = verify_checksum(&path)?;
        let file = File::open(&path).map_err(|source| ShardError::Io {
            path: path.clone(),
            source,
        })?;
        let mut input = Decoder {
            input: BufReader::new(file).take(body_length),
        };
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
            input,
        })
    }

    /// The next point's section, checked against what the point asks for.
    fn point(&mut self, request: &PointRequest) -> Result<PointToys, ShardError> {
        let toys = decode_point(&mut self.input)
            .and_then(|toys| self.check(&toys, request).map(|()| toys));
        toys.map_err(|what| ShardError::Malformed {
            path: self.path.clone(),
            what: format!("grid point {}: {what}", request.index + 1),
        })
    }

    /// The ensembles present are those requested, each with this shard's number of toys.
    fn check(&self, toys: &PointToys, request: &PointRequest) -> Result<(), String> {
        let share = |total: usize| self.shard.toys(total).len();
        let size = |outcome: &EnsembleOutcome| outcome.values.len() + outcome.failed_fits;
        let expected = [
            (request.discovery_toys > 0).then(|| share(request.discovery_toys)),
            request.limits.map(|limits| share(limits.toys)),
            request
                .calibration
                .map(|calibration| share(calibration.toys)),
        ];
        let found = [
            toys.discovery.as_ref().map(size),
            toys.limits.as_ref().map(size),
            toys.calibration.map(|count| count.toys()),
        ];
        if expected != found {
            return Err(format!(
                "holds ensembles of {found:?} pseudo-experiments where {expected:?} were expected"
            ));
        }
        Ok(())
    }

    /// Checks that every section has been read.
    fn expect_end(&mut self) -> Result<(), ShardError> {
        match self.input.input.read(&mut [0]) {
            Ok(0) => Ok(()),
            Ok(_) => Err(ShardError::Malformed {
                path: self.path.clone(),
                what: "holds more grid points than its scenario".into(),
            }),
            Err(source) => Err(ShardError::Io {
                path: self.path.clone(),
                source,
            }),
        }
    }
}

/// Reads the whole file, compares the SHA-256 of all but its last 32 bytes
/// with those bytes, and returns the length they cover.
fn verify_checksum(path: &Path) -> Result<u64, ShardError> {
    let io_error = |source| ShardError::Io {
        path: path.to_path_buf(),
        source,
    };
    let mut file = File::open(path).map_err(io_error)?;
    let length = file.metadata().map_err(io_error)?.len();
    let mut magic = [0u8; 16];
    if length < MAGIC.len() as u64 + CHECKSUM_BYTES
        || file.read_exact(&mut magic).is_err()
        || &magic != MAGIC
    {
        return Err(ShardError::NotAShard {
            path: path.to_path_buf(),
        });
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

/// A writer that hashes what passes through it.
struct HashingWriter<W> {
    inner: W,
    hasher: Sha256,
}

impl<W> HashingWriter<W> {
    fn new(inner: W) -> Self {
        HashingWriter {
            inner,
            hasher: Sha256::new(),
        }
    }
}

impl<W: Write> Write for HashingWriter<W> {
    fn write(&mut self, bytes: &[u8]) -> io::Result<usize> {
        let written = self.inner.write(bytes)?;
        self.hasher.update(&bytes[..written]);
        Ok(written)
    }

    fn flush(&mut self) -> io::Result<()> {
        self.inner.flush()
    }
}

/// Little-endian encoding of the shard fields: counts as u64, floats by
/// their bits (exact), texts and lists with their length first.
#[derive(Default)]
struct Encoder {
    bytes: Vec<u8>,
}

impl Encoder {
    fn raw(&mut self, bytes: &[u8]) {
        self.bytes.extend_from_slice(bytes);
    }

    fn u64(&mut self, value: u64) {
        self.raw(&value.to_le_bytes());
    }

    fn count(&mut self, value: usize) {
        self.u64(value as u64);
    }

    fn flag(&mut self, value: bool) {
        self.raw(&[u8::from(value)]);
    }

    fn f64(&mut self, value: f64) {
        self.u64(value.to_bits());
    }

    fn bytes(&mut self, bytes: &[u8]) {
        self.count(bytes.len());
        self.raw(bytes);
    }

    fn text(&mut self, text: &str) {
        self.bytes(text.as_bytes());
    }

    fn floats(&mut self, values: &[f64]) {
        self.count(values.len());
        self.bytes.reserve(8 * values.len());
        for &value in values {
            self.f64(value);
        }
    }
}

/// Reads what [`Encoder`] wrote, never past the checksummed bytes.
struct Decoder {
    input: io::Take<BufReader<File>>,
}

impl Decoder {
    fn raw<const N: usize>(&mut self) -> Result<[u8; N], String> {
        let mut bytes = [0u8; N];
        self.input
            .read_exact(&mut bytes)
            .map_err(|_| "ends early".to_string())?;
        Ok(bytes)
    }

    fn u64(&mut self) -> Result<u64, String> {
        self.raw().map(u64::from_le_bytes)
    }

    /// A length or count, which cannot exceed the bytes left to read.
    fn count(&mut self) -> Result<usize, String> {
        let value = self.u64()?;
        usize::try_from(value).map_err(|_| format!("holds an impossible count {value}"))
    }

    fn length(&mut self, item_bytes: u64) -> Result<usize, String> {
        let length = self.count()?;
        if length as u64 > self.input.limit() / item_bytes {
            return Err(format!("holds a list of {length} items past its end"));
        }
        Ok(length)
    }

    fn flag(&mut self) -> Result<bool, String> {
        match self.raw::<1>()? {
            [0] => Ok(false),
            [1] => Ok(true),
            [other] => Err(format!("holds {other} where a flag was expected")),
        }
    }

    fn f64(&mut self) -> Result<f64, String> {
        self.u64().map(f64::from_bits)
    }

    fn bytes(&mut self) -> Result<Vec<u8>, String> {
        let length = self.length(1)?;
        let mut bytes = vec![0u8; length];
        self.input
            .read_exact(&mut bytes)
            .map_err(|_| "ends early".to_string())?;
        Ok(bytes)
    }

    fn text(&mut self) -> Result<String, String> {
        String::from_utf8(self.bytes()?).map_err(|_| "holds text that is not UTF-8".into())
    }

    fn floats(&mut self) -> Result<Vec<f64>, String> {
        let length = self.length(8)?;
        (0..length).map(|_| self.f64()).collect()
    }
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|byte| format!("{byte:02x}")).collect()
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

    #[test]
    fn point_sections_read_back_what_was_written() {
        let toys = PointToys {
            discovery: Some(EnsembleOutcome {
                values: vec![0.5, f64::MIN_POSITIVE, 3.0e300],
                failed_fits: 2,
            }),
            limits: None,
            calibration: Some(CalibrationCount {
                converged: 10,
                exceeding: 3,
                failed_fits: 1,
            }),
        };
        let mut out = Encoder::default();
        encode_point(&toys, &mut out);
        let directory = std::env::temp_dir().join(format!("runcast-shard-{}", std::process::id()));
        std::fs::create_dir_all(&directory).unwrap();
        let path = directory.join("section");
        std::fs::write(&path, &out.bytes).unwrap();
        let file = File::open(&path).unwrap();
        let mut input = Decoder {
            input: BufReader::new(file).take(out.bytes.len() as u64),
        };
        assert_eq!(decode_point(&mut input), Ok(toys));
        std::fs::remove_dir_all(&directory).unwrap();
    }
}
