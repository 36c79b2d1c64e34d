//! Model files: the JSON description of a medium (format version 1), its loader and its
//! validation. Lengths are converted to cm once, here; errors name the file, the JSON path of
//! the field, the value and what was expected.

use std::path::Path;
use std::sync::Arc;

use serde::Deserialize;
use thiserror::Error;

use serde::Serialize;

use super::detector::{Acceptance, Detector, Face};
use super::profile::{
    ColumnValues, DEFAULT_TOLERANCE, ProfileColumns, ProfileOpacity, ProfileSummary, ProfileTable,
    RadialStructure,
};
use super::{BeamProfile, GasSample, Layer, Medium, MediumError, Quantity, Source};
use crate::input::{
    InputError, MAX_COEFFICIENT_PER_CM, MAX_LAYERS, MAX_LENGTH_CM, MAX_OPTICAL_DEPTH,
    MAX_TEXT_BYTES, MIN_COEFFICIENT_PER_CM, MIN_LENGTH_CM, field_and_message, plain_message,
    read_text, strip_bom,
};
use crate::opacity::{OpacitySpec, OpacityTable, OutsidePolicy};
use crate::transport::PhaseFunction;
use crate::units::LengthUnit;

/// The demo model compiled into the binary: a two-zone, star-like test sphere.
pub const DEMO_MODEL_JSON: &str = include_str!("../../models/ember-two-zone.json");

/// Label used in errors and reports for the embedded demo model.
pub const DEMO_MODEL_LABEL: &str = "<embedded demo: models/ember-two-zone.json>";

/// A model file that could not be turned into a medium.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum ModelError {
    /// The file could not be read.
    #[error("{file}: cannot read the model file: {cause}")]
    Read {
        /// The file.
        file: String,
        /// The operating-system error.
        cause: std::io::Error,
    },
    /// The text is not JSON.
    #[error("{file}: line {line}, column {column}: not valid JSON: {message}")]
    Syntax {
        /// The file.
        file: String,
        /// 1-based line of the problem.
        line: usize,
        /// 1-based column of the problem.
        column: usize,
        /// What the JSON parser reported.
        message: String,
    },
    /// JSON of the wrong shape: unknown key, wrong type, missing field, unknown name.
    #[error("{file}: {field}: {message}")]
    Schema {
        /// The file.
        file: String,
        /// JSON path of the field (`.` for the top level).
        field: String,
        /// What the deserialiser reported.
        message: String,
    },
    /// A value outside its allowed range, or an inconsistent combination.
    #[error("{file}: {field} = {value}: expected {expected}")]
    Invalid {
        /// The file.
        file: String,
        /// JSON path of the field, e.g. `layers[1].albedo`.
        field: String,
        /// The value as the user wrote it (in the file's length unit).
        value: String,
        /// What would have been accepted.
        expected: String,
    },
    /// The file is not readable within the input limits (a directory or a device, too
    /// large, not UTF-8); see [`crate::input`].
    #[error(transparent)]
    Input(#[from] InputError),
    /// A structural problem that is not about one value.
    #[error("{file}: {field}: {problem}")]
    Structure {
        /// The file.
        file: String,
        /// JSON path of the field.
        field: String,
        /// What is wrong.
        problem: String,
    },
}

/// Geometry keyword of a model file.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
enum GeometrySpec {
    Sphere,
    Slab,
}

/// The top level of a model file, as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a model: an object such as {\"geometry\": \"slab\", \"layers\": [...]}"
)]
struct ModelSpec {
    name: Option<String>,
    geometry: GeometrySpec,
    #[serde(default)]
    length_unit: LengthUnit,
    layers: Vec<LayerSpec>,
    ambient_index: Option<AmbientSpec>,
    source: Option<SourceSpec>,
    detectors: Option<Vec<DetectorSpec>>,
}

/// One detector on a slab face, as written: `{"face": "top", "inner_radius": R1,
/// "outer_radius": R2, "acceptance_half_angle_deg": A}` or with `"numerical_aperture"`
/// instead of the half-angle (neither: every direction is accepted).
#[derive(Debug, Clone, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a detector: an object such as {\"face\": \"top\", \"inner_radius\": 0.5, \
                 \"outer_radius\": 1, \"numerical_aperture\": 0.22}"
)]
struct DetectorSpec {
    name: Option<String>,
    face: Face,
    inner_radius: Option<f64>,
    outer_radius: f64,
    acceptance_half_angle_deg: Option<f64>,
    numerical_aperture: Option<f64>,
}

/// The ambient refractive index: one number for both sides, or each side apart.
#[derive(Debug, Clone)]
enum AmbientSpec {
    Both(f64),
    Sides(AmbientSides),
}

impl<'de> Deserialize<'de> for AmbientSpec {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct AmbientVisitor;
        impl<'de> serde::de::Visitor<'de> for AmbientVisitor {
            type Value = AmbientSpec;

            fn expecting(&self, formatter: &mut std::fmt::Formatter) -> std::fmt::Result {
                formatter.write_str("a refractive index (a number) or {\"above\": N, \"below\": N}")
            }

            fn visit_f64<E: serde::de::Error>(self, value: f64) -> Result<Self::Value, E> {
                Ok(AmbientSpec::Both(value))
            }

            fn visit_i64<E: serde::de::Error>(self, value: i64) -> Result<Self::Value, E> {
                Ok(AmbientSpec::Both(value as f64))
            }

            fn visit_u64<E: serde::de::Error>(self, value: u64) -> Result<Self::Value, E> {
                Ok(AmbientSpec::Both(value as f64))
            }

            fn visit_map<A: serde::de::MapAccess<'de>>(
                self,
                map: A,
            ) -> Result<Self::Value, A::Error> {
                AmbientSides::deserialize(serde::de::value::MapAccessDeserializer::new(map))
                    .map(AmbientSpec::Sides)
            }
        }
        deserializer.deserialize_any(AmbientVisitor)
    }
}

/// Refractive indices above and below a slab.
#[derive(Debug, Clone, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "{\"above\": N, \"below\": N}, the refractive indices on each side"
)]
struct AmbientSides {
    above: f64,
    below: f64,
}

