//! What a walk will cost, estimated before it starts, and where it cannot make progress.
//!
//! **Direct walk.** A photon takes one free flight per interaction plus the last one, so
//! its flights are its scatterings plus one: the diffusion estimate of the mean scatterings
//! from the source with the Milne extrapolated boundary
//! ([`crate::diffusion::estimate`]; (τ + q∞)²/2 for a uniform sphere with a centred
//! source, about τ²/2 in general) plus one. In absorbing media this is an upper estimate.
//!
//! **Accelerated walk.** The walk still flies directly where no jump starts: in a sphere,
//! outside the radial passages' start domains; in a slab, within γ transport mean free
//! paths of a layer's faces. In a sphere the diffusion Green's function from the source at
//! r₀ gives the scatterings spent there: a photon spends s(max(r, r₀)) r² dr of time
//! between r and r + dr, with s(r) = ∫_r^{R_e} dr′/(r′² D) up to the extrapolated surface
//! (for a uniform sphere and r₀ = 0 this integrates to R²/(6D)); times v σ_s, integrated
//! over the direct zones. This counts the diffusion's whole residence there, including
//! that of passages crossing the zone, so it is an upper estimate. In a slab the estimate
//! takes a share min(1, 2γ/τ_tr) of the diffusion scatterings of each layer of transport
//! thickness τ_tr. To these flights come, for each jump, itself and the flight after it:
//! in a sphere about 2 passages per node radius (a passage from cell [x, 2x] of depth x
//! below a surface ends at x/2 with probability (4 − 1.5)/(4 − 0.5) ≈ 0.71, else at 4x: a
//! net rise of 0.6 doublings per passage, and the Sun-like demo takes 56 for its 44
//! nodes); in a slab one jump per γ² scatterings of the jump zone.
//!
//! **Positions.** A flight moves a photon by about one mean free path l. Where l is below
//! 16 units in the last place of the coordinates (the outer radius of a shell, the bottom
//! depth of a slab layer), a flight moves the photon by a few representable steps at most:
//! its length and direction are lost to rounding and the walk no longer progresses. Such a
//! layer stalls any walk that takes direct flights in it.

use super::jump_spheres::{LocalJumps, LocalSettings};
use super::radial_chain::{ChainLayout, ChainSettings};
use super::{Acceleration, crossing::CrossingLaw};
use crate::diffusion::estimate;
use crate::medium::{Geometry, Medium, Source};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Units in the last place below which a mean free path stalls the walk.
pub const STALL_ULPS: f64 = 16.0;

/// Estimated cost of walking one photon through a medium, by method.
#[derive(Debug, Clone, PartialEq)]
pub struct WalkCost {
    /// Free flights per photon of the direct walk: diffusion mean scatterings + 1.
    pub direct_flights_per_photon: f64,
    /// Steps (flights and jumps) per photon of the accelerated walk; the direct estimate
    /// where no jump applies.
    pub accelerated_steps_per_photon: f64,
    /// Whether the accelerated walker can jump anywhere in the medium.
    pub has_jumps: bool,
    /// Per layer: whether the accelerated walk takes direct flights somewhere in it.
    accelerated_flies_in: Vec<bool>,
}

/// A layer whose mean free path is too short for the floating-point positions in it.
#[derive(Debug, Clone, PartialEq)]
pub struct Stall {
    /// Index of the layer (innermost or top first).
    pub layer: usize,
    /// Its name (may be empty).
    pub name: String,
    /// Its mean free path, cm.
    pub mean_free_path_cm: f64,
    /// Its largest coordinate (outer radius or bottom depth), cm.
    pub coordinate_cm: f64,
    /// One unit in the last place of that coordinate, cm.
    pub resolution_cm: f64,
}

impl WalkCost {
    /// The estimate for `medium` with acceleration `settings`.
    pub fn new(medium: &Medium, settings: &Acceleration) -> Self {
        let diffusion = estimate(medium);
        let direct_flights_per_photon = diffusion.mean_scatterings_extrapolated + 1.0;
        let scatterings: Vec<f64> = medium
            .layers()
            .iter()
            .zip(&diffusion.layer_residence_s)
            .map(|(layer, residence)| {
                residence * layer.scattering_per_cm() * SPEED_OF_LIGHT_CM_S
                    / layer.refractive_index()
            })
            .collect();
        let (flies_in, flights, jumps) = match medium.geometry() {
            Geometry::Sphere => sphere_direct_zones(medium, settings),
            Geometry::Slab => slab_direct_zones(medium, settings, &scatterings),
        };
        let has_jumps = jumps > 0.0;
        let accelerated_steps_per_photon = if has_jumps {
            (flights + 2.0 * jumps + 1.0).min(direct_flights_per_photon)
        } else {
            direct_flights_per_photon
        };
        Self {
            direct_flights_per_photon,
            accelerated_steps_per_photon,
            has_jumps,
            accelerated_flies_in: flies_in,
        }
    }

