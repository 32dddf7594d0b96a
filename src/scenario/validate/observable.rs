//! `observable`: a name, a unit, a finite increasing range and a bin width
//! that divides it into at most [`MAX_BINS`] bins.

use super::values::{Checked, require_plain_text, require_positive, require_text};
use crate::message::{show, show_fraction, show_rounded};
use crate::scenario::limits::MAX_BINS;
use crate::scenario::{Observable, ScenarioError};

/// Relative tolerance on `(high - low) / bin_width` being a whole number,
/// allowing for decimal bin widths such as 0.1 that binary floating point cannot hold.
const BIN_COUNT_TOLERANCE: f64 = 1e-9;

/// The fitted range `[low, high]` of the observable, once checked.
#[derive(Debug, Clone, Copy)]
pub(super) struct Range {
    pub low: f64,
    pub high: f64,
}

impl Range {
    /// `[low, high]`.
    pub fn edges(self) -> [f64; 2] {
        [self.low, self.high]
    }
}

pub(super) fn validate_observable(observable: &Observable) -> Checked<Range> {
    require_text("observable.name", &observable.name)?;
    require_plain_text("observable.unit", &observable.unit)?;
    let [low, high] = observable.range;
    if !low.is_finite() || !high.is_finite() {
        return Err(ScenarioError::invalid(
            "observable.range",
            format!(
                "must be two finite numbers [low, high], got [{}, {}]",
                show(low),
                show(high)
            ),
        ));
    }
    if low >= high {
        return Err(ScenarioError::invalid(
            "observable.range",
            format!(
                "the low edge must be below the high edge, got [{}, {}]",
                show(low),
                show(high)
            ),
        ));
    }
    let range = Range { low, high };
    validate_bin_width(observable.bin_width, range)?;
    Ok(range)
}

/// The bins must tile the range exactly: `(high - low) / bin_width` a whole number.
fn validate_bin_width(bin_width: f64, range: Range) -> Checked {
    let field = "observable.bin_width";
    require_positive(field, bin_width)?;
    let span = range.high - range.low;
    let bins = span / bin_width;
    if bins > MAX_BINS as f64 {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "gives {} bins on a range of width {}, more than the {MAX_BINS} allowed; got {}",
                show_rounded(bins),
                show_rounded(span),
                show(bin_width)
            ),
        ));
    }
    if bins.round() < 1.0 || (bins - bins.round()).abs() > BIN_COUNT_TOLERANCE * bins {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "must divide the range [{}, {}] (width {}) into a whole number of bins, got {} ({} bins)",
                show(range.low),
                show(range.high),
                show_rounded(span),
                show(bin_width),
                show_fraction(bins)
            ),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::super::test_scenario::{accepted, rejected_field, rejection, with};

    #[test]
    fn range_must_increase() {
        for range in ["[100.0, 0.0]", "[5.0, 5.0]"] {
            let text = with("[0.0, 100.0]", range);
            assert_eq!(rejected_field(&text), "observable.range", "{range}");
        }
    }

    #[test]
    fn bin_width_must_be_positive_and_divide_the_range() {
        for width in ["0", "-0.5", "0.3", "150", "1e-6"] {
            let text = with("bin_width: 0.5", &format!("bin_width: {width}"));
            assert_eq!(rejected_field(&text), "observable.bin_width", "{width}");
        }
        let (_, message) = rejection(&with("bin_width: 0.5", "bin_width: 0.3"));
        assert!(
            message.contains("whole number of bins, got 0.3"),
            "{message}"
        );
    }

    #[test]
    fn decimal_bin_widths_that_divide_the_range_are_accepted() {
        // 0.6 / 0.2 is 2.9999999999999996 in binary floating point.
        let text = with(
            "range: [0.0, 100.0], bin_width: 0.5",
            "range: [0.1, 0.7], bin_width: 0.2",
        )
        .replace("mean: 50.0", "mean: 0.4")
        .replace("sigma: 1.5", "sigma: 0.05");
        let text = text.replace("coefficients: [1.0, 0.01]", "coefficients: [1.0]");
        accepted(&text);
        // One bin: a counting window, whose backgrounds cannot be free.
        accepted(&with("bin_width: 0.5", "bin_width: 100").replacen(
            "norm_uncertainty: free",
            "norm_uncertainty: 0.2",
            1,
        ));
    }
}
