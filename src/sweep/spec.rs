//! Sweep specification files: which base model, which values to vary and how to combine
//! them. Everything is checked, and every point's medium built, before any photon runs.
//!
//! ```json
//! {
//!   "model": "../models/test-sphere-tau20.json",
//!   "photons": 4000,
//!   "seed": 1,
//!   "parameters": [
//!     { "path": "layers[0].extinction_coefficient", "log": { "from": 1, "to": 20, "count": 5 } },
//!     { "path": "layers[0].albedo", "values": [1.0, 0.99] }
//!   ],
//!   "combine": "grid"
//! }
//! ```
//!
//! `model` is relative to the spec file's folder. A parameter gives its values as a list
//! (`values`), a linear range (`linear`: `from`, `to`, `count` evenly spaced values, ends
//! included) or a logarithmic one (`log`: the same, evenly spaced in log, `from`, `to` > 0).
//! `combine` is `grid` (default: every combination, the first parameter varying slowest, as
//! nested loops in the order listed) or `zip` (the k-th values of every parameter together;
//! all lists of equal length).

use std::path::Path;

use serde::{Deserialize, Serialize};
use serde_json::{Value, json};
use thiserror::Error;

use super::json_path::{JsonPath, PathError, describe};
use super::{Sweep, SweepPoint};
use crate::fingerprint::fingerprint;
use crate::medium::model_file::{ModelError, model_from_value, parse_model_value};
use crate::simulation::Method;
use crate::transport::WalkLimits;

/// Version of the resolved-spec layout (part of the spec hash).
pub const SPEC_FORMAT: u32 = 1;

/// A sweep specification that cannot be used: the file, the field, the value and what was
/// expected.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum SpecError {
    /// A file could not be read.
    #[error("{file}: cannot read: {cause}")]
    Read {
        /// The file.
        file: String,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// The spec is not JSON.
    #[error("{file}: line {line}, column {column}: not valid JSON: {message}")]
    Syntax {
        /// The spec file.
        file: String,
        /// 1-based line.
        line: usize,
        /// 1-based column.
        column: usize,
        /// What the parser reported.
        message: String,
    },
    /// JSON of the wrong shape: unknown key (including an unknown parameter kind), wrong
    /// type, missing field.
    #[error("{file}: {field}: {message}")]
    Schema {
        /// The spec file.
        file: String,
        /// JSON path of the field.
        field: String,
        /// What the deserialiser reported.
        message: String,
    },
    /// A value out of range, an empty list or range, or an inconsistent combination.
    #[error("{file}: {field} = {value}: expected {expected}")]
    Invalid {
        /// The spec file.
        file: String,
        /// JSON path of the field in the spec.
        field: String,
        /// The value as written.
        value: String,
        /// What would have been accepted.
        expected: String,
    },
    /// A parameter path that does not parse or does not lead into the model.
    #[error("{file}: {field}: {cause}")]
    Path {
        /// The spec file.
        file: String,
        /// The spec field holding the path (`parameters[i].path`).
        field: String,
        /// What is wrong with the path.
        cause: PathError,
    },
    /// The base model cannot be read or is invalid.
    #[error("{file}: base model: {cause}")]
    Model {
        /// The spec file.
        file: String,
        /// The model's own error.
        cause: Box<ModelError>,
    },
    /// A point whose modified model is invalid (for example an albedo above 1).
    #[error("{file}: point {point} ({settings}): {cause}")]
    Point {
        /// The spec file.
        file: String,
        /// Index of the point.
        point: u64,
        /// The point's parameter values, `path = value, …`.
        settings: String,
        /// The model's error for this point.
        cause: Box<ModelError>,
    },
}

/// How the parameters' value lists combine into points.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Combine {
    /// Every combination (Cartesian product); the first parameter varies slowest.
    #[default]
    Grid,
    /// The k-th value of every parameter together; all lists must have the same length.
    Zip,
}

/// The spec file as written.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct SpecFile {
    model: String,
    photons: Option<u64>,
    seed: Option<u64>,
    max_steps: Option<u64>,
    method: Option<Method>,
    parameters: Vec<ParameterFile>,
    #[serde(default)]
    combine: Combine,
}

/// One parameter as written: a path and exactly one of the value kinds.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct ParameterFile {
    path: String,
    values: Option<Vec<Value>>,
    linear: Option<RangeFile>,
    log: Option<RangeFile>,
}