/// One layer, as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a layer: an object such as {\"thickness\": 1, \"extinction_coefficient\": 2}"
)]
struct LayerSpec {
    name: Option<String>,
    outer_radius: Option<f64>,
    thickness: Option<f64>,
    opacity: Option<f64>,
    density: Option<f64>,
    extinction_coefficient: Option<f64>,
    scattering_coefficient: Option<f64>,
    absorption_coefficient: Option<f64>,
    albedo: Option<f64>,
    phase: Option<PhaseSpec>,
    refractive_index: Option<f64>,
    profile: Option<ProfileSpec>,
}

/// A tabulated radial profile inside a sphere layer (`"profile"`), as written in a model
/// file. Radii are in the file's `length_unit`; density in g cm⁻³, temperature in K, opacity
/// in cm² g⁻¹ whatever the length unit. See [`crate::medium::profile`] for how it becomes
/// sub-shells.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a profile: an object with \"radius\", \"density\" and more, one value per row"
)]
pub struct ProfileSpec {
    /// Radius of each row, in the file's `length_unit`, strictly increasing from the centre.
    pub radius: Vec<f64>,
    /// Density per row, g cm⁻³.
    pub density: Vec<f64>,
    /// Temperature per row, K (required with `opacity_law`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature: Option<Vec<f64>>,
    /// Hydrogen mass fraction X: a number or one per row (required with `opacity_law`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub hydrogen: Option<ColumnValues>,
    /// Metal mass fraction Z: a number or one per row (required with `opacity_law`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub metals: Option<ColumnValues>,
    /// Opacity law evaluated at each radius (exclusive with `opacity`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub opacity_law: Option<OpacitySpec>,
    /// Mass opacity per row, cm² g⁻¹ (exclusive with `opacity_law`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub opacity: Option<Vec<f64>>,
    /// An opacity table κ(T, ρ) evaluated at each radius (exclusive with `opacity_law` and
    /// `opacity`): its path, relative to the model file, or `{"file": PATH, "outside":
    /// "refuse" | "clamp"}`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub opacity_table: Option<OpacityTableSpec>,
    /// With `opacity`: fraction of it that is scattering, a number or one per row.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scattering_fraction: Option<ColumnValues>,
    /// Relative tolerance between neighbouring sub-shell extinctions (default 0.01).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tolerance: Option<f64>,
    /// Nuclear energy generation ε, erg g⁻¹ s⁻¹: a number or one per row (optional; needed
    /// for L(r), convective zones and the energy-generation source).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub energy_generation: Option<ColumnValues>,
}

/// The `opacity_table` of a profile: a path (relative to the model file), and what to do
/// with points outside the table. Written as `"PATH"` (outside points refused) or
/// `{"file": "PATH", "outside": "clamp"}`.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct OpacityTableSpec {
    /// Path of the table, relative to the model file's folder (or absolute).
    pub file: String,
    /// What to do with points outside the table.
    pub outside: OutsidePolicy,
}

impl Serialize for OpacityTableSpec {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        if self.outside == OutsidePolicy::Refuse {
            return serializer.serialize_str(&self.file);
        }
        let mut map = serializer.serialize_map(Some(2))?;
        map.serialize_entry("file", &self.file)?;
        map.serialize_entry("outside", &self.outside)?;
        map.end()
    }
}

impl<'de> Deserialize<'de> for OpacityTableSpec {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct TableVisitor;
        impl<'de> serde::de::Visitor<'de> for TableVisitor {
            type Value = OpacityTableSpec;

            fn expecting(&self, formatter: &mut std::fmt::Formatter) -> std::fmt::Result {
                formatter.write_str(
                    "the path of an opacity table, or {\"file\": PATH, \"outside\": \
                     \"refuse\" | \"clamp\"}",
                )
            }

            fn visit_str<E: serde::de::Error>(self, path: &str) -> Result<Self::Value, E> {
                Ok(OpacityTableSpec {
                    file: path.to_string(),
                    outside: OutsidePolicy::Refuse,
                })
            }

            fn visit_map<A: serde::de::MapAccess<'de>>(
                self,
                mut map: A,
            ) -> Result<Self::Value, A::Error> {
                let (mut file, mut outside) = (None, None);
                while let Some(key) = map.next_key::<String>()? {
                    match key.as_str() {
                        "file" => file = Some(map.next_value::<String>()?),
                        "outside" => outside = Some(map.next_value::<OutsidePolicy>()?),
                        other => {
                            return Err(serde::de::Error::unknown_field(
                                other,
                                &["file", "outside"],
                            ));
                        }
                    }
                }
                Ok(OpacityTableSpec {
                    file: file.ok_or_else(|| serde::de::Error::missing_field("file"))?,
                    outside: outside.unwrap_or_default(),
                })
            }
        }
        deserializer.deserialize_any(TableVisitor)
    }
}

impl ProfileSpec {
    /// The spec of `table`, with radii written in `unit` and the given `tolerance`.
    pub fn from_table(table: &ProfileTable, unit: LengthUnit, tolerance: Option<f64>) -> Self {
        let columns = table.columns();
        let to_cm = unit.to_cm();
        let (opacity_law, opacity, scattering_fraction) = match &columns.opacity {
            ProfileOpacity::Law(spec) => (Some(spec.clone()), None, None),
            ProfileOpacity::Tabulated {
                opacity_cm2_g,
                scattering_fraction,
            } => (
                None,
                Some(opacity_cm2_g.clone()),
                scattering_fraction.clone(),
            ),
            ProfileOpacity::Table { .. } => (None, None, None),
        };
        let opacity_table = match &columns.opacity {
            ProfileOpacity::Table { file, outside, .. } => Some(OpacityTableSpec {
                file: file.clone(),
                outside: *outside,
            }),
            _ => None,
        };
        Self {
            radius: columns
                .radius_cm
                .iter()
                .map(|r| if to_cm == 1.0 { *r } else { r / to_cm })
                .collect(),
            density: columns.density_g_cm3.clone(),
            temperature: columns.temperature_k.clone(),
            hydrogen: columns.hydrogen_x.clone(),
            metals: columns.metals_z.clone(),
            opacity_law,
            opacity,
            opacity_table,
            scattering_fraction,
            tolerance,
            energy_generation: columns.energy_generation_erg_g_s.clone(),
        }
    }

