//! The scattering medium: geometry, homogeneous layers and the photon source, all in cgs.
//!
//! A [`Medium`] is either a sphere of concentric shells (innermost first) or a plane-parallel
//! slab of layers (top first, unbounded sideways). It is built in code with
//! [`Medium::sphere`] / [`Medium::slab`] or loaded from a JSON model file with
//! [`model_file::load_model`]; both paths validate every value, so nothing downstream sees
//! raw input.

pub mod detector;
pub mod emission;
mod error;
mod layer;
pub mod model_file;
pub mod profile;

pub use detector::{Detector, Face};
pub use emission::EmissionSampler;
pub use error::{MediumError, Quantity};
pub use layer::{GasSample, Layer};

use std::sync::Arc;

use crate::units::LengthUnit;
use profile::{ProfileSummary, RadialStructure};

/// The shape of the medium.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Geometry {
    /// Concentric spherical shells.
    Sphere,
    /// Plane-parallel layers, unbounded sideways.
    Slab,
}

/// Where and how photons start.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Source {
    /// Sphere: isotropic point source at distance `radius_cm` from the centre.
    SpherePoint {
        /// Distance from the centre, cm.
        radius_cm: f64,
    },
    /// Slab: collimated beam entering the top face at `polar_angle_deg` from the normal,
    /// centred on x = y = 0, with the cross-section `profile`.
    Beam {
        /// Angle from the inward normal, degrees (0 ≤ angle < 90).
        polar_angle_deg: f64,
        /// Intensity across the beam (infinitely narrow unless given).
        profile: BeamProfile,
    },
    /// Slab: isotropic point source at `depth_cm` below the top face.
    SlabPoint {
        /// Depth below the top face, cm.
        depth_cm: f64,
    },
    /// Slab: isotropic plane source at `depth_cm` below the top face (photons start at
    /// x = y = 0: in a laterally unbounded slab every result but the radial distribution is
    /// the same as for a point source).
    SlabPlane {
        /// Depth below the top face, cm.
        depth_cm: f64,
    },
    /// Slab: diffuse (Lambertian) illumination of the top face from the ambient medium.
    Diffuse,
    /// Sphere: isotropic sources distributed like the energy generation, with probability
    /// ∝ ε ρ r² dr on the model's profile ([`Medium::emission`], [`EmissionSampler`]). Set
    /// with [`Medium::with_energy_generation_source`].
    EnergyGeneration,
}

impl Source {
    /// Isotropic point source at the centre of a sphere.
    pub fn centre() -> Self {
        Source::SpherePoint { radius_cm: 0.0 }
    }

    /// Infinitely narrow collimated beam at normal incidence on a slab.
    pub fn normal_beam() -> Self {
        Source::Beam {
            polar_angle_deg: 0.0,
            profile: BeamProfile::Narrow,
        }
    }

    /// Whether the light comes from outside, through a slab's top face (a beam or diffuse
    /// illumination), rather than from a source inside the medium.
    #[inline]
    pub fn enters_from_outside(&self) -> bool {
        matches!(self, Source::Beam { .. } | Source::Diffuse)
    }
}

/// The intensity profile across a collimated beam, in the plane perpendicular to the beam.
/// Its footprint on the top face is the same profile stretched by 1/cos θ along x for a
/// beam at polar angle θ (the beam travels in the x–z plane).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub enum BeamProfile {
    /// Infinitely narrow (a pencil beam): every photon enters at x = y = 0.
    #[default]
    Narrow,
    /// Gaussian, I(r) ∝ exp(−2 r²/w²), with `radius_cm` = w the 1/e² intensity radius
    /// (the usual laser-beam convention).
    Gaussian {
        /// The 1/e² intensity radius w, cm.
        radius_cm: f64,
    },
    /// Uniform ("top-hat") intensity inside `radius_cm`, none outside.
    Flat {
        /// Radius of the lit disc, cm.
        radius_cm: f64,
    },
}

impl BeamProfile {
    /// The beam radius, cm (None for a narrow beam).
    pub fn radius_cm(&self) -> Option<f64> {
        match *self {
            BeamProfile::Narrow => None,
            BeamProfile::Gaussian { radius_cm } | BeamProfile::Flat { radius_cm } => {
                Some(radius_cm)
            }
        }
    }