    /// Layers where flights would stall (see the module notes): every interacting layer for
    /// the direct walk (`accelerated = false`), those where the accelerated walk still flies
    /// directly otherwise.
    pub fn stalls(&self, medium: &Medium, accelerated: bool) -> Vec<Stall> {
        medium
            .layers()
            .iter()
            .enumerate()
            .filter(|&(index, layer)| {
                layer.extinction_per_cm() > 0.0
                    && (!accelerated || !self.has_jumps || self.accelerated_flies_in[index])
            })
            .filter_map(|(index, layer)| {
                let coordinate_cm = medium.layer_bounds_cm(index).1;
                let resolution_cm = coordinate_cm * f64::EPSILON;
                let mean_free_path_cm = layer.mean_free_path_cm();
                (mean_free_path_cm < STALL_ULPS * resolution_cm).then(|| Stall {
                    layer: index,
                    name: layer.name().to_string(),
                    mean_free_path_cm,
                    coordinate_cm,
                    resolution_cm,
                })
            })
            .collect()
    }
}

/// Per shell whether the accelerated walk flies in it, the diffusion scatterings spent
/// outside every passage start domain, and the estimated passages per photon.
fn sphere_direct_zones(medium: &Medium, settings: &Acceleration) -> (Vec<bool>, f64, f64) {
    let layout = ChainLayout::new(
        medium,
        ChainSettings {
            gamma: settings.gamma(),
            epsilon: settings.epsilon(),
        },
    );
    if layout.is_empty() {
        return (vec![true; medium.layers().len()], 0.0, 0.0);
    }
    let domains = layout.start_domains_cm();
    let source = match medium.source() {
        Source::SpherePoint { radius_cm } => radius_cm,
        _ => 0.0,
    };
    // Scale function from each shell's outer radius to the extrapolated surface.
    let count = medium.layers().len();
    let diffusion: Vec<f64> = medium
        .layers()
        .iter()
        .map(|layer| {
            let transport = layer.transport_extinction_per_cm();
            SPEED_OF_LIGHT_CM_S
                / layer.refractive_index()
                / (3.0 * transport.max(f64::MIN_POSITIVE))
        })
        .collect();
    let radius = medium.size_cm();
    let last = &medium.layers()[count - 1];
    let extrapolated = radius
        + CrossingLaw::isotropic().extrapolation_length()
            / last.transport_extinction_per_cm().max(f64::MIN_POSITIVE);
    let mut scale_at_outer = vec![0.0; count];
    let mut above = (extrapolated - radius) / (radius * extrapolated * diffusion[count - 1]);
    for index in (0..count).rev() {
        scale_at_outer[index] = above;
        let (a, b) = medium.layer_bounds_cm(index);
        if a > 0.0 {
            above += (b - a) / (a * b * diffusion[index]);
        }
    }
    // s(r) for r inside shell `index`.
    let scale = |index: usize, r: f64| -> f64 {
        let b = medium.layer_bounds_cm(index).1;
        scale_at_outer[index] + (b - r) / (r * b * diffusion[index])
    };
    let mut flies_in = vec![false; count];
    let mut flights = 0.0;
    for (index, layer) in medium.layers().iter().enumerate() {
        let (a, b) = medium.layer_bounds_cm(index);
        // The parts of [a, b] outside every start domain.
        let mut parts = vec![(a, b)];
        for &(low, high) in &domains {
            parts = parts
                .into_iter()
                .flat_map(|(p, q)| {
                    [(p, q.min(low)), (p.max(high), q)]
                        .into_iter()
                        .filter(|(x, y)| y > x)
                })
                .collect();
        }
        flies_in[index] = !parts.is_empty();
        let rate = SPEED_OF_LIGHT_CM_S / layer.refractive_index() * layer.scattering_per_cm();
        for (p, q) in parts {
            // ∫ s(max(r, r₀)) r² dr over [p, q]: constant below the source, and
            // s(q)(q³ − p³)/3 + (q − p)²(q + 2p)/(6 q D) above it.
            let split = source.clamp(p, q);
            let below = if split > p {
                scale(index, split.max(f64::MIN_POSITIVE)) * (split.powi(3) - p.powi(3)) / 3.0
            } else {
                0.0
            };
            let above = if q > split && split > 0.0 {
                let h = q - split;
                scale(index, q) * (q.powi(3) - split.powi(3)) / 3.0
                    + h * h * (q + 2.0 * split) / (6.0 * q * diffusion[index])
            } else if q > split {
                // From the centre: ∫₀^q (s(q) + (1/r − 1/q)/D) r² dr.
                scale(index, q) * q.powi(3) / 3.0 + q * q / (6.0 * diffusion[index])
            } else {
                0.0
            };
            flights += rate * (below + above);
        }
    }
    (flies_in, flights, 2.0 * layout.node_count() as f64)
}

