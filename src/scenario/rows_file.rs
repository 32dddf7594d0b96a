//! Shapes read from files of rows (`shape: {table: {file: continuum.csv}}`):
//! the file found beside the scenario, read up to a bounded size as CSV with
//! a header line naming the kind's columns, and turned into the shape's
//! values by its kind ([`RowForm`]). Errors name the file, row and column,
//! and show of the file at most the one cell at fault, escaped and cut
//! short ([`show_text`]): a scenario may name any file, `/etc/passwd` too.
//! A merge of shards finds the files among the contents the shards carry
//! ([`TableSource::Carried`]) instead of on disk.

use super::limits::{MAX_ROWS_FILE_BYTES, MAX_TABLE_ROWS};
use super::{ScenarioError, ShapeSpec};
use crate::input_file::open_regular;
use crate::message::show_text;
use crate::shapes::{RowError, RowForm};
use std::io::Read;
use std::path::Path;

/// One file of rows read for a scenario: its name as the scenario writes it
/// and its text, which shards carry and provenance hashes.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct TableFile {
    pub name: String,
    pub text: String,
}

/// Where the files of rows a scenario names are found.
#[derive(Debug, Clone, Copy)]
pub(super) enum TableSource<'a> {
    /// A scenario given as text alone: no file can be found.
    Nowhere,
    /// The scenario file's folder.
    Directory(&'a Path),
    /// The files a shard carries, by name.
    Carried(&'a [TableFile]),
}

impl TableSource<'_> {
    /// The text of the file `written`, or why it cannot be had.
    fn text(&self, written: &str) -> Result<String, String> {
        match self {
            TableSource::Nowhere => Err(format!(
                "`{written}` is found relative to the scenario file, but this scenario was \
                 given as text alone; load it from its file"
            )),
            TableSource::Directory(directory) => {
                let path = directory.join(written);
                read_bounded(&path).map_err(|message| format!("{}: {message}", path.display()))
            }
            TableSource::Carried(files) => files
                .iter()
                .find(|file| file.name == written)
                .map(|file| file.text.clone())
                .ok_or_else(|| format!("`{written}` is not among the files the shards carry")),
        }
    }
}

/// Fills the values of `shape` from its `file`, found through `source`;
/// `field` is the dotted path of the `file` key, e.g.
/// `backgrounds[0].shape.table.file`. Returns the file read, if any.
pub(super) fn resolve(
    shape: &mut ShapeSpec,
    source: TableSource,
    field: &str,
) -> Result<Option<TableFile>, ScenarioError> {
    let (Some(written), Some(form)) = (shape.file.as_deref(), shape.kind.rows.as_ref()) else {
        return Ok(None);
    };
    let text = source
        .text(written)
        .map_err(|message| ScenarioError::invalid(field, message))?;
    let rows = parse_rows(&text, form)
        .map_err(|located| ScenarioError::invalid(field, format!("{written}, {located}")))?;
    let values = (form.values)(&rows).map_err(|error| {
        ScenarioError::invalid(field, format!("{written}, {}", located(&error)))
    })?;
    shape.values = values;
    Ok(Some(TableFile {
        name: written.to_string(),
        text,
    }))
}

/// "row 3 (line 4), column `high`: ..." for a row counted from 1 below the header.
fn located(error: &RowError) -> String {
    format!(
        "row {} (line {}), column `{}`: {}",
        error.row + 1,
        error.row + 2,
        error.column,
        error.message
    )
}

/// The text of `path`, refused above [`MAX_ROWS_FILE_BYTES`] (no more is read).
fn read_bounded(path: &Path) -> Result<String, String> {
    let mut text = String::new();
    open_regular(path)
        .and_then(|file| file.take(MAX_ROWS_FILE_BYTES + 1).read_to_string(&mut text))
        .map_err(|error| format!("cannot read the file: {error}"))?;
    if text.len() as u64 > MAX_ROWS_FILE_BYTES {
        return Err(format!(
            "the file is larger than the {MAX_ROWS_FILE_BYTES} bytes allowed"
        ));
    }
    Ok(text)
}

/// The rows of CSV `text`: a header naming exactly `form.columns` in order,
/// then at most [`MAX_TABLE_ROWS`] rows of one number per column.
fn parse_rows(text: &str, form: &RowForm) -> Result<Vec<Vec<f64>>, String> {
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(text.as_bytes());
    let expected = form.columns.join(",");
    let header = reader
        .headers()
        .map_err(|error| format!("line 1: {error}"))?;
    if header.len() != form.columns.len() {
        return Err(format!(
            "line 1: the header must be `{expected}`, got {} column{}",
            header.len(),
            if header.len() == 1 { "" } else { "s" }
        ));
    }
    if let Some((index, (cell, column))) = header
        .iter()
        .zip(form.columns)
        .enumerate()
        .find(|(_, (cell, column))| cell != *column)
    {
        return Err(format!(
            "line 1, column {}: the header must be `{expected}`, got `{}` for `{column}`",
            index + 1,
            show_text(cell)
        ));
    }
    let mut rows = Vec::new();
    for (index, record) in reader.records().enumerate() {
        let position = format!("row {} (line {})", index + 1, index + 2);
        if index == MAX_TABLE_ROWS {
            return Err(format!(
                "{position}: a table has at most {MAX_TABLE_ROWS} rows"
            ));
        }
        let record = record.map_err(|error| format!("{position}: {error}"))?;
        let row = form
            .columns
            .iter()
            .zip(record.iter())
            .map(|(column, cell)| {
                cell.parse::<f64>().map_err(|_| {
                    format!(
                        "{position}, column `{column}`: expected a number, got `{}`",
                        show_text(cell)
                    )
                })
            })
            .collect::<Result<Vec<f64>, String>>()?;
        rows.push(row);
    }
    if rows.is_empty() {
        return Err(format!("no rows below the header `{expected}`"));
    }
    Ok(rows)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::ShapeKind;

    fn form() -> &'static RowForm {
        ShapeKind::find("table").unwrap().rows.as_ref().unwrap()
    }

    #[test]
    fn rows_are_read_below_their_header() {
        let rows = parse_rows("low,high,value\n0,1,2.5\n 1 , 3 , 0\n", form()).unwrap();
        assert_eq!(rows, vec![vec![0.0, 1.0, 2.5], vec![1.0, 3.0, 0.0]]);
    }

    #[test]
    fn wrong_files_name_the_line_and_column() {
        let error = |text: &str| parse_rows(text, form()).unwrap_err();
        assert_eq!(
            error("lo,high,value\n0,1,2\n"),
            "line 1, column 1: the header must be `low,high,value`, got `lo` for `low`"
        );
        assert_eq!(
            error("root:x:0:0:root:/root:/bin/bash\n"),
            "line 1: the header must be `low,high,value`, got 1 column"
        );
        let word = error("low,high,value\n0,1,2\n1,2,many\n");
        assert!(
            word.starts_with("row 2 (line 3), column `value`: expected a number, got `many`"),
            "{word}"
        );
        let short = error("low,high,value\n0,1\n");
        assert!(short.starts_with("row 1 (line 2): "), "{short}");
        assert!(error("low,high,value\n").starts_with("no rows"));
    }
}
