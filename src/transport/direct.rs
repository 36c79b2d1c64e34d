//! The direct walker: every free flight and every scattering simulated, with exact
//! optical-depth stepping across layer boundaries.
//!
//! Each flight draws an optical depth τ* = −ln ξ (exponential, ziggurat sampler) and spends
//! it layer by layer along the ray, using exact ray–sphere or ray–plane distances, until it
//! is used up (an interaction) or the photon leaves the medium. No step ever uses the mean
//! free path of its starting point alone, so the walk is exact for any layering.

use nalgebra::Vector3;
use rand::{Rng, RngExt};
use rand_distr::Exp1;

use super::direction;
use super::fresnel::{fresnel_reflectance, refract_across_z};
use super::geometry::{Exit, plane_exit, segment_inside_shell, shell_exit};
use super::phase::PhaseFunction;
use crate::medium::{EmissionSampler, Geometry, Medium, Source};
use crate::tally::{Outcome, PhotonRecord};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Limits on a single photon's walk.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WalkLimits {
    /// Free flights allowed before the photon is counted as censored.
    pub max_steps: u64,
}

impl Default for WalkLimits {
    fn default() -> Self {
        Self {
            max_steps: 100_000_000,
        }
    }
}

/// What the walker needs of one layer, precomputed.
#[derive(Debug, Clone)]
struct LayerOptics {
    extinction_per_cm: f64,
    albedo: f64,
    phase: PhaseFunction,
    /// n / c, s/cm: time per unit path length.
    slowness_s_cm: f64,
    /// Refractive index n.
    refractive_index: f64,
    /// Inner radius squared (sphere) or top depth (slab), cm² or cm.
    inner: f64,
    /// Outer radius squared (sphere) or bottom depth (slab), cm² or cm.
    outer: f64,
}

/// A photon in flight.
#[derive(Debug, Clone)]
pub(super) struct Photon {
    /// Position, cm (sphere: centre at the origin; slab: z = depth below the top face).
    pub(super) position: Vector3<f64>,
    /// Unit direction of flight.
    pub(super) direction: Vector3<f64>,
    /// Index of the layer holding the photon.
    pub(super) layer: usize,
    /// Time since launch, s.
    pub(super) time_s: f64,
    /// Scatterings so far.
    pub(super) scatterings: f64,
    /// Free flights (and jumps) so far, counted against the step cap.
    pub(super) steps: u64,
}

impl Photon {
    /// The record of this photon ending with `outcome`.
    pub(super) fn record(
        &self,
        outcome: Outcome,
        jumps: f64,
        direct_steps: f64,
        jump_time_s: f64,
    ) -> PhotonRecord {
        PhotonRecord {
            outcome,
            time_s: self.time_s,
            scatterings: self.scatterings,
            jumps,
            direct_steps,
            jump_time_s,
            position_cm: [self.position.x, self.position.y, self.position.z],
            direction: [self.direction.x, self.direction.y, self.direction.z],
            layer: self.layer,
            weight: 1.0,
        }
    }
}

/// The direct Monte Carlo walker for one medium. Immutable and `Sync`: share it between
/// threads and give each photon its own random stream.
#[derive(Debug, Clone)]
pub struct DirectWalker {
    geometry: Geometry,
    layers: Vec<LayerOptics>,
    source: Source,
    source_layer: usize,
    limits: WalkLimits,
    /// Refractive index above and below a slab.
    ambient_above: f64,
    ambient_below: f64,
    /// Whether any slab interface joins different indices (Fresnel checks needed).
    index_mismatch: bool,
    /// Where an energy-generation source releases photons.
    emission: Option<std::sync::Arc<EmissionSampler>>,
}

