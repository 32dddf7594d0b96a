//! A signal's or a background's `shape`, checked by its kind's own
//! constructor (tables read from a file included), with the field named.

use super::observable::Range;
use super::values::Checked;
use crate::scenario::{ScenarioError, ShapeSpec};
use crate::shapes::{Placement, Shape, ShapeError};

/// Checks one shape with its kind's constructor; `owner` is the dotted path
/// of the signal or background holding it. A wrong value is named by its path
/// inside `shape` (or by the file it was read from), a shape that cannot
/// float by `float_shape`.
pub(super) fn validate_shape(
    owner: &str,
    shape: &ShapeSpec,
    range: Range,
    floated: bool,
) -> Checked {
    let placement = Placement {
        range: range.edges(),
        floated,
    };
    match shape.build(placement) {
        Ok(_) => Ok(()),
        Err(ShapeError::Value { field, message }) => match &shape.file {
            Some(file) => Err(ScenarioError::invalid(
                format!("{owner}.shape.{}.file", shape.kind.key),
                format!("{file}: {message}"),
            )),
            None => Err(ScenarioError::invalid(
                format!("{owner}.shape.{field}"),
                message,
            )),
        },
        Err(ShapeError::CannotFloat { message }) => Err(ScenarioError::invalid(
            format!("{owner}.float_shape"),
            message,
        )),
    }
}

/// `shape` built on `range` with its parameters held at their values; None
/// where they make no density there, which [`validate_shape`] refuses.
pub(super) fn held_shape(shape: &ShapeSpec, range: [f64; 2]) -> Option<Box<dyn Shape>> {
    let fixed = Placement {
        range,
        floated: false,
    };
    shape.build(fixed).ok()
}

#[cfg(test)]
mod tests {
    use super::super::test_scenario::{accepted, rejected_field, rejection, with};

    #[test]
    fn polynomial_needs_coefficients() {
        let text = with("coefficients: [1.0, 0.01]", "coefficients: []");
        assert_eq!(
            rejected_field(&text),
            "backgrounds[1].shape.polynomial.coefficients"
        );
    }

    #[test]
    fn polynomial_negative_inside_the_range_is_rejected() {
        // 1 - 0.02 x crosses zero at x = 50, inside the range [0, 100].
        let text = with("coefficients: [1.0, 0.01]", "coefficients: [1.0, -0.02]");
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].shape.polynomial.coefficients");
        assert!(message.contains("must not be negative"), "{message}");
        assert!(message.contains("but is -1 at x = 100"), "{message}");
        // (x - 30)(x - 40) = 1200 - 70 x + x^2 is positive at both edges, negative
        // only between 30 and 40: caught by evaluating inside the range.
        let dip = with("coefficients: [1.0, 0.01]", "coefficients: [1200, -70, 1]");
        assert_eq!(
            rejected_field(&dip),
            "backgrounds[1].shape.polynomial.coefficients"
        );
    }

    #[test]
    fn polynomial_zero_everywhere_is_rejected() {
        let text = with("coefficients: [1.0, 0.01]", "coefficients: [0, 0]");
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].shape.polynomial.coefficients");
        assert!(message.contains("zero everywhere"), "{message}");
    }

    #[test]
    fn polynomial_touching_zero_is_accepted_unless_floated() {
        // (x - 50)^2 = 2500 - 100 x + x^2 vanishes at x = 50 and is positive
        // elsewhere: a valid density, but one without non-negative Bernstein
        // coefficients at any degree (Lorentz, Bernstein Polynomials, 1953,
        // ch. 1.1), so it cannot float.
        let touching = with("coefficients: [1.0, 0.01]", "coefficients: [2500, -100, 1]");
        accepted(&touching.replace("float_shape: true", "float_shape: false"));
        let (field, message) = rejection(&touching);
        assert_eq!(field, "backgrounds[1].float_shape");
        assert!(
            message.contains("touches or nearly touches zero"),
            "{message}"
        );
    }

    /// x^2 - 5e-4 x + 5.25e-8 is negative between its roots 1.5e-4 and
    /// 3.5e-4 (closed form), between the points of any coarse grid on [0, 1].
    #[test]
    fn polynomial_with_a_narrow_dip_is_rejected() {
        let text = with(
            "range: [0.0, 100.0], bin_width: 0.5",
            "range: [0.0, 1.0], bin_width: 0.0001",
        )
        .replace("mean: 50.0", "mean: 0.5")
        .replace("sigma: 1.5", "sigma: 0.01")
        .replace(
            "coefficients: [1.0, 0.01]",
            "coefficients: [5.25e-8, -5e-4, 1]",
        );
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].shape.polynomial.coefficients");
        assert!(message.contains("at x = 0.00025"), "{message}");
    }

    #[test]
    fn polynomial_degree_is_limited() {
        let terms = vec!["1"; 22].join(", ");
        let text = with(
            "coefficients: [1.0, 0.01]",
            &format!("coefficients: [{terms}]"),
        );
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].shape.polynomial.coefficients");
        assert!(message.contains("at most 21 coefficients"), "{message}");
    }
}
