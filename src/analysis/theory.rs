//! Diffusion theory on the model, as the analysis reports it: the rule of thumb and the
//! mean exit times of steady diffusion on the model's own layers
//! ([`crate::diffusion::estimate`]).

use serde::Serialize;

use crate::diffusion::DiffusionEstimate;

/// Diffusion-theory values for the model (see [`crate::diffusion::estimate`]).
#[derive(Debug, Clone, Serialize)]
pub struct DiffusionSummary {
    /// Optical depth source → surface (sphere) or total thickness (slab).
    pub optical_depth: f64,
    /// Smallest mean free path, cm.
    pub mean_free_path_min_cm: f64,
    /// Largest mean free path, cm.
    pub mean_free_path_max_cm: f64,
    /// Rule of thumb N ≈ τ².
    pub naive_scatterings: f64,
    /// Rule of thumb t ≈ τ L n̄ / c, s.
    pub naive_time_s: f64,
    /// Mean exit time of steady diffusion, surface at the boundary, s.
    pub mean_time_s: f64,
    /// Mean exit time with the Milne extrapolated boundary (q∞ = 0.7104 l_tr), s.
    pub mean_time_extrapolated_s: f64,
    /// Scatterings implied by `mean_time_s`.
    pub mean_scatterings: f64,
    /// Scatterings implied by `mean_time_extrapolated_s`.
    pub mean_scatterings_extrapolated: f64,
    /// Residence time of diffusion in each layer, s (sums to `mean_time_s`).
    pub layer_residence_s: Vec<f64>,
}

impl From<&DiffusionEstimate> for DiffusionSummary {
    fn from(estimate: &DiffusionEstimate) -> Self {
        Self {
            optical_depth: estimate.optical_depth,
            mean_free_path_min_cm: estimate.mean_free_path_min_cm,
            mean_free_path_max_cm: estimate.mean_free_path_max_cm,
            naive_scatterings: estimate.naive_scatterings,
            naive_time_s: estimate.naive_time_s,
            mean_time_s: estimate.mean_time_s,
            mean_time_extrapolated_s: estimate.mean_time_extrapolated_s,
            mean_scatterings: estimate.mean_scatterings,
            mean_scatterings_extrapolated: estimate.mean_scatterings_extrapolated,
            layer_residence_s: estimate.layer_residence_s.clone(),
        }
    }
}
