//! The data taken so far: one file per channel, read into counts on the
//! channel's bins.
//!
//! Two forms, told apart by their first line that is neither blank nor a
//! `#` comment:
//! - binned counts, a CSV with the header `low,high,count` and one row per
//!   bin of the channel, in order, with the channel's edges and integer
//!   counts of at least 0;
//! - event values, one number per line (an optional header line that is not
//!   a number, e.g. `mass`), binned here on the channel's bins: bin j holds
//!   the values in [edge_j, edge_j+1), the range's upper end refused.
//!
//! Every mismatch is an error naming the file, the line, the column and the
//! value, and what was expected; the file must be a regular file
//! ([`open_regular`]) of at most [`MAX_DATA_FILE_BYTES`].

use crate::input_file::open_regular;
use crate::message::{show, show_text};
use crate::model::Channel;
use crate::provenance::FileHash;
use crate::scenario::limits::MAX_DATA_FILE_BYTES;
use std::fmt;
use std::io::Read;
use std::path::{Path, PathBuf};

/// The header of a file of binned counts.
pub const BINNED_HEADER: [&str; 3] = ["low", "high", "count"];

/// Edges agree with the channel's when they differ by at most this fraction
/// of the bin's width: the rounding of a decimal written with 12 digits.
const EDGE_TOLERANCE: f64 = 1e-9;

/// The counts of one channel read from one file.
#[derive(Debug, Clone, PartialEq)]
pub struct ChannelData {
    pub channel: String,
    /// The file's name as given and the SHA-256 of its bytes.
    pub file: FileHash,
    pub form: DataForm,
    /// One count per bin of the channel.
    pub counts: Vec<f64>,
}

/// How a data file was written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DataForm {
    /// Rows `low,high,count`.
    Binned,
    /// One event value per line.
    Events,
}

impl DataForm {
    pub fn name(self) -> &'static str {
        match self {
            DataForm::Binned => "binned counts",
            DataForm::Events => "event values",
        }
    }
}

/// A data file that cannot be used, with where and why.
#[derive(Debug, Clone, PartialEq)]
pub struct DataError {
    pub path: PathBuf,
    /// Line number (from 1) and column name, where the fault is in one cell.
    pub place: Option<(usize, &'static str)>,
    pub message: String,
}

impl fmt::Display for DataError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "data file {}", self.path.display())?;
        if let Some((line, column)) = self.place {
            write!(f, ", line {line}, column {column}")?;
        }
        write!(f, ": {}", self.message)
    }
}

impl std::error::Error for DataError {}

/// Reads `path` as the data of `channel`.
pub fn read_channel_data(path: &Path, channel: &Channel) -> Result<ChannelData, DataError> {
    let error = |place, message: String| DataError {
        path: path.to_path_buf(),
        place,
        message,
    };
    let text = read_text(path).map_err(|message| error(None, message))?;
    let name = path.file_name().map_or_else(
        || path.display().to_string(),
        |name| name.to_string_lossy().into_owned(),
    );
    let lines = data_lines(&text);
    if lines.is_empty() {
        return Err(error(
            None,
            "no data: expected a header low,high,count and one row per bin, or one event value per line".into(),
        ));
    }
    let (form, counts) = counts_of(&lines, &channel.edges);
    let counts = counts.map_err(|(place, message)| error(place, message))?;
    Ok(ChannelData {
        channel: channel.name.clone(),
        file: FileHash::new(&name, &text),
        form,
        counts,
    })
}

/// The lines that hold data, numbered from 1: trimmed, without blank lines
/// and `#` comments.
fn data_lines(text: &str) -> Vec<(usize, &str)> {
    text.lines()
        .enumerate()
        .map(|(index, line)| (index + 1, line.trim()))
        .filter(|(_, line)| !line.is_empty() && !line.starts_with('#'))
        .collect()
}

/// The counts in each bin of `edges` of the data `lines` (at least one):
/// rows low,high,count when the first line holds a comma, else one event
/// value per line.
fn counts_of(lines: &[(usize, &str)], edges: &[f64]) -> (DataForm, Result<Vec<f64>, Located>) {
    if lines[0].1.contains(',') {
        (DataForm::Binned, binned(lines, edges))
    } else {
        (DataForm::Events, events(lines, edges))
    }
}

/// The file's text: a regular file of at most [`MAX_DATA_FILE_BYTES`], UTF-8.
fn read_text(path: &Path) -> Result<String, String> {
    let file = open_regular(path).map_err(|error| error.to_string())?;
    let too_large = || format!("larger than the {MAX_DATA_FILE_BYTES} bytes a data file may have");
    if file.metadata().map_err(|error| error.to_string())?.len() > MAX_DATA_FILE_BYTES {
        return Err(too_large());
    }
    let mut bytes = Vec::new();
    file.take(MAX_DATA_FILE_BYTES + 1)
        .read_to_end(&mut bytes)
        .map_err(|error| error.to_string())?;
    if bytes.len() as u64 > MAX_DATA_FILE_BYTES {
        return Err(too_large());
    }
    String::from_utf8(bytes).map_err(|_| "not UTF-8 text".to_string())
}

