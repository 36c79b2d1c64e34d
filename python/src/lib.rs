//! The extension module `sojourn._sojourn`: the Python face of the sojourn library.
//!
//! This file holds the module, its exception, the `Model` class and the conversion of
//! Python values to model JSON; `calls.rs` holds the run, the profile and the sweep. Every
//! library call goes through the same entry points as the command line (`src/cli/`), so the
//! numbers and the error messages are the command line's. The Python package
//! (`python/sojourn/__init__.py`) wraps these in classes with NumPy arrays.

mod calls;

use std::path::PathBuf;

use pyo3::create_exception;
use pyo3::exceptions::{PyTypeError, PyValueError};
use pyo3::prelude::*;
use pyo3::types::{PyBool, PyDict, PyFloat, PyInt, PyList, PyString, PyTuple};
use serde_json::{Map, Number, Value};

use sojourn::medium::Medium;
use sojourn::medium::model_file::{LoadOptions, load_model_value, model_from_value_with};

create_exception!(
    _sojourn,
    SojournError,
    PyValueError,
    "Input that sojourn refuses: a model, sweep spec or argument the command line would \
     refuse too, with the same message (file or label, JSON path of the field, the value \
     and what was expected)."
);

/// A `SojournError` carrying `message`.
pub(crate) fn refused(message: impl std::fmt::Display) -> PyErr {
    SojournError::new_err(message.to_string())
}

/// The label of models built from a dict when the caller gives none.
pub(crate) const DICT_LABEL: &str = "<dict>";

/// A validated model: its JSON (model-file format version 1), the label its errors and
/// reports carry, and the medium the walkers use.
#[pyclass(frozen, module = "sojourn")]
pub struct Model {
    value: Value,
    label: String,
    medium: Medium,
}

impl Model {
    /// Validates `value` exactly as the command line validates a model file.
    fn build(value: Value, label: String, profile_tolerance: Option<f64>) -> PyResult<Self> {
        if let Some(tolerance) = profile_tolerance
            && !(tolerance > 0.0 && tolerance < 1.0)
        {
            return Err(refused(format!(
                "profile_tolerance = {tolerance}: expected a relative tolerance between 0 and 1 (0.01 is 1 %)"
            )));
        }
        let options = LoadOptions { profile_tolerance };
        let medium = model_from_value_with(&value, &label, &options).map_err(refused)?;
        Ok(Self {
            value,
            label,
            medium,
        })
    }

    /// The model's JSON.
    pub(crate) fn value(&self) -> &Value {
        &self.value
    }

    /// The label shown in reports and errors (the file as given, or the dict's label).
    pub(crate) fn label(&self) -> &str {
        &self.label
    }

    /// The medium.
    pub(crate) fn medium(&self) -> &Medium {
        &self.medium
    }
}

#[pymethods]
impl Model {
    /// Reads and validates a model file (JSON, format version 1), as `sojourn run FILE`
    /// does. `profile_tolerance` overrides the sub-shell tolerance of every tabulated
    /// profile layer (relative, 0 < t < 1). Raises `SojournError` with the command line's
    /// message (file, JSON path of the field, value, what was expected).
    #[staticmethod]
    #[pyo3(signature = (path, *, profile_tolerance=None))]
    fn from_file(path: PathBuf, profile_tolerance: Option<f64>) -> PyResult<Self> {
        let value = load_model_value(&path).map_err(refused)?;
        Self::build(value, path.display().to_string(), profile_tolerance)
    }

    /// Validates a model given as a dict in the model-file format (the same keys and
    /// values as the JSON file; lists, tuples and NumPy arrays for arrays). `label`
    /// (default `"<dict>"`) stands for the file name in errors and reports. Raises
    /// `SojournError` with the message the command line gives for the same content in a
    /// file named `label`, or `TypeError` for a value JSON cannot hold.
    #[staticmethod]
    #[pyo3(signature = (model, *, label=None, profile_tolerance=None))]
    fn from_dict(
        model: &Bound<'_, PyAny>,
        label: Option<String>,
        profile_tolerance: Option<f64>,
    ) -> PyResult<Self> {
        let label = label.unwrap_or_else(|| DICT_LABEL.to_string());
        if !model.is_instance_of::<PyDict>() {
            return Err(PyTypeError::new_err(format!(
                "Model.from_dict takes a dict, not {}",
                type_name(model)
            )));
        }
        let value = to_json(model, &label, "")?;
        Self::build(value, label, profile_tolerance)
    }

