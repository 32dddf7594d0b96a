//! A channel's `backgrounds`: at least one, each named once, with a
//! positive rate, a valid shape, and a normalisation the fit can determine.

use super::observable::Range;
use super::shape::validate_shape;
use super::values::{Checked, require_own_name, require_positive, require_relative_uncertainty};
use crate::scenario::{Background, Channel, NormUncertainty, ScenarioError, ShapeSpec};
use crate::shapes::Placement;
use crate::warning::Warning;

pub(super) fn validate_backgrounds(backgrounds: &[Background], range: Range) -> Checked {
    if backgrounds.is_empty() {
        return Err(ScenarioError::invalid(
            "backgrounds",
            "at least one background is needed, got an empty list",
        ));
    }
    let names: Vec<&str> = backgrounds.iter().map(|b| b.name.as_str()).collect();
    for (index, background) in backgrounds.iter().enumerate() {
        let field = |key: &str| format!("backgrounds[{index}].{key}");
        require_own_name("backgrounds", "background", &names, index)?;
        require_positive(&field("events_per_day"), background.events_per_day)?;
        validate_shape(
            &format!("backgrounds[{index}]"),
            &background.shape,
            range,
            background.float_shape,
        )?;
        if let Some(NormUncertainty::Relative(relative)) = background.norm_uncertainty {
            require_relative_uncertainty(&field("norm_uncertainty"), relative)?;
        }
        if let Some(control) = background.control {
            if background.norm_uncertainty.is_some() {
                return Err(ScenarioError::invalid(
                    field("control"),
                    "a control region measures the normalisation itself; remove norm_uncertainty or control",
                ));
            }
            require_positive(&field("control.ratio"), control.ratio)?;
        }
    }
    refuse_indistinguishable_backgrounds(backgrounds)
}

/// Two backgrounds with free normalisations and the same shape: only the sum
/// of their yields enters the likelihood, so the fit cannot tell them apart
/// (a flat direction of -ln L, no unique minimum).
fn refuse_indistinguishable_backgrounds(backgrounds: &[Background]) -> Checked {
    let free = |background: &Background| {
        background.control.is_none() && background.norm_uncertainty == Some(NormUncertainty::Free)
    };
    for (index, background) in backgrounds.iter().enumerate() {
        let twin = backgrounds[..index].iter().position(|earlier| {
            free(earlier) && free(background) && earlier.shape == background.shape
        });
        if let Some(first) = twin {
            return Err(ScenarioError::invalid(
                format!("backgrounds[{index}].norm_uncertainty"),
                format!(
                    "backgrounds[{first}] and backgrounds[{index}] have the same shape and both normalisations free, so no fit can tell them apart; merge them into one background or constrain one normalisation"
                ),
            ));
        }
    }
    Ok(())
}

/// A single counting window (one bin) has one count: a background whose
/// normalisation is free can take any excess over the rest, so the signal
/// strength is not determined and there is no sensitivity at any exposure
/// (its profile likelihood is flat in mu; common practice).
pub(super) fn refuse_free_background_in_one_bin(channel: &Channel) -> Checked {
    let [low, high] = channel.observable.range;
    if ((high - low) / channel.observable.bin_width).round() != 1.0 {
        return Ok(());
    }
    let free = channel
        .backgrounds
        .iter()
        .position(|b| b.norm_uncertainty == Some(NormUncertainty::Free));
    match free {
        Some(index) => Err(ScenarioError::invalid(
            format!("backgrounds[{index}].norm_uncertainty"),
            "a single counting window (one bin) whose background is free has no sensitivity: the fit takes any excess as background; give a relative uncertainty or a control region, or more bins, got free",
        )),
        None => Ok(()),
    }
}

/// `float_shape: true` on a shape with no parameters (flat, or a polynomial
/// of one term, whose only coefficient cancels in the normalisation).
pub(super) fn flat_shapes_floated(
    backgrounds: &[Background],
    range: [f64; 2],
) -> impl Iterator<Item = Warning> + '_ {
    let floated = Placement {
        range,
        floated: true,
    };
    let has_no_parameters = move |shape: &ShapeSpec| {
        shape
            .build(floated)
            .is_ok_and(|shape| shape.parameter_names().is_empty())
    };
    backgrounds
        .iter()
        .enumerate()
        .filter(move |(_, background)| {
            background.float_shape && has_no_parameters(&background.shape)
        })
        .map(|(background, _)| Warning::NothingToFloat { background })
}

