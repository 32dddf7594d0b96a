//! Errors from reading, parsing and validating a scenario file.

use std::fmt;
use std::io;
use std::path::PathBuf;

/// Why a scenario could not be loaded. Each variant displays as one line
/// that names what is wrong and what was expected.
#[derive(Debug)]
pub enum ScenarioError {
    /// The file could not be read.
    Read { path: PathBuf, source: io::Error },
    /// The file is longer than the limit, in bytes.
    TooLarge { path: PathBuf, limit: u64 },
    /// The text is not valid YAML, or does not match the scenario format
    /// (unknown key, missing key, wrong type). `line` and `column` are 1-based.
    Parse {
        message: String,
        line: Option<usize>,
        column: Option<usize>,
    },
    /// A value parsed but makes no sense; `field` is a dotted path such as
    /// `backgrounds[1].events_per_day`.
    Invalid { field: String, message: String },
}

impl ScenarioError {
    /// Converts a YAML parser error, keeping its message (which names unknown
    /// or missing keys) and moving its position into `line` and `column`.
    pub fn from_yaml(error: serde_yaml::Error) -> ScenarioError {
        let text = error.to_string();
        match error.location() {
            Some(location) => {
                let marker = format!(" at line {} column {}", location.line(), location.column());
                ScenarioError::Parse {
                    message: text.replacen(&marker, "", 1),
                    line: Some(location.line()),
                    column: Some(location.column()),
                }
            }
            None => ScenarioError::Parse {
                message: text,
                line: None,
                column: None,
            },
        }
    }

    /// The error with `path` (e.g. `channels[1].`) put before the field it
    /// names, for a check made inside one part of the scenario.
    pub fn within(self, path: &str) -> ScenarioError {
        match self {
            ScenarioError::Invalid { field, message } => ScenarioError::Invalid {
                field: format!("{path}{field}"),
                message,
            },
            other => other,
        }
    }

    /// A [`ScenarioError::Invalid`] for `field`.
    pub fn invalid(field: impl Into<String>, message: impl Into<String>) -> ScenarioError {
        ScenarioError::Invalid {
            field: field.into(),
            message: message.into(),
        }
    }
}

impl fmt::Display for ScenarioError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ScenarioError::Read { path, source } => {
                write!(f, "cannot read scenario file {}: {source}", path.display())
            }
            ScenarioError::TooLarge { path, limit } => write!(
                f,
                "scenario file {} is larger than the {limit} bytes allowed",
                path.display()
            ),
            ScenarioError::Parse {
                message,
                line: Some(line),
                column: Some(column),
            } => write!(f, "line {line}, column {column}: {message}"),
            ScenarioError::Parse {
                message,
                line: Some(line),
                column: None,
            } => write!(f, "line {line}: {message}"),
            ScenarioError::Parse { message, .. } => f.write_str(message),
            ScenarioError::Invalid { field, message } => write!(f, "{field}: {message}"),
        }
    }
}

impl std::error::Error for ScenarioError {
    fn source(&self) -> Option<&(dyn std::error::Error + 'static)> {
        match self {
            ScenarioError::Read { source, .. } => Some(source),
            ScenarioError::TooLarge { .. }
            | ScenarioError::Parse { .. }
            | ScenarioError::Invalid { .. } => None,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn parse_error_moves_the_position_to_the_front() {
        let yaml_error = serde_yaml::from_str::<Vec<f64>>("[1.0,\n 2.0,\n oops]").unwrap_err();
        let error = ScenarioError::from_yaml(yaml_error);
        let ScenarioError::Parse { line, column, .. } = &error else {
            panic!("expected a parse error, got {error:?}");
        };
        assert_eq!((*line, *column), (Some(3), Some(2)));
        let shown = error.to_string();
        assert!(shown.starts_with("line 3, column 2: "), "{shown}");
        assert!(!shown.contains(" at line "), "{shown}");
    }

    #[test]
    fn invalid_error_is_one_line_naming_the_field() {
        let error = ScenarioError::invalid(
            "backgrounds[0].events_per_day",
            "must be a positive finite number, got -3",
        );
        assert_eq!(
            error.to_string(),
            "backgrounds[0].events_per_day: must be a positive finite number, got -3"
        );
    }

    #[test]
    fn read_error_names_the_path_and_keeps_its_source() {
        let error = ScenarioError::Read {
            path: PathBuf::from("missing.yaml"),
            source: io::Error::new(io::ErrorKind::NotFound, "no such file"),
        };
        assert_eq!(
            error.to_string(),
            "cannot read scenario file missing.yaml: no such file"
        );
        assert!(std::error::Error::source(&error).is_some());
    }
}
