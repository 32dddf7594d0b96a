//! Shards of a re-plan: `runcast replan --shard K/N` runs shard K's part of
//! the goodness of fit's pseudo-experiments and of every grid point of both
//! conditional projections; `runcast merge` reads all N and makes the
//! unsharded re-plan, byte for byte.
//!
//! A re-plan shard is a projection shard (`projection/shard/`: build,
//! scenario, files of rows, settings, K and N, checksum) of the command
//! `replan`, whose inputs ([`ReplanInputs`]) are the data taken (per
//! channel: the file's name, SHA-256, form and counts), `--taken`,
//! `--future` and whether the toy limit is asked for. Its sections: the
//! goodness of fit's ensemble, then each grid point of the signal
//! hypothesis, then of the no-signal hypothesis, as a projection's. The
//! fits of the data are recomputed by each shard and by the merge with the
//! same code; the points solving the days and the toy limit (whose every
//! tested mu follows from the last) run whole where the shards are merged.

use super::{
    ChannelData, ConditionalToys, DataForm, Future, GoodnessOfFitToys, Hypothesis, Prepared,
    Replan, ReplanError, ReplanSettings, ReplanToys, check_model, replan_with,
};
use crate::ensemble::EnsembleOutcome;
use crate::likelihood::{Dataset, Likelihood};
use crate::message::show;
use crate::model::Model;
use crate::projection::{
    Decoder, Encoder, PointRequest, PointToys, ProjectionSettings, ShardError, ShardRun, ShardSet,
    ShardSpec, ToySource, grid_toys, write_shard_file,
};
use crate::provenance::FileHash;
use crate::scenario::SignalScan;
use std::fmt;
use std::path::{Path, PathBuf};

/// The command of a re-plan's shards.
pub const REPLAN_COMMAND: &str = "replan";

/// What a re-plan adds to its shards' header.
#[derive(Debug, Clone, PartialEq)]
pub struct ReplanInputs {
    pub taken_days: f64,
    pub future: Future,
    pub toy_limit: bool,
    /// The data taken, one per channel in the model's order.
    pub data: Vec<ChannelData>,
}

impl ReplanInputs {
    /// The inputs of a re-plan of `settings` given `data`.
    pub fn new(settings: &ReplanSettings, data: Vec<ChannelData>) -> ReplanInputs {
        ReplanInputs {
            taken_days: settings.taken_days,
            future: settings.future,
            toy_limit: settings.toy_limit,
            data,
        }
    }

    /// The settings of the re-plan of `plan` with these inputs.
    fn settings(&self, plan: ProjectionSettings) -> ReplanSettings {
        ReplanSettings {
            plan,
            taken_days: self.taken_days,
            future: self.future,
            toy_limit: self.toy_limit,
        }
    }

    pub fn encode(&self) -> Vec<u8> {
        let mut out = Encoder::default();
        out.f64(self.taken_days);
        out.text(self.future.name());
        out.flag(self.toy_limit);
        out.count(self.data.len());
        for data in &self.data {
            out.text(&data.channel);
            out.text(&data.file.file);
            out.text(&data.file.sha256);
            out.flag(data.form == DataForm::Events);
            out.floats(&data.counts);
        }
        out.bytes
    }

    pub fn decode(bytes: &[u8]) -> Result<ReplanInputs, String> {
        let mut input = Decoder::of_bytes(bytes);
        let taken_days = input.f64()?;
        let future = match input.text()?.as_str() {
            "fitted" => Future::Fitted,
            "nominal" => Future::Nominal,
            other => return Err(format!("--future {other}: expected fitted or nominal")),
        };
        let toy_limit = input.flag()?;
        let channels = input.length(1)?;
        let data = (0..channels)
            .map(|_| {
                Ok(ChannelData {
                    channel: input.text()?,
                    file: FileHash {
                        file: input.text()?,
                        sha256: input.text()?,
                    },
                    form: if input.flag()? {
                        DataForm::Events
                    } else {
                        DataForm::Binned
                    },
                    counts: input.floats()?,
                })
            })
            .collect::<Result<_, String>>()?;
        if input.remaining() != 0 {
            return Err("holds bytes past the data taken".into());
        }
        Ok(ReplanInputs {
            taken_days,
            future,
            toy_limit,
            data,
        })
    }

