//! The YAML spellings of values that serde's derived forms cannot express:
//! a normalisation uncertainty that is a number or the word `free`, the
//! days of the plan as a list or a spaced grid, and a shape
//! written as a one-key mapping such as `{gaussian: {mean: 67.0, sigma: 0.8}}`,
//! whose keys come from the shape registry of the model.

use super::{DaysGrid, NormUncertainty, ShapeSpec, SpacedDays};
use crate::shapes::{ParameterValue, SHAPE_KINDS, ShapeKind};
use serde::Deserialize;
use serde::de::{self, DeserializeSeed, MapAccess, SeqAccess, Unexpected, Visitor};
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

/// Reads `plan.days`: a list of calendar days, or a mapping read as
/// [`SpacedDays`] (its unknown or missing keys named at their position). Any
/// other form is refused with both forms shown.
impl<'de> Deserialize<'de> for DaysGrid {
    fn deserialize<D: de::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_any(DaysGridVisitor)
    }
}

struct DaysGridVisitor;

impl<'de> Visitor<'de> for DaysGridVisitor {
    type Value = DaysGrid;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(
            "a list of calendar days, e.g. [30, 91, 182, 365], or a grid {first, last, points, spacing}, e.g. {first: 1, last: 365, points: 24, spacing: log}",
        )
    }

    fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<DaysGrid, A::Error> {
        let mut days = Vec::new();
        while let Some(day) = seq.next_element::<f64>()? {
            days.push(day);
            if days.len() > super::limits::MAX_GRID_POINTS {
                return Err(de::Error::invalid_length(days.len(), &self));
            }
        }
        Ok(DaysGrid::List(days))
    }

    fn visit_map<A: MapAccess<'de>>(self, map: A) -> Result<DaysGrid, A::Error> {
        SpacedDays::deserialize(de::value::MapAccessDeserializer::new(map)).map(DaysGrid::Spaced)
    }
}

/// Reads a `shape:` mapping: exactly one key, a kind from the registry
/// ([`SHAPE_KINDS`]), whose value maps each of that kind's parameters to a
/// number or a list of numbers. An unknown kind or parameter, a repeated or
/// missing one, or a value of the wrong type is a parse error at its position,
/// worded as for the scenario's other keys.
impl<'de> Deserialize<'de> for ShapeSpec {
    fn deserialize<D: de::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        deserializer.deserialize_map(ShapeVisitor)
    }
}

/// What a `shape:` mapping may hold, e.g. "one of gaussian, flat, e.g. {flat: {}}".
fn shape_kinds() -> String {
    let keys: Vec<&str> = SHAPE_KINDS.iter().map(|kind| kind.key).collect();
    format!("one of {}, e.g. {{flat: {{}}}}", keys.join(", "))
}

/// "unknown field `name`, expected ...", in the words serde uses for the
/// scenario's other keys.
fn unknown_field<'a>(name: &str, expected: impl ExactSizeIterator<Item = &'a str>) -> String {
    let quoted: Vec<String> = expected.map(|key| format!("`{key}`")).collect();
    match quoted.as_slice() {
        [] => format!("unknown field `{name}`, there are no fields"),
        [only] => format!("unknown field `{name}`, expected {only}"),
        [first, second] => format!("unknown field `{name}`, expected {first} or {second}"),
        all => format!("unknown field `{name}`, expected one of {}", all.join(", ")),
    }
}

/// A mapping key that must be one of the given names, read as its index; an
/// unknown key is an error at the key's own position.
struct KnownKey<'a>(&'a [&'static str]);

impl<'de> DeserializeSeed<'de> for KnownKey<'_> {
    type Value = usize;

    fn deserialize<D: de::Deserializer<'de>>(self, deserializer: D) -> Result<usize, D::Error> {
        deserializer.deserialize_str(self)
    }
}

impl Visitor<'_> for KnownKey<'_> {
    type Value = usize;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str("a key")
    }

    fn visit_str<E: de::Error>(self, key: &str) -> Result<usize, E> {
        self.0
            .iter()
            .position(|&name| name == key)
            .ok_or_else(|| E::custom(unknown_field(key, self.0.iter().copied())))
    }
}

struct ShapeVisitor;

impl<'de> Visitor<'de> for ShapeVisitor {
    type Value = ShapeSpec;

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "a shape, {}", shape_kinds())
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<ShapeSpec, A::Error> {
        let mut shapes: Vec<ShapeSpec> = Vec::new();
        let keys: Vec<&'static str> = SHAPE_KINDS.iter().map(|kind| kind.key).collect();
        while let Some(index) = map.next_key_seed(KnownKey(&keys))? {
            let kind = &SHAPE_KINDS[index];
            if shapes.iter().any(|shape| shape.kind == kind) {
                return Err(de::Error::duplicate_field(kind.key));
            }
            let (values, file) = map.next_value_seed(Parameters(kind))?;
            shapes.push(ShapeSpec { kind, values, file });
        }
        match shapes.len() {
            1 => Ok(shapes.remove(0)),
            0 => Err(de::Error::custom(format!(
                "a shape needs {}; got none",
                shape_kinds()
            ))),
            count => Err(de::Error::custom(format!(
                "a shape needs exactly {}; got {count} of them",
                shape_kinds()
            ))),
        }
    }
}

/// The key that names a file of rows in place of the parameters, for a kind
/// that can be read from one ([`ShapeKind::rows`]).
const FILE_KEY: &str = "file";