/// Per slab layer whether the accelerated walk flies in it, the scatterings flown
/// directly, and the estimated jumps per photon.
fn slab_direct_zones(
    medium: &Medium,
    settings: &Acceleration,
    scatterings: &[f64],
) -> (Vec<bool>, f64, f64) {
    let local = LocalJumps::layout(
        medium,
        LocalSettings {
            gamma: settings.gamma(),
            epsilon: settings.epsilon(),
            drift_correction: settings.drift_correction(),
        },
    );
    if local.is_empty() {
        return (vec![true; medium.layers().len()], 0.0, 0.0);
    }
    let (mut flights, mut jumps) = (0.0, 0.0);
    let flies_in = medium
        .layers()
        .iter()
        .enumerate()
        .map(|(index, layer)| {
            let (a, b) = medium.layer_bounds_cm(index);
            let thickness = layer.transport_extinction_per_cm() * (b - a);
            let share = if thickness > 0.0 {
                (2.0 * settings.gamma() / thickness).min(1.0)
            } else {
                1.0
            };
            flights += scatterings[index] * share;
            jumps += scatterings[index] * (1.0 - share) / (settings.gamma() * settings.gamma());
            share > 0.0
        })
        .collect();
    (flies_in, flights, jumps)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::Layer;
    use crate::transport::PhaseFunction;

    fn sphere(tau: f64, radius: f64) -> Medium {
        let layer = Layer::new("core", tau / radius, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        Medium::sphere(vec![(radius, layer)], Source::centre()).unwrap()
    }

    #[test]
    fn direct_cost_is_the_diffusion_estimate_of_a_uniform_sphere() {
        // (τ + q∞)²/2 + 1 flights from the centre of a uniform sphere (diffusion with the
        // Milne extrapolated boundary; Chandrasekhar 1950 for q∞ = 0.7104461).
        let cost = WalkCost::new(&sphere(100.0, 1.0), &Acceleration::default());
        let expected = (100.0f64 + 0.7104461).powi(2) / 2.0 + 1.0;
        assert!((cost.direct_flights_per_photon / expected - 1.0).abs() < 1e-9);
        assert!(cost.has_jumps);
        assert!(cost.accelerated_steps_per_photon < 0.1 * cost.direct_flights_per_photon);
        // τ = 5: thinner than γ = 10, no jumps.
        let thin = WalkCost::new(&sphere(5.0, 1.0), &Acceleration::default());
        assert!(!thin.has_jumps);
        assert_eq!(
            thin.accelerated_steps_per_photon,
            thin.direct_flights_per_photon
        );
    }

    #[test]
    fn mean_free_paths_below_the_position_resolution_stall() {
        // σ = 1e20/cm in a sphere of 1 cm: l = 1e-20 cm, one ulp at 1 cm is 2.2e-16 cm.
        let dense = sphere(1e20, 1.0);
        let cost = WalkCost::new(&dense, &Acceleration::default());
        let direct = cost.stalls(&dense, false);
        assert_eq!(direct.len(), 1);
        assert_eq!(direct[0].name, "core");
        assert!((direct[0].resolution_cm - f64::EPSILON).abs() < 1e-30);
        // The accelerated walk still flies directly in the outer γ mean free paths.
        assert_eq!(cost.stalls(&dense, true).len(), 1);
        // A star-like sphere with l = 1e-3 cm at R = 7e10 cm: l / ulp ≈ 65, not stalled.
        let star = sphere(7e13, 7e10);
        assert!(
            WalkCost::new(&star, &Acceleration::default())
                .stalls(&star, false)
                .is_empty()
        );
    }
}
