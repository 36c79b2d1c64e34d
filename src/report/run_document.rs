//! The run report: the run's analysis with the version, the model's label and the
//! wall-clock time; its serde form is the JSON report, whose keys the README documents.

use serde::Serialize;

use crate::analysis::RunAnalysis;
use crate::medium::Medium;
use crate::simulation::{RunConfig, RunResult};

/// Where the model came from and what it is.
#[derive(Debug, Clone, Serialize)]
pub struct ModelSummary {
    /// Name given in the model file.
    pub name: String,
    /// File the model was read from (or the embedded demo label).
    pub file: String,
    /// Number of layers the walker sees (each profile layer counts its sub-shells).
    pub layers: usize,
    /// Layers as the model file declares them (a profile layer counts once); text only.
    #[serde(skip)]
    pub declared_layers: usize,
    /// Outer radius (sphere) or thickness (slab), cm.
    pub size_cm: f64,
    /// Length unit the model file used.
    pub length_unit: String,
    /// That unit in cm, for lengths in the text report; text only.
    #[serde(skip)]
    pub unit_cm: f64,
}

/// The layers of `medium` as its model file declares them: its walker layers, with the
/// sub-shells of each profile layer (as far as the medium still holds them, after a
/// truncation) counted once.
fn declared_layers(medium: &Medium) -> usize {
    let shells = medium.layers().len();
    let (mut in_profiles, mut profiles) = (0, 0);
    for profile in medium.profiles() {
        let held = profile
            .sub_shells
            .min(shells.saturating_sub(profile.first_sub_shell));
        if held > 0 {
            in_profiles += held;
            profiles += 1;
        }
    }
    shells.saturating_sub(in_profiles) + profiles
}

impl ModelSummary {
    /// A length in cm, written in the model's own unit (4 significant digits).
    pub fn length(&self, cm: f64) -> String {
        format!(
            "{} {}",
            crate::units::format_significant(cm / self.unit_cm, 4),
            self.length_unit
        )
    }

    /// A coefficient in 1/cm, written per the model's own unit (4 significant digits).
    pub fn per_length(&self, per_cm: f64) -> String {
        format!(
            "{} /{}",
            crate::units::format_significant(per_cm * self.unit_cm, 4),
            self.length_unit
        )
    }

    /// The summary of `medium`, read from `file`.
    pub fn new(medium: &Medium, file: &str) -> Self {
        Self {
            name: medium.name().to_string(),
            file: file.to_string(),
            layers: medium.layers().len(),
            declared_layers: declared_layers(medium),
            size_cm: medium.size_cm(),
            length_unit: medium.display_unit().symbol().to_string(),
            unit_cm: medium.display_unit().to_cm(),
        }
    }
}

/// The full report of one run; its serde form is the JSON report (the analysis's keys sit
/// at the top level, between `model` and `elapsed_s`).
#[derive(Debug, Clone, Serialize)]
pub struct RunReport {
    /// sojourn version that made the report.
    pub sojourn_version: String,
    /// The model.
    pub model: ModelSummary,
    /// Everything the run tells, as plain data.
    #[serde(flatten)]
    pub analysis: RunAnalysis,
    /// Wall-clock time of the run, s (varies run to run).
    pub elapsed_s: f64,
}

impl RunReport {
    /// Builds the report of `result`, a run of `config` on `medium` read from `file`.
    pub fn new(medium: &Medium, file: &str, config: &RunConfig, result: &RunResult) -> Self {
        Self::from_analysis(
            medium,
            file,
            RunAnalysis::new(medium, config, &result.tally),
            result.elapsed_s,
        )
    }

    /// The report of an `analysis` already made (a sweep point's, a merged run's) of
    /// `medium` read from `file`, which took `elapsed_s` seconds.
    pub fn from_analysis(
        medium: &Medium,
        file: &str,
        analysis: RunAnalysis,
        elapsed_s: f64,
    ) -> Self {
        Self {
            sojourn_version: env!("CARGO_PKG_VERSION").to_string(),
            model: ModelSummary::new(medium, file),
            analysis,
            elapsed_s,
        }
    }
}