/// A range as written; `count` is signed so that a negative count gets its own message.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RangeFile {
    from: f64,
    to: f64,
    count: i64,
}

/// One parameter with its values spelled out.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ResolvedParameter {
    /// Path into the model, e.g. `layers[0].albedo`.
    pub path: String,
    /// Every value it takes, in order.
    pub values: Vec<Value>,
}

/// A sweep with every value spelled out and the base model inlined: all that is needed to
/// rebuild its points, with no file. Its [`ResolvedSpec::hash`] identifies the sweep.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ResolvedSpec {
    /// The model file as the spec names it (a label only; not part of the hash).
    pub model_file: String,
    /// The base model's JSON.
    pub model: Value,
    /// Photons per point.
    pub photons: u64,
    /// Seed of the random streams (the stream of point i is i).
    pub seed: u64,
    /// Step cap per photon.
    pub max_steps: u64,
    /// Walk method (default `auto`).
    #[serde(default)]
    pub method: Method,
    /// How parameters combine.
    pub combine: Combine,
    /// The parameters.
    pub parameters: Vec<ResolvedParameter>,
}

impl ResolvedSpec {
    /// Reads a spec file and the model it names (relative to the spec's folder), checks
    /// both and resolves every value.
    ///
    /// # Errors
    /// [`SpecError`] naming the file, the field, the value and what was expected.
    pub fn load(path: &Path) -> Result<Self, SpecError> {
        let file = path.display().to_string();
        let text = std::fs::read_to_string(path).map_err(|source| SpecError::Read {
            file: file.clone(),
            cause: source,
        })?;
        let directory = path.parent().unwrap_or(Path::new(""));
        Self::parse(&text, &file, |model| {
            let model_path = directory.join(model);
            let label = model_path.display().to_string();
            let text = std::fs::read_to_string(&model_path).map_err(|cause| ModelError::Read {
                file: label.clone(),
                cause,
            })?;
            Ok((parse_model_value(&text, &label)?, label))
        })
    }

    /// Parses spec text; `file` labels errors and `read_model(name)` returns the JSON of
    /// the model the spec names, with the label to show for it.
    ///
    /// # Errors
    /// [`SpecError`] naming the file, the field, the value and what was expected.
    pub fn parse(
        text: &str,
        file: &str,
        read_model: impl FnOnce(&str) -> Result<(Value, String), ModelError>,
    ) -> Result<Self, SpecError> {
        let value: Value = serde_json::from_str(text).map_err(|error| SpecError::Syntax {
            file: file.to_string(),
            line: error.line(),
            column: error.column(),
            message: strip_position(&error.to_string()),
        })?;
        let spec: SpecFile = serde_path_to_error::deserialize(&value).map_err(|error| {
            let field = error.path().to_string();
            SpecError::Schema {
                file: file.to_string(),
                field: if field.is_empty() { ".".into() } else { field },
                message: strip_position(&error.into_inner().to_string()),
            }
        })?;
        let invalid = |field: String, value: String, expected: &str| SpecError::Invalid {
            file: file.to_string(),
            field,
            value,
            expected: expected.to_string(),
        };
        let photons = spec.photons.unwrap_or(10_000);
        if photons == 0 {
            return Err(invalid("photons".into(), "0".into(), "a whole number >= 1"));
        }
        let max_steps = spec.max_steps.unwrap_or(WalkLimits::default().max_steps);
        if max_steps == 0 {
            return Err(invalid(
                "max_steps".into(),
                "0".into(),
                "a whole number >= 1",
            ));
        }
        if spec.parameters.is_empty() {
            return Err(invalid(
                "parameters".into(),
                "[]".into(),
                "at least one parameter ({\"path\": ..., \"values\"|\"linear\"|\"log\": ...})",
            ));
        }
        let mut parameters = Vec::with_capacity(spec.parameters.len());
        for (index, parameter) in spec.parameters.iter().enumerate() {
            let field = format!("parameters[{index}]");
            let path: JsonPath = parameter.path.parse().map_err(|source| SpecError::Path {
                file: file.to_string(),
                field: format!("{field}.path"),
                cause: source,
            })?;
            if parameters
                .iter()
                .any(|p: &ResolvedParameter| p.path == path.as_str())
            {
                return Err(invalid(
                    format!("{field}.path"),
                    format!("{:?}", path.as_str()),
                    "a path not already varied by an earlier parameter",
                ));
            }
            let values = match (&parameter.values, &parameter.linear, &parameter.log) {
                (Some(values), None, None) => {
                    if values.is_empty() {
                        return Err(invalid(
                            format!("{field}.values"),
                            "[]".into(),
                            "a non-empty list of values",
                        ));
                    }
                    values.clone()
                }
                (None, Some(range), None) => {
                    spaced(range, false).map_err(|(what, value, expected)| {
                        invalid(format!("{field}.linear.{what}"), value, expected)
                    })?
                }
                (None, None, Some(range)) => {
                    spaced(range, true).map_err(|(what, value, expected)| {
                        invalid(format!("{field}.log.{what}"), value, expected)
                    })?
                }
                _ => {
                    return Err(SpecError::Schema {
                        file: file.to_string(),
                        field,
                        message: "give exactly one of \"values\" (a list), \"linear\" or \"log\" ({\"from\", \"to\", \"count\"})".into(),
                    });
                }
            };
            parameters.push(ResolvedParameter {
                path: path.as_str().to_string(),
                values,
            });
        }
        if spec.combine == Combine::Zip {
            let first = parameters[0].values.len();
            if let Some((index, other)) = parameters
                .iter()
                .enumerate()
                .find(|(_, p)| p.values.len() != first)
            {
                return Err(invalid(
                    format!("parameters[{index}]"),
                    format!("{} values", other.values.len()),
                    &format!(
                        "{first} values, as parameters[0] has: \"combine\": \"zip\" pairs the k-th values of every parameter (use \"grid\" for every combination)"
                    ),
                ));
            }
        }
        let (model, model_label) = read_model(&spec.model).map_err(|source| SpecError::Model {
            file: file.to_string(),
            cause: Box::new(source),
        })?;
        model_from_value(&model, &model_label).map_err(|source| SpecError::Model {
            file: file.to_string(),
            cause: Box::new(source),
        })?;
        for (index, parameter) in parameters.iter().enumerate() {
            check_against_model(&model, parameter, index, file)?;
        }
        Ok(Self {
            model_file: model_label,
            model,
            photons,
            seed: spec.seed.unwrap_or(1),
            max_steps,
            method: spec.method.unwrap_or_default(),
            combine: spec.combine,
            parameters,
        })
    }

