//! The medium as the one-dimensional diffusion problem sees it: a run of homogeneous
//! segments (the model's layers or profile sub-shells, plus the continuation of each free
//! face out to its extrapolated boundary), each with its diffusion coefficient, absorption
//! rate and the capacity that carries the interface condition.
//!
//! Photons diffuse with D = v / (3 σ_tr), v = c/n, σ_tr = σ_a + σ_s (1 − g), and are
//! absorbed at the rate v σ_a. Where the refractive index steps inside a slab the solver
//! keeps the radiance continuous in the form φ/n² (φ = v u the fluence rate, u the photon
//! density), together with the normal current: in the diffusion limit the radiance on both
//! sides of a lossless interface approaches the equilibrium in which L/n² is the same
//! (Clausius's n² law of radiance; as a diffusion interface condition: Aronson 1995, JOSA A
//! 12:2532; Faris 2002, JOSA A 19:519). With w = u/n³ (equivalently φ/n²) as the unknown
//! the equation becomes n³ ∂w/∂t = ∂/∂x (n³ D ∂w/∂x) − n³ v σ_a w with w and n³ D ∂w/∂x
//! continuous, an ordinary diffusion problem with capacity n³. Aronson's full condition adds
//! a jump proportional to the current (a Fresnel "interface resistance"); it is left out.
//!
//! A layer with no transport extinction (vacuum, or transparent) has infinite D: it cannot
//! hold a density gradient, so it is one well-mixed node that holds photons in proportion to
//! its volume (×n³) and absorbs none. Transparent layers at a free face are not part of the
//! diffusing medium at all: photons that reach them fly out, so the extrapolated boundary
//! sits on the first layer that scatters, with the index ratio of that layer to the ambient
//! medium (parallel faces pass the angle through) and the flight across them left out.

use super::error::SolverError;
use crate::diffusion::extrapolation::face_extension;
use crate::medium::{Geometry, Medium};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Where the diffusion density is held at zero.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FaceCondition {
    /// On the extrapolated boundary: photons leave through the physical face, the density
    /// there being what it would be if it fell to zero at the extrapolated distance z_e
    /// outside through a continuation that diffuses like the face layer (for a sub-shell of
    /// a smooth profile: like the outermost q∞ transport depths) but holds and absorbs
    /// nothing. z_e = q∞ l_tr at a matched face (Milne) and (2/3) A l_tr at a refractive
    /// one (Haskell et al. 1994), each face with its own indices. At a slab face this is
    /// exactly the partial-current (Robin) condition `u = z_e ∂u/∂n` of Haskell et al.; at
    /// a sphere's surface it is the steady spherical profile a/r + b through the shell out
    /// to R_e = R + z_e. For a conservative uniform sphere the mean exit time is then
    /// R²/(6D) + R² z_e/(3 D R_e), which differs from R_e²/(6D) of the closed-form
    /// estimates (the continuation counted as medium) by 1.5 q∞²/τ² relative. Nothing is
    /// absorbed or delayed in the continuation: it stands for the boundary, not for
    /// matter, so photons in an absorbing medium are absorbed at v σ_a wherever they are.
    /// (The image-source solutions continue the absorption out to the extrapolated plane
    /// and take the current at the physical face; their steady slab reflectance differs
    /// from the partial-current one at order (κ z_e)², κ = √(σ_a/D′): 1 % at
    /// μa/μs′ = 0.01, n = 1.4.)
    #[default]
    Extrapolated,
    /// On the physical faces themselves (the classical absorbing boundary), for comparison
    /// with closed forms written that way.
    ZeroDensity,
}

/// What a segment stands for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum SegmentKind {
    /// A layer or sub-shell in which photons diffuse.
    Diffusing,
    /// A layer with no transport extinction inside the medium: one well-mixed node.
    Transparent,
    /// The continuation of a free face to its extrapolated boundary: one element carrying
    /// the boundary condition, with no capacity and no absorption.
    Extension,
}

/// One homogeneous piece of the diffusion problem.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Segment {
    /// Start (inner radius, or upper depth; negative above a slab's top face), cm.
    pub start_cm: f64,
    /// End, cm.
    pub end_cm: f64,
    /// Diffusion coefficient D = v / (3 σ_tr), cm² s⁻¹ (infinite where transparent).
    pub diffusion_cm2_s: f64,
    /// Capacity n³ that carries the interface condition φ/n² continuous.
    pub capacity: f64,
    /// Absorption rate v σ_a, s⁻¹.
    pub absorption_rate_per_s: f64,
    /// Transport mean free path 1/σ_tr, cm (infinite where transparent).
    pub transport_mfp_cm: f64,
    /// The model layer it stands for (an extension: its face layer).
    pub layer: usize,
    /// What it is.
    pub kind: SegmentKind,
}