impl DirectWalker {
    /// A walker for `medium` with per-photon `limits`.
    pub fn new(medium: &Medium, limits: WalkLimits) -> Self {
        let geometry = medium.geometry();
        let layers = medium
            .layers()
            .iter()
            .enumerate()
            .map(|(index, layer)| {
                let (inner, outer) = medium.layer_bounds_cm(index);
                let (inner, outer) = match geometry {
                    Geometry::Sphere => (inner * inner, outer * outer),
                    Geometry::Slab => (inner, outer),
                };
                LayerOptics {
                    extinction_per_cm: layer.extinction_per_cm(),
                    albedo: layer.albedo(),
                    phase: *layer.phase(),
                    slowness_s_cm: layer.refractive_index() / SPEED_OF_LIGHT_CM_S,
                    refractive_index: layer.refractive_index(),
                    inner,
                    outer,
                }
            })
            .collect();
        Self {
            geometry,
            layers,
            source: medium.source(),
            source_layer: medium.source_layer(),
            limits,
            ambient_above: medium.ambient_above(),
            ambient_below: medium.ambient_below(),
            index_mismatch: geometry == Geometry::Slab && medium.has_index_mismatch(),
            emission: medium.emission().cloned(),
        }
    }

    /// Follows one photon from the source until it leaves, is absorbed or hits the step cap.
    pub fn walk<R: Rng + ?Sized>(&self, rng: &mut R) -> PhotonRecord {
        let (mut photon, reflected_at_entry) = self.launch(rng);
        let outcome = if reflected_at_entry {
            Outcome::Specular
        } else {
            loop {
                if photon.steps >= self.limits.max_steps {
                    break Outcome::Censored;
                }
                photon.steps += 1;
                if let Some(outcome) = self.fly(&mut photon, rng) {
                    break outcome;
                }
                if let Some(outcome) = self.interact(&mut photon, rng) {
                    break outcome;
                }
            }
        };
        photon.record(outcome, 0.0, photon.steps as f64, 0.0)
    }

    /// The per-photon limits.
    pub(super) fn limits(&self) -> WalkLimits {
        self.limits
    }

    /// Whether photons start with an isotropic direction (point and plane sources).
    pub(super) fn source_is_isotropic(&self) -> bool {
        !matches!(self.source, Source::Beam { .. } | Source::Diffuse)
    }

    /// An interaction at the photon's position: absorption (returns the outcome) or a
    /// scattering into a new direction drawn from the layer's phase function.
    #[inline(always)]
    pub(super) fn interact<R: Rng + ?Sized>(
        &self,
        photon: &mut Photon,
        rng: &mut R,
    ) -> Option<Outcome> {
        let layer = &self.layers[photon.layer];
        if layer.albedo < 1.0 && rng.random::<f64>() >= layer.albedo {
            return Some(Outcome::Absorbed);
        }
        photon.scatterings += 1.0;
        photon.direction = match layer.phase {
            PhaseFunction::Isotropic => direction::isotropic(rng),
            phase => {
                let cos_theta = phase.sample_cosine(rng);
                direction::scatter(&photon.direction, cos_theta, rng)
            }
        };
        None
    }

    /// A photon at the source, with its initial direction, and whether it was reflected
    /// specularly at the top face before entering (beam and diffuse sources).
    pub(super) fn launch<R: Rng + ?Sized>(&self, rng: &mut R) -> (Photon, bool) {
        let mut layer = self.source_layer;
        let (position, incoming) = match self.source {
            Source::EnergyGeneration => {
                let emission = self.emission.as_ref().expect("validated with the medium");
                let (radius_cm, holding) = emission.sample(rng);
                layer = holding;
                (Vector3::new(0.0, 0.0, radius_cm), direction::isotropic(rng))
            }
            Source::SpherePoint { radius_cm } => {
                (Vector3::new(0.0, 0.0, radius_cm), direction::isotropic(rng))
            }
            Source::SlabPoint { depth_cm } | Source::SlabPlane { depth_cm } => {
                (Vector3::new(0.0, 0.0, depth_cm), direction::isotropic(rng))
            }
            Source::Beam { polar_angle_deg } => {
                let (sin, cos) = polar_angle_deg.to_radians().sin_cos();
                (Vector3::zeros(), Vector3::new(sin, 0.0, cos))
            }
            Source::Diffuse => {
                // Lambertian illumination: cosine-weighted directions, μ = sqrt(ξ).
                let mu = rng.random::<f64>().sqrt();
                let down = Vector3::new(0.0, 0.0, 1.0);
                (Vector3::zeros(), direction::scatter(&down, mu, rng))
            }
        };
        let mut photon = Photon {
            position,
            direction: incoming,
            layer,
            time_s: 0.0,
            scatterings: 0.0,
            steps: 0,
        };
        let entering = matches!(self.source, Source::Beam { .. } | Source::Diffuse);
        let first = self.layers[0].refractive_index;
        if entering && self.ambient_above != first {
            let reflectance = fresnel_reflectance(incoming.z, self.ambient_above, first);
            if rng.random::<f64>() < reflectance {
                photon.direction.z = -incoming.z;
                return (photon, true);
            }
            photon.direction = refract_across_z(&incoming, self.ambient_above, first);
        }
        (photon, false)
    }