    /// The identity of the sweep: the fingerprint of everything that decides its results
    /// (base model content, photons, seed, step cap, combination and every value), not of
    /// file names.
    pub fn hash(&self) -> String {
        fingerprint(&json!({
            "format": SPEC_FORMAT,
            "model": self.model,
            "photons": self.photons,
            "seed": self.seed,
            "max_steps": self.max_steps,
            "method": self.method,
            "combine": self.combine,
            "parameters": self.parameters,
        }))
    }

    /// Number of points.
    pub fn point_count(&self) -> u64 {
        match self.combine {
            Combine::Grid => self
                .parameters
                .iter()
                .map(|p| p.values.len() as u64)
                .product(),
            Combine::Zip => self.parameters[0].values.len() as u64,
        }
    }

    /// The parameter values of point `index`, as `(path, value)` pairs.
    pub fn settings(&self, index: u64) -> Vec<(String, Value)> {
        let mut rest = index;
        let mut chosen = vec![0usize; self.parameters.len()];
        match self.combine {
            Combine::Grid => {
                for (slot, parameter) in chosen.iter_mut().zip(&self.parameters).rev() {
                    let n = parameter.values.len() as u64;
                    *slot = (rest % n) as usize;
                    rest /= n;
                }
            }
            Combine::Zip => chosen.fill(index as usize),
        }
        self.parameters
            .iter()
            .zip(chosen)
            .map(|(p, k)| (p.path.clone(), p.values[k].clone()))
            .collect()
    }

    /// Builds every point's medium (stream = point index) into a [`Sweep`]; `spec_file`
    /// labels errors.
    ///
    /// # Errors
    /// [`SpecError::Point`] for the first point whose model is invalid.
    pub fn build(&self, spec_file: &str) -> Result<Sweep, SpecError> {
        let mut sweep = Sweep::new(self.photons, self.seed)
            .max_steps(self.max_steps)
            .method(self.method)
            .model_label(&self.model_file);
        for index in 0..self.point_count() {
            let settings = self.settings(index);
            let mut model = self.model.clone();
            for (path, value) in &settings {
                let path: JsonPath = path.parse().expect("checked at load");
                path.set(&mut model, value.clone())
                    .expect("checked against the model at load");
            }
            let medium =
                model_from_value(&model, &self.model_file).map_err(|source| SpecError::Point {
                    file: spec_file.to_string(),
                    point: index,
                    settings: settings
                        .iter()
                        .map(|(path, value)| format!("{path} = {value}"))
                        .collect::<Vec<_>>()
                        .join(", "),
                    cause: Box::new(source),
                })?;
            sweep.push(SweepPoint::new(settings, medium));
        }
        Ok(sweep)
    }
}

