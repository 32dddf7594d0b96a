//! Numbers in error messages, shown as a user would write them, the
//! wording of the checks every stage makes on a single number, and text
//! read from files, shown short and escaped.

/// Why `value` is no finite number, or None when it is one.
pub fn not_finite(value: f64) -> Option<String> {
    (!value.is_finite()).then(|| format!("must be a finite number, got {}", show(value)))
}

/// Why `value` is no positive finite number, or None when it is one.
pub fn not_positive(value: f64) -> Option<String> {
    (!(value.is_finite() && value > 0.0))
        .then(|| format!("must be a positive finite number, got {}", show(value)))
}

/// A number as a user would write it: plain decimals for ordinary magnitudes,
/// exponent notation for very large or small ones (Rust's `{}` never uses an exponent).
pub fn show(value: f64) -> String {
    let magnitude = value.abs();
    if value == 0.0 || !value.is_finite() || (1e-4..1e15).contains(&magnitude) {
        format!("{value}")
    } else {
        format!("{value:e}")
    }
}

/// A computed number to six significant digits, so that rounding noise such as
/// 333.33333333333337 does not clutter a message.
pub fn show_rounded(value: f64) -> String {
    let magnitude = value.abs();
    if value == 0.0 || !value.is_finite() || !(1e-4..1e15).contains(&magnitude) {
        return show(value);
    }
    let decimals = (5 - magnitude.log10().floor() as i32).max(0) as usize;
    let text = format!("{value:.decimals$}");
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text
    }
}

/// A computed count that should be whole: rounded like [`show_rounded`],
/// unless rounding would make a fractional count look whole.
pub fn show_fraction(value: f64) -> String {
    let rounded = show_rounded(value);
    if value.fract() != 0.0 && !rounded.contains(['.', 'e']) {
        show(value)
    } else {
        rounded
    }
}

/// A list of numbers as written in YAML, e.g. `[1, -0.5]`.
pub fn show_list(values: &[f64]) -> String {
    let shown: Vec<String> = values.iter().map(|&v| show(v)).collect();
    format!("[{}]", shown.join(", "))
}

/// The most characters of a file's text a message shows.
pub const SHOWN_CHARACTERS: usize = 40;

/// A piece of text read from a file (a cell of a table), as a message shows
/// it: control and other non-printable characters escaped as Rust writes
/// them (`\n`, `\u{1b}`), so nothing in it acts on a terminal, and cut
/// after [`SHOWN_CHARACTERS`] characters with an ellipsis, so a message
/// never carries much of a file a scenario happens to name.
pub fn show_text(text: &str) -> String {
    let mut shown = String::new();
    for (index, character) in text.chars().enumerate() {
        if index == SHOWN_CHARACTERS {
            shown.push('…');
            break;
        }
        match character {
            // Quotes need no escape inside the backticks messages use.
            '"' | '\'' => shown.push(character),
            _ => shown.extend(character.escape_debug()),
        }
    }
    shown
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_shown_as_written() {
        assert_eq!(show(-3.0), "-3");
        assert_eq!(show(0.05), "0.05");
        assert_eq!(show(1e-9), "1e-9");
        assert_eq!(show(f64::NAN), "NaN");
        assert_eq!(show_rounded(100.0 / 0.3), "333.333");
        assert_eq!(show_rounded(-0.001000000000000112), "-0.001");
        assert_eq!(show_rounded(50.050000000000004), "50.05");
        assert_eq!(show_rounded(200.0), "200");
        assert_eq!(show_fraction(100.0 / 0.3), "333.333");
        assert_eq!(show_fraction(200.0), "200");
        assert_eq!(show_fraction(200.0000001), "200.0000001");
        assert_eq!(show_list(&[1.0, -0.5]), "[1, -0.5]");
    }

    #[test]
    fn single_number_checks_name_the_value() {
        assert_eq!(not_finite(2.0), None);
        assert_eq!(
            not_finite(f64::INFINITY).as_deref(),
            Some("must be a finite number, got inf")
        );
        assert_eq!(not_positive(0.5), None);
        assert_eq!(
            not_positive(-3.0).as_deref(),
            Some("must be a positive finite number, got -3")
        );
        assert!(not_positive(f64::NAN).is_some());
    }

    #[test]
    fn text_is_shown_escaped_and_cut_short() {
        assert_eq!(show_text("1.5e3"), "1.5e3");
        assert_eq!(show_text("a\tb\u{1b}[2J\"'"), "a\\tb\\u{1b}[2J\"'");
        assert_eq!(show_text("\u{202e}x"), "\\u{202e}x");
        let long = "x".repeat(100);
        let shown = show_text(&long);
        assert_eq!(shown.chars().count(), SHOWN_CHARACTERS + 1);
        assert!(shown.ends_with('…'));
        assert_eq!(
            show_text(&long[..SHOWN_CHARACTERS]),
            long[..SHOWN_CHARACTERS]
        );
    }
}
