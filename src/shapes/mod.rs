//! Shapes: densities on the observable range, integrated exactly over each bin.
//!
//! Every shape is normalised on the fitted range `[edges[0], edges[last]]` and
//! its bin fractions come from a closed-form cumulative distribution, never from
//! sampling. One shape per file, all behind the [`Shape`] trait; each file also
//! holds its [`ShapeKind`]: how a scenario writes it, and the constructor that
//! checks its values. [`SHAPE_KINDS`] registers them, one line per file.
//!
//! This module imports nothing from the rest of the pipeline, so the scenario
//! reads and checks shapes with the same registry the model builds them from.

#[cfg(test)]
#[macro_use]
mod contract;

mod tails;

use crate::message::{not_finite, not_positive};
use std::fmt;

/// Declares each shape file and registers its `KIND` in [`SHAPE_KINDS`], in
/// the order shape kinds are listed to users.
macro_rules! register_shapes {
    ($($file:ident),* $(,)?) => {
        $(mod $file;)*

        /// Every shape a scenario can name.
        pub const SHAPE_KINDS: &[ShapeKind] = &[$($file::KIND),*];
    };
}

register_shapes! {
    gaussian,
    breit_wigner,
    exponential,
    polynomial,
    flat,
    table,
}

/// A shape as a scenario names it: the key of its one-key mapping, its
/// parameters, and the constructor that checks them.
pub struct ShapeKind {
    /// The key of the mapping, e.g. `gaussian` in `{gaussian: {mean: 67.0, sigma: 0.8}}`.
    pub key: &'static str,
    /// The parameters inside the mapping, each required, in the order of the
    /// values given to `build`.
    pub parameters: &'static [ParameterSyntax],
    /// How the scenario template shows the mapping, e.g. `{gaussian: {mean: M, sigma: S}}`.
    pub example: &'static str,
    /// What the template says about it, one entry per comment line.
    pub explanation: &'static [&'static str],
    /// The shape for these values (in the order of `parameters`), or which
    /// value is wrong and why.
    pub build: fn(&[ParameterValue], Placement) -> Built,
    /// For a shape that may also be read from a file of rows
    /// (`{key: {file: PATH}}`): its columns and how rows become its values.
    pub rows: Option<RowForm>,
}

/// How a shape's values are read from rows of numbers (a file the scenario
/// reads; the shapes read no files).
pub struct RowForm {
    /// The names of the columns, in order, as the file's header line gives them.
    pub columns: &'static [&'static str],
    /// The parameter values (in the order of `parameters`) of the rows, each
    /// with one number per column; or the first wrong row and column.
    pub values: fn(&[Vec<f64>]) -> FromRows,
}

/// A shape's parameter values read from rows, or the first wrong entry.
pub type FromRows = Result<Vec<ParameterValue>, RowError>;

/// A wrong entry in rows of numbers: its row (0-based, header not counted),
/// column, and what is wrong.
#[derive(Debug, Clone, PartialEq)]
pub struct RowError {
    pub row: usize,
    pub column: &'static str,
    pub message: String,
}

/// A shape built from a scenario's values, or why they make none.
pub type Built = Result<Box<dyn Shape>, ShapeError>;

impl fmt::Debug for ShapeKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "ShapeKind({})", self.key)
    }
}

/// Kinds are told apart by their key.
impl PartialEq for ShapeKind {
    fn eq(&self, other: &ShapeKind) -> bool {
        self.key == other.key
    }
}

impl ShapeKind {
    /// The registered shape written with `key`.
    pub fn find(key: &str) -> Option<&'static ShapeKind> {
        SHAPE_KINDS.iter().find(|kind| kind.key == key)
    }

    /// Builds the shape, first checking that `values` have the kinds of
    /// `parameters` (the scenario parser guarantees it).
    pub fn build(&self, values: &[ParameterValue], placement: Placement) -> Built {
        let fits = values.len() == self.parameters.len()
            && values
                .iter()
                .zip(self.parameters)
                .all(|(value, syntax)| value.is_list() == syntax.list);
        assert!(fits, "{values:?} do not match the parameters of {self:?}");
        (self.build)(values, placement)
    }
}

/// One parameter as written inside a shape's mapping.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ParameterSyntax {
    pub name: &'static str,
    /// A list of numbers rather than one number.
    pub list: bool,
}

impl ParameterSyntax {
    /// A parameter written as one number.
    pub const fn number(name: &'static str) -> ParameterSyntax {
        ParameterSyntax { name, list: false }
    }

