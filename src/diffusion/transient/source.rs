//! The photons the diffusion problem starts with, per launched photon: where the model's
//! source puts them, what leaves or is absorbed before diffusion starts, and where the grid
//! must resolve the start.
//!
//! * A point source in a sphere (radius r₀) and a point or plane source in a slab (depth
//!   z₀) put all photons at one place: exit times from a point at r₀ depend only on r₀ in a
//!   spherically symmetric medium, and from a plane or point at z₀ only on z₀ in a
//!   laterally unbounded slab.
//! * A collimated beam at angle θ enters through the top face with the Fresnel
//!   transmission of unpolarised light (the rest is the specular reflection), refracts
//!   (n sin θ is conserved across the parallel interfaces), and is treated in the
//!   δ-isotropic similarity picture: the part g of scattering that goes forward is counted
//!   as no scattering, so in layer i the collimated power decays as
//!   exp(−σ_tr,i s/μ_i) with σ_tr = σ_a + σ_s (1 − g) and feeds an isotropic diffuse source
//!   of density σ_s (1 − g) P(z)/μ_i per unit depth, while a fraction σ_a/σ_tr of what it
//!   loses is absorbed at once (Joseph, Wiscombe & Weinman 1976, J. Atmos. Sci. 33:2452 for
//!   the δ-scaling; the same first isotropic scattering depth 1/μs′ as Patterson, Chance &
//!   Wilson 1989). At an internal index step the Fresnel-reflected part of the beam becomes
//!   diffuse at the interface; at the bottom face the transmitted remainder leaves as
//!   collimated transmission at its straight-line time and the reflected part becomes
//!   diffuse at the face. The flight time to the depth where a photon joins the diffusion
//!   (about one transport mean free time) is not added.
//! * Diffuse (Lambertian) illumination is the beam averaged over cosine-weighted incidence
//!   (32-point Gauss–Legendre rule in μ²).

use super::error::SolverError;
use super::model_1d::{Model1d, SegmentKind};
use crate::diffusion::boundary::fresnel_reflectance;
use crate::diffusion::quadrature::gauss_legendre_unit;
use crate::medium::emission::EmissionSampler;
use crate::medium::{Geometry, Medium, Source};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Directions of the Lambertian average (Gauss–Legendre nodes in μ²).
const DIFFUSE_DIRECTIONS: usize = 32;

/// A diffuse source density q(x) = amplitude · exp(−decay (x − start of segment)) on one
/// segment, photons per cm per launched photon (slabs only).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct ExponentialPiece {
    /// Index of the segment.
    pub segment: usize,
    /// q at the start of the segment, 1/cm.
    pub amplitude_per_cm: f64,
    /// Decay constant, 1/cm (≥ 0).
    pub decay_per_cm: f64,
}

/// Photons that leave without diffusing: at a given time, through the start face (0: a
/// slab's top) or the end face (1: a sphere's surface, a slab's bottom).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Atom {
    /// When they leave, s.
    pub time_s: f64,
    /// Fraction of the launched photons.
    pub probability: f64,
    /// 0: start face, 1: end face.
    pub face: usize,
}

/// Where the grid must resolve the source: around `position_cm`, elements of a fraction of
/// `scale_cm`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Refinement {
    /// Centre of the refinement, cm.
    pub position_cm: f64,
    /// Length scale to resolve, cm.
    pub scale_cm: f64,
}

/// Everything the source gives the diffusion problem, per launched photon.
#[derive(Debug, Clone, Default, PartialEq)]
pub(super) struct SourceTerms {
    /// Photons placed at points (radius or depth, cm; fraction of launched photons).
    pub points: Vec<(f64, f64)>,
    /// Distributed diffuse source (slabs).
    pub pieces: Vec<ExponentialPiece>,
    /// Specular reflection at the top face.
    pub specular: f64,
    /// Absorbed by the collimated beam before any diffusion.
    pub prompt_absorbed: f64,
    /// Photons that leave without diffusing.
    pub atoms: Vec<Atom>,
    /// Where the grid must resolve the start.
    pub refine: Vec<Refinement>,
}