    /// The distance from the beam axis, in the beam's cross-section, of a photon drawn from
    /// the profile with the uniform number `xi` in (0, 1], cm: for the Gaussian the inverse
    /// of its radial distribution 1 − exp(−2r²/w²), r = w √(−ln ξ / 2); for the flat beam
    /// r = R √ξ (uniform over the disc).
    pub fn sample_radius_cm(&self, xi: f64) -> f64 {
        match *self {
            BeamProfile::Narrow => 0.0,
            BeamProfile::Gaussian { radius_cm } => radius_cm * (-0.5 * xi.ln()).sqrt(),
            BeamProfile::Flat { radius_cm } => radius_cm * xi.sqrt(),
        }
    }

    /// Irradiance in the beam's cross-section at distance `r_cm` from the axis, per unit
    /// area, normalised to unit power, 1/cm²: 2/(π w²) exp(−2r²/w²) for the Gaussian,
    /// 1/(π R²) inside the disc for the flat beam; None for the narrow beam (a delta).
    pub fn irradiance_per_cm2(&self, r_cm: f64) -> Option<f64> {
        use std::f64::consts::PI;
        match *self {
            BeamProfile::Narrow => None,
            BeamProfile::Gaussian { radius_cm: w } => {
                Some(2.0 / (PI * w * w) * (-2.0 * r_cm * r_cm / (w * w)).exp())
            }
            BeamProfile::Flat { radius_cm } => Some(if r_cm <= radius_cm {
                1.0 / (PI * radius_cm * radius_cm)
            } else {
                0.0
            }),
        }
    }
}

/// A validated medium. Boundaries are in cm: for a sphere the outer radius of each shell,
/// for a slab the depth of the bottom of each layer below the top face.
#[derive(Debug, Clone, PartialEq)]
pub struct Medium {
    name: String,
    geometry: Geometry,
    layers: Vec<Layer>,
    boundaries_cm: Vec<f64>,
    /// For each boundary (outer edge of layer i), whether it is a sharp interface between
    /// different materials (`true`) or an internal division of a smooth profile (`false`).
    sharp: Vec<bool>,
    ambient_above: f64,
    ambient_below: f64,
    source: Source,
    source_layer: usize,
    display_unit: LengthUnit,
    /// How each tabulated profile in the medium was divided into sub-shells (empty for media
    /// of plain layers).
    profiles: Vec<ProfileSummary>,
    /// The radial structure of a sphere made only of profile layers (rows with m(r), L(r)).
    structure: Option<Arc<RadialStructure>>,
    /// Where the energy is released (profiles with energy generation).
    emission: Option<Arc<EmissionSampler>>,
    /// The radius the medium was cut at by [`Medium::truncated_at`], and its surface radius
    /// before, cm.
    truncation: Option<(f64, f64)>,
    /// Detectors on a slab's faces (empty unless the model gives some).
    detectors: Vec<Detector>,
}

impl Medium {
    /// A sphere of concentric shells given innermost first as `(outer radius cm, layer)`.
    ///
    /// # Errors
    /// Empty list, radii not strictly increasing or not positive and finite, no layer with
    /// positive extinction, a refractive index other than 1 (spheres have no refractive
    /// boundaries), or a source that is not a point inside the sphere.
    pub fn sphere(shells: Vec<(f64, Layer)>, source: Source) -> Result<Self, MediumError> {
        let (boundaries_cm, layers) =
            split_layers(shells, "outer_radius", |previous, radius| radius > previous)?;
        for (index, layer) in layers.iter().enumerate() {
            if layer.refractive_index() != 1.0 {
                return Err(MediumError::value(
                    format!("layers[{index}].refractive_index"),
                    layer.refractive_index(),
                    Quantity::Dimensionless,
                    "1 (refractive boundaries apply to slabs only)",
                ));
            }
        }
        let outer = *boundaries_cm.last().unwrap_or(&0.0);
        let source_layer = match source {
            Source::SpherePoint { radius_cm } => {
                if !(radius_cm.is_finite() && (0.0..outer).contains(&radius_cm)) {
                    return Err(MediumError::value(
                        "source.radius",
                        radius_cm,
                        Quantity::Length,
                        format!("a distance from the centre in [0, {outer} cm)"),
                    ));
                }
                boundaries_cm.partition_point(|&b| b <= radius_cm)
            }
            Source::EnergyGeneration => {
                return Err(MediumError::Invalid {
                    field: "source.kind".into(),
                    problem: "an energy-generation source needs the model's energy-generation \
                              profile: build the sphere with a point source, then call \
                              with_energy_generation_source"
                        .into(),
                });
            }
            _ => {
                return Err(MediumError::Invalid {
                    field: "source.kind".into(),
                    problem: "a sphere takes a point source (\"kind\": \"point\", \"radius\")"
                        .into(),
                });
            }
        };
        Ok(Self {
            name: String::new(),
            geometry: Geometry::Sphere,
            sharp: vec![true; layers.len()],
            layers,
            boundaries_cm,
            ambient_above: 1.0,
            ambient_below: 1.0,
            source,
            source_layer,
            display_unit: LengthUnit::Cm,
            profiles: Vec::new(),
            structure: None,
            emission: None,
            truncation: None,
            detectors: Vec::new(),
        })
    }