    /// A parameter written as a list of numbers.
    pub const fn list(name: &'static str) -> ParameterSyntax {
        ParameterSyntax { name, list: true }
    }
}

/// The value of one parameter as read from a scenario.
#[derive(Debug, Clone, PartialEq)]
pub enum ParameterValue {
    Number(f64),
    List(Vec<f64>),
}

impl ParameterValue {
    fn is_list(&self) -> bool {
        matches!(self, ParameterValue::List(_))
    }

    /// The number of a parameter declared with [`ParameterSyntax::number`].
    pub fn number(&self) -> f64 {
        match self {
            ParameterValue::Number(value) => *value,
            ParameterValue::List(_) => unreachable!("checked by ShapeKind::build"),
        }
    }

    /// The numbers of a parameter declared with [`ParameterSyntax::list`].
    pub fn list(&self) -> &[f64] {
        match self {
            ParameterValue::List(values) => values,
            ParameterValue::Number(_) => unreachable!("checked by ShapeKind::build"),
        }
    }
}

/// Where a shape is used: the observable's range, and whether a fit floats
/// its parameters.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Placement {
    pub range: [f64; 2],
    pub floated: bool,
}

/// Why values written for a shape make no density, located for the user.
#[derive(Debug, Clone, PartialEq)]
pub enum ShapeError {
    /// A value is wrong; `field` is its dotted path inside the `shape` key,
    /// e.g. `gaussian.sigma` or `polynomial.coefficients[1]`.
    Value { field: String, message: String },
    /// The shape is a density but cannot float (a fault of `float_shape`).
    CannotFloat { message: String },
}

/// `value` if it is finite, else the error naming `field`.
fn finite(field: &str, value: f64) -> Result<f64, ShapeError> {
    checked(field, value, not_finite(value))
}

/// `value` if it is positive and finite, else the error naming `field`.
fn positive(field: &str, value: f64) -> Result<f64, ShapeError> {
    checked(field, value, not_positive(value))
}

fn checked(field: &str, value: f64, problem: Option<String>) -> Result<f64, ShapeError> {
    match problem {
        None => Ok(value),
        Some(message) => Err(ShapeError::Value {
            field: field.to_string(),
            message,
        }),
    }
}

/// A normalised density on a range, with parameters that may float in fits.
///
/// `edges` are the bin edges, strictly increasing, at least two of them; the
/// density is normalised on `[edges[0], edges[last]]`.
///
/// A fit may try parameters outside a shape's domain (a width that is not
/// positive, a polynomial that is negative over part of the range). Then every
/// fraction, and every gradient entry, is set to `f64::NAN`, so the fitter
/// rejects the step; no fraction is ever silently negative.
pub trait Shape: std::fmt::Debug + Send + Sync {
    /// Names of the parameters, in the order used by every `params` slice.
    fn parameter_names(&self) -> Vec<String>;

    /// The parameter values given in the scenario.
    fn nominal_parameters(&self) -> Vec<f64>;

    /// The lowest value of each parameter inside the domain, a bound a fit
    /// holds it at; minus infinity by default.
    fn parameter_lower_bounds(&self) -> Vec<f64> {
        vec![f64::NEG_INFINITY; self.nominal_parameters().len()]
    }

    /// Where the density peaks, for a shape with a peak of its own (at
    /// nominal parameters); None for a continuum. Used to centre windows and
    /// bin widths on the signal and to warn about a peak outside the range.
    fn peak(&self) -> Option<Peak> {
        None
    }

    /// For a peak a search may place anywhere in the range: which entries of
    /// `params` are its position and its width, so that a scan over positions
    /// moves it and differentiates it with [`Shape::bin_fractions_with_gradient`].
    /// None for a continuum.
    fn movable_peak(&self) -> Option<MovablePeak> {
        None
    }

    /// Whether the fractions depend only on the ratios of the parameters, so
    /// that multiplying all of them by one positive factor changes nothing.
    /// A fit then fixes that factor (see the likelihood's gauge term).
    fn scale_free(&self) -> bool {
        false
    }

    /// Fraction of the density (normalised on `[edges[0], edges[last]]`) inside
    /// each bin `[edges[i], edges[i + 1]]`, written to `fractions` (length
    /// `edges.len() - 1`). The fractions sum to one.
    fn bin_fractions(&self, params: &[f64], edges: &[f64], fractions: &mut [f64]);

