//! The starting point of a fit: steady diffusion theory inverted for the layer, or, where
//! diffusion cannot describe the sample (thinner than a reduced scattering length, or no
//! diffusion pair matches), the best point of a coarse grid of short Monte Carlo runs.
//!
//! Diffusion only starts the fit; the answer is the Monte Carlo solution.

use serde::Serialize;

use crate::diffusion::time_resolved::{Boundary, DiffusionSlab, SlabOptics};
use crate::simulation::RunConfig;

use super::ballistic::unscattered_with;
use super::error::FitError;
use super::forward::{ForwardModel, MonteCarloModel};
use super::levenberg::{Settings, solve};
use super::measurement::Measurement;
use super::sample::Sample;

/// Grid of the fallback start, in units of the layer's thickness d: μa·d values.
const GRID_ABSORPTION_D: [f64; 7] = [1e-3, 1e-2, 0.03, 0.1, 0.3, 1.0, 3.0];
/// Grid of the fallback start: μs′·d values.
const GRID_REDUCED_SCATTERING_D: [f64; 7] = [0.03, 0.1, 0.3, 1.0, 3.0, 10.0, 30.0];
/// Photons per grid point at most.
const GRID_PHOTONS: u64 = 2_000;

/// How the starting point was found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum StartMethod {
    /// Steady diffusion theory (extrapolated boundary) inverted for μa and μs′.
    Diffusion,
    /// The best point of a coarse grid of short Monte Carlo runs.
    Grid,
}

/// A starting point.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Start {
    /// How it was found.
    pub method: StartMethod,
    /// Absorption coefficient, 1/cm.
    pub absorption_per_cm: f64,
    /// Reduced scattering coefficient, 1/cm.
    pub reduced_scattering_per_cm: f64,
}

/// Steady diffusion for the fitted layer alone (its thickness and index, the ambient index
/// above as the outside), with the closed-form specular reflection and collimated
/// transmittance of the whole stack: the light entering is put at one reduced scattering
/// length as in [`DiffusionSlab`].
struct DiffusionModel<'a> {
    sample: &'a Sample,
    measurement: &'a Measurement,
}

impl ForwardModel for DiffusionModel<'_> {
    fn predict(&mut self, p: [f64; 2]) -> Result<Option<Vec<f64>>, FitError> {
        let [absorption, reduced] = p.map(f64::exp);
        let layer = self.sample.layer();
        let medium = self.sample.medium();
        let optics = SlabOptics {
            mua_per_cm: absorption,
            musp_per_cm: reduced,
            thickness_cm: self.sample.thickness_cm(),
            n_medium: self.sample.layer_as_given().refractive_index(),
            n_outside: medium.ambient_above(),
        };
        let Ok(slab) = DiffusionSlab::new(optics, Boundary::Extrapolated) else {
            return Ok(None);
        };
        let extinction = absorption + self.sample.scattering_per_cm(reduced);
        let Some(ballistic) = unscattered_with(medium, |index| {
            if index == layer {
                extinction
            } else {
                medium.layers()[index].extinction_per_cm()
            }
        }) else {
            return Ok(None);
        };
        let entering = 1.0 - ballistic.specular;
        let mut reflectance = entering * slab.steady_reflectance();
        if self.measurement.specular_included {
            reflectance += ballistic.specular;
        }
        let transmittance = entering * slab.steady_transmittance();
        let mut values = vec![reflectance];
        if self.measurement.collimated_transmittance.is_some() {
            values.push(transmittance - ballistic.transmittance);
            values.push(ballistic.transmittance);
        } else {
            values.push(transmittance);
        }
        Ok(Some(values))
    }
}

/// Steady diffusion inverted: `Some` if it matches the measurements to within
/// `tolerance` (absolute) in every value.
fn from_diffusion(
    sample: &Sample,
    measurement: &Measurement,
    scale: &[f64],
    settings: &Settings,
) -> Result<Option<Start>, FitError> {
    let d = sample.thickness_cm();
    let mut model = DiffusionModel {
        sample,
        measurement,
    };
    // A sample a few transport lengths thick with little absorption.
    let start = [(0.01 / d).ln(), (5.0 / d).ln()];
    let measured: Vec<f64> = measurement.values().iter().map(|m| m.value).collect();
    let settings = Settings {
        difference_step: 1e-5,
        tolerance: 1e-6,
        max_iterations: 100,
        ..settings.clone()
    };
    let solution = solve(&mut model, start, &measured, scale, &settings)?;
    let close = solution.predicted.len() == measured.len()
        && solution
            .predicted
            .iter()
            .zip(&measured)
            .all(|(p, m)| (p - m).abs() <= 0.02);
    let inside = solution
        .parameters
        .iter()
        .zip(settings.lower.iter().zip(&settings.upper))
        .all(|(p, (lo, hi))| p > lo && p < hi);
    Ok((close && inside).then(|| Start {
        method: StartMethod::Diffusion,
        absorption_per_cm: solution.parameters[0].exp(),
        reduced_scattering_per_cm: solution.parameters[1].exp(),
    }))
}

/// The best grid point by the weighted misfit, with short runs of the fit's photons; with
/// the Monte Carlo runs and photons it took.
fn from_grid(
    sample: &Sample,
    measurement: &Measurement,
    config: &RunConfig,
    scale: &[f64],
) -> Result<(Start, usize, u64), FitError> {
    let d = sample.thickness_cm();
    let grid_config = RunConfig {
        photons: config.photons.min(GRID_PHOTONS),
        ..config.clone()
    };
    let mut model = MonteCarloModel::new(sample, measurement, grid_config);
    let measured: Vec<f64> = measurement.values().iter().map(|m| m.value).collect();
    let mut best: Option<(f64, [f64; 2])> = None;
    for absorption_d in GRID_ABSORPTION_D {
        for reduced_d in GRID_REDUCED_SCATTERING_D {
            let p = [(absorption_d / d).ln(), (reduced_d / d).ln()];
            let values = match model.evaluate(p) {
                Ok(prediction) => prediction.values,
                Err(FitError::TooCostly { .. }) => continue,
                Err(other) => return Err(other),
            };
            let chi2: f64 = values
                .iter()
                .zip(&measured)
                .zip(scale)
                .map(|((v, m), s)| ((v - m) / s).powi(2))
                .sum();
            if best.is_none_or(|(b, _)| chi2 < b) {
                best = Some((chi2, p));
            }
        }
    }
    let (_, p) = best.ok_or_else(|| {
        FitError::NoSolution("no point of the starting grid could be simulated".into())
    })?;
    Ok((
        Start {
            method: StartMethod::Grid,
            absorption_per_cm: p[0].exp(),
            reduced_scattering_per_cm: p[1].exp(),
        },
        model.evaluations(),
        model.photons_run(),
    ))
}

/// The starting point: diffusion if it can match the measurements, else the grid; with
/// the Monte Carlo runs and photons it took (none for diffusion).
///
/// # Errors
/// Whatever the forward models report.
pub fn starting_point(
    sample: &Sample,
    measurement: &Measurement,
    config: &RunConfig,
    scale: &[f64],
    settings: &Settings,
) -> Result<(Start, usize, u64), FitError> {
    if let Some(start) = from_diffusion(sample, measurement, scale, settings)? {
        return Ok((start, 0, 0));
    }
    from_grid(sample, measurement, config, scale)
}