    /// The validated table, radii converted to cm with `to_cm` (cm per length unit); an
    /// opacity table's path is taken relative to the current folder.
    ///
    /// # Errors
    /// As [`ProfileSpec::to_table_in`].
    pub fn to_table(&self, to_cm: f64) -> Result<ProfileTable, MediumError> {
        self.to_table_in(to_cm, Path::new(""))
    }

    /// The validated table, radii converted to cm with `to_cm` (cm per length unit); an
    /// opacity table's relative path is taken relative to `folder` (the model file's).
    ///
    /// # Errors
    /// As [`ProfileTable::new`]; not exactly one of `opacity_law`, `opacity` and
    /// `opacity_table`; a `scattering_fraction` without `opacity`; an opacity table that
    /// cannot be read or is invalid (the error names the table's file, line and value).
    pub fn to_table_in(&self, to_cm: f64, folder: &Path) -> Result<ProfileTable, MediumError> {
        let given = [
            self.opacity_law.is_some(),
            self.opacity.is_some(),
            self.opacity_table.is_some(),
        ];
        let count = given.iter().filter(|g| **g).count();
        let choices = "\"opacity_law\" (a law, e.g. {\"kind\": \"electron_scattering\"}), \
                       \"opacity\" (cm^2/g per row) or \"opacity_table\" (a table file)";
        if count == 0 {
            return Err(MediumError::Invalid {
                field: "opacity_law".into(),
                problem: format!("missing: give one of {choices}"),
            });
        }
        if count > 1 {
            return Err(MediumError::Invalid {
                field: "opacity".into(),
                problem: format!("give only one of {choices}, not both"),
            });
        }
        if self.scattering_fraction.is_some() && self.opacity.is_none() {
            return Err(MediumError::Invalid {
                field: "scattering_fraction".into(),
                problem: "only with \"opacity\" (cm^2/g per row): a law gives its own scattering \
                          fraction, and a table none"
                    .into(),
            });
        }
        let opacity = if let Some(law) = &self.opacity_law {
            ProfileOpacity::Law(law.clone())
        } else if let Some(values) = &self.opacity {
            ProfileOpacity::Tabulated {
                opacity_cm2_g: values.clone(),
                scattering_fraction: self.scattering_fraction.clone(),
            }
        } else {
            let spec = self.opacity_table.as_ref().expect("one opacity given");
            let path = folder.join(&spec.file);
            let table = OpacityTable::read(&path).map_err(|error| MediumError::Invalid {
                field: "opacity_table".into(),
                problem: error.to_string(),
            })?;
            ProfileOpacity::Table {
                file: spec.file.clone(),
                table: Arc::new(table),
                outside: spec.outside,
            }
        };
        ProfileTable::new(ProfileColumns {
            radius_cm: self.radius.iter().map(|r| r * to_cm).collect(),
            density_g_cm3: self.density.clone(),
            temperature_k: self.temperature.clone(),
            hydrogen_x: self.hydrogen.clone(),
            metals_z: self.metals.clone(),
            opacity,
            energy_generation_erg_g_s: self.energy_generation.clone(),
        })
    }
}

/// Options applied when a model file is loaded.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct LoadOptions {
    /// Overrides the `tolerance` of every profile layer (relative, 0 < t < 1).
    pub profile_tolerance: Option<f64>,
}

/// A model file holding one sphere made of a single tabulated profile layer, as a JSON
/// value ready to be written: `name`, `geometry: "sphere"`, `length_unit` and one layer
/// named `layer_name` with the `profile` of `table` (radii in `unit`).
pub fn profile_model_json(
    name: &str,
    unit: LengthUnit,
    layer_name: &str,
    table: &ProfileTable,
    tolerance: Option<f64>,
) -> serde_json::Value {
    #[derive(Serialize)]
    struct Layer<'a> {
        name: &'a str,
        profile: ProfileSpec,
    }
    #[derive(Serialize)]
    struct Model<'a> {
        name: &'a str,
        geometry: &'static str,
        length_unit: LengthUnit,
        layers: [Layer<'a>; 1],
    }
    serde_json::to_value(Model {
        name,
        geometry: "sphere",
        length_unit: unit,
        layers: [Layer {
            name: layer_name,
            profile: ProfileSpec::from_table(table, unit, tolerance),
        }],
    })
    .expect("a model serialises to JSON")
}

/// A phase function, as written: `{"kind": "isotropic"}`, `{"kind": "rayleigh"}` or
/// `{"kind": "henyey_greenstein", "g": G}`. A flat object rather than a tagged enum, so
/// that an error inside it names its field (`layers[0].phase.g`).
#[derive(Debug, Clone, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a phase function: {\"kind\": \"isotropic\"}, {\"kind\": \"rayleigh\"} or \
                 {\"kind\": \"henyey_greenstein\", \"g\": G}"
)]
struct PhaseSpec {
    kind: PhaseKind,
    g: Option<f64>,
}

/// Phase-function kinds.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
enum PhaseKind {
    Isotropic,
    HenyeyGreenstein,
    Rayleigh,
}

/// Beam profiles, as written.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
enum BeamProfileKind {
    Narrow,
    Gaussian,
    Flat,
}

/// Source kinds.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
enum SourceKind {
    Point,
    Plane,
    Beam,
    Diffuse,
    EnergyGeneration,
}

/// The source, as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(
    deny_unknown_fields,
    expecting = "a source: an object such as {\"kind\": \"point\", \"radius\": 0}"
)]
struct SourceSpec {
    kind: SourceKind,
    radius: Option<f64>,
    depth: Option<f64>,
    polar_angle_deg: Option<f64>,
    profile: Option<BeamProfileKind>,
}

/// Loads and validates a model file.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn load_model(path: &Path) -> Result<Medium, ModelError> {
    load_model_with(path, &LoadOptions::default())
}