    /// Bin fractions and their derivatives in each parameter:
    /// `gradient[k * bins + i]` = d fraction_i / d `params[k]`.
    ///
    /// The default uses central finite differences of [`Shape::bin_fractions`];
    /// shapes whose parameters commonly float override it analytically. It
    /// allocates nothing for up to `STACK_PARAMETERS` parameters: each row of
    /// `gradient` holds the upper fractions and `fractions` the lower ones
    /// until the difference is taken.
    fn bin_fractions_with_gradient(
        &self,
        params: &[f64],
        edges: &[f64],
        fractions: &mut [f64],
        gradient: &mut [f64],
    ) {
        let bins = fractions.len();
        with_copy(params, |shifted| {
            for k in 0..params.len() {
                let step = 1e-6 * params[k].abs().max(1e-3);
                let row = &mut gradient[k * bins..(k + 1) * bins];
                shifted[k] = params[k] + step;
                self.bin_fractions(shifted, edges, row);
                shifted[k] = params[k] - step;
                self.bin_fractions(shifted, edges, fractions);
                shifted[k] = params[k];
                for (derivative, lower) in row.iter_mut().zip(&*fractions) {
                    *derivative = (*derivative - lower) / (2.0 * step);
                }
            }
        });
        self.bin_fractions(params, edges, fractions);
    }

    /// Second derivatives of the bin fractions in the parameters,
    /// `curvatures[(k * n + l) * bins + i]` = d2 fraction_i / d `params[k]` d `params[l]`
    /// with n = `params.len()`, given the `fractions` of the same parameters.
    /// Returns false, writing nothing, when the shape does not provide them;
    /// a fit then approximates that block of its Hessian (Gauss-Newton).
    fn bin_fraction_curvatures(
        &self,
        _params: &[f64],
        _edges: &[f64],
        _fractions: &[f64],
        _curvatures: &mut [f64],
    ) -> bool {
        false
    }

    /// The normalised density at `x` on the range `[low, high]` (per unit of the
    /// observable), zero outside the range and NaN outside the shape's domain.
    fn density(&self, params: &[f64], low: f64, high: f64, x: f64) -> f64;
}

/// The maximum of a peaked density and its width.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Peak {
    /// Position of the maximum, in units of the observable.
    pub centre: f64,
    /// Gaussian sigma, or Breit-Wigner half width at half maximum.
    pub width: f64,
    /// The scenario key of the centre inside the shape's mapping, e.g.
    /// `"gaussian.mean"`, for messages that name the field.
    pub centre_key: &'static str,
}

/// The parameters that place and widen a movable peak, as indices into `params`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct MovablePeak {
    pub position: usize,
    pub width: usize,
}

/// Shapes with at most this many parameters are differentiated without allocating.
const STACK_PARAMETERS: usize = 8;

/// Runs `work` on a mutable copy of `params`, on the stack when it is short.
fn with_copy(params: &[f64], work: impl FnOnce(&mut [f64])) {
    if params.len() <= STACK_PARAMETERS {
        let mut copy = [0.0; STACK_PARAMETERS];
        copy[..params.len()].copy_from_slice(params);
        work(&mut copy[..params.len()]);
    } else {
        work(&mut params.to_vec());
    }
}

/// Divides bin masses by their sum, turning them into fractions, and returns the sum.
///
/// When a mass is negative or NaN, or the sum is not positive and finite, the
/// parameters lie outside the shape's domain: every entry becomes NaN and the
/// result is `None`.
fn normalise_masses(masses: &mut [f64]) -> Option<f64> {
    let (total, non_negative) = sum_and_sign(masses);
    let valid = non_negative && total > 0.0 && total.is_finite();
    if !valid {
        mark_invalid(masses);
        return None;
    }
    let scale = total.recip();
    for mass in masses.iter_mut() {
        *mass *= scale;
    }
    Some(total)
}

/// The sum of `values`, in four interleaved partial sums that the compiler
/// can keep in vector registers (it may not reorder a single sum), and
/// whether every value is non-negative (not NaN).
fn sum_and_sign(values: &[f64]) -> (f64, bool) {
    let mut sums = [0.0; 4];
    let mut non_negative = true;
    let mut chunks = values.chunks_exact(4);
    for chunk in &mut chunks {
        for (partial, &value) in sums.iter_mut().zip(chunk) {
            *partial += value;
            non_negative &= value >= 0.0;
        }
    }
    for &value in chunks.remainder() {
        sums[0] += value;
        non_negative &= value >= 0.0;
    }
    ((sums[0] + sums[2]) + (sums[1] + sums[3]), non_negative)
}

/// The fitted range `[edges[0], edges[last]]`.
fn range_of(edges: &[f64]) -> (f64, f64) {
    (edges[0], edges[edges.len() - 1])
}