/// Evenly spaced values of a range (in log for `log`), both ends included exactly.
/// Errors are (field, value, expected).
fn spaced(
    range: &RangeFile,
    log: bool,
) -> Result<Vec<Value>, (&'static str, String, &'static str)> {
    if range.count < 1 {
        return Err((
            "count",
            range.count.to_string(),
            if range.count < 0 {
                "a whole number >= 1 (a count cannot be negative)"
            } else {
                "a whole number >= 1 (an empty range gives no points)"
            },
        ));
    }
    let check = |name, value: f64| {
        if !value.is_finite() || (log && value <= 0.0) {
            Err((
                name,
                value.to_string(),
                if log {
                    "a finite number > 0 (log spacing)"
                } else {
                    "a finite number"
                },
            ))
        } else {
            Ok(())
        }
    };
    check("from", range.from)?;
    check("to", range.to)?;
    let n = range.count as u64;
    Ok((0..n)
        .map(|k| {
            let value = if k == 0 {
                range.from
            } else if k + 1 == n {
                range.to
            } else {
                let t = k as f64 / (n - 1) as f64;
                if log {
                    (range.from.ln() + t * (range.to.ln() - range.from.ln())).exp()
                } else {
                    range.from + t * (range.to - range.from)
                }
            };
            json!(value)
        })
        .collect())
}

/// Checks that a parameter's path leads into the base model and that each value has the
/// kind of the value it replaces (numbers must be finite).
fn check_against_model(
    model: &Value,
    parameter: &ResolvedParameter,
    index: usize,
    file: &str,
) -> Result<(), SpecError> {
    let path: JsonPath = parameter.path.parse().expect("parsed before");
    let existing = path.get(model).map_err(|source| SpecError::Path {
        file: file.to_string(),
        field: format!("parameters[{index}].path"),
        cause: source,
    })?;
    for (k, value) in parameter.values.iter().enumerate() {
        let field = format!("parameters[{index}].values[{k}]");
        if let Some(old) = existing
            && describe(old) != describe(value)
        {
            return Err(SpecError::Invalid {
                file: file.to_string(),
                field,
                value: value.to_string(),
                expected: format!(
                    "{}, like {} in the model ({old})",
                    describe(old),
                    parameter.path
                ),
            });
        }
        if let Some(number) = value.as_f64()
            && !number.is_finite()
        {
            return Err(SpecError::Invalid {
                file: file.to_string(),
                field,
                value: value.to_string(),
                expected: "a finite number".into(),
            });
        }
    }
    Ok(())
}

