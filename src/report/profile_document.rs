//! The profile report (`sojourn profile`): the profile analysis with the version and the
//! model's label; its serde form is the JSON output, whose keys the README documents.

use serde::Serialize;

use crate::analysis::ProfileAnalysis;
use crate::medium::{Medium, MediumError};

/// The model the report describes.
#[derive(Debug, Clone, Serialize)]
pub struct ProfileModel {
    /// Name given in the model file.
    pub name: String,
    /// File the model was read from.
    pub file: String,
    /// Shells (profile sub-shells count one each).
    pub shells: usize,
    /// Length unit the model file used.
    pub length_unit: String,
    /// Centimetres in one of that unit.
    pub length_unit_cm: f64,
}

/// The full report of `sojourn profile`; its serde form is the JSON output (the analysis's
/// keys sit at the top level, after `model`).
#[derive(Debug, Clone, Serialize)]
pub struct ProfileReport {
    /// sojourn version that made the report.
    pub sojourn_version: String,
    /// The model.
    pub model: ProfileModel,
    /// The optical structure and the time budget.
    #[serde(flatten)]
    pub analysis: ProfileAnalysis,
}

impl ProfileReport {
    /// The profile report of `medium` (a sphere), read from `file`.
    ///
    /// # Errors
    /// [`MediumError`] if the medium is not a sphere.
    pub fn new(medium: &Medium, file: &str) -> Result<Self, MediumError> {
        let analysis = ProfileAnalysis::new(medium)?;
        Ok(Self {
            sojourn_version: env!("CARGO_PKG_VERSION").to_string(),
            model: ProfileModel {
                name: medium.name().to_string(),
                file: file.to_string(),
                shells: medium.layers().len(),
                length_unit: medium.display_unit().symbol().to_string(),
                length_unit_cm: medium.display_unit().to_cm(),
            },
            analysis,
        })
    }
}