/// Marks fractions or gradient entries as coming from parameters outside the domain.
fn mark_invalid(values: &mut [f64]) {
    values.fill(f64::NAN);
}

/// Asserts that fractions are non-negative and sum to one within rounding.
#[cfg(test)]
fn assert_normalised(fractions: &[f64]) {
    let sum: f64 = fractions.iter().sum();
    assert!((sum - 1.0).abs() < 1e-12, "fractions sum to {sum}");
    assert!(
        fractions.iter().all(|&fraction| fraction >= 0.0),
        "negative or NaN fraction in {fractions:?}"
    );
}

/// Central difference (f(p + step) - f(p - step)) / (2 step) of every bin
/// fraction in parameter `k`, an independent check of analytic gradients.
#[cfg(test)]
fn central_difference(
    shape: &dyn Shape,
    params: &[f64],
    edges: &[f64],
    k: usize,
    step: f64,
) -> Vec<f64> {
    let bins = edges.len() - 1;
    let fractions_at = |value: f64| {
        let mut shifted = params.to_vec();
        shifted[k] = value;
        let mut fractions = vec![0.0; bins];
        shape.bin_fractions(&shifted, edges, &mut fractions);
        fractions
    };
    let upper = fractions_at(params[k] + step);
    let lower = fractions_at(params[k] - step);
    upper
        .iter()
        .zip(&lower)
        .map(|(up, down)| (up - down) / (2.0 * step))
        .collect()
}

#[cfg(test)]
mod registry_tests {
    use super::*;

    /// The peaks a scan can move name their position and width parameters
    /// (by definition of each density); continua have none.
    #[test]
    fn movable_peaks_are_the_peaked_shapes() {
        let placement = Placement {
            range: [1.0, 3.0],
            floated: false,
        };
        for kind in SHAPE_KINDS {
            let shape = kind.build(&values_of(kind, 1.0), placement).unwrap();
            let names = shape.parameter_names();
            match shape.movable_peak() {
                Some(peak) => {
                    assert_eq!(names[peak.position], "mean", "{}", kind.key);
                    assert!(["sigma", "width"].contains(&names[peak.width].as_str()));
                    assert!(shape.peak().is_some());
                }
                None => assert!(shape.peak().is_none(), "{}", kind.key),
            }
        }
    }

    /// Values for every parameter of `kind`: `number`, the first list
    /// `[number, number + 2]` and later lists `[number]` (a table's two edges
    /// and its one value; a polynomial's two coefficients).
    fn values_of(kind: &ShapeKind, number: f64) -> Vec<ParameterValue> {
        let mut lists = 0;
        kind.parameters
            .iter()
            .map(|p| match p.list {
                true => {
                    lists += 1;
                    match lists {
                        1 => ParameterValue::List(vec![number, number + 2.0]),
                        _ => ParameterValue::List(vec![number]),
                    }
                }
                false => ParameterValue::Number(number),
            })
            .collect()
    }

    #[test]
    fn keys_are_distinct_and_found() {
        for (index, kind) in SHAPE_KINDS.iter().enumerate() {
            assert_eq!(ShapeKind::find(kind.key), Some(kind));
            assert!(SHAPE_KINDS[..index].iter().all(|k| k.key != kind.key));
            assert!(kind.example.starts_with(&format!("{{{}: ", kind.key)));
            assert!(!kind.explanation.is_empty());
        }
        assert_eq!(ShapeKind::find("gausian"), None);
    }

    /// A NaN in any value is refused, naming the first parameter inside the
    /// shape's key; a valid value gives a shape with one nominal value per
    /// parameter name.
    #[test]
    fn every_kind_checks_its_values() {
        let placement = Placement {
            range: [1.0, 3.0],
            floated: false,
        };
        for kind in SHAPE_KINDS {
            let shape = kind
                .build(&values_of(kind, 1.0), placement)
                .unwrap_or_else(|error| panic!("{}: {error:?}", kind.key));
            assert_eq!(
                shape.parameter_names().len(),
                shape.nominal_parameters().len()
            );
            let Some(first) = kind.parameters.first() else {
                continue;
            };
            match kind.build(&values_of(kind, f64::NAN), placement) {
                Err(ShapeError::Value { field, message }) => {
                    assert!(
                        field.starts_with(&format!("{}.{}", kind.key, first.name)),
                        "{field}"
                    );
                    assert!(message.ends_with("got NaN"), "{message}");
                }
                other => panic!("{}: {other:?}", kind.key),
            }
        }
    }
}