#[cfg(test)]
mod tests {
    use super::super::test_scenario::{BASE, accepted, rejected_field, rejection, with};
    use crate::scenario::{Scenario, ScenarioError};
    use crate::warning::Warning;

    #[test]
    fn backgrounds_must_exist_with_distinct_names() {
        let start = BASE.find("backgrounds:").unwrap();
        let end = BASE.find("schedule:").unwrap();
        let none = format!("{}backgrounds: []\n{}", &BASE[..start], &BASE[end..]);
        assert_eq!(rejected_field(&none), "backgrounds");
        let blank = with("name: sloped", "name: \"  \"");
        assert_eq!(rejected_field(&blank), "backgrounds[1].name");
        let twin = with("name: sloped", "name: continuum");
        let (field, message) = rejection(&twin);
        assert_eq!(field, "backgrounds[1].name");
        assert!(message.contains("backgrounds[0].name"), "{message}");
    }

    #[test]
    fn two_free_backgrounds_with_one_shape_are_refused() {
        let text = with(
            "shape: {exponential: {slope: -0.02}}\n    norm_uncertainty: 0.05",
            "shape: {polynomial: {coefficients: [1.0, 0.01]}}\n    norm_uncertainty: free",
        );
        let (field, message) = rejection(&text);
        assert_eq!(field, "backgrounds[1].norm_uncertainty");
        assert!(
            message.contains("backgrounds[0] and backgrounds[1]"),
            "{message}"
        );
        // A constraint on either normalisation tells them apart.
        accepted(&text.replacen("norm_uncertainty: free", "norm_uncertainty: 0.1", 1));
    }

    #[test]
    fn a_free_background_in_one_bin_is_refused() {
        // One bin of width 100: the free background (backgrounds[1]) can absorb
        // any excess, so mu is undetermined (common practice).
        let one_bin = with("bin_width: 0.5", "bin_width: 100.0");
        let (field, message) = rejection(&one_bin);
        assert_eq!(field, "backgrounds[1].norm_uncertainty");
        assert!(message.contains("no sensitivity"), "{message}");
        // With a relative uncertainty it is a valid counting window.
        accepted(&one_bin.replacen("norm_uncertainty: free", "norm_uncertainty: 0.2", 1));
    }

    #[test]
    fn norm_uncertainty_accepts_a_number_or_free_only() {
        let loose = with("norm_uncertainty: free", "norm_uncertainty: loose");
        match Scenario::from_yaml(&loose) {
            Err(error @ ScenarioError::Parse { line: Some(15), .. }) => {
                let shown = error.to_string();
                assert!(
                    shown.contains("expected a relative uncertainty such as 0.05, or `free`"),
                    "{shown}"
                );
                assert!(shown.contains("loose"), "{shown}");
            }
            other => panic!("expected a parse error on line 15, got {other:?}"),
        }
        let scenario = accepted(BASE);
        use crate::scenario::NormUncertainty;
        assert_eq!(
            scenario.backgrounds()[0].norm_uncertainty,
            Some(NormUncertainty::Relative(0.05))
        );
        assert_eq!(
            scenario.backgrounds()[1].norm_uncertainty,
            Some(NormUncertainty::Free)
        );
        let integer = accepted(&with("norm_uncertainty: 0.05", "norm_uncertainty: 1"));
        assert_eq!(
            integer.backgrounds()[0].norm_uncertainty,
            Some(NormUncertainty::Relative(1.0))
        );
    }

    #[test]
    fn floating_a_flat_shape_is_a_warning() {
        let text = with("{polynomial: {coefficients: [1.0, 0.01]}}", "{flat: {}}");
        let warnings = accepted(&text).warnings();
        assert_eq!(warnings.len(), 1, "{warnings:?}");
        assert_eq!(warnings[0], Warning::NothingToFloat { background: 1 });
    }
}