type Located = (Option<(usize, &'static str)>, String);

/// Rows `low,high,count` after the header, one per bin, in order.
fn binned(lines: &[(usize, &str)], edges: &[f64]) -> Result<Vec<f64>, Located> {
    let (header_line, header) = lines[0];
    let names: Vec<&str> = header.split(',').map(str::trim).collect();
    if names != BINNED_HEADER {
        return Err((
            Some((header_line, "header")),
            format!(
                "the header is \"{}\"; expected low,high,count",
                show_text(header)
            ),
        ));
    }
    let bins = edges.len() - 1;
    let rows = &lines[1..];
    if rows.len() != bins {
        return Err((
            None,
            format!(
                "{} rows of counts; expected one per bin of the channel, {bins} (edges {} to {})",
                rows.len(),
                show(edges[0]),
                show(edges[bins])
            ),
        ));
    }
    let mut counts = Vec::with_capacity(bins);
    for (bin, &(line, row)) in rows.iter().enumerate() {
        let cells: Vec<&str> = row.split(',').map(str::trim).collect();
        if cells.len() != 3 {
            return Err((
                Some((line, "row")),
                format!("{} cells; expected three, low,high,count", cells.len()),
            ));
        }
        let number = |index: usize| -> Result<f64, Located> {
            let column = BINNED_HEADER[index];
            cells[index]
                .parse::<f64>()
                .ok()
                .filter(|value| value.is_finite())
                .ok_or_else(|| {
                    (
                        Some((line, column)),
                        format!("\"{}\" is not a finite number", show_text(cells[index])),
                    )
                })
        };
        let width = edges[bin + 1] - edges[bin];
        for (index, edge) in [(0, edges[bin]), (1, edges[bin + 1])] {
            let value = number(index)?;
            if (value - edge).abs() > EDGE_TOLERANCE * width {
                return Err((
                    Some((line, BINNED_HEADER[index])),
                    format!(
                        "{} for bin {} of the channel; expected its edge {}",
                        show_text(cells[index]),
                        bin + 1,
                        show(edge)
                    ),
                ));
            }
        }
        let count = number(2)?;
        if count < 0.0 || count.fract() != 0.0 || count > 9_007_199_254_740_992.0 {
            return Err((
                Some((line, "count")),
                format!(
                    "{}; expected a whole number of events, 0 or more (at most 2^53)",
                    show_text(cells[2])
                ),
            ));
        }
        counts.push(count);
    }
    Ok(counts)
}

/// Event values, one per line, counted on the channel's bins: bin j holds
/// [edge_j, edge_j+1). A first line that is not a number is a header.
fn events(lines: &[(usize, &str)], edges: &[f64]) -> Result<Vec<f64>, Located> {
    let bins = edges.len() - 1;
    let (low, high) = (edges[0], edges[bins]);
    let mut counts = vec![0.0; bins];
    let values = match lines[0].1.parse::<f64>() {
        Ok(_) => lines,
        Err(_) => &lines[1..],
    };
    for &(line, text) in values {
        let value = text
            .parse::<f64>()
            .ok()
            .filter(|value| value.is_finite())
            .ok_or_else(|| {
                (
                    Some((line, "value")),
                    format!(
                        "\"{}\" is not a finite number; expected one event value per line",
                        show_text(text)
                    ),
                )
            })?;
        if !(low..high).contains(&value) {
            return Err((
                Some((line, "value")),
                format!(
                    "{} is outside the channel's range; expected a value from {} up to (not including) {}",
                    show_text(text),
                    show(low),
                    show(high)
                ),
            ));
        }
        let bin = edges.partition_point(|&edge| edge <= value) - 1;
        counts[bin.min(bins - 1)] += 1.0;
    }
    Ok(counts)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn located(text: &str, edges: &[f64]) -> Result<Vec<f64>, Located> {
        counts_of(&data_lines(text), edges).1
    }

    #[test]
    fn binned_counts_and_event_values_give_the_same_counts() {
        let edges = [0.0, 0.5, 1.0];
        let binned = located("# two bins\nlow,high,count\n0,0.5,2\n0.5,1,1\n", &edges);
        let events = located("mass\n0.1\n0.5\n0.49\n", &edges);
        assert_eq!(binned, Ok(vec![2.0, 1.0]));
        assert_eq!(events, Ok(vec![2.0, 1.0]));
    }

    #[test]
    fn faults_are_located_by_line_and_column() {
        let edges = [0.0, 0.5, 1.0];
        let place = |text: &str| located(text, &edges).unwrap_err().0;
        assert_eq!(
            place("low,high,count\n0,0.5,2\n0.5,1,1.5\n"),
            Some((3, "count"))
        );
        assert_eq!(
            place("low,high,count\n0,0.5,-1\n0.5,1,1\n"),
            Some((2, "count"))
        );
        assert_eq!(
            place("low,high,count\n0,0.4,2\n0.5,1,1\n"),
            Some((2, "high"))
        );
        assert_eq!(place("0.2\n\n1.0\n"), Some((3, "value")));
        assert_eq!(place("0.2\nabc\n"), Some((2, "value")));
    }
}
