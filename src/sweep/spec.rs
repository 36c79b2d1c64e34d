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
use crate::input::{
    InputError, MAX_SWEEP_POINTS, MAX_TEXT_BYTES, plain_message, read_text, strip_bom,
};
use crate::medium::model_file::{ModelError, load_model_value, model_from_value};
use crate::simulation::{Absorption, Method};
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
    /// The spec file is not readable within the input limits (see [`crate::input`]).
    #[error(transparent)]
    Input(#[from] InputError),
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
#[serde(
    deny_unknown_fields,
    expecting = "a sweep spec: an object such as {\"model\": \"m.json\", \"parameters\": [...]}"
)]
struct SpecFile {
    model: String,
    photons: Option<u64>,
    seed: Option<u64>,
    max_steps: Option<u64>,
    method: Option<Method>,
    absorption: Option<Absorption>,
    parameters: Vec<ParameterFile>,
    #[serde(default)]
    combine: Combine,
}

/// One parameter as written: a path and exactly one of the value kinds.
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a parameter: an object such as {\"path\": \"layers[0].albedo\", \"values\": [0.9, 1]}"
)]
struct ParameterFile {
    path: String,
    values: Option<Vec<Value>>,
    linear: Option<RangeFile>,
    log: Option<RangeFile>,
}

/// A range as written; `count` is signed so that a negative count gets its own message.
#[derive(Debug, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a range: an object such as {\"from\": 1, \"to\": 10, \"count\": 5}"
)]
struct RangeFile {
    from: f64,
    to: f64,
    count: i64,
}

/// One parameter with its values spelled out.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ResolvedParameter {
    path: String,
    values: Vec<Value>,
}

impl ResolvedParameter {
    /// Path into the model, e.g. `layers[0].albedo`.
    pub fn path(&self) -> &str {
        &self.path
    }

    /// Every value it takes, in order.
    pub fn values(&self) -> &[Value] {
        &self.values
    }
}

/// A sweep with every value spelled out and the base model inlined: all that is needed to
/// rebuild its points, with no file. Its [`ResolvedSpec::hash`] identifies the sweep.
///
/// It holds only valid sweeps: it is made by [`ResolvedSpec::parse`] (or
/// [`ResolvedSpec::load`]), and reading one back from JSON (a sweep shard bundle) runs the
/// same checks, so that every point it names builds from a valid base model.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(try_from = "ResolvedSpecRepr")]
pub struct ResolvedSpec {
    model_file: String,
    model: Value,
    photons: u64,
    seed: u64,
    max_steps: u64,
    method: Method,
    /// Absorption treatment; left out of the JSON when analog, as before it existed.
    #[serde(default, skip_serializing_if = "is_analog")]
    absorption: Absorption,
    combine: Combine,
    parameters: Vec<ResolvedParameter>,
}

/// Whether `absorption` is analog (left out of resolved specs and their hash).
fn is_analog(absorption: &Absorption) -> bool {
    *absorption == Absorption::Analog
}

/// A [`ResolvedSpec`] as read from JSON, before its checks.
#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ResolvedSpecRepr {
    model_file: String,
    model: Value,
    photons: u64,
    seed: u64,
    max_steps: u64,
    #[serde(default)]
    method: Method,
    #[serde(default)]
    absorption: Absorption,
    combine: Combine,
    parameters: Vec<ResolvedParameter>,
}

/// The label of a resolved spec read back from JSON, in its errors.
const EMBEDDED_LABEL: &str = "embedded sweep spec";

impl TryFrom<ResolvedSpecRepr> for ResolvedSpec {
    type Error = SpecError;

    fn try_from(repr: ResolvedSpecRepr) -> Result<Self, SpecError> {
        let spec = ResolvedSpec {
            model_file: repr.model_file,
            model: repr.model,
            photons: repr.photons,
            seed: repr.seed,
            max_steps: repr.max_steps,
            method: repr.method,
            absorption: repr.absorption,
            combine: repr.combine,
            parameters: repr.parameters,
        };
        spec.validate(EMBEDDED_LABEL)?;
        Ok(spec)
    }
}