    /// A slab of layers given top first as `(thickness cm, layer)`, surrounded by a medium of
    /// refractive index `ambient_index` (≥ 1).
    ///
    /// # Errors
    /// Empty list, non-positive or non-finite thickness, no layer with positive extinction,
    /// an ambient index below 1, a beam angle outside [0, 90) degrees, or a point source
    /// outside the slab.
    pub fn slab(
        layers: Vec<(f64, Layer)>,
        ambient_index: f64,
        source: Source,
    ) -> Result<Self, MediumError> {
        if !(ambient_index.is_finite() && ambient_index >= 1.0) {
            return Err(MediumError::value(
                "ambient_index",
                ambient_index,
                Quantity::Dimensionless,
                "a finite number >= 1",
            ));
        }
        let mut depth = 0.0;
        let mut with_depths = Vec::with_capacity(layers.len());
        for (index, (thickness, layer)) in layers.into_iter().enumerate() {
            if !(thickness.is_finite() && thickness > 0.0) {
                return Err(MediumError::value(
                    format!("layers[{index}].thickness"),
                    thickness,
                    Quantity::Length,
                    "a finite thickness > 0",
                ));
            }
            depth += thickness;
            with_depths.push((depth, layer));
        }
        let (boundaries_cm, layers) = split_layers(with_depths, "thickness", |_, _| true)?;
        let total = *boundaries_cm.last().unwrap_or(&0.0);
        let source_layer = match source {
            Source::Beam {
                polar_angle_deg,
                profile,
            } => {
                if !(0.0..90.0).contains(&polar_angle_deg) {
                    return Err(MediumError::value(
                        "source.polar_angle_deg",
                        polar_angle_deg,
                        Quantity::AngleDeg,
                        "an angle from the normal in [0, 90) degrees",
                    ));
                }
                if let Some(radius_cm) = profile.radius_cm()
                    && !(radius_cm.is_finite() && radius_cm > 0.0)
                {
                    return Err(MediumError::value(
                        "source.radius",
                        radius_cm,
                        Quantity::Length,
                        "a finite beam radius > 0",
                    ));
                }
                0
            }
            Source::Diffuse => 0,
            Source::SlabPoint { depth_cm } | Source::SlabPlane { depth_cm } => {
                if !(depth_cm.is_finite() && (0.0..=total).contains(&depth_cm)) {
                    return Err(MediumError::value(
                        "source.depth",
                        depth_cm,
                        Quantity::Length,
                        format!("a depth in [0, {total} cm]"),
                    ));
                }
                boundaries_cm
                    .partition_point(|&b| b <= depth_cm)
                    .min(layers.len() - 1)
            }
            Source::SpherePoint { .. } | Source::EnergyGeneration => {
                return Err(MediumError::Invalid {
                    field: "source.kind".into(),
                    problem: "a slab takes \"beam\" or a point source at a \"depth\"".into(),
                });
            }
        };
        Ok(Self {
            name: String::new(),
            geometry: Geometry::Slab,
            sharp: vec![true; layers.len()],
            layers,
            boundaries_cm,
            ambient_above: ambient_index,
            ambient_below: ambient_index,
            source,
            source_layer,
            display_unit: LengthUnit::Cm,
            profiles: Vec::new(),
            structure: None,
            emission: None,
            truncation: None,
            detectors: Vec::new(),
        })
    }

    /// The same medium with a name (used in reports).
    pub fn with_name(mut self, name: impl Into<String>) -> Self {
        self.name = name.into();
        self
    }

    /// The same medium, reporting lengths in `unit` (computation stays in cm).
    pub fn with_display_unit(mut self, unit: LengthUnit) -> Self {
        self.display_unit = unit;
        self
    }