/// Loads and validates a model file with `options`.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn load_model_with(path: &Path, options: &LoadOptions) -> Result<Medium, ModelError> {
    let file = path.display().to_string();
    let text = read_model_text(path)?;
    parse_model_with(&text, &file, options)
}

/// The text of a model file, within [`MAX_TEXT_BYTES`] (see [`crate::input::read_text`]).
fn read_model_text(path: &Path) -> Result<String, ModelError> {
    Ok(read_text(path, MAX_TEXT_BYTES, "model file")?)
}

/// Parses and validates model-file text; `file` labels errors.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn parse_model(text: &str, file: &str) -> Result<Medium, ModelError> {
    parse_model_with(text, file, &LoadOptions::default())
}

/// Parses and validates model-file text with `options`; `file` labels errors.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn parse_model_with(
    text: &str,
    file: &str,
    options: &LoadOptions,
) -> Result<Medium, ModelError> {
    model_from_value_with(&parse_model_value(text, file)?, file, options)
}

/// Parses model-file text into its JSON value without building the medium (for callers
/// that keep or edit the JSON, e.g. shard files and sweeps); `file` labels errors. A
/// leading UTF-8 byte-order mark is ignored.
///
/// # Errors
/// [`ModelError::Syntax`] with the line and column of the problem;
/// [`ModelError::Input`] for text longer than [`MAX_TEXT_BYTES`].
pub fn parse_model_value(text: &str, file: &str) -> Result<serde_json::Value, ModelError> {
    if text.len() as u64 > MAX_TEXT_BYTES {
        return Err(ModelError::Input(InputError::TooLarge {
            file: file.to_string(),
            what: "model file",
            size: crate::input::describe_bytes(text.len() as u64),
            limit: MAX_TEXT_BYTES,
        }));
    }
    serde_json::from_str(strip_bom(text)).map_err(|error| ModelError::Syntax {
        file: file.to_string(),
        line: error.line(),
        column: error.column(),
        message: plain_message(&error.to_string()),
    })
}

/// Reads a model file into its JSON value without building the medium; see
/// [`parse_model_value`].
///
/// # Errors
/// [`ModelError::Read`] or [`ModelError::Syntax`].
pub fn load_model_value(path: &Path) -> Result<serde_json::Value, ModelError> {
    let file = path.display().to_string();
    parse_model_value(&read_model_text(path)?, &file)
}

/// Builds a medium from an already parsed model-file JSON value; `file` labels errors.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn model_from_value(value: &serde_json::Value, file: &str) -> Result<Medium, ModelError> {
    model_from_value_with(value, file, &LoadOptions::default())
}

/// Builds a medium from an already parsed model-file JSON value with `options`; `file`
/// labels errors.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn model_from_value_with(
    value: &serde_json::Value,
    file: &str,
    options: &LoadOptions,
) -> Result<Medium, ModelError> {
    // serde would read a list as the fields in order; a model file is an object.
    if !value.is_object() {
        return Err(ModelError::Schema {
            file: file.to_string(),
            field: ".".into(),
            message: format!(
                "{}: expected a model, an object such as {{\"geometry\": \"slab\", \"layers\": [...]}}",
                crate::input::json_kind(value)
            ),
        });
    }
    let spec: ModelSpec = serde_path_to_error::deserialize(value).map_err(|error| {
        let (field, message) =
            field_and_message(&error.path().to_string(), &error.into_inner().to_string());
        ModelError::Schema {
            file: file.to_string(),
            field,
            message,
        }
    })?;
    if spec.layers.len() > MAX_LAYERS {
        return Err(ModelError::Invalid {
            file: file.to_string(),
            field: "layers".into(),
            value: format!("{} layers", spec.layers.len()),
            expected: format!(
                "at most {MAX_LAYERS} layers (a profile layer counts once, whatever its rows)"
            ),
        });
    }
    // An opacity table's path is relative to the model file's folder.
    let folder = Path::new(file).parent().unwrap_or(Path::new(""));
    build_medium(&spec, options, folder).map_err(|error| describe(error, file, spec.length_unit))
}

/// Turns a medium error into a model error in the file's own units.
fn describe(error: MediumError, file: &str, unit: LengthUnit) -> ModelError {
    match error {
        MediumError::InvalidValue {
            field,
            value,
            quantity,
            expected,
        } => {
            let shown = match quantity {
                Quantity::Length => format!("{} {}", show(value / unit.to_cm()), unit.symbol()),
                Quantity::InverseLength => {
                    format!("{} per {}", show(value * unit.to_cm()), unit.symbol())
                }
                Quantity::AngleDeg => format!("{} deg", show(value)),
                Quantity::Dimensionless => show(value),
            };
            let expected = convert_cm_mentions(&expected, unit);
            ModelError::Invalid {
                file: file.to_string(),
                field,
                value: shown,
                expected,
            }
        }
        MediumError::Invalid { field, problem } => ModelError::Structure {
            file: file.to_string(),
            field,
            problem,
        },
    }
}

/// A value as the user would write it: exact (the shortest form that reads back as the
/// same number), in exponent form when very large or small.
fn show(value: f64) -> String {
    if value != 0.0 && value.is_finite() && !(1e-5..1e7).contains(&value.abs()) {
        format!("{value:e}")
    } else {
        format!("{value}")
    }
}

/// Rewrites "<number> cm" inside a message into the file's length unit.
fn convert_cm_mentions(text: &str, unit: LengthUnit) -> String {
    if unit == LengthUnit::Cm {
        return text.to_string();
    }
    let words: Vec<&str> = text.split(' ').collect();
    let mut out: Vec<String> = Vec::with_capacity(words.len());
    for (index, word) in words.iter().enumerate() {
        let next_is_cm = words
            .get(index + 1)
            .is_some_and(|w| w.trim_end_matches([')', ']', ':', ',']) == "cm");
        let number = word.trim_start_matches(['(', '[']);
        match (next_is_cm, number.parse::<f64>()) {
            (true, Ok(value)) => {
                let prefix = &word[..word.len() - number.len()];
                out.push(format!("{prefix}{}", value / unit.to_cm()));
            }
            _ if *word == "cm" || word.starts_with("cm)") || word.starts_with("cm]") => {
                out.push(word.replacen("cm", unit.symbol(), 1));
            }
            _ => out.push((*word).to_string()),
        }
    }
    out.join(" ")
}