impl ResolvedSpec {
    /// Reads a spec file and the model it names (relative to the spec's folder), checks
    /// both and resolves every value. Both files are read within
    /// [`crate::input::MAX_TEXT_BYTES`].
    ///
    /// # Errors
    /// [`SpecError`] naming the file, the field, the value and what was expected.
    pub fn load(path: &Path) -> Result<Self, SpecError> {
        let file = path.display().to_string();
        let text = read_text(path, MAX_TEXT_BYTES, "sweep spec")?;
        let directory = path.parent().unwrap_or(Path::new(""));
        Self::parse(&text, &file, |model| {
            let model_path = directory.join(model);
            let label = model_path.display().to_string();
            Ok((load_model_value(&model_path)?, label))
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
        let value: Value =
            serde_json::from_str(strip_bom(text)).map_err(|error| SpecError::Syntax {
                file: file.to_string(),
                line: error.line(),
                column: error.column(),
                message: plain_message(&error.to_string()),
            })?;
        // serde would read a list as the fields in order; a spec is an object.
        if !value.is_object() {
            return Err(SpecError::Schema {
                file: file.to_string(),
                field: ".".into(),
                message: format!(
                    "{}: expected a sweep spec, an object such as {{\"model\": \"m.json\", \"parameters\": [...]}}",
                    crate::input::json_kind(&value)
                ),
            });
        }
        let spec: SpecFile = serde_path_to_error::deserialize(&value).map_err(|error| {
            let field = error.path().to_string();
            SpecError::Schema {
                file: file.to_string(),
                field: if field.is_empty() { ".".into() } else { field },
                message: plain_message(&error.into_inner().to_string()),
            }
        })?;
        let invalid = |field: String, value: String, expected: &str| SpecError::Invalid {
            file: file.to_string(),
            field,
            value,
            expected: expected.to_string(),
        };
        let mut parameters = Vec::with_capacity(spec.parameters.len());
        for (index, parameter) in spec.parameters.iter().enumerate() {
            let field = format!("parameters[{index}]");
            let values = match (&parameter.values, &parameter.linear, &parameter.log) {
                (Some(values), None, None) => values.clone(),
                (None, Some(range), None) => {
                    spaced(range, false).map_err(|(what, value, expected)| {
                        invalid(format!("{field}.linear.{what}"), value, &expected)
                    })?
                }
                (None, None, Some(range)) => {
                    spaced(range, true).map_err(|(what, value, expected)| {
                        invalid(format!("{field}.log.{what}"), value, &expected)
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
                path: parameter.path.clone(),
                values,
            });
        }
        let mut resolved = Self {
            model_file: String::new(),
            model: Value::Null,
            photons: spec.photons.unwrap_or(10_000),
            seed: spec.seed.unwrap_or(1),
            max_steps: spec.max_steps.unwrap_or(WalkLimits::default().max_steps),
            method: spec.method.unwrap_or_default(),
            absorption: spec.absorption.unwrap_or_default(),
            combine: spec.combine,
            parameters,
        };
        // Everything but the model first: a bad count is refused before any file is read.
        resolved.validate_settings(file)?;
        let (model, model_label) = read_model(&spec.model).map_err(|source| SpecError::Model {
            file: file.to_string(),
            cause: Box::new(source),
        })?;
        resolved.model = model;
        resolved.model_file = model_label;
        resolved.validate_model(file)?;
        Ok(resolved)
    }

    /// Every check of [`ResolvedSpec::parse`]; `file` labels errors.
    fn validate(&self, file: &str) -> Result<(), SpecError> {
        self.validate_settings(file)?;
        self.validate_model(file)
    }

    /// The checks that need no model: counts, paths, list lengths, the number of points.
    fn validate_settings(&self, file: &str) -> Result<(), SpecError> {
        let invalid = |field: String, value: String, expected: &str| SpecError::Invalid {
            file: file.to_string(),
            field,
            value,
            expected: expected.to_string(),
        };
        if self.photons == 0 {
            return Err(invalid("photons".into(), "0".into(), "a whole number >= 1"));
        }
        if self.max_steps == 0 {
            return Err(invalid(
                "max_steps".into(),
                "0".into(),
                "a whole number >= 1",
            ));
        }
        if self.parameters.is_empty() {
            return Err(invalid(
                "parameters".into(),
                "[]".into(),
                "at least one parameter ({\"path\": ..., \"values\"|\"linear\"|\"log\": ...})",
            ));
        }
        for (index, parameter) in self.parameters.iter().enumerate() {
            let field = format!("parameters[{index}]");
            let path: JsonPath = parameter.path.parse().map_err(|source| SpecError::Path {
                file: file.to_string(),
                field: format!("{field}.path"),
                cause: source,
            })?;
            if self.parameters[..index]
                .iter()
                .any(|p| p.path == path.as_str())
            {
                return Err(invalid(
                    format!("{field}.path"),
                    format!("{:?}", path.as_str()),
                    "a path not already varied by an earlier parameter",
                ));
            }
            if parameter.values.is_empty() {
                return Err(invalid(
                    format!("{field}.values"),
                    "[]".into(),
                    "a non-empty list of values",
                ));
            }
            if parameter.values.len() as u64 > MAX_SWEEP_POINTS {
                return Err(invalid(
                    format!("{field}.values"),
                    format!("{} values", parameter.values.len()),
                    &format!(
                        "at most {MAX_SWEEP_POINTS} values (a sweep has at most {MAX_SWEEP_POINTS} points)"
                    ),
                ));
            }
        }
        if self.combine == Combine::Zip {
            let first = self.parameters[0].values.len();
            if let Some((index, other)) = self
                .parameters
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
        let points = self
            .parameters
            .iter()
            .try_fold(1u64, |product, p| match self.combine {
                Combine::Grid => product.checked_mul(p.values.len() as u64),
                Combine::Zip => Some(p.values.len() as u64),
            });
        match points {
            Some(points) if points <= MAX_SWEEP_POINTS => Ok(()),
            _ => Err(invalid(
                "parameters".into(),
                match points {
                    Some(points) => format!("{points} points"),
                    None => "more than 2^64 points".into(),
                },
                &format!(
                    "at most {MAX_SWEEP_POINTS} points (a grid has the product of the value counts; split the study into several sweeps)"
                ),
            )),
        }
    }

    /// The checks against the base model: it builds, and every path leads into it with
    /// values of the kind it replaces.
    fn validate_model(&self, file: &str) -> Result<(), SpecError> {
        model_from_value(&self.model, &self.model_file).map_err(|source| SpecError::Model {
            file: file.to_string(),
            cause: Box::new(source),
        })?;
        for (index, parameter) in self.parameters.iter().enumerate() {
            check_against_model(&self.model, parameter, index, file)?;
        }
        Ok(())
    }

    /// The model file as the spec names it (a label only; not part of the hash).
    pub fn model_file(&self) -> &str {
        &self.model_file
    }

    /// The base model's JSON.
    pub fn model(&self) -> &Value {
        &self.model
    }

    /// Photons per point.
    pub fn photons(&self) -> u64 {
        self.photons
    }

    /// Seed of the random streams (the stream of point i is i).
    pub fn seed(&self) -> u64 {
        self.seed
    }

    /// Step cap per photon.
    pub fn max_steps(&self) -> u64 {
        self.max_steps
    }

    /// Walk method (default `auto`).
    pub fn method(&self) -> Method {
        self.method
    }

    /// Absorption treatment (default analog).
    pub fn absorption(&self) -> Absorption {
        self.absorption
    }

    /// How parameters combine.
    pub fn combine(&self) -> Combine {
        self.combine
    }

    /// The parameters, in order.
    pub fn parameters(&self) -> &[ResolvedParameter] {
        &self.parameters
    }

    /// Whether `other` is the same sweep, whatever its model label.
    pub fn same_sweep(&self, other: &ResolvedSpec) -> bool {
        ResolvedSpec {
            model_file: String::new(),
            ..self.clone()
        } == ResolvedSpec {
            model_file: String::new(),
            ..other.clone()
        }
    }

    /// The identity of the sweep: the fingerprint of everything that decides its results
    /// (base model content, photons, seed, step cap, combination and every value), not of
    /// file names.
    pub fn hash(&self) -> String {
        let mut identity = json!({
            "format": SPEC_FORMAT,
            "model": self.model,
            "photons": self.photons,
            "seed": self.seed,
            "max_steps": self.max_steps,
            "method": self.method,
            "combine": self.combine,
            "parameters": self.parameters,
        });
        // Analog sweeps keep the hash they had before the absorption setting existed.
        if !is_analog(&self.absorption) {
            identity["absorption"] = json!(self.absorption);
        }
        fingerprint(&identity)
    }

    /// Number of points (at most [`MAX_SWEEP_POINTS`]).
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
    ///
    /// # Panics
    /// If `index` is not below [`ResolvedSpec::point_count`].
    pub fn settings(&self, index: u64) -> Vec<(String, Value)> {
        assert!(
            index < self.point_count(),
            "point {index} of {}",
            self.point_count()
        );
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
            .absorption(self.absorption)
            .model_label(&self.model_file);
        for index in 0..self.point_count() {
            let settings = self.settings(index);
            let mut model = self.model.clone();
            for (field, (path, value)) in settings.iter().enumerate() {
                path.parse::<JsonPath>()
                    .and_then(|path| path.set(&mut model, value.clone()))
                    .map_err(|cause| SpecError::Path {
                        file: spec_file.to_string(),
                        field: format!("parameters[{field}].path"),
                        cause,
                    })?;
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
fn spaced(range: &RangeFile, log: bool) -> Result<Vec<Value>, (&'static str, String, String)> {
    if range.count < 1 {
        return Err((
            "count",
            range.count.to_string(),
            if range.count < 0 {
                "a whole number >= 1 (a count cannot be negative)".into()
            } else {
                "a whole number >= 1 (an empty range gives no points)".into()
            },
        ));
    }
    if range.count as u64 > MAX_SWEEP_POINTS {
        return Err((
            "count",
            range.count.to_string(),
            format!("at most {MAX_SWEEP_POINTS} (a sweep has at most {MAX_SWEEP_POINTS} points)"),
        ));
    }
    let check = |name, value: f64| {
        if !value.is_finite() || (log && value <= 0.0) {
            Err((
                name,
                value.to_string(),
                if log {
                    "a finite number > 0 (log spacing)".into()
                } else {
                    "a finite number".into()
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
            spec.parameters()[0].values(),
            vec![json!(1.0), json!(10.000000000000002), json!(100.0)]
        );
        assert_eq!(
            spec.parameters()[1].values(),
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
