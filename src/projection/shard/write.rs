//! Running one shard and writing its file, section by section.

use super::encoding::{Encoder, HashingWriter, encode_ensemble, encode_point};
use super::{MAGIC, ShardError, ShardRun, ShardSpec};
use crate::created_directories::CreatedDirectories;
use crate::ensemble::EnsembleOutcome;
use crate::likelihood::Likelihood;
use crate::model::Model;
use crate::projection::ProjectionError;
use crate::projection::ensembles::{PointRequest, PointToys, RunToys, ToySource};
use sha2::Digest;
use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

/// Runs shard `shard` of the projection `run` and writes it into
/// `directory` (as `write_shard_file` writes every shard). Returns the path written.
pub fn run_shard(
    model: &Model,
    run: &ShardRun,
    shard: ShardSpec,
    directory: &Path,
    progress: &(dyn Fn(u64) + Sync),
) -> Result<PathBuf, ShardError> {
    write_shard_file(run, shard, directory, |file| {
        let mut source = file.recording(RunToys {
            seed: run.settings.seed,
            shard,
            scan: run.settings.scan.as_ref(),
            progress,
        });
        crate::projection::grid_toys(model, &run.settings, &mut source)
    })
}

/// Writes shard `shard` of `run` into `directory` (created if needed, and
/// removed again if this fails) under [`ShardRun::file_name`]: the header,
/// then the sections `body` records, then the checksum; atomically, a
/// hidden temporary file renamed into place, so a rerun replaces it with
/// the same bytes. Returns the path written.
pub(crate) fn write_shard_file(
    run: &ShardRun,
    shard: ShardSpec,
    directory: &Path,
    body: impl FnOnce(&mut ShardFile) -> Result<(), ShardError>,
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
    let mut file = ShardFile {
        output: HashingWriter::new(BufWriter::new(file)),
        path: temporary.clone(),
    };
    let mut header = Encoder::default();
    header.raw(MAGIC);
    run.encode(&mut header);
    header.count(shard.index);
    header.count(shard.count);
    let written = file
        .write(&header.bytes)
        .and_then(|()| body(&mut file))
        .and_then(|()| file.finish())
        .and_then(|()| std::fs::rename(&temporary, &path).map_err(io_error(&path)));
    if written.is_err() {
        // Then `created` is dropped: a directory made for this shard goes too.
        let _ = std::fs::remove_file(&temporary);
    } else {
        created.keep();
    }
    written.map(|()| path)
}

/// A shard file being written: sections appended as they come.
pub(crate) struct ShardFile {
    output: HashingWriter<BufWriter<File>>,
    path: PathBuf,
}

impl ShardFile {
    fn write(&mut self, bytes: &[u8]) -> Result<(), ShardError> {
        self.output
            .write_all(bytes)
            .map_err(|source| ShardError::Io {
                path: self.path.clone(),
                source,
            })
    }

    /// Appends one ensemble's section (read back by `ShardSet::ensemble`).
    pub(crate) fn record_ensemble(&mut self, outcome: &EnsembleOutcome) -> Result<(), ShardError> {
        let mut section = Encoder::default();
        encode_ensemble(outcome, &mut section);
        self.write(&section.bytes)
    }

    /// A source that runs `source`'s pseudo-experiments and appends each
    /// point's outcomes to this file as they come.
    pub(crate) fn recording<S: ToySource<Error = ProjectionError>>(
        &mut self,
        source: S,
    ) -> Recording<'_, S> {
        Recording { file: self, source }
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

/// Runs a shard's toys and writes each point's outcomes as they come.
pub(crate) struct Recording<'f, S> {
    file: &'f mut ShardFile,
    source: S,
}

impl<S: ToySource<Error = ProjectionError>> ToySource for Recording<'_, S> {
    type Error = ShardError;

    fn toys(
        &mut self,
        likelihood: &Likelihood,
        request: &PointRequest,
    ) -> Result<PointToys, ShardError> {
        let toys = self.source.toys(likelihood, request)?;
        let mut section = Encoder::default();
        encode_point(&toys, &mut section);
        self.file.write(&section.bytes)?;
        Ok(toys)
    }

    fn skip(&mut self, toys: usize) {
        self.source.skip(toys);
    }
}