fn build_medium(
    spec: &ModelSpec,
    options: &LoadOptions,
    folder: &Path,
) -> Result<Medium, MediumError> {
    let to_cm = spec.length_unit.to_cm();
    let mut items = Vec::with_capacity(spec.layers.len());
    let mut smooth = Vec::new();
    let mut profiles: Vec<ProfileSummary> = Vec::new();
    let mut previous_profile_outer: Option<f64> = None;
    // The radial structure of a sphere made only of profile layers.
    let mut structure: Option<RadialStructure> = None;
    let all_profiles = spec.layers.iter().all(|layer| layer.profile.is_some());
    for (index, layer_spec) in spec.layers.iter().enumerate() {
        let prefix = format!("layers[{index}]");
        if let Some(profile) = &layer_spec.profile {
            let inner = items.last().map_or(0.0, |(outer, _): &(f64, Layer)| *outer);
            let shells = build_profile_layer(
                layer_spec,
                profile,
                spec.geometry,
                (to_cm, inner),
                options,
                folder,
            )
            .map_err(|e| e.within(&prefix))?;
            if all_profiles {
                match &mut structure {
                    None => structure = Some(shells.structure.clone()),
                    Some(joined) => joined.append(&shells.structure),
                }
            }
            if shells.summary.surface_cut.is_some() && index + 1 < spec.layers.len() {
                return Err(MediumError::Invalid {
                    field: format!("{prefix}.profile.temperature"),
                    problem: "the temperature falls below the opacity law's range before the \
                              last row, but layers follow: only the outermost layer may be cut \
                              at the surface"
                        .into(),
                });
            }
            check_profile_extinction(&shells.shells).map_err(|e| e.within(&prefix))?;
            let first = items.len();
            // Every division inside a profile is a smooth one, not a material interface.
            smooth.extend(first..first + shells.shells.len() - 1);
            let mut summary = shells.summary;
            summary.model_layer = index;
            summary.first_sub_shell = first;
            previous_profile_outer = Some(summary.outer_radius_cm);
            profiles.push(summary);
            items.extend(shells.shells);
            continue;
        }
        let layer = build_layer(layer_spec, spec.geometry, to_cm).map_err(|e| e.within(&prefix))?;
        let boundary = match spec.geometry {
            GeometrySpec::Sphere => required_only(
                layer_spec.outer_radius,
                layer_spec.thickness,
                "outer_radius",
                "thickness",
                "sphere",
            ),
            GeometrySpec::Slab => required_only(
                layer_spec.thickness,
                layer_spec.outer_radius,
                "thickness",
                "outer_radius",
                "slab",
            ),
        }
        .map_err(|e| e.within(&prefix))?;
        let boundary_field = match spec.geometry {
            GeometrySpec::Sphere => "outer_radius",
            GeometrySpec::Slab => "thickness",
        };
        check_length(boundary_field, boundary * to_cm).map_err(|e| e.within(&prefix))?;
        if let Some(previous) = previous_profile_outer.take() {
            let outer = boundary * to_cm;
            if outer.is_nan() || outer <= previous {
                return Err(MediumError::value(
                    format!("{prefix}.outer_radius"),
                    outer,
                    Quantity::Length,
                    format!(
                        "a value greater than the outer radius of the profile in layers[{}] \
                         ({previous} cm): shells go innermost first with increasing radii",
                        index - 1
                    ),
                ));
            }
        }
        items.push((boundary * to_cm, layer));
    }
    let source = build_source(spec.source.as_ref(), spec.geometry, to_cm)?;
    let energy_source = spec
        .source
        .as_ref()
        .is_some_and(|s| s.kind == SourceKind::EnergyGeneration);
    let medium = match spec.geometry {
        GeometrySpec::Sphere => {
            if spec.ambient_index.is_some() {
                return Err(MediumError::Invalid {
                    field: "ambient_index".into(),
                    problem: "no ambient index for a sphere (slabs only)".into(),
                });
            }
            Medium::sphere(items, source)?
        }
        GeometrySpec::Slab => {
            let (above, below) = match &spec.ambient_index {
                None => (1.0, 1.0),
                Some(AmbientSpec::Both(index)) => (*index, *index),
                Some(AmbientSpec::Sides(sides)) => (sides.above, sides.below),
            };
            Medium::slab(items, above, source)
                .map_err(|error| match (&spec.ambient_index, error) {
                    (
                        Some(AmbientSpec::Sides(_)),
                        MediumError::InvalidValue {
                            field,
                            value,
                            quantity,
                            expected,
                        },
                    ) if field == "ambient_index" => MediumError::InvalidValue {
                        field: "ambient_index.above".into(),
                        value,
                        quantity,
                        expected,
                    },
                    (_, error) => error,
                })?
                .with_ambient_below(below)?
        }
    };
    check_totals(&medium)?;
    let medium = match &spec.detectors {
        None => medium,
        Some(detectors) => medium.with_detectors(build_detectors(detectors, to_cm)?)?,
    };
    let mut medium = medium
        .with_smooth_boundaries(smooth)
        .with_profiles(profiles)
        .with_name(spec.name.clone().unwrap_or_default())
        .with_display_unit(spec.length_unit);
    if let Some(structure) = structure {
        medium = medium.with_structure(structure);
    }
    if energy_source {
        medium = medium.with_energy_generation_source()?;
    }
    Ok(medium)
}