/// The one-dimensional diffusion problem of a medium.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Model1d {
    /// Sphere (radial, weight r²) or slab (depth, weight 1).
    pub geometry: Geometry,
    /// Segments from the centre (sphere) or from above the top face (slab) outward.
    pub segments: Vec<Segment>,
    /// The diffusing region without extensions, cm: (0, outer radius) for a sphere, (top of
    /// the first, bottom of the last scattering layer) for a slab.
    pub inside_cm: (f64, f64),
    /// Extrapolation lengths of the top (slab only; 0 for a sphere) and the outer / bottom
    /// face, cm.
    pub extension_cm: [f64; 2],
}

/// A segment standing for layer `index` of `medium` between `start_cm` and `end_cm`.
fn layer_segment(medium: &Medium, index: usize, start_cm: f64, end_cm: f64) -> Segment {
    let layer = &medium.layers()[index];
    let n = layer.refractive_index();
    let speed = SPEED_OF_LIGHT_CM_S / n;
    let transport = layer.transport_extinction_per_cm();
    let transparent = transport <= 0.0;
    Segment {
        start_cm,
        end_cm,
        diffusion_cm2_s: if transparent {
            f64::INFINITY
        } else {
            speed / (3.0 * transport)
        },
        capacity: n * n * n,
        absorption_rate_per_s: speed * layer.absorption_per_cm(),
        transport_mfp_cm: 1.0 / transport,
        layer: index,
        kind: if transparent {
            SegmentKind::Transparent
        } else {
            SegmentKind::Diffusing
        },
    }
}

impl Model1d {
    /// The diffusion problem of `medium` with the given face condition.
    ///
    /// # Errors
    /// [`SolverError::InvalidTransport`] for a negative or non-finite transport extinction,
    /// [`SolverError::NoDiffusingLayer`] where no layer has a positive one.
    pub fn new(medium: &Medium, faces: FaceCondition) -> Result<Self, SolverError> {
        for (index, layer) in medium.layers().iter().enumerate() {
            let value = layer.transport_extinction_per_cm();
            if !(value.is_finite() && value >= 0.0) {
                return Err(SolverError::InvalidTransport {
                    layer: index,
                    value,
                });
            }
        }
        let diffusing = |index: &usize| medium.layers()[*index].transport_extinction_per_cm() > 0.0;
        let count = medium.layers().len();
        let last = (0..count)
            .rev()
            .find(diffusing)
            .ok_or(SolverError::NoDiffusingLayer)?;
        let first = match medium.geometry() {
            // A transparent core is a well-mixed cavity at the centre.
            Geometry::Sphere => 0,
            Geometry::Slab => (0..count).find(diffusing).unwrap_or(0),
        };
        let inside_from = medium.layer_bounds_cm(first).0;
        let inside_to = medium.layer_bounds_cm(last).1;
        let mut segments = Vec::with_capacity(last - first + 3);
        let mut extension_cm = [0.0; 2];
        let extension = |index: usize, outward: bool, outside: f64, at: f64| {
            if faces == FaceCondition::ZeroDensity {
                return None;
            }
            let face = face_extension(medium, index, outward, outside)?;
            let speed = SPEED_OF_LIGHT_CM_S / face.refractive_index;
            let (start_cm, end_cm) = if outward {
                (at, at + face.length_cm)
            } else {
                (at - face.length_cm, at)
            };
            Some(Segment {
                start_cm,
                end_cm,
                diffusion_cm2_s: speed / (3.0 * face.transport_per_cm),
                capacity: face.refractive_index.powi(3),
                // The continuation stands for the boundary condition, not for matter:
                // nothing is absorbed (or held) in it (see `FaceCondition::Extrapolated`).
                absorption_rate_per_s: 0.0,
                transport_mfp_cm: 1.0 / face.transport_per_cm,
                layer: index,
                kind: SegmentKind::Extension,
            })
        };
        let (above, below) = match medium.geometry() {
            Geometry::Sphere => (1.0, 1.0),
            Geometry::Slab => (medium.ambient_above(), medium.ambient_below()),
        };
        if medium.geometry() == Geometry::Slab
            && let Some(top) = extension(first, false, above, inside_from)
        {
            extension_cm[0] = top.end_cm - top.start_cm;
            segments.push(top);
        }
        for index in first..=last {
            let (start, end) = medium.layer_bounds_cm(index);
            segments.push(layer_segment(medium, index, start, end));
        }
        if let Some(bottom) = extension(last, true, below, inside_to) {
            extension_cm[1] = bottom.end_cm - bottom.start_cm;
            segments.push(bottom);
        }
        Ok(Self {
            geometry: medium.geometry(),
            segments,
            inside_cm: (inside_from, inside_to),
            extension_cm,
        })
    }

    /// Start of the first segment (the top Dirichlet face of a slab, the centre of a
    /// sphere), cm.
    pub fn start_cm(&self) -> f64 {
        self.segments[0].start_cm
    }

    /// End of the last segment (the outer or bottom Dirichlet face), cm.
    pub fn end_cm(&self) -> f64 {
        self.segments[self.segments.len() - 1].end_cm
    }
}
