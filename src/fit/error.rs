//! Why a fit cannot start or has no solution.

use thiserror::Error;

use crate::medium::MediumError;

/// A fit that cannot be done: the model does not suit it, a measurement is out of range, or
/// no optical properties of the layer can produce the measurements.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum FitError {
    /// The model is not a slab lit by a collimated beam from outside.
    #[error("{0}")]
    Model(String),
    /// The layer index is past the last layer.
    #[error("layer {layer} does not exist: the model has {layers} layer(s), numbered from 0")]
    NoSuchLayer {
        /// The index asked for.
        layer: usize,
        /// Number of layers in the model.
        layers: usize,
    },
    /// A measured value or its uncertainty is not a number in its allowed range.
    #[error("{field} = {value}: expected {expected}")]
    Measurement {
        /// Which measurement (`reflectance`, `transmittance`, `collimated_transmittance`, or
        /// the uncertainty of one of them).
        field: &'static str,
        /// The value given.
        value: f64,
        /// What would have been accepted.
        expected: String,
    },
    /// No absorption and scattering coefficients ≥ 0 of the layer can give the measurements.
    #[error("no solution: {0}")]
    NoSolution(String),
    /// A trial medium could not be built (a coefficient the solver tried is out of range).
    #[error("cannot build the trial medium: {0}")]
    Medium(#[from] MediumError),
    /// A trial point would take too long to simulate (the walk plan refused it).
    #[error(
        "the fit reached μa = {absorption_per_cm:.4e} /cm, μs′ = {reduced_scattering_per_cm:.4e} /cm, where {reason}"
    )]
    TooCostly {
        /// Absorption coefficient tried, 1/cm.
        absorption_per_cm: f64,
        /// Reduced scattering coefficient tried, 1/cm.
        reduced_scattering_per_cm: f64,
        /// The refusal of the walk plan.
        reason: String,
    },
}