/// The detectors of a model file, lengths converted with `to_cm` (cm per length unit); the
/// medium checks them against its faces ([`Medium::with_detectors`]).
fn build_detectors(specs: &[DetectorSpec], to_cm: f64) -> Result<Vec<Detector>, MediumError> {
    specs
        .iter()
        .enumerate()
        .map(|(index, spec)| {
            let prefix = format!("detectors[{index}]");
            let acceptance = match (spec.acceptance_half_angle_deg, spec.numerical_aperture) {
                (Some(_), Some(_)) => {
                    return Err(MediumError::Invalid {
                        field: format!("{prefix}.numerical_aperture"),
                        problem: "give either \"acceptance_half_angle_deg\" or \
                                  \"numerical_aperture\", not both"
                            .into(),
                    });
                }
                (Some(angle), None) => Acceptance::HalfAngleDeg(angle),
                (None, Some(aperture)) => Acceptance::NumericalAperture(aperture),
                (None, None) => Acceptance::HalfAngleDeg(90.0),
            };
            let outer_radius_cm = spec.outer_radius * to_cm;
            check_length("outer_radius", outer_radius_cm).map_err(|e| e.within(&prefix))?;
            Ok(Detector {
                name: spec.name.clone().unwrap_or_default(),
                face: spec.face,
                inner_radius_cm: spec.inner_radius.unwrap_or(0.0) * to_cm,
                outer_radius_cm,
                acceptance,
            })
        })
        .collect()
}

/// A sphere layer given as a tabulated `profile`: checks that no plain-layer keys are mixed
/// in, then divides the profile into sub-shells starting at `inner_cm`.
fn build_profile_layer(
    spec: &LayerSpec,
    profile: &ProfileSpec,
    geometry: GeometrySpec,
    (to_cm, inner_cm): (f64, f64),
    options: &LoadOptions,
    folder: &Path,
) -> Result<super::profile::ProfileShells, MediumError> {
    if geometry != GeometrySpec::Sphere {
        return Err(MediumError::Invalid {
            field: "profile".into(),
            problem: "tabulated profiles describe spheres (\"geometry\": \"sphere\")".into(),
        });
    }
    let extra = [
        ("outer_radius", spec.outer_radius.is_some()),
        ("thickness", spec.thickness.is_some()),
        ("opacity", spec.opacity.is_some()),
        ("density", spec.density.is_some()),
        (
            "extinction_coefficient",
            spec.extinction_coefficient.is_some(),
        ),
        (
            "scattering_coefficient",
            spec.scattering_coefficient.is_some(),
        ),
        (
            "absorption_coefficient",
            spec.absorption_coefficient.is_some(),
        ),
        ("albedo", spec.albedo.is_some()),
        ("phase", spec.phase.is_some()),
        ("refractive_index", spec.refractive_index.is_some()),
    ];
    if let Some((key, _)) = extra.iter().find(|(_, present)| *present) {
        return Err(MediumError::Invalid {
            field: (*key).into(),
            problem: format!(
                "not used with \"profile\": a profile layer ends at its last radius, takes its \
                 extinction from the profile and walks with albedo 1 and isotropic steps; \
                 put \"{key}\" in a layer of its own"
            ),
        });
    }
    let table = profile
        .to_table_in(to_cm, folder)
        .map_err(|e| e.within("profile"))?;
    let tolerance = options
        .profile_tolerance
        .or(profile.tolerance)
        .unwrap_or(DEFAULT_TOLERANCE);
    table
        .to_shells(spec.name.as_deref().unwrap_or(""), inner_cm, tolerance)
        .map_err(|e| e.within("profile"))
}

/// The value of `wanted` when present, with `other` absent.
fn required_only(
    wanted: Option<f64>,
    other: Option<f64>,
    wanted_name: &str,
    other_name: &str,
    geometry: &str,
) -> Result<f64, MediumError> {
    if other.is_some() {
        return Err(MediumError::Invalid {
            field: other_name.into(),
            problem: format!("not used by a {geometry}; give \"{wanted_name}\" instead"),
        });
    }
    wanted.ok_or_else(|| MediumError::Invalid {
        field: wanted_name.into(),
        problem: format!("missing: every {geometry} layer needs \"{wanted_name}\""),
    })
}

fn build_layer(spec: &LayerSpec, geometry: GeometrySpec, to_cm: f64) -> Result<Layer, MediumError> {
    let (extinction_per_cm, albedo) = match (
        spec.opacity,
        spec.density,
        spec.extinction_coefficient,
        spec.scattering_coefficient,
        spec.absorption_coefficient,
    ) {
        (Some(opacity), Some(density), None, None, None) => {
            positive_finite(
                "opacity",
                opacity,
                Quantity::Dimensionless,
                "an opacity in cm^2/g, finite and >= 0",
            )?;
            positive_finite(
                "density",
                density,
                Quantity::Dimensionless,
                "a density in g/cm^3, finite and >= 0",
            )?;
            check_coefficient("density", opacity * density).map_err(|_| {
                MediumError::value(
                    "density",
                    density,
                    Quantity::Dimensionless,
                    format!(
                        "a density whose product with the opacity ({opacity} cm^2/g), the \
                         extinction, is 0 or between {MIN_COEFFICIENT_PER_CM:e} and \
                         {MAX_COEFFICIENT_PER_CM:e} per cm"
                    ),
                )
            })?;
            (opacity * density, spec.albedo.unwrap_or(1.0))
        }
        (None, None, Some(extinction), None, None) => {
            check_coefficient("extinction_coefficient", extinction / to_cm)?;
            (extinction / to_cm, spec.albedo.unwrap_or(1.0))
        }
        (None, None, None, Some(scattering), Some(absorption)) => {
            if let Some(albedo) = spec.albedo {
                return Err(MediumError::value(
                    "albedo",
                    albedo,
                    Quantity::Dimensionless,
                    "no albedo with the scattering/absorption pair (it follows from them)",
                ));
            }
            positive_finite(
                "scattering_coefficient",
                scattering / to_cm,
                Quantity::InverseLength,
                "a finite number >= 0",
            )?;
            positive_finite(
                "absorption_coefficient",
                absorption / to_cm,
                Quantity::InverseLength,
                "a finite number >= 0",
            )?;
            check_coefficient("scattering_coefficient", scattering / to_cm)?;
            check_coefficient("absorption_coefficient", absorption / to_cm)?;
            let total = (scattering + absorption) / to_cm;
            let albedo = if total > 0.0 {
                scattering / (scattering + absorption)
            } else {
                1.0
            };
            (total, albedo)
        }
        (Some(_), None, ..) => {
            return Err(missing(
                "density",
                "\"opacity\" (cm^2/g) needs \"density\" (g/cm^3)",
            ));
        }
        (None, Some(_), ..) => {
            return Err(missing(
                "opacity",
                "\"density\" (g/cm^3) needs \"opacity\" (cm^2/g)",
            ));
        }
        (None, None, None, Some(_), None) => {
            return Err(missing(
                "absorption_coefficient",
                "\"scattering_coefficient\" needs \"absorption_coefficient\" (use 0 for none)",
            ));
        }
        (None, None, None, None, Some(_)) => {
            return Err(missing(
                "scattering_coefficient",
                "\"absorption_coefficient\" needs \"scattering_coefficient\" (use 0 for none)",
            ));
        }
        (None, None, None, None, None) => {
            return Err(MediumError::Invalid {
                field: "extinction_coefficient".into(),
                problem: "missing: give one of \"opacity\" with \"density\", \"extinction_coefficient\", or \"scattering_coefficient\" with \"absorption_coefficient\"".into(),
            });
        }
        _ => {
            return Err(MediumError::Invalid {
                field: "extinction_coefficient".into(),
                problem: "give only one of \"opacity\" with \"density\", \"extinction_coefficient\", or \"scattering_coefficient\" with \"absorption_coefficient\"".into(),
            });
        }
    };
    let phase = match &spec.phase {
        None => PhaseFunction::Isotropic,
        Some(phase) => build_phase(phase).map_err(|e| e.within("phase"))?,
    };
    if geometry == GeometrySpec::Sphere
        && let Some(index) = spec.refractive_index
    {
        return Err(MediumError::value(
            "refractive_index",
            index,
            Quantity::Dimensionless,
            "no refractive index in a sphere (slabs only)",
        ));
    }
    let layer = Layer::new(
        spec.name.clone().unwrap_or_default(),
        extinction_per_cm,
        albedo,
        phase,
        spec.refractive_index.unwrap_or(1.0),
    )?;
    Ok(match (spec.opacity, spec.density) {
        (Some(opacity_cm2_g), Some(density_g_cm3)) => layer.with_gas(GasSample {
            density_g_cm3,
            temperature_k: None,
            opacity_cm2_g,
            scattering_fraction: None,
            hydrogen_x: None,
            metals_z: None,
        }),
        _ => layer,
    })
}

