//! Tables and documents as bytes: CSV rows and pretty-printed JSON, with
//! their failures reported against the file being rendered.

use crate::report::ReportError;
use serde::Serialize;

/// A CSV table of `header` and `rows`.
pub fn csv_bytes<Row, Cell>(
    file: &'static str,
    header: impl IntoIterator<Item = impl AsRef<[u8]>>,
    rows: impl IntoIterator<Item = Row>,
) -> Result<Vec<u8>, ReportError>
where
    Row: IntoIterator<Item = Cell>,
    Cell: AsRef<[u8]>,
{
    let failure = |message: String| ReportError::Render { file, message };
    let mut writer = ::csv::Writer::from_writer(Vec::new());
    writer
        .write_record(header)
        .map_err(|error| failure(error.to_string()))?;
    for row in rows {
        writer
            .write_record(row)
            .map_err(|error| failure(error.to_string()))?;
    }
    writer
        .into_inner()
        .map_err(|error| failure(error.into_error().to_string()))
}

/// Pretty-printed JSON of `document`, ending with a newline.
pub fn json_bytes(file: &'static str, document: &impl Serialize) -> Result<Vec<u8>, ReportError> {
    let mut bytes = serde_json::to_vec_pretty(document).map_err(|error| ReportError::Render {
        file,
        message: error.to_string(),
    })?;
    bytes.push(b'\n');
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_quotes_what_needs_quoting() {
        let bytes = csv_bytes("t.csv", ["a", "b"], [["1", "x,y"]]).unwrap();
        assert_eq!(String::from_utf8(bytes).unwrap(), "a,b\n1,\"x,y\"\n");
    }

    #[test]
    fn rows_of_another_length_are_a_render_error() {
        let error = csv_bytes("t.csv", ["a", "b"], [vec!["1"]]).unwrap_err();
        assert!(
            error.to_string().starts_with("cannot render t.csv: "),
            "{error}"
        );
    }

    #[test]
    fn json_ends_with_a_newline() {
        let bytes = json_bytes("t.json", &serde_json::json!({"a": 1})).unwrap();
        assert_eq!(String::from_utf8(bytes).unwrap(), "{\n  \"a\": 1\n}\n");
    }
}
