//! The bytes of a shard file: fields, point sections, and the checksum.

use crate::ensemble::EnsembleOutcome;
use crate::input_file::open_regular;
use crate::projection::ensembles::{CalibrationCount, LookElsewhereCount, PointToys};
use sha2::{Digest, Sha256};
use std::io::{self, BufReader, Read, Seek, SeekFrom, Write};
use std::path::Path;

/// A point's section: each ensemble as a presence flag, then its failed fits
/// and converged values, or (calibration) converged, exceeding and failed,
/// or (look-elsewhere scans) converged, the sums of upcrossings and of
/// their squares, exceeding and failed.
pub(crate) fn encode_point(toys: &PointToys, out: &mut Encoder) {
    for outcome in [&toys.discovery, &toys.limits] {
        out.flag(outcome.is_some());
        if let Some(outcome) = outcome {
            encode_ensemble(outcome, out);
        }
    }
    out.flag(toys.calibration.is_some());
    if let Some(count) = toys.calibration {
        out.count(count.converged);
        out.count(count.exceeding);
        out.count(count.failed_fits);
    }
    out.flag(toys.look_elsewhere.is_some());
    if let Some(count) = toys.look_elsewhere {
        out.count(count.converged);
        out.u64(count.upcrossings);
        out.u64(count.upcrossings_squared);
        out.count(count.exceeding);
        out.count(count.failed_fits);
    }
}

pub(crate) fn decode_point(input: &mut Decoder) -> Result<PointToys, String> {
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
    let look_elsewhere = if input.flag()? {
        Some(LookElsewhereCount {
            converged: input.count()?,
            upcrossings: input.u64()?,
            upcrossings_squared: input.u64()?,
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
        look_elsewhere,
    })
}

fn decode_outcome(input: &mut Decoder) -> Result<Option<EnsembleOutcome>, String> {
    if !input.flag()? {
        return Ok(None);
    }
    decode_ensemble(input).map(Some)
}

/// One ensemble's section: its failed fits, then its converged values.
pub(crate) fn encode_ensemble(outcome: &EnsembleOutcome, out: &mut Encoder) {
    out.count(outcome.failed_fits);
    out.floats(&outcome.values);
}

pub(crate) fn decode_ensemble(input: &mut Decoder) -> Result<EnsembleOutcome, String> {
    let failed_fits = input.count()?;
    let values = input.floats()?;
    Ok(EnsembleOutcome {
        values,
        failed_fits,
    })
}

/// A writer that hashes what passes through it.
pub(super) struct HashingWriter<W> {
    pub(super) inner: W,
    pub(super) hasher: Sha256,
}

impl<W> HashingWriter<W> {
    pub(super) fn new(inner: W) -> Self {
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
pub(crate) struct Encoder {
    pub(crate) bytes: Vec<u8>,
}

impl Encoder {
    pub(crate) fn raw(&mut self, bytes: &[u8]) {
        self.bytes.extend_from_slice(bytes);
    }

    pub(crate) fn u64(&mut self, value: u64) {
        self.raw(&value.to_le_bytes());
    }

    pub(crate) fn count(&mut self, value: usize) {
        self.u64(value as u64);
    }

    pub(crate) fn flag(&mut self, value: bool) {
        self.raw(&[u8::from(value)]);
    }

    pub(crate) fn f64(&mut self, value: f64) {
        self.u64(value.to_bits());
    }

    pub(crate) fn bytes(&mut self, bytes: &[u8]) {
        self.count(bytes.len());
        self.raw(bytes);
    }

    pub(crate) fn text(&mut self, text: &str) {
        self.bytes(text.as_bytes());
    }

    pub(crate) fn floats(&mut self, values: &[f64]) {
        self.count(values.len());
        self.bytes.reserve(8 * values.len());
        for &value in values {
            self.f64(value);
        }
    }
}

/// Reads what [`Encoder`] wrote, never past the checksummed bytes.
pub(crate) struct Decoder {
    pub(super) input: io::Take<Box<dyn Read>>,
}

impl Decoder {
    /// Reads the file at `path` from byte `start` up to byte `end`.
    pub(super) fn open(path: &Path, start: u64, end: u64) -> io::Result<Decoder> {
        let mut file = open_regular(path)?;
        file.seek(SeekFrom::Start(start))?;
        let file: Box<dyn Read> = Box::new(BufReader::new(file));
        Ok(Decoder {
            input: file.take(end - start),
        })
    }

    /// Reads `bytes`, a part of a header kept in memory.
    pub(crate) fn of_bytes(bytes: &[u8]) -> Decoder {
        let length = bytes.len() as u64;
        let bytes: Box<dyn Read> = Box::new(io::Cursor::new(bytes.to_vec()));
        Decoder {
            input: bytes.take(length),
        }
    }

    /// Bytes left before the end.
    pub(crate) fn remaining(&self) -> u64 {
        self.input.limit()
    }

    pub(crate) fn raw<const N: usize>(&mut self) -> Result<[u8; N], String> {
        let mut bytes = [0u8; N];
        self.input
            .read_exact(&mut bytes)
            .map_err(|_| "ends early".to_string())?;
        Ok(bytes)
    }

    pub(crate) fn u64(&mut self) -> Result<u64, String> {
        self.raw().map(u64::from_le_bytes)
    }

    /// A length or count, which cannot exceed the bytes left to read.
    pub(crate) fn count(&mut self) -> Result<usize, String> {
        let value = self.u64()?;
        usize::try_from(value).map_err(|_| format!("holds an impossible count {value}"))
    }

    pub(crate) fn length(&mut self, item_bytes: u64) -> Result<usize, String> {
        let length = self.count()?;
        if length as u64 > self.input.limit() / item_bytes {
            return Err(format!("holds a list of {length} items past its end"));
        }
        Ok(length)
    }

    pub(crate) fn flag(&mut self) -> Result<bool, String> {
        match self.raw::<1>()? {
            [0] => Ok(false),
            [1] => Ok(true),
            [other] => Err(format!("holds {other} where a flag was expected")),
        }
    }

    pub(crate) fn f64(&mut self) -> Result<f64, String> {
        self.u64().map(f64::from_bits)
    }

    pub(crate) fn bytes(&mut self) -> Result<Vec<u8>, String> {
        let length = self.length(1)?;
        let mut bytes = vec![0u8; length];
        self.input
            .read_exact(&mut bytes)
            .map_err(|_| "ends early".to_string())?;
        Ok(bytes)
    }

    pub(crate) fn text(&mut self) -> Result<String, String> {
        String::from_utf8(self.bytes()?).map_err(|_| "holds text that is not UTF-8".into())
    }

    pub(crate) fn floats(&mut self) -> Result<Vec<f64>, String> {
        let length = self.length(8)?;
        (0..length).map(|_| self.f64()).collect()
    }
}

pub(super) fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|byte| format!("{byte:02x}")).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

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
            look_elsewhere: Some(LookElsewhereCount {
                converged: 40,
                upcrossings: 170,
                upcrossings_squared: 901,
                exceeding: 2,
                failed_fits: 1,
            }),
        };
        let mut out = Encoder::default();
        encode_point(&toys, &mut out);
        let directory = std::env::temp_dir().join(format!("runcast-shard-{}", std::process::id()));
        std::fs::create_dir_all(&directory).unwrap();
        let path = directory.join("section");
        std::fs::write(&path, &out.bytes).unwrap();
        let mut input = Decoder::open(&path, 0, out.bytes.len() as u64).unwrap();
        assert_eq!(decode_point(&mut input), Ok(toys));
        std::fs::remove_dir_all(&directory).unwrap();
    }
}