/// A thickness or radius, cm, inside [`MIN_LENGTH_CM`, `MAX_LENGTH_CM`]. Values that are
/// not positive are left to the medium's own checks, which explain them better.
fn check_length(field: &str, value_cm: f64) -> Result<(), MediumError> {
    if value_cm.is_nan() || value_cm <= 0.0 || (MIN_LENGTH_CM..=MAX_LENGTH_CM).contains(&value_cm) {
        return Ok(());
    }
    Err(MediumError::value(
        field,
        value_cm,
        Quantity::Length,
        format!(
            "a length between {MIN_LENGTH_CM:e} cm and {MAX_LENGTH_CM:e} cm (the range sojourn \
             accepts: positions and their squares stay finite)"
        ),
    ))
}

/// A coefficient, per cm: 0, or inside [`MIN_COEFFICIENT_PER_CM`,
/// `MAX_COEFFICIENT_PER_CM`]. Negative values and NaN are left to the layer's own checks.
fn check_coefficient(field: &str, value_per_cm: f64) -> Result<(), MediumError> {
    if value_per_cm.is_nan()
        || value_per_cm <= 0.0
        || (MIN_COEFFICIENT_PER_CM..=MAX_COEFFICIENT_PER_CM).contains(&value_per_cm)
    {
        return Ok(());
    }
    Err(MediumError::value(
        field,
        value_per_cm,
        Quantity::InverseLength,
        coefficient_range(),
    ))
}

fn coefficient_range() -> String {
    format!(
        "0 or a coefficient between {MIN_COEFFICIENT_PER_CM:e} and {MAX_COEFFICIENT_PER_CM:e} \
         per cm (the range sojourn accepts: mean free paths stay finite)"
    )
}

/// The extinction of every sub-shell of a profile layer, inside the accepted range.
fn check_profile_extinction(shells: &[(f64, Layer)]) -> Result<(), MediumError> {
    for (outer_cm, layer) in shells {
        let sigma = layer.extinction_per_cm();
        if sigma > 0.0 && !(MIN_COEFFICIENT_PER_CM..=MAX_COEFFICIENT_PER_CM).contains(&sigma) {
            return Err(MediumError::Invalid {
                field: "profile".into(),
                problem: format!(
                    "the extinction (opacity × density) is {sigma:e} per cm in the sub-shell \
                     ending at r = {outer_cm:e} cm: expected {}; check the density and opacity \
                     of the rows there",
                    coefficient_range()
                ),
            });
        }
    }
    Ok(())
}

/// The whole medium: its size at most [`MAX_LENGTH_CM`] and its optical depth (through
/// every layer) at most [`MAX_OPTICAL_DEPTH`].
fn check_totals(medium: &Medium) -> Result<(), MediumError> {
    let size = medium.size_cm();
    if size.is_nan() || size > MAX_LENGTH_CM {
        return Err(MediumError::value(
            "layers",
            size,
            Quantity::Length,
            format!("a total size of at most {MAX_LENGTH_CM:e} cm"),
        ));
    }
    let depth: f64 = (0..medium.layers().len())
        .map(|index| {
            let (inner, outer) = medium.layer_bounds_cm(index);
            medium.layers()[index].extinction_per_cm() * (outer - inner)
        })
        .sum();
    if depth.is_nan() || depth > MAX_OPTICAL_DEPTH {
        return Err(MediumError::Invalid {
            field: "layers".into(),
            problem: format!(
                "the optical depth through every layer is {depth:e}: expected at most \
                 {MAX_OPTICAL_DEPTH:e} (the naive step count τ² and the diffusion times must \
                 stay finite numbers)"
            ),
        });
    }
    Ok(())
}