    /// At a slab interface reached through `exit`: Fresnel reflection (the photon turns
    /// back and stays in its layer; returns `true`) or Snell refraction into the next
    /// medium (returns `false`). Analog: reflection is chosen with probability R, which is
    /// unbiased. Draws a random number only where the indices differ.
    fn reflects<R: Rng + ?Sized>(&self, photon: &mut Photon, exit: Exit, rng: &mut R) -> bool {
        let here = self.layers[photon.layer].refractive_index;
        let there = match exit {
            Exit::Next => self
                .layers
                .get(photon.layer + 1)
                .map_or(self.ambient_below, |l| l.refractive_index),
            Exit::Previous if photon.layer == 0 => self.ambient_above,
            Exit::Previous => self.layers[photon.layer - 1].refractive_index,
        };
        if here == there {
            return false;
        }
        let reflectance = fresnel_reflectance(photon.direction.z.abs(), here, there);
        if reflectance >= 1.0 || rng.random::<f64>() < reflectance {
            photon.direction.z = -photon.direction.z;
            return true;
        }
        photon.direction = refract_across_z(&photon.direction, here, there);
        false
    }

    /// One free flight: spends a fresh exponential optical depth across layers. Returns the
    /// outcome if the photon leaves the medium (or can never interact), `None` at an
    /// interaction point.
    #[inline(always)]
    pub(super) fn fly<R: Rng + ?Sized>(&self, photon: &mut Photon, rng: &mut R) -> Option<Outcome> {
        let mut tau: f64 = rng.sample(Exp1);
        loop {
            let layer = &self.layers[photon.layer];
            if self.geometry == Geometry::Sphere && layer.extinction_per_cm > 0.0 {
                let s = tau / layer.extinction_per_cm;
                if segment_inside_shell(
                    &photon.position,
                    &photon.direction,
                    s,
                    layer.inner,
                    layer.outer,
                ) {
                    photon.position += s * photon.direction;
                    photon.time_s += s * layer.slowness_s_cm;
                    return None;
                }
            }
            let (distance, exit) = match self.geometry {
                Geometry::Sphere => shell_exit(
                    &photon.position,
                    &photon.direction,
                    layer.inner,
                    layer.outer,
                ),
                Geometry::Slab => plane_exit(
                    photon.position.z,
                    photon.direction.z,
                    layer.inner,
                    layer.outer,
                ),
            };
            if !distance.is_finite() {
                // Gliding parallel to the faces of a transparent layer: it never interacts.
                return Some(Outcome::Censored);
            }
            let tau_to_exit = layer.extinction_per_cm * distance;
            if tau < tau_to_exit {
                let s = tau / layer.extinction_per_cm;
                photon.position += s * photon.direction;
                photon.time_s += s * layer.slowness_s_cm;
                return None;
            }
            tau -= tau_to_exit;
            photon.position += distance * photon.direction;
            photon.time_s += distance * layer.slowness_s_cm;
            if self.index_mismatch && self.reflects(photon, exit, rng) {
                continue;
            }
            match exit {
                Exit::Next if photon.layer + 1 == self.layers.len() => {
                    return Some(match self.geometry {
                        Geometry::Sphere => Outcome::Escaped,
                        Geometry::Slab => Outcome::Transmitted,
                    });
                }
                Exit::Next => photon.layer += 1,
                Exit::Previous if photon.layer == 0 => return Some(Outcome::Reflected),
                Exit::Previous => photon.layer -= 1,
            }
        }
    }
}