impl SourceTerms {
    /// The source of `medium` on its diffusion problem `model`.
    ///
    /// # Errors
    /// [`SolverError::SourceOutsideDiffusingRegion`] for a point or plane source in a
    /// transparent surface layer.
    pub fn new(medium: &Medium, model: &Model1d) -> Result<Self, SolverError> {
        let mut terms = SourceTerms::default();
        let (inside_from, inside_to) = model.inside_cm;
        let outside = |position_cm: f64, coordinate: &'static str| {
            SolverError::SourceOutsideDiffusingRegion {
                position_cm,
                coordinate,
                inside_from_cm: inside_from,
                inside_to_cm: inside_to,
            }
        };
        let mut point = |position: f64| {
            terms.points.push((position, 1.0));
            let to_face = (position - model.start_cm()).min(model.end_cm() - position);
            let scale = match model.geometry {
                Geometry::Sphere => model.end_cm() - position,
                Geometry::Slab => to_face,
            };
            terms.refine.push(Refinement {
                position_cm: position,
                scale_cm: scale,
            });
        };
        match medium.source() {
            Source::SpherePoint { radius_cm } => {
                if radius_cm > inside_to {
                    return Err(outside(radius_cm, "radius"));
                }
                point(radius_cm);
            }
            Source::SlabPoint { depth_cm } | Source::SlabPlane { depth_cm } => {
                if !(inside_from..=inside_to).contains(&depth_cm) {
                    return Err(outside(depth_cm, "depth"));
                }
                point(depth_cm);
            }
            Source::Beam {
                polar_angle_deg, ..
            } => {
                let mu = polar_angle_deg.to_radians().cos();
                terms.add_beam(medium, model, mu, 1.0);
            }
            Source::EnergyGeneration => {
                let emission = medium.emission().ok_or(SolverError::NoEnergyGeneration)?;
                terms.points.extend(emission_points(emission));
            }
            Source::Diffuse => {
                for (u, weight) in gauss_legendre_unit(DIFFUSE_DIRECTIONS) {
                    // Cosine-weighted incidence: μ² uniform on (0, 1).
                    terms.add_beam(medium, model, u.sqrt(), weight);
                }
            }
        }
        Ok(terms)
    }

    /// Adds a collimated beam of `weight` photons per launched photon, incident from the
    /// ambient medium above at direction cosine `mu_ambient`.
    fn add_beam(&mut self, medium: &Medium, model: &Model1d, mu_ambient: f64, weight: f64) {
        let inside_to = model.inside_cm.1;
        // First segment of each model layer (extensions come before the top layer).
        let first_layer_segment = model
            .segments
            .iter()
            .position(|s| s.kind != SegmentKind::Extension)
            .unwrap_or(0);
        let top_layer = model.segments[first_layer_segment].layer;
        // n sin θ, conserved across parallel interfaces.
        let invariant = medium.ambient_above() * (1.0 - mu_ambient * mu_ambient).max(0.0).sqrt();
        let mut power = weight;
        let mut index_before = medium.ambient_above();
        let mut mu_before = mu_ambient;
        let mut time = 0.0;
        let mut refined = false;
        for (index, layer) in medium.layers().iter().enumerate() {
            let n = layer.refractive_index();
            let (top, bottom) = medium.layer_bounds_cm(index);
            if n != index_before {
                let reflected = power * fresnel_reflectance(mu_before, index_before, n);
                if index == 0 {
                    self.specular += reflected;
                } else if index <= top_layer {
                    // Reflected before reaching a scattering layer: back out through the top.
                    self.atoms.push(Atom {
                        time_s: 2.0 * time,
                        probability: reflected,
                        face: 0,
                    });
                } else {
                    self.points.push((top.min(inside_to), reflected));
                }
                power -= reflected;
            }
            let sine = invariant / n;
            if power <= 0.0 || sine >= 1.0 {
                return;
            }
            let mu = (1.0 - sine * sine).sqrt();
            let transport = layer.transport_extinction_per_cm();
            let thickness = bottom - top;
            if transport > 0.0 {
                let reduced_scattering =
                    layer.scattering_per_cm() * (1.0 - layer.phase().mean_cosine());
                let segment = first_layer_segment + (index - top_layer);
                let decay = transport / mu;
                self.pieces.push(ExponentialPiece {
                    segment,
                    amplitude_per_cm: power * reduced_scattering / mu,
                    decay_per_cm: decay,
                });
                let lost = -(-decay * thickness).exp_m1();
                self.prompt_absorbed += power * lost * layer.absorption_per_cm() / transport;
                if !refined {
                    refined = true;
                    self.refine.push(Refinement {
                        position_cm: top,
                        scale_cm: mu.max(0.25) / transport,
                    });
                }
                power *= (-decay * thickness).exp();
            }
            time += thickness * n / (SPEED_OF_LIGHT_CM_S * mu);
            index_before = n;
            mu_before = mu;
            if power < 1e-300 {
                return;
            }
        }
        let reflected =
            power * fresnel_reflectance(mu_before, index_before, medium.ambient_below());
        if reflected > 0.0 {
            // Back up to the bottom of the last scattering layer, where it becomes diffuse.
            self.points.push((inside_to, reflected));
        }
        self.atoms.push(Atom {
            time_s: time,
            probability: power - reflected,
            face: 1,
        });
    }
}

/// Point sources standing for the energy generation: one at each of
/// [`EMISSION_POINTS`] equally spaced quantiles of the luminosity L(r), each carrying an
/// equal share (the midpoint rule in the luminosity coordinate; the exit-time
/// distribution depends on the source only through where it starts).
fn emission_points(emission: &EmissionSampler) -> Vec<(f64, f64)> {
    let total = emission.luminosity_erg_s();
    let outer = emission.outer_radius_cm();
    (0..EMISSION_POINTS)
        .map(|k| {
            let target = total * (k as f64 + 0.5) / EMISSION_POINTS as f64;
            let (mut low, mut high) = (0.0, outer);
            for _ in 0..100 {
                let mid = 0.5 * (low + high);
                if emission.luminosity_inside(mid) < target {
                    low = mid;
                } else {
                    high = mid;
                }
            }
            (0.5 * (low + high), 1.0 / EMISSION_POINTS as f64)
        })
        .collect()
}

/// Number of point sources standing for an energy-generation source.
const EMISSION_POINTS: usize = 64;