/// The phase function of a layer: `g` only (and always) with Henyey–Greenstein.
fn build_phase(spec: &PhaseSpec) -> Result<PhaseFunction, MediumError> {
    match (spec.kind, spec.g) {
        (PhaseKind::HenyeyGreenstein, Some(g)) => PhaseFunction::henyey_greenstein(g),
        (PhaseKind::HenyeyGreenstein, None) => Err(missing(
            "g",
            "a Henyey-Greenstein phase function needs the anisotropy \"g\" (-1 < g < 1)",
        )),
        (PhaseKind::Isotropic | PhaseKind::Rayleigh, Some(g)) => Err(MediumError::value(
            "g",
            g,
            Quantity::Dimensionless,
            "no \"g\": only \"henyey_greenstein\" takes an anisotropy",
        )),
        (PhaseKind::Isotropic, None) => Ok(PhaseFunction::Isotropic),
        (PhaseKind::Rayleigh, None) => Ok(PhaseFunction::Rayleigh),
    }
}

fn positive_finite(
    field: &str,
    value: f64,
    quantity: Quantity,
    expected: &str,
) -> Result<(), MediumError> {
    if value.is_finite() && value >= 0.0 {
        Ok(())
    } else {
        Err(MediumError::value(field, value, quantity, expected))
    }
}

fn missing(field: &str, problem: &str) -> MediumError {
    MediumError::Invalid {
        field: field.into(),
        problem: format!("missing: {problem}"),
    }
}

fn build_source(
    spec: Option<&SourceSpec>,
    geometry: GeometrySpec,
    to_cm: f64,
) -> Result<Source, MediumError> {
    let Some(spec) = spec else {
        return Ok(match geometry {
            GeometrySpec::Sphere => Source::centre(),
            GeometrySpec::Slab => Source::normal_beam(),
        });
    };
    let unexpected = |field: &str, why: &str| MediumError::Invalid {
        field: format!("source.{field}"),
        problem: why.to_string(),
    };
    // The first of the fields a source kind does not take that the file gives.
    let extra = |allowed: &[&str]| {
        [
            ("radius", spec.radius.is_some()),
            ("depth", spec.depth.is_some()),
            ("polar_angle_deg", spec.polar_angle_deg.is_some()),
            ("profile", spec.profile.is_some()),
        ]
        .into_iter()
        .find(|(name, given)| *given && !allowed.contains(name))
        .map(|(name, _)| name)
    };
    match (geometry, spec.kind) {
        (GeometrySpec::Sphere, SourceKind::Point) => {
            if let Some(field) = extra(&["radius"]) {
                return Err(unexpected(
                    field,
                    "a sphere's point source takes only \"radius\"",
                ));
            }
            Ok(Source::SpherePoint {
                radius_cm: spec.radius.unwrap_or(0.0) * to_cm,
            })
        }
        (GeometrySpec::Sphere, SourceKind::EnergyGeneration) => {
            if let Some(field) = extra(&[]) {
                return Err(unexpected(
                    field,
                    "an energy-generation source takes no other field: photons start where the \
                     profile's energy_generation releases the luminosity",
                ));
            }
            // Placeholder: the medium switches to the energy-generation source once its
            // structure is known.
            Ok(Source::centre())
        }
        (GeometrySpec::Slab, SourceKind::EnergyGeneration) => Err(unexpected(
            "kind",
            "an energy-generation source needs a sphere of profile layers",
        )),
        (GeometrySpec::Sphere, SourceKind::Beam) => Err(unexpected(
            "kind",
            "a sphere takes only \"point\" or \"energy_generation\" sources",
        )),
        (GeometrySpec::Slab, SourceKind::Beam) => {
            if let Some(field) = extra(&["polar_angle_deg", "profile", "radius"]) {
                return Err(unexpected(
                    field,
                    "a beam takes only \"polar_angle_deg\", \"profile\" and \"radius\"",
                ));
            }
            let radius_cm = spec.radius.map(|r| r * to_cm);
            if let Some(radius_cm) = radius_cm {
                check_length("source.radius", radius_cm)?;
            }
            let profile = match (spec.profile.unwrap_or(BeamProfileKind::Narrow), radius_cm) {
                (BeamProfileKind::Narrow, None) => BeamProfile::Narrow,
                (BeamProfileKind::Narrow, Some(_)) => {
                    return Err(unexpected(
                        "radius",
                        "a narrow beam has no radius: give \"profile\": \"gaussian\" (radius = \
                         the 1/e² intensity radius) or \"flat\" with it",
                    ));
                }
                (BeamProfileKind::Gaussian | BeamProfileKind::Flat, None) => {
                    return Err(unexpected(
                        "radius",
                        "missing: a gaussian or flat beam needs \"radius\" (the 1/e² intensity \
                         radius of a gaussian, the edge of a flat beam)",
                    ));
                }
                (BeamProfileKind::Gaussian, Some(radius_cm)) => BeamProfile::Gaussian { radius_cm },
                (BeamProfileKind::Flat, Some(radius_cm)) => BeamProfile::Flat { radius_cm },
            };
            Ok(Source::Beam {
                polar_angle_deg: spec.polar_angle_deg.unwrap_or(0.0),
                profile,
            })
        }
        (GeometrySpec::Slab, SourceKind::Point | SourceKind::Plane) => {
            if let Some(field) = extra(&["depth"]) {
                return Err(unexpected(
                    field,
                    "a slab's point or plane source takes only \"depth\"",
                ));
            }
            let depth = spec.depth.ok_or_else(|| {
                unexpected(
                    "depth",
                    "missing: a slab's point or plane source needs \"depth\"",
                )
            })?;
            Ok(if spec.kind == SourceKind::Plane {
                Source::SlabPlane {
                    depth_cm: depth * to_cm,
                }
            } else {
                Source::SlabPoint {
                    depth_cm: depth * to_cm,
                }
            })
        }
        (GeometrySpec::Slab, SourceKind::Diffuse) => {
            if let Some(field) = extra(&[]) {
                return Err(unexpected(
                    field,
                    "diffuse illumination takes no other field",
                ));
            }
            Ok(Source::Diffuse)
        }
        (GeometrySpec::Sphere, SourceKind::Plane | SourceKind::Diffuse) => Err(unexpected(
            "kind",
            "a sphere takes only \"point\" or \"energy_generation\" sources",
        )),
    }
}