/// serde_json appends " at line L column C"; the position is reported separately.
fn strip_position(message: &str) -> String {
    match message.rfind(" at line ") {
        Some(index) => message[..index].to_string(),
        None => message.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const MODEL: &str = r#"{"geometry": "sphere", "layers": [{"outer_radius": 1, "extinction_coefficient": 5, "albedo": 1}]}"#;

    fn parse(text: &str) -> Result<ResolvedSpec, SpecError> {
        ResolvedSpec::parse(text, "spec.json", |_| {
            Ok((serde_json::from_str(MODEL).unwrap(), "model.json".into()))
        })
    }

    #[test]
    fn ranges_include_both_ends() {
        let spec = parse(
            r#"{"model": "m", "parameters": [
                {"path": "layers[0].extinction_coefficient", "log": {"from": 1, "to": 100, "count": 3}},
                {"path": "layers[0].albedo", "linear": {"from": 0.5, "to": 1, "count": 3}}]}"#,
        )
        .unwrap();
        assert_eq!(
            spec.parameters[0].values,
            vec![json!(1.0), json!(10.000000000000002), json!(100.0)]
        );
        assert_eq!(
            spec.parameters[1].values,
            vec![json!(0.5), json!(0.75), json!(1.0)]
        );
        assert_eq!(spec.point_count(), 9);
        // Grid: the first parameter varies slowest.
        assert_eq!(spec.settings(1)[0].1, json!(1.0));
        assert_eq!(spec.settings(1)[1].1, json!(0.75));
        assert_eq!(spec.settings(3)[0].1, json!(10.000000000000002));
        assert_eq!(spec.build("spec.json").unwrap().points().len(), 9);
    }

    #[test]
    fn zip_pairs_values_and_needs_equal_lengths() {
        let spec = parse(
            r#"{"model": "m", "combine": "zip", "parameters": [
                {"path": "layers[0].extinction_coefficient", "values": [1, 2]},
                {"path": "layers[0].albedo", "values": [0.9, 0.8]}]}"#,
        )
        .unwrap();
        assert_eq!(spec.point_count(), 2);
        assert_eq!(
            spec.settings(1),
            vec![
                ("layers[0].extinction_coefficient".to_string(), json!(2)),
                ("layers[0].albedo".to_string(), json!(0.8)),
            ]
        );
        let error = parse(
            r#"{"model": "m", "combine": "zip", "parameters": [
                {"path": "layers[0].extinction_coefficient", "values": [1, 2]},
                {"path": "layers[0].albedo", "values": [0.9]}]}"#,
        )
        .unwrap_err()
        .to_string();
        assert!(error.contains("parameters[1] = 1 values"), "{error}");
    }

    #[test]
    fn the_hash_follows_content_not_spelling() {
        let a = parse(
            r#"{"model": "m", "parameters": [{"path": "layers[0].albedo", "values": [0.5]}]}"#,
        )
        .unwrap();
        let b = parse(
            r#"{"parameters": [{"values": [0.5], "path": "layers[0].albedo"}], "model": "other"}"#,
        )
        .unwrap();
        let c = parse(r#"{"model": "m", "seed": 2, "parameters": [{"path": "layers[0].albedo", "values": [0.5]}]}"#).unwrap();
        assert_eq!(a.hash(), b.hash());
        assert_ne!(a.hash(), c.hash());
    }

    #[test]
    fn bad_specs_name_the_field() {
        let cases = [
            (
                r#"{"model": "m", "parameters": [{"path": "layers[3].albedo", "values": [0.5]}]}"#,
                "layers has 1 entry",
            ),
            (
                r#"{"model": "m", "parameters": [{"path": "layers[0].albedo", "values": ["high"]}]}"#,
                "parameters[0].values[0] = \"high\": expected a number",
            ),
            (
                r#"{"model": "m", "parameters": [{"path": "layers[0].albedo", "values": []}]}"#,
                "parameters[0].values = []",
            ),
            (
                r#"{"model": "m", "parameters": [{"path": "layers[0].albedo", "linear": {"from": 0, "to": 1, "count": -2}}]}"#,
                "count = -2",
            ),
            (
                r#"{"model": "m", "parameters": [{"path": "layers[0].albedo", "linear": {"from": 0, "to": 1, "count": 0}}]}"#,
                "empty range",
            ),
            (
                r#"{"model": "m", "parameters": [{"path": "layers[0].albedo", "log": {"from": 0, "to": 1, "count": 2}}]}"#,
                "log.from = 0",
            ),
            (
                r#"{"model": "m", "parameters": [{"path": "layers[0].albedo", "geometric": {"from": 1, "to": 2, "count": 2}}]}"#,
                "unknown field `geometric`",
            ),
            (
                r#"{"model": "m", "parameters": [{"path": "layers[0].albedo"}]}"#,
                "exactly one of",
            ),
            (
                r#"{"model": "m", "parameters": [{"path": "layers..albedo", "values": [1]}]}"#,
                "parameters[0].path",
            ),
            (
                r#"{"model": "m", "parameters": []}"#,
                "at least one parameter",
            ),
            (
                r#"{"model": "m", "photons": 0, "parameters": [{"path": "layers[0].albedo", "values": [1]}]}"#,
                "photons = 0",
            ),
        ];
        for (text, needle) in cases {
            let error = parse(text).unwrap_err().to_string();
            assert!(error.contains(needle), "{needle:?} not in {error:?}");
            assert!(error.starts_with("spec.json: "), "{error}");
        }
    }

    #[test]
    fn an_invalid_point_is_caught_when_building() {
        let spec = parse(
            r#"{"model": "m", "parameters": [{"path": "layers[0].albedo", "values": [0.5, 1.5]}]}"#,
        )
        .unwrap();
        let error = spec.build("spec.json").unwrap_err().to_string();
        assert!(
            error.contains("point 1 (layers[0].albedo = 1.5)"),
            "{error}"
        );
    }
}