    /// The same medium with the boundaries at the outer edges of layers `indices` marked as
    /// internal divisions of a smooth profile rather than sharp material interfaces. The
    /// walk is exact either way; the accelerated walker may jump across smooth divisions
    /// (where the mean free path changes by less than its tolerance) but never across sharp
    /// interfaces. Indices past the last layer are ignored; the outer surface stays sharp.
    pub fn with_smooth_boundaries(mut self, indices: impl IntoIterator<Item = usize>) -> Self {
        let last = self.layers.len() - 1;
        for index in indices {
            if index < last {
                self.sharp[index] = false;
            }
        }
        self
    }

    /// The same medium, recording how its tabulated profiles were divided into sub-shells
    /// (reports read it; the walk does not).
    pub fn with_profiles(mut self, profiles: Vec<ProfileSummary>) -> Self {
        self.profiles = profiles;
        self
    }

    /// How each tabulated profile in the medium was divided into sub-shells (empty if the
    /// medium has none), in the order of the model's layers.
    pub fn profiles(&self) -> &[ProfileSummary] {
        &self.profiles
    }

    /// The same sphere with a point source at `radius_cm` from the centre instead (name,
    /// unit, smooth divisions and profiles kept).
    ///
    /// # Errors
    /// As [`Medium::sphere`]: not a sphere, or the radius outside [0, outer radius).
    pub fn with_sphere_source(&self, radius_cm: f64) -> Result<Self, MediumError> {
        if self.geometry != Geometry::Sphere {
            return Err(MediumError::Invalid {
                field: "source.kind".into(),
                problem: "a point source at a radius needs a sphere".into(),
            });
        }
        let shells = self
            .boundaries_cm
            .iter()
            .copied()
            .zip(self.layers.iter().cloned())
            .collect();
        let mut medium = Medium::sphere(shells, Source::SpherePoint { radius_cm })?;
        medium.name = self.name.clone();
        medium.display_unit = self.display_unit;
        medium.sharp = self.sharp.clone();
        medium.profiles = self.profiles.clone();
        medium.structure = self.structure.clone();
        medium.emission = self.emission.clone();
        medium.truncation = self.truncation;
        Ok(medium)
    }

    /// The same slab with `source` instead (name, unit, ambient indices, smooth divisions
    /// kept): e.g. the plane source diffusion theory puts in place of a beam.
    ///
    /// # Errors
    /// As [`Medium::slab`]: not a slab, or a source that a slab cannot take or that lies
    /// outside it.
    pub fn with_slab_source(&self, source: Source) -> Result<Self, MediumError> {
        if self.geometry != Geometry::Slab {
            return Err(MediumError::Invalid {
                field: "source.kind".into(),
                problem: "a source at a depth needs a slab".into(),
            });
        }
        let layers = (0..self.layers.len())
            .map(|index| {
                let (top, bottom) = self.layer_bounds_cm(index);
                (bottom - top, self.layers[index].clone())
            })
            .collect();
        let mut medium = Medium::slab(layers, self.ambient_above, source)?;
        medium.ambient_below = self.ambient_below;
        medium.detectors = self.detectors.clone();
        medium.name = self.name.clone();
        medium.display_unit = self.display_unit;
        medium.sharp = self.sharp.clone();
        medium.profiles = self.profiles.clone();
        Ok(medium)
    }

    /// The same sphere recording its radial structure (a sphere made only of profile layers:
    /// rows with m(r) and L(r)); where the structure has energy generation, the
    /// [`EmissionSampler`] of [`Source::EnergyGeneration`] is built from it.
    pub fn with_structure(mut self, structure: RadialStructure) -> Self {
        self.emission = EmissionSampler::new(&structure, &self.boundaries_cm).map(Arc::new);
        self.structure = Some(Arc::new(structure));
        self
    }

    /// The radial structure of a sphere made only of profile layers (None otherwise).
    pub fn structure(&self) -> Option<&RadialStructure> {
        self.structure.as_deref()
    }

    /// Where the energy is released: the sampler of [`Source::EnergyGeneration`] (None
    /// without energy generation).
    pub fn emission(&self) -> Option<&Arc<EmissionSampler>> {
        self.emission.as_ref()
    }

