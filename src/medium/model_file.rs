//! Model files: the JSON description of a medium (format version 1), its loader and its
//! validation. Lengths are converted to cm once, here; errors name the file, the JSON path of
//! the field, the value and what was expected.

use std::path::Path;

use serde::Deserialize;
use thiserror::Error;

use super::{Layer, Medium, MediumError, Quantity, Source};
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
#[serde(deny_unknown_fields)]
struct ModelSpec {
    name: Option<String>,
    geometry: GeometrySpec,
    #[serde(default)]
    length_unit: LengthUnit,
    layers: Vec<LayerSpec>,
    ambient_index: Option<AmbientSpec>,
    source: Option<SourceSpec>,
}

/// The ambient refractive index: one number for both sides, or each side apart.
#[derive(Debug, Clone, Deserialize)]
#[serde(untagged)]
enum AmbientSpec {
    Both(f64),
    Sides(AmbientSides),
}

/// Refractive indices above and below a slab.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct AmbientSides {
    above: f64,
    below: f64,
}

/// One layer, as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
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
}

/// A phase function, as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
enum PhaseSpec {
    Isotropic,
    HenyeyGreenstein { g: f64 },
    Rayleigh,
}

/// Source kinds.
#[derive(Debug, Clone, Copy, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
enum SourceKind {
    Point,
    Plane,
    Beam,
    Diffuse,
}

/// The source, as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct SourceSpec {
    kind: SourceKind,
    radius: Option<f64>,
    depth: Option<f64>,
    polar_angle_deg: Option<f64>,
}

/// Loads and validates a model file.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn load_model(path: &Path) -> Result<Medium, ModelError> {
    let file = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|cause| ModelError::Read {
        file: file.clone(),
        cause,
    })?;
    parse_model(&text, &file)
}

/// Parses and validates model-file text; `file` labels errors.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn parse_model(text: &str, file: &str) -> Result<Medium, ModelError> {
    model_from_value(&parse_model_value(text, file)?, file)
}

/// Parses model-file text into its JSON value without building the medium (for callers
/// that keep or edit the JSON, e.g. shard files and sweeps); `file` labels errors.
///
/// # Errors
/// [`ModelError::Syntax`] with the line and column of the problem.
pub fn parse_model_value(text: &str, file: &str) -> Result<serde_json::Value, ModelError> {
    serde_json::from_str(text).map_err(|error| ModelError::Syntax {
        file: file.to_string(),
        line: error.line(),
        column: error.column(),
        message: strip_position(&error.to_string()),
    })
}

/// Reads a model file into its JSON value without building the medium; see
/// [`parse_model_value`].
///
/// # Errors
/// [`ModelError::Read`] or [`ModelError::Syntax`].
pub fn load_model_value(path: &Path) -> Result<serde_json::Value, ModelError> {
    let file = path.display().to_string();
    let text = std::fs::read_to_string(path).map_err(|cause| ModelError::Read {
        file: file.clone(),
        cause,
    })?;
    parse_model_value(&text, &file)
}

/// Builds a medium from an already parsed model-file JSON value; `file` labels errors.
///
/// # Errors
/// [`ModelError`] naming the file, the field, the value and what was expected.
pub fn model_from_value(value: &serde_json::Value, file: &str) -> Result<Medium, ModelError> {
    let spec: ModelSpec = serde_path_to_error::deserialize(value).map_err(|error| {
        let field = error.path().to_string();
        ModelError::Schema {
            file: file.to_string(),
            field: if field.is_empty() { ".".into() } else { field },
            message: strip_position(&error.into_inner().to_string()),
        }
    })?;
    build_medium(&spec).map_err(|error| describe(error, file, spec.length_unit))
}

/// serde_json appends " at line L column C" to messages; for a parsed `Value` that position
/// is meaningless, and for syntax errors it is reported separately.
fn strip_position(message: &str) -> String {
    match message.rfind(" at line ") {
        Some(index) => message[..index].to_string(),
        None => message.to_string(),
    }
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
                Quantity::Length => format!("{} {}", value / unit.to_cm(), unit.symbol()),
                Quantity::InverseLength => {
                    format!("{} per {}", value * unit.to_cm(), unit.symbol())
                }
                Quantity::AngleDeg => format!("{value} deg"),
                Quantity::Dimensionless => format!("{value}"),
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

fn build_medium(spec: &ModelSpec) -> Result<Medium, MediumError> {
    let to_cm = spec.length_unit.to_cm();
    let mut items = Vec::with_capacity(spec.layers.len());
    for (index, layer_spec) in spec.layers.iter().enumerate() {
        let prefix = format!("layers[{index}]");
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
        items.push((boundary * to_cm, layer));
    }
    let source = build_source(spec.source.as_ref(), spec.geometry, to_cm)?;
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
    Ok(medium
        .with_name(spec.name.clone().unwrap_or_default())
        .with_display_unit(spec.length_unit))
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
            (opacity * density, spec.albedo.unwrap_or(1.0))
        }
        (None, None, Some(extinction), None, None) => {
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
        None | Some(PhaseSpec::Isotropic) => PhaseFunction::Isotropic,
        Some(PhaseSpec::HenyeyGreenstein { g }) => {
            PhaseFunction::henyey_greenstein(*g).map_err(|e| e.within("phase"))?
        }
        Some(PhaseSpec::Rayleigh) => PhaseFunction::Rayleigh,
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
    Layer::new(
        spec.name.clone().unwrap_or_default(),
        extinction_per_cm,
        albedo,
        phase,
        spec.refractive_index.unwrap_or(1.0),
    )
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
    match (geometry, spec.kind) {
        (GeometrySpec::Sphere, SourceKind::Point) => {
            if spec.depth.is_some() || spec.polar_angle_deg.is_some() {
                return Err(unexpected(
                    "depth",
                    "a sphere's point source takes only \"radius\"",
                ));
            }
            Ok(Source::SpherePoint {
                radius_cm: spec.radius.unwrap_or(0.0) * to_cm,
            })
        }
        (GeometrySpec::Sphere, SourceKind::Beam) => {
            Err(unexpected("kind", "a sphere takes only \"point\" sources"))
        }
        (GeometrySpec::Slab, SourceKind::Beam) => {
            if spec.depth.is_some() || spec.radius.is_some() {
                return Err(unexpected("depth", "a beam takes only \"polar_angle_deg\""));
            }
            Ok(Source::Beam {
                polar_angle_deg: spec.polar_angle_deg.unwrap_or(0.0),
            })
        }
        (GeometrySpec::Slab, SourceKind::Point | SourceKind::Plane) => {
            if spec.radius.is_some() || spec.polar_angle_deg.is_some() {
                return Err(unexpected(
                    "radius",
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
            if spec.radius.is_some() || spec.polar_angle_deg.is_some() || spec.depth.is_some() {
                return Err(unexpected(
                    "kind",
                    "diffuse illumination takes no other field",
                ));
            }
            Ok(Source::Diffuse)
        }
        (GeometrySpec::Sphere, SourceKind::Plane | SourceKind::Diffuse) => {
            Err(unexpected("kind", "a sphere takes only \"point\" sources"))
        }
    }
}
