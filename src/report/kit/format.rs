//! How numbers read in every report: lossless decimals for tables, and the
//! rounded labels of figures and summaries.

/// The shortest decimal that reads back to `value`, in exponent form outside
/// [1e-4, 1e15) (`2.867e-7` rather than long runs of zeros), so tables are
/// lossless and byte-for-byte reproducible.
pub fn number(value: f64) -> String {
    let magnitude = value.abs();
    if magnitude != 0.0 && !(1e-4..1e15).contains(&magnitude) {
        format!("{value:e}")
    } else {
        value.to_string()
    }
}

/// Significant digits of the rounded numbers of summaries ([`rounded`]).
pub const SIGNIFICANT_DIGITS: usize = 3;

/// `value` to [`SIGNIFICANT_DIGITS`] significant digits for a person to read
/// and paste, without trailing zeros ("36", "0.421", "1.25e-7"); integer
/// digits are never dropped ("12346" for 12345.6), exponent form outside
/// [1e-4, 1e15) as in [`number`]. Tables keep full precision with [`number`].
pub fn rounded(value: f64) -> String {
    let magnitude = value.abs();
    if value == 0.0 || !value.is_finite() {
        return value.to_string();
    }
    if !(1e-4..1e15).contains(&magnitude) {
        let text = format!("{value:.*e}", SIGNIFICANT_DIGITS - 1);
        let (mantissa, exponent) = text.split_once('e').unwrap_or((&text, "0"));
        return format!("{}e{exponent}", trim_zeros(mantissa));
    }
    let integer_digits = magnitude.log10().floor() as i64 + 1;
    let decimals = (SIGNIFICANT_DIGITS as i64 - integer_digits).max(0) as usize;
    trim_zeros(&format!("{value:.decimals$}"))
}

/// A decimal without trailing zeros after its point, nor a bare point.
fn trim_zeros(text: &str) -> String {
    if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        text.to_string()
    }
}

/// A probability for a person: three decimals, "<0.001" and ">0.999" for
/// values that would round to 0 or 1 without being 0 or 1.
pub fn probability_label(p: f64) -> String {
    match p {
        0.0 => "0".to_string(),
        1.0 => "1".to_string(),
        p if p < 0.001 => "<0.001".to_string(),
        p if p > 0.999 => ">0.999".to_string(),
        p => trim_zeros(&format!("{p:.3}")),
    }
}

/// [`number`], or an empty cell for no value.
pub fn optional(value: Option<f64>) -> String {
    value.map(number).unwrap_or_default()
}

/// An exposure as "After 30 d (24 live days)": calendar days as given, live
/// days to a tenth.
pub fn exposure_label(days: f64, live_days: f64) -> String {
    format!(
        "After {days} d ({} live days)",
        (live_days * 10.0).round() / 10.0
    )
}

/// A target significance as people write it: `3σ`, `2.5σ`.
pub fn target_label(target: f64) -> String {
    format!("{target}σ")
}

/// A confidence level as a percentage: 0.95 as "95%", 0.683 as "68.3%".
pub fn percent_label(cl: f64) -> String {
    format!("{}%", (cl * 1e4).round() / 100.0)
}

/// The rounding of days in `check` and the summaries, stated where they print days.
pub const DAYS_ROUNDING: &str = "Days are rounded up (to three significant digits below a tenth of a day, to the next tenth of a day below 10 days, to the next whole day from there on); projection.csv and .json keep full precision.";

/// Calendar days, rounded up so the value is reached by then: to
/// [`SIGNIFICANT_DIGITS`] below a tenth of a day ("0.0123 d", "3.29e-5 d":
/// a huge signal is seen within seconds, and "0.1 d" would hide by how
/// much), to a tenth of a day below 10 days ("3.1 d"), to whole days from
/// there on ("142 d").
pub fn days_label(days: f64) -> String {
    if days > 0.0 && days < 0.1 {
        let unit = 10f64.powi(days.log10().floor() as i32 + 1 - SIGNIFICANT_DIGITS as i32);
        // Rounding in days / unit must not lift an exact value by one unit.
        let units = (days / unit * (1.0 - f64::EPSILON)).ceil();
        return format!("{} d", rounded(units * unit));
    }
    let tenths = (days * 10.0).ceil() / 10.0;
    if tenths < 10.0 {
        format!("{tenths:.1} d")
    } else {
        format!("{} d", days.ceil())
    }
}