    /// The first input in which `other` differs, for messages.
    fn difference(&self, other: &ReplanInputs) -> Option<String> {
        let named = |what: String, mine: String, theirs: String| {
            (mine != theirs).then(|| format!("{what} {theirs} instead of {mine}"))
        };
        let toy_limit = |wanted: bool| if wanted { "asked for" } else { "not asked for" };
        named(
            "--taken".into(),
            show(self.taken_days),
            show(other.taken_days),
        )
        .or_else(|| {
            named(
                "--future".into(),
                self.future.name().into(),
                other.future.name().into(),
            )
        })
        .or_else(|| {
            named(
                "toy limit (--toys)".into(),
                toy_limit(self.toy_limit).into(),
                toy_limit(other.toy_limit).into(),
            )
        })
        .or_else(|| {
            let file = |data: Option<&ChannelData>| {
                data.map_or_else(
                    || "none".to_string(),
                    |data| format!("{} (SHA-256 {})", data.file.file, data.file.sha256),
                )
            };
            let channels = self.data.len().max(other.data.len());
            (0..channels).find_map(|index| {
                let (mine, theirs) = (self.data.get(index), other.data.get(index));
                let channel = mine.or(theirs).map_or("", |data| data.channel.as_str());
                named(
                    format!("data of channel {channel}:"),
                    file(mine),
                    file(theirs),
                )
                .or_else(|| {
                    (mine != theirs).then(|| format!("data of channel {channel}: other counts"))
                })
            })
        })
    }
}

/// Names the first difference between two re-plan shards' inputs
/// (see [`ShardSet::open`]).
pub fn describe_shard_inputs(command: &str, mine: &[u8], theirs: &[u8]) -> String {
    match (ReplanInputs::decode(mine), ReplanInputs::decode(theirs)) {
        (Ok(mine), Ok(theirs)) if command == REPLAN_COMMAND => mine
            .difference(&theirs)
            .unwrap_or_else(|| "the inputs of runcast replan".into()),
        _ => format!("the inputs of runcast {command}"),
    }
}

/// Why a re-plan shard could not be written, or re-plan shards not merged.
#[derive(Debug)]
pub enum ReplanShardError {
    Shard(ShardError),
    /// The re-plan of the shards' scenario and data failed.
    Replan {
        path: PathBuf,
        source: ReplanError,
    },
}

impl fmt::Display for ReplanShardError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ReplanShardError::Shard(error) => write!(f, "{error}"),
            ReplanShardError::Replan { path, source } => {
                write!(f, "{}: {source}", path.display())
            }
        }
    }
}

impl std::error::Error for ReplanShardError {}

impl From<ReplanError> for ReplanShardError {
    /// Placed by [`merge_replan_shards`], which knows the file.
    fn from(source: ReplanError) -> ReplanShardError {
        ReplanShardError::Replan {
            path: PathBuf::new(),
            source,
        }
    }
}

impl From<ShardError> for ReplanShardError {
    fn from(error: ShardError) -> ReplanShardError {
        ReplanShardError::Shard(error)
    }
}

