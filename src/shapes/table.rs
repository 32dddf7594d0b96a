//! Tabulated density: a histogram, piecewise constant within each row.

use super::{ParameterSyntax, ParameterValue, Placement, Shape, ShapeError, ShapeKind};
use super::{FromRows, RowError, RowForm, normalise_masses};
use crate::message::show;

/// A density that is constant inside each row `[edges[r], edges[r + 1])` of a
/// table, with `values[r]` proportional to the density times the row's width
/// (the row's content, e.g. a histogram count), normalised on the range.
///
/// A bin's mass is exact for any bins, also when they do not line up with the
/// rows: the share of row r inside `[x0, x1)` is
/// `values[r] × overlap / (edges[r + 1] − edges[r])` (elementary), and the
/// fractions are these masses over their sum on the range. The values are
/// kept divided by the largest of them, so a table of any scale, subnormal
/// numbers or numbers near the largest `f64`, gives the fractions of the
/// same table at scale 1 (a sum of masses at most 1 per row never
/// overflows, and its reciprocal never does either). No parameters.
#[derive(Debug, Clone, PartialEq)]
pub struct Table {
    edges: Vec<f64>,
    values: Vec<f64>,
}

/// `{table: {edges: [...], values: [...]}}`, or `{table: {file: PATH}}` with
/// rows `low,high,value` (read by the scenario, converted by [`from_rows`]).
pub(super) const KIND: ShapeKind = ShapeKind {
    key: "table",
    parameters: &[ParameterSyntax::list("edges"), ParameterSyntax::list("values")],
    example: "{table: {edges: [...], values: [...]}}",
    explanation: &[
        "histogram: values[r] = content of [edges[r], edges[r+1]) at any",
        "scale, flat within each row; or {table: {file: FILE.csv}}: rows",
        "low,high,value below that header, FILE.csv beside the scenario",
    ],
    build,
    rows: Some(RowForm {
        columns: &["low", "high", "value"],
        values: from_rows,
    }),
};

fn build(values: &[ParameterValue], placement: Placement) -> super::Built {
    if placement.floated {
        return Err(ShapeError::CannotFloat {
            message: "a table has no parameters to float; remove float_shape or use a \
                      shape with parameters"
                .into(),
        });
    }
    let table = Table::new(values[0].list().to_vec(), values[1].list().to_vec())?;
    table.check_range(placement.range)?;
    Ok(Box::new(table))
}

/// The edges and values of consecutive rows `[low, high, value]`: each row
/// above zero width, starting where the one before ends (sorted, neither
/// overlapping nor leaving a gap), with a finite non-negative value.
pub fn from_rows(rows: &[Vec<f64>]) -> FromRows {
    let error = |row: usize, column: &'static str, message: String| RowError {
        row,
        column,
        message,
    };
    let mut edges = Vec::with_capacity(rows.len() + 1);
    let mut values = Vec::with_capacity(rows.len());
    for (index, row) in rows.iter().enumerate() {
        let [low, high, value] = [row[0], row[1], row[2]];
        for (column, number) in [("low", low), ("high", high), ("value", value)] {
            if !number.is_finite() {
                return Err(error(
                    index,
                    column,
                    format!("must be a finite number, got {}", show(number)),
                ));
            }
        }
        if let Some(&end) = edges.last() {
            if low < end {
                return Err(error(
                    index,
                    "low",
                    format!(
                        "rows must be sorted and must not overlap: this row starts at {}, \
                         before the row above ends at {}",
                        show(low),
                        show(end)
                    ),
                ));
            }
            if low > end {
                return Err(error(
                    index,
                    "low",
                    format!(
                        "rows must leave no gap: this row starts at {}, after the row above \
                         ends at {}",
                        show(low),
                        show(end)
                    ),
                ));
            }
        } else {
            edges.push(low);
        }
        if high <= low {
            return Err(error(
                index,
                "high",
                format!(
                    "must be above low ({}), got {}",
                    show(low),
                    show(high)
                ),
            ));
        }
        if value < 0.0 {
            return Err(error(
                index,
                "value",
                format!("must not be negative, got {}", show(value)),
            ));
        }
        edges.push(high);
        values.push(value);
    }
    Ok(vec![ParameterValue::List(edges), ParameterValue::List(values)])
}