    /// The model as a dict in the model-file format (what `json.load` gives for its file).
    fn to_dict<'py>(&self, py: Python<'py>) -> PyResult<Bound<'py, PyAny>> {
        json_loads(py, &self.value.to_string())
    }

    /// The model's name (empty if it has none).
    #[getter]
    fn name(&self) -> &str {
        self.medium.name()
    }

    /// `"sphere"` or `"slab"`.
    #[getter]
    fn geometry(&self) -> String {
        match serde_json::to_value(self.medium.geometry()) {
            Ok(Value::String(name)) => name,
            _ => format!("{:?}", self.medium.geometry()).to_lowercase(),
        }
    }

    /// The file the model was read from as given, or the label of a dict model.
    #[getter(label)]
    fn label_py(&self) -> &str {
        &self.label
    }

    /// Number of layers the walkers see (a tabulated profile counts its sub-shells).
    #[getter]
    fn layers(&self) -> usize {
        self.medium.layers().len()
    }

    fn __repr__(&self) -> String {
        format!(
            "<sojourn.Model {:?}: {}, {} layer(s), from {}>",
            self.medium.name(),
            self.geometry(),
            self.medium.layers().len(),
            self.label
        )
    }
}

/// `json.loads(text)`: Python objects with the key order and the exact floats of the text.
pub(crate) fn json_loads<'py>(py: Python<'py>, text: &str) -> PyResult<Bound<'py, PyAny>> {
    py.import("json")?.call_method1("loads", (text,))
}

/// The Python type name of `object`, for messages.
pub(crate) fn type_name(object: &Bound<'_, PyAny>) -> String {
    object
        .get_type()
        .name()
        .map(|name| name.to_string())
        .unwrap_or_else(|_| "object".into())
}

/// The JSON path of a dict entry or list item inside `path`, spelled as in the library's
/// errors (`layers[0].albedo`).
fn child_path(path: &str, key: &str) -> String {
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

/// Converts a Python value to JSON: dict (string keys), list, tuple, str, int, float, bool,
/// None, and anything with `tolist()` (NumPy arrays and scalars). `label` and `path` name
/// the place of a value that cannot be converted.
pub(crate) fn to_json(object: &Bound<'_, PyAny>, label: &str, path: &str) -> PyResult<Value> {
    let shown = if path.is_empty() { "." } else { path };
    if object.is_none() {
        return Ok(Value::Null);
    }
    if let Ok(flag) = object.cast::<PyBool>() {
        return Ok(Value::Bool(flag.is_true()));
    }
    if let Ok(number) = object.cast::<PyFloat>() {
        let number = number.value();
        return Number::from_f64(number).map(Value::Number).ok_or_else(|| {
            refused(format!(
                "{label}: {shown} = {number}: expected a finite number (JSON has no NaN or infinity)"
            ))
        });
    }
    if object.is_instance_of::<PyInt>() {
        if let Ok(number) = object.extract::<i64>() {
            return Ok(Value::from(number));
        }
        if let Ok(number) = object.extract::<u64>() {
            return Ok(Value::from(number));
        }
        // Like a JSON parser, take integers beyond 64 bits as floats.
        let number: f64 = object.extract()?;
        return Ok(Number::from_f64(number).map_or(Value::Null, Value::Number));
    }
    if let Ok(text) = object.cast::<PyString>() {
        return Ok(Value::String(text.to_str()?.to_string()));
    }
    if let Ok(dict) = object.cast::<PyDict>() {
        let mut map = Map::new();
        for (key, item) in dict.iter() {
            let Ok(key) = key.cast::<PyString>() else {
                return Err(PyTypeError::new_err(format!(
                    "{label}: {shown}: key {} is a {}: JSON keys are strings",
                    key.repr()?,
                    type_name(&key)
                )));
            };
            let key = key.to_str()?.to_string();
            let value = to_json(&item, label, &child_path(path, &key))?;
            map.insert(key, value);
        }
        return Ok(Value::Object(map));
    }
    if object.is_instance_of::<PyList>() || object.is_instance_of::<PyTuple>() {
        let mut items = Vec::new();
        for (index, item) in object.try_iter()?.enumerate() {
            items.push(to_json(&item?, label, &format!("{path}[{index}]"))?);
        }
        return Ok(Value::Array(items));
    }
    if object.hasattr("tolist")? {
        let plain = object.call_method0("tolist")?;
        if !plain.is(object) && !plain.get_type().is(object.get_type()) {
            return to_json(&plain, label, path);
        }
    }
    Err(PyTypeError::new_err(format!(
        "{label}: {shown}: a {} is not a JSON value (expected dict, list, str, int, float, bool or None)",
        type_name(object)
    )))
}

/// The extension module.
#[pymodule]
fn _sojourn(module: &Bound<'_, PyModule>) -> PyResult<()> {
    module.add("SojournError", module.py().get_type::<SojournError>())?;
    module.add("__version__", env!("CARGO_PKG_VERSION"))?;
    module.add_class::<Model>()?;
    module.add_class::<calls::RunOutput>()?;
    module.add_function(wrap_pyfunction!(calls::run, module)?)?;
    module.add_function(wrap_pyfunction!(calls::profile, module)?)?;
    module.add_function(wrap_pyfunction!(calls::sweep, module)?)?;
    Ok(())
}