    /// The same sphere with photons starting where the energy is released
    /// ([`Source::EnergyGeneration`]).
    ///
    /// # Errors
    /// [`MediumError::Invalid`] for a slab, or a sphere without energy generation (the
    /// model's profile layers need an `energy_generation` column and a luminosity > 0).
    pub fn with_energy_generation_source(mut self) -> Result<Self, MediumError> {
        if self.geometry != Geometry::Sphere {
            return Err(MediumError::Invalid {
                field: "source.kind".into(),
                problem: "an energy-generation source needs a sphere".into(),
            });
        }
        if self.emission.is_none() {
            return Err(MediumError::Invalid {
                field: "source.kind".into(),
                problem: "\"energy_generation\" needs a sphere made of profile layers that all \
                          give \"energy_generation\" (erg/g/s per row), with a luminosity > 0"
                    .into(),
            });
        }
        self.source = Source::EnergyGeneration;
        self.source_layer = 0;
        Ok(self)
    }

    /// The same sphere ending at `radius_cm` (the shell holding it cut there; every layer
    /// above dropped; the new surface is sharp): where a walk stops, e.g. at the base of an
    /// outer convective zone. The structure is kept whole (it describes the star); the
    /// energy-generation source is restricted to r < `radius_cm`.
    ///
    /// # Errors
    /// [`MediumError`] for a slab, a radius outside (0, surface), a point source at or above
    /// the radius, or an energy-generation source with nothing released below it.
    pub fn truncated_at(&self, radius_cm: f64) -> Result<Self, MediumError> {
        let outer = self.size_cm();
        if self.geometry != Geometry::Sphere || !(radius_cm > 0.0 && radius_cm < outer) {
            return Err(MediumError::value(
                "stop_radius",
                radius_cm,
                Quantity::Length,
                format!("a radius inside the sphere, in (0, {outer} cm)"),
            ));
        }
        let keep = self.boundaries_cm.partition_point(|&b| b < radius_cm) + 1;
        let mut shells: Vec<(f64, Layer)> = self
            .boundaries_cm
            .iter()
            .copied()
            .zip(self.layers.iter().cloned())
            .take(keep)
            .collect();
        shells.last_mut().expect("a layer holds the radius").0 = radius_cm;
        let source = match self.source {
            Source::EnergyGeneration => Source::centre(),
            other => other,
        };
        let mut medium = Medium::sphere(shells, source)?;
        medium.name = self.name.clone();
        medium.display_unit = self.display_unit;
        medium.sharp = self.sharp[..keep].to_vec();
        medium.sharp[keep - 1] = true;
        medium.profiles = self.profiles.clone();
        medium.structure = self.structure.clone();
        medium.emission = self
            .emission
            .as_ref()
            .and_then(|e| e.truncated_at(radius_cm, &medium.boundaries_cm))
            .map(Arc::new);
        medium.truncation = Some((radius_cm, self.truncation.map_or(outer, |t| t.1)));
        if self.source == Source::EnergyGeneration {
            medium = medium.with_energy_generation_source()?;
        }
        Ok(medium)
    }

    /// Where the medium was cut by [`Medium::truncated_at`]: (the cut radius, the surface
    /// radius before), cm; None if it was not.
    pub fn truncation(&self) -> Option<(f64, f64)> {
        self.truncation
    }

    /// Whether the boundary at the outer edge (sphere) or bottom (slab) of layer `index` is a
    /// sharp material interface (see [`Medium::with_smooth_boundaries`]).
    pub fn is_sharp_boundary(&self, index: usize) -> bool {
        self.sharp.get(index).copied().unwrap_or(true)
    }

    /// The medium's name (may be empty).
    pub fn name(&self) -> &str {
        &self.name
    }

    /// Sphere or slab.
    pub fn geometry(&self) -> Geometry {
        self.geometry
    }

    /// The layers, innermost (sphere) or top (slab) first.
    pub fn layers(&self) -> &[Layer] {
        &self.layers
    }

    /// Outer radius of each shell (sphere) or depth of the bottom of each layer (slab), cm.
    pub fn boundaries_cm(&self) -> &[f64] {
        &self.boundaries_cm
    }

    /// Inner and outer boundary of layer `index`, cm (radius or depth).
    pub fn layer_bounds_cm(&self, index: usize) -> (f64, f64) {
        let inner = if index == 0 {
            0.0
        } else {
            self.boundaries_cm[index - 1]
        };
        (inner, self.boundaries_cm[index])
    }

    /// Outer radius (sphere) or total thickness (slab), cm.
    pub fn size_cm(&self) -> f64 {
        *self.boundaries_cm.last().expect("a medium has layers")
    }

