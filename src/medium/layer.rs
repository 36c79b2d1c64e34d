//! One homogeneous layer (a spherical shell or a slab layer) and its optical properties.

use super::error::{MediumError, Quantity};
use crate::transport::PhaseFunction;

/// The gas a layer stands for, where the model says (stellar layers): the values behind its
/// extinction, kept as data for reports. The walk itself uses only the [`Layer`]'s extinction,
/// albedo and phase function.
///
/// For a sub-shell of a tabulated profile ([`crate::medium::profile`]) every value is the
/// radial average over the sub-shell: density and temperature are ∫ x dr / Δr, the opacity is
/// the effective κ = σ̄ / ρ̄ (so that κρ̄ is the sub-shell's extinction) and the scattering
/// fraction is σ̄_s / σ̄.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct GasSample {
    /// Density ρ, g cm⁻³.
    pub density_g_cm3: f64,
    /// Temperature T, K (None where the model gives none).
    pub temperature_k: Option<f64>,
    /// Mass opacity κ, cm² g⁻¹.
    pub opacity_cm2_g: f64,
    /// Fraction of the extinction that is true scattering rather than absorption
    /// (0 ..= 1; None where the model does not say).
    pub scattering_fraction: Option<f64>,
    /// Hydrogen mass fraction X (None where the model gives none).
    pub hydrogen_x: Option<f64>,
    /// Metal mass fraction Z (None where the model gives none).
    pub metals_z: Option<f64>,
}

/// A homogeneous layer: extinction, single-scattering albedo, phase function and
/// refractive index. Immutable once built; built only through [`Layer::new`], which validates.
#[derive(Debug, Clone, PartialEq)]
pub struct Layer {
    name: String,
    extinction_per_cm: f64,
    albedo: f64,
    phase: PhaseFunction,
    refractive_index: f64,
    gas: Option<GasSample>,
}

impl Layer {
    /// A layer with extinction coefficient `extinction_per_cm` (1/cm, ≥ 0, finite),
    /// single-scattering albedo `albedo` (0..=1), phase function `phase` and refractive index
    /// `refractive_index` (≥ 1, finite).
    ///
    /// # Errors
    /// [`MediumError::InvalidValue`] naming the offending field.
    pub fn new(
        name: impl Into<String>,
        extinction_per_cm: f64,
        albedo: f64,
        phase: PhaseFunction,
        refractive_index: f64,
    ) -> Result<Self, MediumError> {
        if !(extinction_per_cm.is_finite() && extinction_per_cm >= 0.0) {
            return Err(MediumError::value(
                "extinction_coefficient",
                extinction_per_cm,
                Quantity::InverseLength,
                "a finite number >= 0",
            ));
        }
        if !(0.0..=1.0).contains(&albedo) {
            return Err(MediumError::value(
                "albedo",
                albedo,
                Quantity::Dimensionless,
                "a number between 0 and 1",
            ));
        }
        if !(refractive_index.is_finite() && refractive_index >= 1.0) {
            return Err(MediumError::value(
                "refractive_index",
                refractive_index,
                Quantity::Dimensionless,
                "a finite number >= 1",
            ));
        }
        Ok(Self {
            name: name.into(),
            extinction_per_cm,
            albedo,
            phase,
            refractive_index,
            gas: None,
        })
    }

    /// The same layer, recording the gas it stands for (data for reports; the walk does not
    /// read it).
    pub fn with_gas(mut self, gas: GasSample) -> Self {
        self.gas = Some(gas);
        self
    }

    /// The gas this layer stands for, if the model said (density, temperature, opacity,
    /// scattering fraction, composition).
    pub fn gas(&self) -> Option<&GasSample> {
        self.gas.as_ref()
    }

    /// The layer's name (may be empty).
    pub fn name(&self) -> &str {
        &self.name
    }

    /// Extinction coefficient σ = σ_s + σ_a, 1/cm.
    pub fn extinction_per_cm(&self) -> f64 {
        self.extinction_per_cm
    }

    /// Single-scattering albedo ω = σ_s / σ.
    pub fn albedo(&self) -> f64 {
        self.albedo
    }

    /// Scattering coefficient σ_s = ω σ, 1/cm.
    pub fn scattering_per_cm(&self) -> f64 {
        self.albedo * self.extinction_per_cm
    }

    /// Absorption coefficient σ_a = (1 − ω) σ, 1/cm.
    pub fn absorption_per_cm(&self) -> f64 {
        (1.0 - self.albedo) * self.extinction_per_cm
    }

    /// Transport extinction σ_tr = σ_a + σ_s (1 − g), 1/cm: the inverse of the transport
    /// mean free path that sets the diffusion coefficient D = v / (3 σ_tr).
    pub fn transport_extinction_per_cm(&self) -> f64 {
        self.absorption_per_cm() + self.scattering_per_cm() * (1.0 - self.phase.mean_cosine())
    }

    /// Mean free path 1/σ, cm (infinite for a transparent layer).
    pub fn mean_free_path_cm(&self) -> f64 {
        1.0 / self.extinction_per_cm
    }

    /// Phase function of scattering.
    pub fn phase(&self) -> &PhaseFunction {
        &self.phase
    }

    /// Refractive index (sets the speed c/n and, for slabs, Fresnel reflection).
    pub fn refractive_index(&self) -> f64 {
        self.refractive_index
    }
}