impl Table {
    /// A table of `values.len()` rows between increasing finite `edges`, each
    /// value finite and non-negative, kept divided by the largest value; the
    /// error names the first wrong entry.
    pub fn new(edges: Vec<f64>, values: Vec<f64>) -> Result<Table, ShapeError> {
        let wrong = |field: String, message: String| ShapeError::Value { field, message };
        if edges.len() < 2 {
            return Err(wrong(
                "table.edges".into(),
                format!(
                    "a table needs at least two edges (one row), got {}",
                    edges.len()
                ),
            ));
        }
        for (index, &edge) in edges.iter().enumerate() {
            super::finite(&format!("table.edges[{index}]"), edge)?;
            if index > 0 && edge <= edges[index - 1] {
                return Err(wrong(
                    format!("table.edges[{index}]"),
                    format!(
                        "edges must increase, got {} after {}",
                        show(edge),
                        show(edges[index - 1])
                    ),
                ));
            }
        }
        if values.len() != edges.len() - 1 {
            return Err(wrong(
                "table.values".into(),
                format!(
                    "{} edges make {} rows, which need {} values, got {}",
                    edges.len(),
                    edges.len() - 1,
                    edges.len() - 1,
                    values.len()
                ),
            ));
        }
        for (index, &value) in values.iter().enumerate() {
            let field = format!("table.values[{index}]");
            super::finite(&field, value)?;
            if value < 0.0 {
                return Err(wrong(
                    field,
                    format!("must not be negative, got {}", show(value)),
                ));
            }
        }
        let largest = values.iter().copied().fold(0.0, f64::max);
        let values = if largest > 0.0 {
            values.iter().map(|value| value / largest).collect()
        } else {
            values
        };
        Ok(Table { edges, values })
    }

    /// The rows must cover the observable's `range`, and hold some content
    /// inside it: content that, beside the table's largest value, is not lost
    /// below the smallest `f64`.
    fn check_range(&self, range: [f64; 2]) -> Result<(), ShapeError> {
        let (first, last) = (self.edges[0], self.edges[self.edges.len() - 1]);
        if first > range[0] || last < range[1] {
            return Err(ShapeError::Value {
                field: "table.edges".into(),
                message: format!(
                    "the rows span [{}, {}] and must cover the observable's range [{}, {}]",
                    show(first),
                    show(last),
                    show(range[0]),
                    show(range[1])
                ),
            });
        }
        let mut mass = [0.0];
        self.fill_masses(&[range[0], range[1]], &mut mass);
        if mass[0] > 0.0 {
            return Ok(());
        }
        Err(ShapeError::Value {
            field: "table.values".into(),
            message: format!(
                "the table holds nothing inside the range [{}, {}]: every value there is 0, \
                 or too small beside the table's largest value to add up to more than 0",
                show(range[0]),
                show(range[1])
            ),
        })
    }

    /// The content of the rows inside each bin `[edges[i], edges[i + 1])`,
    /// each row spread evenly over its width, swept once over rows and bins.
    fn fill_masses(&self, bin_edges: &[f64], masses: &mut [f64]) {
        let rows = self.values.len();
        let mut row = self.edges.partition_point(|&edge| edge <= bin_edges[0]);
        row = row.saturating_sub(1);
        for (mass, bin) in masses.iter_mut().zip(bin_edges.windows(2)) {
            let (low, high) = (bin[0], bin[1]);
            *mass = 0.0;
            while row < rows {
                let (row_low, row_high) = (self.edges[row], self.edges[row + 1]);
                let overlap = high.min(row_high) - low.max(row_low);
                if overlap > 0.0 {
                    *mass += self.values[row] * (overlap / (row_high - row_low));
                }
                if row_high > high {
                    break;
                }
                row += 1;
            }
        }
    }
}

impl Shape for Table {
    fn parameter_names(&self) -> Vec<String> {
        Vec::new()
    }

