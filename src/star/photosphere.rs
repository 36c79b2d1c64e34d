//! The photosphere of a stellar model: where the optical depth counted from the top of the
//! model's table reaches τ = 2/3 (Eddington's grey atmosphere).
//!
//! A profile whose opacity law stops at a lowest temperature (10⁴ K for electron scattering
//! and Kramers) is cut there and the gas above is dropped from the walk
//! ([`crate::medium::profile::shells`]). That gas is where a star's photosphere lies, and the
//! interior laws do not describe it. Here the optical depth of the dropped gas is computed
//! with an atmosphere-level opacity, the smooth blend 1/(1/κ_H⁻ + 1/(κ_es + κ_Kramers))
//! ([`SmoothHMinusBlend`]: H⁻ in cool gas), along the table's own (linearly interpolated)
//! density and temperature, then continued inward through the medium's shells. Where the
//! dropped gas holds τ ≥ 2/3 the photosphere lies above the cut; otherwise inside the walked
//! medium. Without a cut (a κ column, a constant law) τ is counted from the medium's
//! surface with its own opacity. Without composition in the dropped gas (an opacity table
//! with a temperature column only) no atmosphere opacity can be evaluated, and the report
//! labels the line as the surface cut instead.

use serde::Serialize;

use crate::medium::profile::AtmosphereRow;
use crate::medium::profile::structure::gauss4;
use crate::medium::{Geometry, Medium};
use crate::opacity::{GasState, OpacityLaw, SmoothHMinusBlend};

/// Optical depth from the surface that defines the photosphere (Eddington: τ = 2/3).
pub const PHOTOSPHERE_OPTICAL_DEPTH: f64 = 2.0 / 3.0;

/// Sub-intervals per table interval of the dropped gas (κ_H⁻ ∝ T⁹ varies fast).
const ATMOSPHERE_PIECES: usize = 16;

/// Where τ = 2/3, and how it was found.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Photosphere {
    /// Radius where τ from the top of the model reaches 2/3, cm.
    pub radius_cm: f64,
    /// Temperature there, K (None where the model gives none).
    pub temperature_k: Option<f64>,
    /// Optical depth of the gas above the surface cut (0 without a cut).
    pub dropped_gas_optical_depth: f64,
    /// Whether the photosphere lies in the gas above the surface cut (outside the walked
    /// medium).
    pub above_surface_cut: bool,
    /// How it was computed, in words.
    pub method: String,
}

/// σ = κ_atm ρ at fraction `s` between two atmosphere rows, per cm.
fn atmosphere_extinction(
    law: &SmoothHMinusBlend,
    a: &AtmosphereRow,
    b: &AtmosphereRow,
    s: f64,
) -> f64 {
    let lerp = |x: f64, y: f64| x + s * (y - x);
    let state = GasState {
        density_g_cm3: lerp(a.density_g_cm3, b.density_g_cm3).max(0.0),
        temperature_k: lerp(a.temperature_k, b.temperature_k).max(0.0),
        hydrogen_x: lerp(a.hydrogen_x, b.hydrogen_x),
        metals_z: lerp(a.metals_z, b.metals_z),
    };
    law.opacity_cm2_g(&state) * state.density_g_cm3
}