/// Runs shard `shard` of the re-plan of `model` (with its `scan`) given
/// `inputs`, and writes it into `directory` as a shard of `run` (the
/// scenario and the plan's settings). Returns the path written.
pub fn run_replan_shard(
    model: &Model,
    scan: Option<&SignalScan>,
    inputs: &ReplanInputs,
    run: ShardRun,
    shard: ShardSpec,
    directory: &Path,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<PathBuf, ReplanShardError> {
    let failed = |source| ReplanShardError::Replan {
        path: directory.to_path_buf(),
        source,
    };
    let settings = inputs.settings(run.settings.clone());
    let prepared =
        Prepared::new(model, scan, &inputs.data, &settings, false, progress).map_err(failed)?;
    let run = run.of_command(REPLAN_COMMAND, inputs.encode());
    let likelihood = Likelihood::new(model);
    let fitted = prepared.observed.fitted_parameters();
    let both = model.taken_and_to_come(prepared.taken_live_days);
    let path = write_shard_file(&run, shard, directory, |file| {
        let toys = prepared.goodness_of_fit_toys(&likelihood, &fitted);
        file.record_ensemble(&toys.run(shard.toys(toys.toys), progress))?;
        for (hypothesis, generating) in &prepared.generating {
            let mut source = file.recording(ConditionalToys {
                seed: settings.plan.seed,
                shard,
                hypothesis: *hypothesis,
                generating,
                taken: &prepared.taken,
                progress,
            });
            grid_toys(&both, &prepared.conditional_settings, &mut source)?;
        }
        Ok(())
    })?;
    Ok(path)
}

/// Merges the re-plan shards `shards` (opened with
/// [`describe_shard_inputs`]): checks the scenario and settings as a
/// projection's merge does, the data against the scenario's channels, then
/// makes the re-plan with the shards' pseudo-experiments. Returns the run,
/// the settings and the re-plan.
pub fn merge_replan_shards(
    mut shards: ShardSet,
) -> Result<(ShardRun, ReplanSettings, Replan), ReplanShardError> {
    let path = shards.first_path().to_path_buf();
    let malformed = |what: String| {
        ReplanShardError::Shard(ShardError::Malformed {
            path: path.clone(),
            what,
        })
    };
    if shards.run().command != REPLAN_COMMAND {
        return Err(malformed(format!(
            "a shard of runcast {}, merged as one of runcast {REPLAN_COMMAND}",
            shards.run().command
        )));
    }
    let (run, scenario) = shards.scenario()?;
    let inputs =
        ReplanInputs::decode(&run.inputs).map_err(|what| malformed(format!("inputs: {what}")))?;
    let model = Model::from_scenario(&scenario);
    check_model(&model).map_err(|source| ReplanShardError::Replan {
        path: path.clone(),
        source,
    })?;
    check_inputs(&inputs, &model).map_err(&malformed)?;
    let settings = inputs.settings(run.settings.clone());
    let replan = replan_with::<_, ReplanShardError>(
        &model,
        scenario.signal_scan().as_ref(),
        inputs.data,
        &settings,
        &mut MergeReplanToys {
            shards: &mut shards,
        },
        &|_| {},
    )
    .map_err(|error| match error {
        ReplanShardError::Replan { source, .. } => ReplanShardError::Replan {
            path: path.clone(),
            source,
        },
        other => other,
    })?;
    shards.expect_end()?;
    Ok((run, settings, replan))
}

/// The data a shard carries against the scenario's channels: one per
/// channel, in order, each a count of at least 0, whole, per bin; and a
/// day taken with live time by then.
fn check_inputs(inputs: &ReplanInputs, model: &Model) -> Result<(), String> {
    let live_days = model.live_time.live_days(inputs.taken_days);
    if !(inputs.taken_days.is_finite() && inputs.taken_days > 0.0 && live_days > 0.0) {
        return Err(format!(
            "--taken {}: expected a calendar day with live time by then",
            show(inputs.taken_days)
        ));
    }
    if inputs.data.len() != model.channels.len() {
        return Err(format!(
            "data of {} channels, where the scenario has {}",
            inputs.data.len(),
            model.channels.len()
        ));
    }
    for (data, channel) in inputs.data.iter().zip(&model.channels) {
        if data.channel != channel.name {
            return Err(format!(
                "data of channel {}, where the scenario's channel is {}",
                data.channel, channel.name
            ));
        }
        let bins = channel.edges.len() - 1;
        if data.counts.len() != bins {
            return Err(format!(
                "data of channel {}: {} counts for {bins} bins",
                data.channel,
                data.counts.len()
            ));
        }
        if let Some(&count) = data
            .counts
            .iter()
            .find(|&&count| !(count.is_finite() && count >= 0.0 && count.fract() == 0.0))
        {
            return Err(format!(
                "data of channel {}: a count {}, where whole numbers of at least 0 are expected",
                data.channel,
                show(count)
            ));
        }
    }
    Ok(())
}

/// The pseudo-experiments of all re-plan shards, read section by section
/// in the order of K.
struct MergeReplanToys<'s> {
    shards: &'s mut ShardSet,
}

impl ToySource for MergeReplanToys<'_> {
    type Error = ShardError;

    fn toys(
        &mut self,
        likelihood: &Likelihood,
        request: &PointRequest,
    ) -> Result<PointToys, ShardError> {
        self.shards.toy_source(0).toys(likelihood, request)
    }

    fn skip(&mut self, _: usize) {}
}

impl ReplanToys for MergeReplanToys<'_> {
    fn goodness_of_fit(&mut self, toys: &GoodnessOfFitToys) -> Result<EnsembleOutcome, ShardError> {
        self.shards.ensemble("goodness of fit", toys.toys)
    }

    fn conditional(&mut self, _: Hypothesis, _: &[f64], _: &Dataset) {}
}
