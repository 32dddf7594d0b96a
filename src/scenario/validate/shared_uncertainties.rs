//! `shared_uncertainties`: each declared with a name and a relative width,
//! named at most once by a yield's `shared` list, and used by some yield.

use super::signal::refuse_wide_signal_yield_uncertainty;
use super::values::{Checked, require_plain_text, require_relative_uncertainty};
use crate::scenario::{Scenario, ScenarioError};
use crate::warning::Warning;
use std::collections::BTreeMap;

/// Each shared uncertainty has a name and a relative width; one that a
/// signal names is bounded as a signal yield uncertainty is.
pub(super) fn validate_shared_uncertainties(scenario: &Scenario) -> Checked {
    for (name, &width) in &scenario.shared_uncertainties {
        let field = format!("shared_uncertainties.{name}");
        require_plain_text(&field, name)?;
        require_relative_uncertainty(&field, width)?;
        let on_a_signal = scenario
            .channels
            .iter()
            .any(|channel| channel.signal.shared.contains(name));
        if on_a_signal {
            refuse_wide_signal_yield_uncertainty(&field, width)?;
        }
    }
    Ok(())
}

/// A yield's `shared` list: declared names, each at most once.
pub(super) fn validate_shared_names(
    field: &str,
    names: &[String],
    declared: &BTreeMap<String, f64>,
) -> Checked {
    for (index, name) in names.iter().enumerate() {
        let entry = format!("{field}[{index}]");
        if !declared.contains_key(name) {
            let known: Vec<&str> = declared.keys().map(String::as_str).collect();
            let known = if known.is_empty() {
                "none is declared in shared_uncertainties".to_string()
            } else {
                format!("declared in shared_uncertainties: {}", known.join(", "))
            };
            return Err(ScenarioError::invalid(
                entry,
                format!("unknown shared uncertainty {name:?}; {known}"),
            ));
        }
        if names[..index].contains(name) {
            return Err(ScenarioError::invalid(
                entry,
                format!("{name:?} is named twice; each shared factor multiplies a yield once"),
            ));
        }
    }
    Ok(())
}

/// Declared shared uncertainties that no signal or background names.
pub(super) fn unused_shared_uncertainties(
    scenario: &Scenario,
) -> impl Iterator<Item = Warning> + '_ {
    let used = |name: &String| {
        scenario.channels.iter().any(|channel| {
            channel.signal.shared.contains(name)
                || channel.backgrounds.iter().any(|b| b.shared.contains(name))
        })
    };
    scenario
        .shared_uncertainties
        .keys()
        .filter(move |name| !used(name))
        .map(|name| Warning::UnusedSharedUncertainty { name: name.clone() })
}

#[cfg(test)]
mod tests {
    use super::super::test_scenario::{accepted, rejected_field, rejection, with};
    use crate::warning::Warning;

    /// `BASE` with `shared_uncertainties` declared and `shared` lists on the
    /// signal and the first background.
    fn with_shared(declared: &str, on_signal: &str, on_background: &str) -> String {
        let text = with(
            "title: Test scenario\n",
            &format!("title: Test scenario\nshared_uncertainties: {declared}\n"),
        );
        text.replacen(
            "  yield_uncertainty: 0.1\n",
            &format!("  yield_uncertainty: 0.1\n  shared: {on_signal}\n"),
            1,
        )
        .replacen(
            "    norm_uncertainty: 0.05\n",
            &format!("    norm_uncertainty: 0.05\n    shared: {on_background}\n"),
            1,
        )
    }

    #[test]
    fn shared_uncertainties_must_be_declared_once_and_valid() {
        let valid = with_shared("{efficiency: 0.1, scale: 0.03}", "[efficiency]", "[scale]");
        assert!(accepted(&valid).warnings().is_empty());
        let (field, message) = rejection(&with_shared("{scale: 0.03}", "[]", "[scale, energy]"));
        assert_eq!(field, "backgrounds[0].shared[1]");
        assert!(
            message.contains("\"energy\"") && message.contains("scale"),
            "{message}"
        );
        let (field, message) = rejection(&with_shared("{}", "[efficiency]", "[]"));
        assert_eq!(field, "signal.shared[0]");
        assert!(message.contains("none is declared"), "{message}");
        let twice = with_shared("{scale: 0.03}", "[]", "[scale, scale]");
        assert_eq!(rejected_field(&twice), "backgrounds[0].shared[1]");
        let negative = with_shared("{scale: -0.03}", "[]", "[scale]");
        assert_eq!(rejected_field(&negative), "shared_uncertainties.scale");
        // Above 1/3 only on a signal (see refuse_wide_signal_yield_uncertainty).
        let wide = with_shared("{scale: 0.5}", "[scale]", "[]");
        assert_eq!(rejected_field(&wide), "shared_uncertainties.scale");
        accepted(&with_shared("{scale: 0.5}", "[]", "[scale]"));
    }

    #[test]
    fn an_unused_shared_uncertainty_is_a_warning() {
        let text = with_shared("{scale: 0.03, spare: 0.2}", "[]", "[scale]");
        assert_eq!(
            accepted(&text).warnings(),
            [Warning::UnusedSharedUncertainty {
                name: "spare".into()
            }]
        );
    }
}
