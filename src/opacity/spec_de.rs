//! Reading an [`OpacitySpec`] so that an error names the field inside the law: `{"kind":
//! "kramers_free_free", "gaunt": "x"}` is refused with "field `gaunt`: invalid type ...",
//! which the model loader joins to its path (`layers[0].profile.opacity_law.gaunt`). A
//! derived internally tagged enum buffers its content and loses that path.
//!
//! The `"kind"` key is taken out and the rest read as the externally tagged form of the
//! same variants, whose field paths serde_path_to_error can follow.

use serde::de::Error as _;
use serde::{Deserialize, Deserializer};
use serde_json::{Map, Value};

use super::{OpacitySpec, one};

/// The variants of [`OpacitySpec`], externally tagged (`{"kramers_free_free": {...}}`).
#[derive(Deserialize)]
#[serde(rename_all = "snake_case", deny_unknown_fields)]
enum Tagged {
    Constant {
        value_cm2_g: f64,
        #[serde(default = "one")]
        scattering_fraction: f64,
    },
    ElectronScattering {},
    KramersFreeFree {
        #[serde(default = "one")]
        gaunt: f64,
    },
    KramersBoundFree {
        #[serde(default = "one")]
        gaunt: f64,
        #[serde(default = "one")]
        guillotine: f64,
    },
    HMinus {},
    Sum {
        laws: Vec<OpacitySpec>,
    },
    Smooth {
        #[serde(default = "one")]
        gaunt_ff: f64,
        #[serde(default = "one")]
        gaunt_bf: f64,
        #[serde(default = "one")]
        guillotine: f64,
    },
}

impl From<Tagged> for OpacitySpec {
    fn from(tagged: Tagged) -> Self {
        match tagged {
            Tagged::Constant {
                value_cm2_g,
                scattering_fraction,
            } => OpacitySpec::Constant {
                value_cm2_g,
                scattering_fraction,
            },
            Tagged::ElectronScattering {} => OpacitySpec::ElectronScattering {},
            Tagged::KramersFreeFree { gaunt } => OpacitySpec::KramersFreeFree { gaunt },
            Tagged::KramersBoundFree { gaunt, guillotine } => {
                OpacitySpec::KramersBoundFree { gaunt, guillotine }
            }
            Tagged::HMinus {} => OpacitySpec::HMinus {},
            Tagged::Sum { laws } => OpacitySpec::Sum { laws },
            Tagged::Smooth {
                gaunt_ff,
                gaunt_bf,
                guillotine,
            } => OpacitySpec::Smooth {
                gaunt_ff,
                gaunt_bf,
                guillotine,
            },
        }
    }
}

impl<'de> Deserialize<'de> for OpacitySpec {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        const EXPECTED: &str =
            "an opacity law: an object such as {\"kind\": \"electron_scattering\"}";
        let value = Value::deserialize(deserializer)?;
        let Value::Object(mut object) = value else {
            return Err(D::Error::custom(format!(
                "invalid type: {}, expected {EXPECTED}",
                describe(&value)
            )));
        };
        let kind = match object.remove("kind") {
            Some(Value::String(kind)) => kind,
            Some(other) => {
                return Err(D::Error::custom(format!(
                    "field `kind`: invalid type: {}, expected the name of an opacity law",
                    describe(&other)
                )));
            }
            None => return Err(D::Error::missing_field("kind")),
        };
        let tagged = Value::Object(Map::from_iter([(kind, Value::Object(object))]));
        serde_path_to_error::deserialize::<_, Tagged>(tagged)
            .map(OpacitySpec::from)
            .map_err(|error| {
                // The path starts with the variant name; what follows is the law's field.
                let path = error.path().to_string();
                let inner = path
                    .split_once('.')
                    .map(|(_, rest)| rest.to_string())
                    .unwrap_or_default();
                let message = error.into_inner().to_string();
                if inner.is_empty() {
                    D::Error::custom(message)
                } else {
                    D::Error::custom(format!("field `{inner}`: {message}"))
                }
            })
    }
}

/// A JSON value's kind as serde names it in "invalid type" messages.
fn describe(value: &Value) -> String {
    match value {
        Value::Null => "null".into(),
        Value::Bool(b) => format!("boolean `{b}`"),
        Value::Number(n) => format!("number `{n}`"),
        Value::String(s) => format!("string {s:?}"),
        Value::Array(_) => "sequence".into(),
        Value::Object(_) => "map".into(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn error(json: &str) -> String {
        let value: Value = serde_json::from_str(json).unwrap();
        let error = serde_path_to_error::deserialize::<_, OpacitySpec>(&value).unwrap_err();
        let path = error.path().to_string();
        format!("{path} | {}", error.into_inner())
    }

    #[test]
    fn errors_name_the_field_inside_the_law() {
        assert_eq!(
            error(r#"{"kind": "kramers_free_free", "gaunt": "x"}"#),
            ". | field `gaunt`: invalid type: string \"x\", expected f64"
        );
        assert_eq!(
            error(r#"{"kind": "sum", "laws": [{"kind": "es"}, {"kind": "kramers_bound_free", "guillotine": []}]}"#)
                .split(" | ")
                .nth(1)
                .unwrap()
                .split(':')
                .next()
                .unwrap(),
            "field `laws[0]`"
        );
        assert!(error(r#"{"kind": "thomson"}"#).contains("unknown variant `thomson`"));
        assert!(error(r#"{"gaunt": 1}"#).contains("missing field `kind`"));
        assert!(error(r#"[1]"#).contains("expected an opacity law"));
    }

    #[test]
    fn laws_read_back_what_they_write() {
        let law = OpacitySpec::Sum {
            laws: vec![
                OpacitySpec::ElectronScattering {},
                OpacitySpec::KramersBoundFree {
                    gaunt: 1.0,
                    guillotine: 10.0,
                },
                OpacitySpec::Constant {
                    value_cm2_g: 0.2,
                    scattering_fraction: 0.5,
                },
            ],
        };
        let json = serde_json::to_string(&law).unwrap();
        assert_eq!(serde_json::from_str::<OpacitySpec>(&json).unwrap(), law);
    }
}