/// `part` of `whole` in percent to two decimals ("1.00%"), "<0.01%" for a
/// non-zero part below that, "0%" of nothing: failed fits among toys.
pub fn fit_percent(part: usize, whole: usize) -> String {
    if whole == 0 {
        return "0%".to_string();
    }
    let value = 100.0 * part as f64 / whole as f64;
    if part > 0 && value < 0.01 {
        "<0.01%".to_string()
    } else {
        format!("{value:.2}%")
    }
}

/// Left-aligned columns separated by three spaces (widths in characters, so
/// "σ" and "—" count as one), for the terminal.
pub fn aligned(rows: &[Vec<String>]) -> String {
    let columns = rows.first().map_or(0, Vec::len);
    let widths: Vec<usize> = (0..columns)
        .map(|column| {
            rows.iter()
                .map(|row| row[column].chars().count())
                .max()
                .unwrap_or(0)
        })
        .collect();
    let mut text = String::new();
    for row in rows {
        let cells: Vec<String> = row
            .iter()
            .zip(&widths)
            .map(|(cell, &width)| format!("{cell:<width$}"))
            .collect();
        text.push_str(cells.join("   ").trim_end());
        text.push('\n');
    }
    text
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_shortest_round_trip_decimals() {
        assert_eq!(number(0.1 + 0.2), "0.30000000000000004");
        assert_eq!(number(1.5e6), "1500000");
        assert_eq!(number(0.0), "0");
        assert_eq!(number(0.0001), "0.0001");
        assert_eq!(number(2.867e-7), "2.867e-7");
        assert_eq!(number(-4.0291033463290996e-6), "-4.0291033463290996e-6");
        assert_eq!(number(2.5e15), "2.5e15");
        for value in [2.867e-7, 0.1 + 0.2, 1.0 / 3.0, 6.02e23] {
            assert_eq!(number(value).parse::<f64>().unwrap(), value);
        }
        assert_eq!(optional(None), "");
    }

    #[test]
    fn rounded_numbers_keep_three_significant_digits() {
        assert_eq!(rounded(36.0), "36");
        assert_eq!(rounded(36.000000001), "36");
        assert_eq!(rounded(0.42137), "0.421");
        assert_eq!(rounded(1.96), "1.96");
        assert_eq!(rounded(12345.6), "12346");
        assert_eq!(rounded(-2.5004), "-2.5");
        assert_eq!(rounded(1.2549e-7), "1.25e-7");
        assert_eq!(rounded(0.0), "0");
        assert_eq!(probability_label(0.3141), "0.314");
        assert_eq!(probability_label(0.5), "0.5");
        assert_eq!(probability_label(0.9996), ">0.999");
        assert_eq!(probability_label(0.0004), "<0.001");
        assert_eq!(probability_label(1.0), "1");
    }

    #[test]
    fn days_are_rounded_up() {
        assert_eq!(days_label(141.2), "142 d");
        assert_eq!(days_label(142.0), "142 d");
        assert_eq!(days_label(3.04), "3.1 d");
        assert_eq!(days_label(0.25), "0.3 d");
        assert_eq!(days_label(9.99), "10 d");
        assert_eq!(days_label(0.0123), "0.0123 d");
        assert_eq!(days_label(0.01231), "0.0124 d");
        assert_eq!(days_label(3.2889e-5), "3.29e-5 d");
        assert_eq!(days_label(0.09991), "0.1 d");
        assert_eq!(days_label(0.0), "0.0 d");
        assert_eq!(target_label(3.0), "3σ");
        assert_eq!(target_label(2.5), "2.5σ");
    }

    #[test]
    fn confidence_levels_read_as_percentages() {
        assert_eq!(percent_label(0.95), "95%");
        assert_eq!(percent_label(0.9), "90%");
        assert_eq!(percent_label(0.683), "68.3%");
    }

    #[test]
    fn columns_align_by_characters() {
        let rows = [
            vec!["target".to_string(), "Z".to_string()],
            vec!["3σ".to_string(), "—".to_string()],
        ];
        assert_eq!(aligned(&rows), "target   Z\n3σ       —\n");
    }
}
