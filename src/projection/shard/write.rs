//! Running one shard and writing its file, point by point.

use super::encoding::{Encoder, HashingWriter, encode_point};
use super::{MAGIC, ShardError, ShardRun, ShardSpec};
use crate::asymptotic::AsimovSignificance;
use crate::created_directories::CreatedDirectories;
use crate::likelihood::Likelihood;
use crate::model::Model;
use crate::projection::ensembles::{PointRequest, PointToys, RunToys, ToySource};
use sha2::Digest;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

/// Runs shard `shard` of `run` and writes it into `directory` (created if
/// needed, and removed again if this fails) under [`ShardRun::file_name`],
/// atomically: a hidden temporary file renamed into place, so a rerun
/// replaces it with the same bytes. Returns the path written.
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
    let created = CreatedDirectories::create(directory).map_err(io_error(directory))?;
    let name = run.file_name(shard);
    let path = directory.join(&name);
    let temporary = directory.join(format!(".{name}.partial"));
    let file = File::create(&temporary).map_err(io_error(&temporary))?;
    let mut writer = ShardWriter {
        output: HashingWriter::new(BufWriter::new(file)),
        runner: RunToys {
            seed: run.settings.seed,
            shard,
            scan: run.settings.scan.as_ref(),
            progress,
        },
        path: temporary.clone(),
    };
    let written = write_shard(model, run, shard, &mut writer)
        .and_then(|()| writer.finish())
        .and_then(|()| std::fs::rename(&temporary, &path).map_err(io_error(&path)));
    if written.is_err() {
        // Then `created` is dropped: a directory made for this shard goes too.
        let _ = std::fs::remove_file(&temporary);
    } else {
        created.keep();
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
    let mut asimov = AsimovSignificance::new(&likelihood);
    let runner = crate::projection::point::PointRunner::new(&likelihood, &run.settings);
    crate::projection::points(&runner, &mut asimov, &mut [], &run.settings, writer)?;
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