    /// Refractive index of the medium above a slab (the side the beam comes from); 1 for a
    /// sphere.
    pub fn ambient_above(&self) -> f64 {
        self.ambient_above
    }

    /// Refractive index of the medium below a slab; 1 for a sphere.
    pub fn ambient_below(&self) -> f64 {
        self.ambient_below
    }

    /// The same slab with a different refractive index below it (≥ 1).
    ///
    /// # Errors
    /// [`MediumError::InvalidValue`] for an index below 1 or not finite, or for a sphere.
    pub fn with_ambient_below(mut self, index: f64) -> Result<Self, MediumError> {
        if self.geometry != Geometry::Slab || !(index.is_finite() && index >= 1.0) {
            return Err(MediumError::value(
                "ambient_index.below",
                index,
                Quantity::Dimensionless,
                "a finite number >= 1, for a slab",
            ));
        }
        self.ambient_below = index;
        Ok(self)
    }

    /// Whether any interface of the slab (faces included) joins different refractive
    /// indices.
    pub fn has_index_mismatch(&self) -> bool {
        let mut previous = self.ambient_above;
        for layer in &self.layers {
            if layer.refractive_index() != previous {
                return true;
            }
            previous = layer.refractive_index();
        }
        previous != self.ambient_below
    }

    /// The photon source.
    pub fn source(&self) -> Source {
        self.source
    }

    /// Index of the layer holding the source (0 for a beam).
    pub fn source_layer(&self) -> usize {
        self.source_layer
    }

    /// The unit the user gave lengths in, for reports.
    pub fn display_unit(&self) -> LengthUnit {
        self.display_unit
    }

    /// The detectors on a slab's faces (empty unless given).
    pub fn detectors(&self) -> &[Detector] {
        &self.detectors
    }

    /// The same slab with `detectors` on its faces, each checked against the slab and its
    /// ambient indices ([`Detector::check`]); errors name `detectors[i]`.
    ///
    /// # Errors
    /// [`MediumError`] for a sphere, or for a detector [`Detector::check`] refuses.
    pub fn with_detectors(mut self, detectors: Vec<Detector>) -> Result<Self, MediumError> {
        if detectors.is_empty() {
            self.detectors = detectors;
            return Ok(self);
        }
        if self.geometry != Geometry::Slab {
            return Err(MediumError::Invalid {
                field: "detectors".into(),
                problem: "detectors sit on a slab's faces; this model is a sphere".into(),
            });
        }
        for (index, detector) in detectors.iter().enumerate() {
            let ambient = match detector.face {
                Face::Top => self.ambient_above,
                Face::Bottom => self.ambient_below,
            };
            detector
                .check(ambient)
                .map_err(|e| e.within(&format!("detectors[{index}]")))?;
        }
        self.detectors = detectors;
        Ok(self)
    }
}

/// Checks a list of `(boundary, layer)` pairs: non-empty, boundaries positive, finite and
/// accepted by `increasing`, at least one layer that interacts.
fn split_layers(
    items: Vec<(f64, Layer)>,
    boundary_field: &str,
    increasing: impl Fn(f64, f64) -> bool,
) -> Result<(Vec<f64>, Vec<Layer>), MediumError> {
    if items.is_empty() {
        return Err(MediumError::Invalid {
            field: "layers".into(),
            problem: "expected at least one layer".into(),
        });
    }
    let mut boundaries = Vec::with_capacity(items.len());
    let mut layers = Vec::with_capacity(items.len());
    let mut previous = 0.0;
    for (index, (boundary, layer)) in items.into_iter().enumerate() {
        if !(boundary.is_finite() && boundary > 0.0) {
            return Err(MediumError::value(
                format!("layers[{index}].{boundary_field}"),
                boundary,
                Quantity::Length,
                "a finite number > 0",
            ));
        }
        if index > 0 && !increasing(previous, boundary) {
            return Err(MediumError::value(
                format!("layers[{index}].{boundary_field}"),
                boundary,
                Quantity::Length,
                format!(
                    "a value greater than layers[{}].{boundary_field} ({previous} cm): \
                     shells go innermost first with increasing radii",
                    index - 1
                ),
            ));
        }
        previous = boundary;
        boundaries.push(boundary);
        layers.push(layer);
    }
    if layers.iter().all(|layer| layer.extinction_per_cm() == 0.0) {
        return Err(MediumError::Invalid {
            field: "layers".into(),
            problem: "every layer has zero extinction: photons would never interact".into(),
        });
    }
    Ok((boundaries, layers))
}
