//! Provenance: what made an output file, recorded in every JSON document and
//! CSV table: the runcast version, each scenario file's name and SHA-256
//! with those of the files of rows it names, and every option that changes a number. Nothing that differs between
//! equivalent runs goes in (no output folder, path, clock, host or thread
//! count), so the same inputs give the same bytes, and a sharded run merged
//! gives the bytes of the unsharded one.

use crate::scenario::TableFile;
use serde::Serialize;
use serde_json::{Map, Value};
use sha2::{Digest, Sha256};

/// What made one set of outputs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Provenance {
    pub runcast_version: String,
    /// The scenario files read, in the order given.
    pub scenarios: Vec<ScenarioFile>,
    /// Every option that changes a number, by name, in a fixed order.
    pub options: Map<String, Value>,
}

/// One scenario file: its name (not its path, which may differ between
/// equivalent runs) and the SHA-256 of its bytes (FIPS 180-4), in hex, with
/// the files of rows its shapes name (left out when there are none).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScenarioFile {
    pub file: String,
    pub sha256: String,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    pub tables: Vec<FileHash>,
}

/// A file read for a scenario: its name as written and its SHA-256 in hex.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FileHash {
    pub file: String,
    pub sha256: String,
}

impl FileHash {
    /// The file `name` with the text `text`.
    pub fn new(name: &str, text: &str) -> FileHash {
        FileHash {
            file: name.to_string(),
            sha256: Sha256::digest(text.as_bytes())
                .iter()
                .map(|byte| format!("{byte:02x}"))
                .collect(),
        }
    }
}

impl ScenarioFile {
    /// The file `name` with the text `text`, naming no other file.
    pub fn new(name: &str, text: &str) -> ScenarioFile {
        let FileHash { file, sha256 } = FileHash::new(name, text);
        ScenarioFile {
            file,
            sha256,
            tables: Vec::new(),
        }
    }

    /// This file with the files of rows `tables` it names.
    pub fn with_tables(self, tables: &[TableFile]) -> ScenarioFile {
        ScenarioFile {
            tables: tables
                .iter()
                .map(|table| FileHash::new(&table.name, &table.text))
                .collect(),
            ..self
        }
    }
}

impl Provenance {
    /// This runcast version on `scenarios` with `options`.
    pub fn new(scenarios: Vec<ScenarioFile>, options: Map<String, Value>) -> Provenance {
        Provenance {
            runcast_version: env!("CARGO_PKG_VERSION").to_string(),
            scenarios,
            options,
        }
    }

    /// The provenance as one line of compact JSON, for a CSV comment.
    pub fn compact(&self) -> String {
        serde_json::to_string(self).expect("provenance is plain JSON")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_scenario_hash_is_sha256() {
        // FIPS 180-2, appendix B.1: SHA-256("abc").
        assert_eq!(
            ScenarioFile::new("a.yaml", "abc").sha256,
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn compact_provenance_is_one_line_whatever_the_file_name() {
        let provenance =
            Provenance::new(vec![ScenarioFile::new("two\nlines.yaml", "x")], Map::new());
        let line = provenance.compact();
        assert!(!line.contains('\n'), "{line}");
        let parsed: Value = serde_json::from_str(&line).unwrap();
        assert_eq!(parsed["scenarios"][0]["file"], "two\nlines.yaml");
        assert_eq!(parsed["runcast_version"], env!("CARGO_PKG_VERSION"));
    }
}