/// The photosphere of `medium` (a sphere); None for a slab, for a truncated medium, or if
/// the whole sphere (with its dropped gas) is thinner than τ = 2/3.
pub fn photosphere(medium: &Medium) -> Option<Photosphere> {
    if medium.geometry() != Geometry::Sphere || medium.truncation().is_some() {
        return None;
    }
    let atmosphere = medium.structure().map_or(&[][..], |s| s.atmosphere());
    let law = SmoothHMinusBlend::default();
    let mut tau = 0.0;
    let cut = atmosphere.first().map(|row| row.radius_cm);
    let composition = atmosphere
        .iter()
        .all(|r| r.hydrogen_x.is_finite() && r.metals_z.is_finite());
    if cut.is_some() && !composition {
        return None;
    }
    // The dropped gas, from the top of the table inwards.
    for pair in atmosphere.windows(2).rev() {
        let (a, b) = (&pair[0], &pair[1]);
        let width = b.radius_cm - a.radius_cm;
        for piece in (0..ATMOSPHERE_PIECES).rev() {
            let lo = a.radius_cm + width * piece as f64 / ATMOSPHERE_PIECES as f64;
            let hi = a.radius_cm + width * (piece + 1) as f64 / ATMOSPHERE_PIECES as f64;
            let sigma = |r: f64| atmosphere_extinction(&law, a, b, (r - a.radius_cm) / width);
            let depth = gauss4(lo, hi, sigma);
            if tau + depth >= PHOTOSPHERE_OPTICAL_DEPTH {
                // Bisect for the radius inside [lo, hi] where τ reaches 2/3.
                let (mut inner, mut outer) = (lo, hi);
                for _ in 0..60 {
                    let mid = 0.5 * (inner + outer);
                    if tau + gauss4(mid, hi, sigma) >= PHOTOSPHERE_OPTICAL_DEPTH {
                        inner = mid;
                    } else {
                        outer = mid;
                    }
                }
                let radius_cm = 0.5 * (inner + outer);
                let s = (radius_cm - a.radius_cm) / width;
                return Some(Photosphere {
                    radius_cm,
                    temperature_k: Some(a.temperature_k + s * (b.temperature_k - a.temperature_k)),
                    dropped_gas_optical_depth: atmosphere_depth(&law, atmosphere),
                    above_surface_cut: true,
                    method: format!(
                        "tau = 2/3 from the top of the table, in the gas above the surface cut \
                         (r = {:.6e} cm), with the smooth H-minus / electron scattering + \
                         Kramers blend there",
                        cut.unwrap_or(0.0)
                    ),
                });
            }
            tau += depth;
        }
    }
    // Inward through the medium's shells.
    let layers = medium.layers();
    for k in (0..layers.len()).rev() {
        let (a, b) = medium.layer_bounds_cm(k);
        let sigma = layers[k].extinction_per_cm();
        let depth = sigma * (b - a);
        if tau + depth >= PHOTOSPHERE_OPTICAL_DEPTH && sigma > 0.0 {
            let radius_cm = (b - (PHOTOSPHERE_OPTICAL_DEPTH - tau) / sigma).max(a);
            let temperature_k = medium
                .structure()
                .and_then(|s| s.at(radius_cm).temperature_k)
                .or_else(|| layers[k].gas().and_then(|g| g.temperature_k));
            let method = match cut {
                Some(cut) => format!(
                    "tau = 2/3 from the top of the table: {tau:.3} in the gas above the surface \
                     cut (r = {cut:.6e} cm, smooth H-minus / electron scattering + Kramers \
                     blend there), the rest inside the medium"
                ),
                None => {
                    "tau = 2/3 from the medium's surface, with the model's own opacity".to_string()
                }
            };
            return Some(Photosphere {
                radius_cm,
                temperature_k,
                dropped_gas_optical_depth: tau,
                above_surface_cut: false,
                method,
            });
        }
        tau += depth;
    }
    None
}

/// The optical depth of the whole dropped gas.
fn atmosphere_depth(law: &SmoothHMinusBlend, atmosphere: &[AtmosphereRow]) -> f64 {
    atmosphere
        .windows(2)
        .map(|pair| {
            let (a, b) = (&pair[0], &pair[1]);
            let width = b.radius_cm - a.radius_cm;
            (0..ATMOSPHERE_PIECES)
                .map(|piece| {
                    let lo = a.radius_cm + width * piece as f64 / ATMOSPHERE_PIECES as f64;
                    let hi = a.radius_cm + width * (piece + 1) as f64 / ATMOSPHERE_PIECES as f64;
                    gauss4(lo, hi, |r| {
                        atmosphere_extinction(law, a, b, (r - a.radius_cm) / width)
                    })
                })
                .sum::<f64>()
        })
        .sum()
}
