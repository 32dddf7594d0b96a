//! Tables and documents as bytes: CSV rows and pretty-printed JSON, with
//! their failures reported against the file being rendered, and the
//! provenance every table and document carries.

use crate::provenance::Provenance;
use crate::report::{Kind, ReportError};
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

/// The bytes of an output of `kind` with its provenance: a CSV table gets a
/// first line `# provenance: {...}` (the provenance as one line of compact
/// JSON; readers skip it as a comment, e.g. pandas `comment="#"` or the csv
/// crate's `comment(Some(b'#'))`); a JSON document, an object as
/// [`json_bytes`] writes it, gets a first key `"provenance"`; a figure is
/// left as it is.
pub fn stamped(kind: Kind, bytes: Vec<u8>, provenance: &Provenance) -> Vec<u8> {
    match kind {
        Kind::Figure => bytes,
        Kind::Table => [
            format!("# provenance: {}\n", provenance.compact()).as_bytes(),
            &bytes,
        ]
        .concat(),
        Kind::Document => stamped_document(bytes, provenance),
    }
}

/// A pretty-printed JSON object with `"provenance": {...}` as its first key,
/// indented as serde_json indents (two spaces a level). The object's own
/// text is kept byte for byte: parsing and writing it again could change
/// the last digit of a number.
fn stamped_document(bytes: Vec<u8>, provenance: &Provenance) -> Vec<u8> {
    let Some(body) = bytes.strip_prefix(b"{\n") else {
        return bytes;
    };
    let nested = serde_json::to_string_pretty(provenance)
        .expect("provenance is plain JSON")
        .replace('\n', "\n  ");
    let separator: &[u8] = if body.starts_with(b"}") {
        b"\n"
    } else {
        b",\n"
    };
    [
        b"{\n  \"provenance\": ".as_slice(),
        nested.as_bytes(),
        separator,
        body,
    ]
    .concat()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_stamped_document_parses_with_provenance_first_and_the_rest_unchanged() {
        let provenance = Provenance::new(
            vec![crate::provenance::ScenarioFile::new("a.yaml", "abc")],
            serde_json::Map::new(),
        );
        let document = serde_json::json!({"b": 0.30000000000000004, "list": [1, 2]});
        let bytes = json_bytes("t.json", &document).unwrap();
        let stamped = stamped(Kind::Document, bytes.clone(), &provenance);
        let text = String::from_utf8(stamped).unwrap();
        assert!(text.starts_with("{\n  \"provenance\": {\n    \"runcast_version\""));
        assert!(text.ends_with(std::str::from_utf8(&bytes[2..]).unwrap()));
        let parsed: serde_json::Value = serde_json::from_str(&text).unwrap();
        assert_eq!(parsed["b"], document["b"]);
        assert_eq!(
            parsed["provenance"],
            serde_json::to_value(&provenance).unwrap()
        );
        let keys: Vec<&String> = parsed.as_object().unwrap().keys().collect();
        assert_eq!(keys, ["provenance", "b", "list"]);
        let empty = stamped_document(b"{}\n".to_vec(), &provenance);
        assert_eq!(
            empty, b"{}\n",
            "serde_json writes an empty object on one line"
        );
    }

    #[test]
    fn a_stamped_table_reads_back_with_comments_skipped() {
        let provenance = Provenance::new(Vec::new(), serde_json::Map::new());
        let bytes = csv_bytes("t.csv", ["a", "b"], [["1", "2"]]).unwrap();
        let stamped = stamped(Kind::Table, bytes, &provenance);
        let rows: Vec<csv::StringRecord> = ::csv::ReaderBuilder::new()
            .comment(Some(b'#'))
            .from_reader(stamped.as_slice())
            .records()
            .map(Result::unwrap)
            .collect();
        assert_eq!(rows.len(), 1);
        assert_eq!(&rows[0][1], "2");
    }

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