/// The parameters mapping of one shape kind, read into its values in order,
/// or (for a kind read from rows) a `file` key alone, whose rows scenario
/// loading reads later.
struct Parameters(&'static ShapeKind);

impl<'de> DeserializeSeed<'de> for Parameters {
    type Value = (Vec<ParameterValue>, Option<String>);

    fn deserialize<D: de::Deserializer<'de>>(
        self,
        deserializer: D,
    ) -> Result<Self::Value, D::Error> {
        deserializer.deserialize_map(self)
    }
}

impl<'de> Visitor<'de> for Parameters {
    type Value = (Vec<ParameterValue>, Option<String>);

    fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "the parameters of {}, as in {}",
            self.0.key, self.0.example
        )
    }

    fn visit_map<A: MapAccess<'de>>(self, mut map: A) -> Result<Self::Value, A::Error> {
        let parameters = self.0.parameters;
        let mut values: Vec<Option<ParameterValue>> = vec![None; parameters.len()];
        let mut file: Option<String> = None;
        let mut names: Vec<&'static str> = parameters.iter().map(|p| p.name).collect();
        if self.0.rows.is_some() {
            names.push(FILE_KEY);
        }
        while let Some(index) = map.next_key_seed(KnownKey(&names))? {
            if index == parameters.len() {
                if file.is_some() {
                    return Err(de::Error::duplicate_field(FILE_KEY));
                }
                file = Some(map.next_value()?);
                continue;
            }
            if values[index].is_some() {
                return Err(de::Error::duplicate_field(parameters[index].name));
            }
            values[index] = Some(if parameters[index].list {
                ParameterValue::List(map.next_value()?)
            } else {
                ParameterValue::Number(map.next_value()?)
            });
        }
        if file.is_some() {
            return match values.iter().any(Option::is_some) {
                true => Err(de::Error::custom(format!(
                    "{} takes either `{FILE_KEY}` or {}, not both",
                    self.0.key,
                    quoted(parameters.iter().map(|p| p.name))
                ))),
                false => Ok((Vec::new(), file)),
            };
        }
        let values = values
            .into_iter()
            .zip(parameters)
            .map(|(value, parameter)| value.ok_or_else(|| de::Error::missing_field(parameter.name)))
            .collect::<Result<_, _>>()?;
        Ok((values, None))
    }
}

/// Names in backquotes joined by "and", e.g. "`edges` and `values`".
fn quoted<'a>(names: impl Iterator<Item = &'a str>) -> String {
    let quoted: Vec<String> = names.map(|name| format!("`{name}`")).collect();
    quoted.join(" and ")
}

#[cfg(test)]
mod tests {
    use super::super::{NormUncertainty, ShapeSpec};
    use crate::shapes::{ParameterValue, SHAPE_KINDS};

    fn shape(text: &str) -> Result<ShapeSpec, String> {
        serde_yaml::from_str(text).map_err(|error| error.to_string())
    }

    /// The kind and values read from `text`.
    fn read(text: &str) -> (&'static str, Vec<ParameterValue>) {
        let shape = shape(text).unwrap_or_else(|error| panic!("{text}: {error}"));
        (shape.kind.key, shape.values)
    }

    #[test]
    fn each_shape_reads_from_its_one_key_mapping() {
        use ParameterValue::{List, Number};
        assert_eq!(
            read("{gaussian: {mean: 67.0, sigma: 0.8}}"),
            ("gaussian", vec![Number(67.0), Number(0.8)])
        );
        assert_eq!(
            read("{gaussian: {sigma: 0.8, mean: 67.0}}"),
            ("gaussian", vec![Number(67.0), Number(0.8)])
        );
        assert_eq!(
            read("{breit_wigner: {mean: 5, width: 0.2}}"),
            ("breit_wigner", vec![Number(5.0), Number(0.2)])
        );
        assert_eq!(
            read("{exponential: {slope: -0.025}}"),
            ("exponential", vec![Number(-0.025)])
        );
        assert_eq!(
            read("{polynomial: {coefficients: [1, -0.5]}}"),
            ("polynomial", vec![List(vec![1.0, -0.5])])
        );
        assert_eq!(read("{flat: {}}"), ("flat", vec![]));
        assert_eq!(read("flat: {}"), ("flat", vec![]));
    }

    /// Every registered kind reads back from its template example with
    /// numbers in place of the letters.
    #[test]
    fn every_registered_kind_is_read() {
        for kind in SHAPE_KINDS {
            let values: Vec<String> = kind
                .parameters
                .iter()
                .map(|p| match p.list {
                    true => format!("{}: [1, 2]", p.name),
                    false => format!("{}: 1", p.name),
                })
                .collect();
            let text = format!("{{{}: {{{}}}}}", kind.key, values.join(", "));
            assert_eq!(read(&text).0, kind.key, "{text}");
        }
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
        let missing = shape("{gaussian: {mean: 1}}").unwrap_err();
        assert!(missing.contains("missing field `sigma`"), "{missing}");
        let repeated = shape("{gaussian: {mean: 1, mean: 2, sigma: 1}}").unwrap_err();
        assert!(repeated.contains("duplicate field `mean`"), "{repeated}");
        let mistyped = shape("{polynomial: {coefficients: 1.0}}").unwrap_err();
        assert!(mistyped.contains("expected a sequence"), "{mistyped}");
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
