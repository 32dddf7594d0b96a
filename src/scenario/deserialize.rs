//! The YAML spellings of values that serde's derived forms cannot express:
//! a normalisation uncertainty that is a number or the word `free`, and a shape
//! written as a one-key mapping such as `{gaussian: {mean: 67.0, sigma: 0.8}}`.

use super::{NormUncertainty, ShapeSpec};
use serde::Deserialize;
use serde::de::{self, Unexpected, Visitor};
use std::fmt;

/// Reads a number as [`NormUncertainty::Relative`] and the word `free` as
/// [`NormUncertainty::Free`]. Whether the number is positive is checked in
/// validation, so that the error names the field.
impl<'de> Deserialize<'de> for NormUncertainty {
    fn deserialize<D: de::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(NormUncertaintyVisitor)
    }
}

struct NormUncertaintyVisitor;

impl Visitor<'_> for NormUncertaintyVisitor {
    type Value = NormUncertainty;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("a relative uncertainty such as 0.05, or `free`")
    }

    fn visit_f64<E: de::Error>(self, value: f64) -> Result<NormUncertainty, E> {
        Ok(NormUncertainty::Relative(value))
    }

    fn visit_i64<E: de::Error>(self, value: i64) -> Result<NormUncertainty, E> {
        Ok(NormUncertainty::Relative(value as f64))
    }

    fn visit_u64<E: de::Error>(self, value: u64) -> Result<NormUncertainty, E> {
        Ok(NormUncertainty::Relative(value as f64))
    }

    fn visit_str<E: de::Error>(self, value: &str) -> Result<NormUncertainty, E> {
        if value == "free" {
            Ok(NormUncertainty::Free)
        } else {
            Err(E::invalid_value(Unexpected::Str(value), &self))
        }
    }
}

/// A `shape:` mapping as written: exactly one of its keys must be present.
/// Unknown keys (a misspelt shape) are rejected by the parser with their position.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub(super) struct ShapeEntry {
    #[serde(default)]
    gaussian: Option<GaussianParameters>,
    #[serde(default)]
    breit_wigner: Option<BreitWignerParameters>,
    #[serde(default)]
    exponential: Option<ExponentialParameters>,
    #[serde(default)]
    polynomial: Option<PolynomialParameters>,
    #[serde(default)]
    flat: Option<FlatParameters>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct GaussianParameters {
    mean: f64,
    sigma: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct BreitWignerParameters {
    mean: f64,
    width: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ExponentialParameters {
    slope: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct PolynomialParameters {
    coefficients: Vec<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct FlatParameters {}

const SHAPE_KINDS: &str =
    "one of gaussian, breit_wigner, exponential, polynomial, flat, e.g. {flat: {}}";

impl TryFrom<ShapeEntry> for ShapeSpec {
    type Error = String;

    fn try_from(entry: ShapeEntry) -> Result<ShapeSpec, String> {
        let mut shapes = Vec::new();
        if let Some(GaussianParameters { mean, sigma }) = entry.gaussian {
            shapes.push(ShapeSpec::Gaussian { mean, sigma });
        }
        if let Some(BreitWignerParameters { mean, width }) = entry.breit_wigner {
            shapes.push(ShapeSpec::BreitWigner { mean, width });
        }
        if let Some(ExponentialParameters { slope }) = entry.exponential {
            shapes.push(ShapeSpec::Exponential { slope });
        }
        if let Some(PolynomialParameters { coefficients }) = entry.polynomial {
            shapes.push(ShapeSpec::Polynomial { coefficients });
        }
        if entry.flat.is_some() {
            shapes.push(ShapeSpec::Flat {});
        }
        match shapes.len() {
            1 => Ok(shapes.remove(0)),
            0 => Err(format!("a shape needs {SHAPE_KINDS}; got none")),
            count => Err(format!(
                "a shape needs exactly {SHAPE_KINDS}; got {count} of them"
            )),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::super::{NormUncertainty, ShapeSpec};

    fn shape(text: &str) -> Result<ShapeSpec, String> {
        serde_yaml::from_str(text).map_err(|error| error.to_string())
    }

    #[test]
    fn each_shape_reads_from_its_one_key_mapping() {
        assert_eq!(
            shape("{gaussian: {mean: 67.0, sigma: 0.8}}"),
            Ok(ShapeSpec::Gaussian {
                mean: 67.0,
                sigma: 0.8
            })
        );
        assert_eq!(
            shape("{breit_wigner: {mean: 5, width: 0.2}}"),
            Ok(ShapeSpec::BreitWigner {
                mean: 5.0,
                width: 0.2
            })
        );
        assert_eq!(
            shape("{exponential: {slope: -0.025}}"),
            Ok(ShapeSpec::Exponential { slope: -0.025 })
        );
        assert_eq!(
            shape("{polynomial: {coefficients: [1, -0.5]}}"),
            Ok(ShapeSpec::Polynomial {
                coefficients: vec![1.0, -0.5]
            })
        );
        assert_eq!(shape("{flat: {}}"), Ok(ShapeSpec::Flat {}));
        assert_eq!(shape("flat: {}"), Ok(ShapeSpec::Flat {}));
    }

    #[test]
    fn misspelt_or_missing_or_extra_shapes_are_named() {
        let misspelt = shape("{gausian: {mean: 1, sigma: 1}}").unwrap_err();
        assert!(misspelt.contains("unknown field `gausian`"), "{misspelt}");
        let wrong_parameter = shape("{exponential: {lambda: 1}}").unwrap_err();
        assert!(
            wrong_parameter.contains("unknown field `lambda`"),
            "{wrong_parameter}"
        );
        let none = shape("{}").unwrap_err();
        assert!(none.contains("got none"), "{none}");
        let two = shape("{flat: {}, exponential: {slope: 1}}").unwrap_err();
        assert!(two.contains("got 2 of them"), "{two}");
    }

    #[test]
    fn norm_uncertainty_reads_a_number_or_free() {
        let read = |text: &str| serde_yaml::from_str::<NormUncertainty>(text);
        assert_eq!(read("0.05").unwrap(), NormUncertainty::Relative(0.05));
        assert_eq!(read("2").unwrap(), NormUncertainty::Relative(2.0));
        assert_eq!(read("free").unwrap(), NormUncertainty::Free);
        let error = read("loose").unwrap_err().to_string();
        assert!(
            error.contains("expected a relative uncertainty such as 0.05, or `free`"),
            "{error}"
        );
        assert!(read("true").is_err());
    }
}
