//! Checks on one value, whatever section of the scenario holds it: text,
//! finite and positive numbers, relative uncertainties, names unique in
//! their list. Each names the field it refuses; the readers of the file
//! (rates, resolutions, scans, a detector-level signal) use them too.

use crate::message::{not_finite, not_positive, show};
use crate::scenario::ScenarioError;
use crate::scenario::limits::MAX_TEXT_CHARS;

/// The result of a check: the value, or the error naming its field.
pub(super) type Checked<T = ()> = Result<T, ScenarioError>;

/// Text that is not blank, see [`require_plain_text`].
pub(super) fn require_text(field: &str, text: &str) -> Checked {
    if text.trim().is_empty() {
        return Err(ScenarioError::invalid(
            field,
            format!("must not be empty, got {text:?}"),
        ));
    }
    require_plain_text(field, text)
}

/// Text of at most [`MAX_TEXT_CHARS`] characters without control characters
/// (line breaks, tabs, escapes), which go into titles, labels and file contents.
pub(super) fn require_plain_text(field: &str, text: &str) -> Checked {
    let length = text.chars().count();
    if length > MAX_TEXT_CHARS {
        return Err(ScenarioError::invalid(
            field,
            format!("must be at most {MAX_TEXT_CHARS} characters long, got {length}"),
        ));
    }
    if let Some(control) = text.chars().find(|c| c.is_control()) {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "must not contain control characters, got {:?} in {text:?}",
                control
            ),
        ));
    }
    Ok(())
}

/// The `name` of entry `index` of the list `list` (`channels`,
/// `backgrounds`), whose entries' names are `names`: text, and none of the
/// earlier entries' (blanks around a name ignored), so that each `noun` is
/// told apart by its name.
pub(super) fn require_own_name(list: &str, noun: &str, names: &[&str], index: usize) -> Checked {
    let field = format!("{list}[{index}].name");
    let name = names[index];
    require_text(&field, name)?;
    if let Some(first) = names[..index]
        .iter()
        .position(|earlier| earlier.trim() == name.trim())
    {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "each {noun} needs its own name, got {name:?} again (as in {list}[{first}].name)"
            ),
        ));
    }
    Ok(())
}

pub(in crate::scenario) fn require_finite(field: &str, value: f64) -> Checked {
    match not_finite(value) {
        Some(message) => Err(ScenarioError::invalid(field, message)),
        None => Ok(()),
    }
}

pub(in crate::scenario) fn require_positive(field: &str, value: f64) -> Checked {
    match not_positive(value) {
        Some(message) => Err(ScenarioError::invalid(field, message)),
        None => Ok(()),
    }
}

pub(super) fn require_relative_uncertainty(field: &str, relative: f64) -> Checked {
    if !(relative.is_finite() && relative > 0.0) {
        return Err(ScenarioError::invalid(
            field,
            format!(
                "must be a positive relative uncertainty such as 0.05, got {}",
                show(relative)
            ),
        ));
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::super::test_scenario::{rejected_field, with};

    #[test]
    fn relative_uncertainties_must_be_positive() {
        let cases = [
            (
                "yield_uncertainty: 0.1",
                "yield_uncertainty: 0",
                "signal.yield_uncertainty",
            ),
            (
                "yield_uncertainty: 0.1",
                "yield_uncertainty: -0.1",
                "signal.yield_uncertainty",
            ),
            (
                "norm_uncertainty: 0.05",
                "norm_uncertainty: 0",
                "backgrounds[0].norm_uncertainty",
            ),
            (
                "norm_uncertainty: free",
                "norm_uncertainty: -1",
                "backgrounds[1].norm_uncertainty",
            ),
        ];
        for (from, to, field) in cases {
            assert_eq!(rejected_field(&with(from, to)), field, "{to}");
        }
    }

    #[test]
    fn title_must_not_be_empty() {
        assert_eq!(
            rejected_field(&with("title: Test scenario", "title: \"\"")),
            "title"
        );
    }
}