    fn nominal_parameters(&self) -> Vec<f64> {
        Vec::new()
    }

    fn bin_fractions(&self, _params: &[f64], edges: &[f64], fractions: &mut [f64]) {
        debug_assert_eq!(edges.len(), fractions.len() + 1);
        self.fill_masses(edges, fractions);
        normalise_masses(fractions);
    }

    fn density(&self, _params: &[f64], low: f64, high: f64, x: f64) -> f64 {
        if !(low..=high).contains(&x) {
            return 0.0;
        }
        let mut total = [0.0];
        self.fill_masses(&[low, high], &mut total);
        let row = self
            .edges
            .partition_point(|&edge| edge <= x)
            .clamp(1, self.values.len())
            - 1;
        let width = self.edges[row + 1] - self.edges[row];
        self.values[row] / width / total[0]
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::shapes::assert_normalised;

    fn table(edges: &[f64], values: &[f64]) -> Table {
        Table::new(edges.to_vec(), values.to_vec()).unwrap()
    }

    // No parameters, so nothing lies outside the domain.
    shape_contract_tests! {
        shape: table(&[0.0, 1.0, 3.0, 8.0], &[2.0, 0.0, 5.0]),
        inside: [
            (&[], &[0.0, 1.0, 3.0, 8.0]),
            (&[], &[0.5, 2.0, 2.5, 7.0]),
        ],
        outside: [],
    }

    /// Rows twice as wide as the bins: each row's content splits in halves
    /// (a piecewise-constant density integrates exactly over any
    /// sub-interval, elementary). Rows [0, 2), [2, 4), [4, 6) with contents
    /// 1, 3, 4 (total 8) give bins of 1/16, 1/16, 3/16, 3/16, 4/16, 4/16.
    #[test]
    fn rows_twice_as_wide_as_the_bins_split_in_halves() {
        let shape = table(&[0.0, 2.0, 4.0, 6.0], &[1.0, 3.0, 4.0]);
        let edges: Vec<f64> = (0..=6).map(f64::from).collect();
        let mut fractions = [0.0; 6];
        shape.bin_fractions(&[], &edges, &mut fractions);
        let expected = [1.0, 1.0, 3.0, 3.0, 4.0, 4.0].map(|mass| mass / 16.0);
        for (fraction, expected) in fractions.iter().zip(expected) {
            assert!((fraction - expected).abs() < 1e-15, "{fractions:?}");
        }
    }

    /// Bins that straddle row edges and a range inside the table: rows
    /// [0, 2), [2, 5), [5, 10) with contents 2, 6, 5 have densities 1, 2, 1;
    /// on the range [1, 7] with bins [1, 3), [3, 4), [4, 7) the masses are
    /// 1 + 2, 2, 2 + 2 (total 9), by hand.
    #[test]
    fn bins_across_row_edges_get_exact_shares() {
        let shape = table(&[0.0, 2.0, 5.0, 10.0], &[2.0, 6.0, 5.0]);
        let mut fractions = [0.0; 3];
        shape.bin_fractions(&[], &[1.0, 3.0, 4.0, 7.0], &mut fractions);
        assert_normalised(&fractions);
        for (fraction, expected) in fractions.iter().zip([3.0 / 9.0, 2.0 / 9.0, 4.0 / 9.0]) {
            assert!((fraction - expected).abs() < 1e-15, "{fractions:?}");
        }
        // Density on [1, 7]: row density over the range's mass 9.
        assert!((shape.density(&[], 1.0, 7.0, 3.5) - 2.0 / 9.0).abs() < 1e-15);
        assert!((shape.density(&[], 1.0, 7.0, 6.0) - 1.0 / 9.0).abs() < 1e-15);
        assert_eq!(shape.density(&[], 1.0, 7.0, 8.0), 0.0);
    }

    /// Dividing by the largest value first: the fractions of a table of
    /// subnormal contents, or of contents near the largest `f64`, are those
    /// of the table at scale 1 to the last bit (each scale a power of two
    /// times the first, so the divisions are exact).
    #[test]
    fn the_scale_of_a_table_changes_no_fraction() {
        let edges = [0.0, 1.0, 2.0, 4.0];
        let bins = [0.0, 0.5, 1.5, 3.0, 4.0];
        let fractions = |values: &[f64]| {
            let mut fractions = [0.0; 4];
            table(&edges, values).bin_fractions(&[], &bins, &mut fractions);
            fractions
        };
        let one = fractions(&[1.0, 2.0, 4.0]);
        assert_normalised(&one);
        assert_eq!(fractions(&[1e-320, 2e-320, 4e-320]), one);
        assert_eq!(fractions(&[4e307, 8e307, 1.6e308]), one);
    }

    fn rejected(edges: &[f64], values: &[f64], range: [f64; 2], floated: bool) -> ShapeError {
        let values = [
            ParameterValue::List(edges.to_vec()),
            ParameterValue::List(values.to_vec()),
        ];
        match build(&values, Placement { range, floated }) {
            Err(error) => error,
            Ok(shape) => panic!("accepted {shape:?}"),
        }
    }

    fn field_of(error: ShapeError) -> String {
        match error {
            ShapeError::Value { field, .. } => field,
            ShapeError::CannotFloat { message } => panic!("cannot float: {message}"),
        }
    }

    #[test]
    fn wrong_tables_name_their_entry() {
        let range = [0.0, 2.0];
        let field = |edges: &[f64], values: &[f64]| field_of(rejected(edges, values, range, false));
        assert_eq!(field(&[0.0, 1.0, 2.0], &[1.0, -1.0]), "table.values[1]");
        assert_eq!(field(&[0.0, 1.0, 2.0], &[1.0, f64::NAN]), "table.values[1]");
        assert_eq!(field(&[0.0, 1.0, 1.0], &[1.0, 1.0]), "table.edges[2]");
        assert_eq!(field(&[0.0, f64::INFINITY], &[1.0]), "table.edges[1]");
        assert_eq!(field(&[0.0, 1.0, 2.0], &[1.0]), "table.values");
        assert_eq!(field(&[0.0], &[]), "table.edges");
        // Not covering the range, and empty inside it.
        assert_eq!(field(&[0.5, 1.0, 2.0], &[1.0, 1.0]), "table.edges");
        assert_eq!(field(&[0.0, 1.0, 1.5], &[1.0, 1.0]), "table.edges");
        assert_eq!(field(&[0.0, 2.0, 3.0], &[0.0, 5.0]), "table.values");
        // Content inside the range lost beside the largest value outside it.
        assert_eq!(field(&[0.0, 2.0, 3.0], &[1e-320, 1e300]), "table.values");
        let floated = rejected(&[0.0, 2.0], &[1.0], range, true);
        assert!(matches!(floated, ShapeError::CannotFloat { .. }), "{floated:?}");
    }

    #[test]
    fn rows_become_edges_and_values() {
        let rows = [vec![0.0, 1.0, 4.0], vec![1.0, 3.0, 0.0]];
        assert_eq!(
            from_rows(&rows).unwrap(),
            vec![
                ParameterValue::List(vec![0.0, 1.0, 3.0]),
                ParameterValue::List(vec![4.0, 0.0])
            ]
        );
    }

    #[test]
    fn wrong_rows_name_their_row_and_column() {
        let located = |rows: &[Vec<f64>]| {
            let error = from_rows(rows).unwrap_err();
            (error.row, error.column)
        };
        let first = vec![0.0, 1.0, 1.0];
        assert_eq!(located(&[first.clone(), vec![0.5, 2.0, 1.0]]), (1, "low"));
        assert_eq!(located(&[first.clone(), vec![1.5, 2.0, 1.0]]), (1, "low"));
        assert_eq!(located(&[first.clone(), vec![1.0, 1.0, 1.0]]), (1, "high"));
        assert_eq!(located(&[first.clone(), vec![1.0, 2.0, -1.0]]), (1, "value"));
        assert_eq!(located(&[vec![0.0, f64::NAN, 1.0]]), (0, "high"));
    }
}
