//! The direct walker: every free flight and every scattering simulated, with exact
//! optical-depth stepping across layer boundaries.
//!
//! Each flight draws an optical depth τ* = −ln ξ (exponential, ziggurat sampler) and spends
//! it layer by layer along the ray, using exact ray–sphere or ray–plane distances, until it
//! is used up (an interaction) or the photon leaves the medium. No step ever uses the mean
//! free path of its starting point alone, so the walk is exact for any layering.
//!
//! Most flights end inside the layer they start in, so the walk first tries that: the end
//! point p + s u is tested against the layer with squared radii (sphere) or depths (slab),
//! with no square root. Only a flight that fails the test goes through the exact
//! boundary-crossing code (ray–shell distances, Fresnel and Snell at index steps). The loop
//! over in-layer flights keeps the photon in local variables and is compiled separately for
//! isotropic scattering (no phase-function dispatch, a Marsaglia direction per scattering)
//! and for the other phase functions.

use nalgebra::Vector3;
use rand::{Rng, RngExt};
use rand_distr::Exp1;

use super::absorption::{Absorption, ROULETTE_THRESHOLD, roulette};
use super::direction;
use super::fresnel::{fresnel_reflectance, refract_across_z};
use super::geometry::{Exit, plane_exit};
use super::ledger::{Ledger, NoLedger, PathLedger};
use super::phase::PhaseFunction;
use crate::medium::{BeamProfile, EmissionSampler, Geometry, Medium, Source};
use crate::tally::{AbsorbedAlongPath, Deposit, Outcome, PhotonRecord};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Limits on a single photon's walk.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WalkLimits {
    /// Free flights (and diffusion jumps) allowed before the photon is counted as censored.
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
    /// 1/σ, cm (infinite for a transparent layer).
    mean_free_path_cm: f64,
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
    /// Statistical weight, in [0, 1] (1 for analog walks).
    pub(super) weight: f64,
    /// Weight left in the medium so far (weighted walks).
    pub(super) absorbed: AbsorbedAlongPath,
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
            weight: self.weight,
        }
    }

    /// Implicit capture in a layer of albedo `albedo` at depth `depth_cm` of layer
    /// `layer`: the weight (1 − ω)·w is left, the photon carries on with ω·w, and Russian
    /// roulette below the threshold. Returns whether the photon lives on.
    #[inline(always)]
    pub(super) fn capture<R: Rng + ?Sized>(
        &mut self,
        survival: f64,
        at: DepositSite,
        keep_deposits: bool,
        rng: &mut R,
    ) -> bool {
        let lost = (1.0 - survival) * self.weight;
        self.absorbed.add(lost, at.time_s, at.scatterings);
        if keep_deposits {
            self.absorbed.deposits.push(Deposit {
                weight: lost,
                layer: at.layer,
                depth_cm: at.depth_cm,
            });
        }
        self.weight *= survival;
        if self.weight < ROULETTE_THRESHOLD {
            self.weight = roulette(self.weight, rng.random());
        }
        self.weight > 0.0
    }
}

/// Where and when a weighted photon leaves weight in the medium.
#[derive(Debug, Clone, Copy)]
pub(super) struct DepositSite {
    /// Time since launch, s.
    pub(super) time_s: f64,
    /// Scatterings before the deposit.
    pub(super) scatterings: f64,
    /// Layer index.
    pub(super) layer: usize,
    /// Depth (slab) or z coordinate, cm.
    pub(super) depth_cm: f64,
}

/// Where a diffusion jump may replace the walk: asked at every scattering site.
pub(super) trait JumpSites {
    /// Whether a jump may start at `position` in layer `layer`.
    fn jump_here(&self, position: &Vector3<f64>, layer: usize) -> bool;
}

/// No jumps anywhere: the direct walk.
pub(super) struct NoJumps;

impl JumpSites for NoJumps {
    #[inline(always)]
    fn jump_here(&self, _: &Vector3<f64>, _: usize) -> bool {
        false
    }
}

/// Why [`DirectWalker::follow`] returned.
pub(super) enum Stop {
    /// The walk ended.
    Ended(Outcome),
    /// The photon scattered at a site where a jump may start; its direction is still the
    /// incoming one (no outgoing direction was drawn).
    JumpSite,
}

/// Why the in-layer loop returned.
enum InLayer {
    /// The walk stopped (ended, or a jump site).
    Stop(Stop),
    /// The current flight, of optical depth `tau`, leaves the layer; the photon has not
    /// moved yet.
    Leaves(f64),
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
    /// Analog or weighted absorption.
    absorption: Absorption,
    /// Whether weighted photons list their single deposits (for resolved tallies).
    keep_deposits: bool,
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
                    mean_free_path_cm: 1.0 / layer.extinction_per_cm(),
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
            absorption: Absorption::Analog,
            keep_deposits: false,
        }
    }

    /// The same walker with absorption simulated as `absorption`; weighted photons list
    /// their single deposits if `keep_deposits` (resolved tallies need them).
    pub fn with_absorption(mut self, absorption: Absorption, keep_deposits: bool) -> Self {
        self.absorption = absorption;
        self.keep_deposits = keep_deposits;
        self
    }

    /// Whether absorption is weighted (implicit capture).
    pub(super) fn weighted(&self) -> bool {
        self.absorption == Absorption::Weighted
    }

    /// Whether weighted photons list their single deposits.
    pub(super) fn keep_deposits(&self) -> bool {
        self.keep_deposits
    }

    /// Follows one photon from the source until it leaves, is absorbed or hits the step cap.
    /// For weighted walks, what the photon left in the medium is dropped: use
    /// [`DirectWalker::walk_weighted_with_ledger`].
    pub fn walk<R: Rng + ?Sized>(&self, rng: &mut R) -> PhotonRecord {
        self.walk_booking(rng, &mut AbsorbedAlongPath::default(), &mut NoLedger)
    }

    /// [`Self::walk`], also booking the photon's time and interactions by cell in `ledger`
    /// (cleared first; made by [`PathLedger::for_medium`] for the same medium). The photon
    /// and its record are the same as without the ledger.
    pub fn walk_with_ledger<R: Rng + ?Sized>(
        &self,
        rng: &mut R,
        ledger: &mut PathLedger,
    ) -> PhotonRecord {
        ledger.clear();
        self.walk_booking(rng, &mut AbsorbedAlongPath::default(), ledger)
    }

    /// [`Self::walk_with_ledger`] that also puts what the photon left in the medium
    /// (weighted walks; nothing for analog ones) into `absorbed`; both are cleared first.
    /// What the run loop and absorption rescaling call for each photon.
    pub fn walk_weighted_with_ledger<R: Rng + ?Sized>(
        &self,
        rng: &mut R,
        absorbed: &mut AbsorbedAlongPath,
        ledger: &mut PathLedger,
    ) -> PhotonRecord {
        ledger.clear();
        self.walk_booking(rng, absorbed, ledger)
    }

    fn walk_booking<R: Rng + ?Sized, L: Ledger>(
        &self,
        rng: &mut R,
        absorbed: &mut AbsorbedAlongPath,
        ledger: &mut L,
    ) -> PhotonRecord {
        let (mut photon, reflected_at_entry) = self.launch(rng);
        absorbed.clear();
        std::mem::swap(&mut photon.absorbed, absorbed);
        let outcome = if reflected_at_entry {
            Outcome::Specular
        } else {
            match self.follow(&mut photon, rng, &NoJumps, ledger) {
                Stop::Ended(outcome) => outcome,
                Stop::JumpSite => unreachable!("the direct walk has no jump sites"),
            }
        };
        std::mem::swap(&mut photon.absorbed, absorbed);
        photon.record(outcome, 0.0, photon.steps as f64, 0.0)
    }

    /// The per-photon limits.
    pub(super) fn limits(&self) -> WalkLimits {
        self.limits
    }

    /// Whether photons start with an isotropic direction (point and plane sources).
    pub(super) fn source_is_isotropic(&self) -> bool {
        !self.source.enters_from_outside()
    }

    /// A scattering at the photon's position into a direction drawn from the layer's phase
    /// function (the scattering itself is already counted).
    #[inline(always)]
    pub(super) fn scatter<R: Rng + ?Sized>(&self, photon: &mut Photon, rng: &mut R) {
        photon.direction = match self.layers[photon.layer].phase {
            PhaseFunction::Isotropic => direction::isotropic(rng),
            phase => {
                let cos_theta = phase.sample_cosine(rng);
                direction::scatter(&photon.direction, cos_theta, rng)
            }
        };
    }

    /// Flights and interactions from the photon's current state: starts with a flight,
    /// and returns when the walk ends or, after an interaction that is a scattering, where
    /// `jumps` allows a jump (before the scattering direction is drawn).
    #[inline(always)]
    pub(super) fn follow<R: Rng + ?Sized, J: JumpSites, L: Ledger>(
        &self,
        photon: &mut Photon,
        rng: &mut R,
        jumps: &J,
        ledger: &mut L,
    ) -> Stop {
        let mut interaction_pending = false;
        loop {
            let isotropic = self.layers[photon.layer].phase == PhaseFunction::Isotropic;
            let pending = interaction_pending;
            let run = match (isotropic, self.weighted()) {
                (true, false) => {
                    self.in_layer::<R, J, L, true, false>(photon, pending, rng, jumps, ledger)
                }
                (false, false) => {
                    self.in_layer::<R, J, L, false, false>(photon, pending, rng, jumps, ledger)
                }
                (true, true) => {
                    self.in_layer::<R, J, L, true, true>(photon, pending, rng, jumps, ledger)
                }
                (false, true) => {
                    self.in_layer::<R, J, L, false, true>(photon, pending, rng, jumps, ledger)
                }
            };
            match run {
                InLayer::Stop(stop) => return stop,
                InLayer::Leaves(tau) => {
                    if let Some(outcome) = self.cross(photon, tau, rng, ledger) {
                        return Stop::Ended(outcome);
                    }
                    interaction_pending = true;
                }
            }
        }
    }

    /// The loop over flights that end inside the photon's current layer, with the photon in
    /// local variables. Starts with the pending interaction, if any, then alternates flight
    /// and interaction. Returns at the first flight that leaves the layer (the photon not
    /// yet moved), at the end of the walk, or at a jump site. The time and interactions of
    /// the stay are booked in `ledger` once, at the end. `WEIGHTED`: implicit capture
    /// instead of analog absorption.
    #[inline(always)]
    fn in_layer<
        R: Rng + ?Sized,
        J: JumpSites,
        L: Ledger,
        const ISOTROPIC: bool,
        const WEIGHTED: bool,
    >(
        &self,
        photon: &mut Photon,
        mut interaction_pending: bool,
        rng: &mut R,
        jumps: &J,
        ledger: &mut L,
    ) -> InLayer {
        let layer = &self.layers[photon.layer];
        let index = photon.layer;
        let sphere = self.geometry == Geometry::Sphere;
        let (inner, outer) = (layer.inner, layer.outer);
        let (mean_free_path, slowness, albedo) =
            (layer.mean_free_path_cm, layer.slowness_s_cm, layer.albedo);
        let absorbing = albedo < 1.0;
        let max_steps = self.limits.max_steps;
        let mut p = photon.position;
        let mut u = photon.direction;
        let mut time_s = photon.time_s;
        let mut scatterings = photon.scatterings;
        let mut steps = photon.steps;
        let mut stay_s = 0.0;
        let mut absorbed = 0.0;
        let stop = loop {
            if interaction_pending {
                if WEIGHTED {
                    if absorbing {
                        let site = DepositSite {
                            time_s,
                            scatterings,
                            layer: index,
                            depth_cm: p.z,
                        };
                        if !photon.capture(albedo, site, self.keep_deposits, rng) {
                            absorbed = 1.0;
                            break InLayer::Stop(Stop::Ended(Outcome::Absorbed));
                        }
                    }
                } else if absorbing && rng.random::<f64>() >= albedo {
                    absorbed = 1.0;
                    break InLayer::Stop(Stop::Ended(Outcome::Absorbed));
                }
                scatterings += 1.0;
                if jumps.jump_here(&p, index) {
                    break InLayer::Stop(Stop::JumpSite);
                }
                u = if ISOTROPIC {
                    direction::isotropic(rng)
                } else {
                    let cos_theta = layer.phase.sample_cosine(rng);
                    direction::scatter(&u, cos_theta, rng)
                };
            }
            interaction_pending = true;
            if steps >= max_steps {
                break InLayer::Stop(Stop::Ended(Outcome::Censored));
            }
            steps += 1;
            let tau: f64 = rng.sample(Exp1);
            let s = tau * mean_free_path;
            let end = p + s * u;
            let inside = if sphere {
                let end_sq = end.norm_squared();
                end_sq <= outer && (inner == 0.0 || clear_of_inner_sphere(&p, &u, s, inner))
            } else {
                end.z >= inner && end.z <= outer
            };
            if !inside {
                break InLayer::Leaves(tau);
            }
            p = end;
            let flight_s = s * slowness;
            time_s += flight_s;
            stay_s += flight_s;
        };
        ledger.book(index, stay_s, scatterings - photon.scatterings + absorbed);
        photon.position = p;
        photon.direction = u;
        photon.time_s = time_s;
        photon.scatterings = scatterings;
        photon.steps = steps;
        stop
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
            Source::Beam {
                polar_angle_deg,
                profile,
            } => {
                let (sin, cos) = polar_angle_deg.to_radians().sin_cos();
                (
                    beam_entry_point(&profile, cos, rng),
                    Vector3::new(sin, 0.0, cos),
                )
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
            weight: 1.0,
            absorbed: AbsorbedAlongPath::default(),
        };
        let entering = self.source.enters_from_outside();
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

    /// The rest of a flight of optical depth `tau` that leaves the photon's layer: spends
    /// it across layers with exact distances. Returns the outcome if the photon leaves the
    /// medium (or can never interact), `None` at an interaction point.
    fn cross<R: Rng + ?Sized, L: Ledger>(
        &self,
        photon: &mut Photon,
        tau: f64,
        rng: &mut R,
        ledger: &mut L,
    ) -> Option<Outcome> {
        match self.geometry {
            Geometry::Sphere => self.cross_shells(photon, tau, ledger),
            Geometry::Slab => self.cross_planes(photon, tau, rng, ledger),
        }
    }

    /// [`Self::cross`] in a sphere. Along the ray x(t) = c + t u, with c the point of
    /// closest approach to the centre and h² = |c|² its squared distance, the radius is
    /// r² = h² + t²: the distance to a shell boundary of radius ρ is √(ρ² − h²) − t outward,
    /// −t − √(ρ² − h²) inward. The walk advances the scalar t across shells and moves the
    /// photon once, at the end.
    fn cross_shells<L: Ledger>(
        &self,
        photon: &mut Photon,
        mut tau: f64,
        ledger: &mut L,
    ) -> Option<Outcome> {
        let start = photon.position;
        let u = photon.direction;
        let b = start.dot(&u);
        let impact_sq = (start.norm_squared() - b * b).max(0.0);
        let mut along = b;
        let mut travelled = 0.0;
        let mut layer_index = photon.layer;
        let outcome = loop {
            let layer = &self.layers[layer_index];
            let inward = along < 0.0 && layer.inner > impact_sq;
            let distance = if inward {
                -along - (layer.inner - impact_sq).sqrt()
            } else {
                (layer.outer - impact_sq).max(0.0).sqrt() - along
            }
            .max(0.0);
            let tau_to_exit = layer.extinction_per_cm * distance;
            if tau < tau_to_exit {
                let s = tau * layer.mean_free_path_cm;
                travelled += s;
                photon.time_s += s * layer.slowness_s_cm;
                ledger.book(layer_index, s * layer.slowness_s_cm, 0.0);
                break None;
            }
            tau -= tau_to_exit;
            travelled += distance;
            along += distance;
            photon.time_s += distance * layer.slowness_s_cm;
            ledger.book(layer_index, distance * layer.slowness_s_cm, 0.0);
            if inward {
                layer_index -= 1;
            } else if layer_index + 1 == self.layers.len() {
                break Some(Outcome::Escaped);
            } else {
                layer_index += 1;
            }
        };
        photon.position = start + travelled * u;
        photon.layer = layer_index;
        outcome
    }

    /// [`Self::cross`] in a slab, with Fresnel reflection and Snell refraction at index
    /// steps.
    fn cross_planes<R: Rng + ?Sized, L: Ledger>(
        &self,
        photon: &mut Photon,
        mut tau: f64,
        rng: &mut R,
        ledger: &mut L,
    ) -> Option<Outcome> {
        loop {
            let layer = &self.layers[photon.layer];
            let (distance, exit) = plane_exit(
                photon.position.z,
                photon.direction.z,
                layer.inner,
                layer.outer,
            );
            let tau_to_exit = layer.extinction_per_cm * distance;
            if tau < tau_to_exit {
                let s = tau * layer.mean_free_path_cm;
                photon.position += s * photon.direction;
                photon.time_s += s * layer.slowness_s_cm;
                ledger.book(photon.layer, s * layer.slowness_s_cm, 0.0);
                return None;
            }
            if !distance.is_finite() {
                // Gliding parallel to the faces of a transparent layer: it never interacts.
                return Some(Outcome::Censored);
            }
            tau -= tau_to_exit;
            photon.position += distance * photon.direction;
            photon.time_s += distance * layer.slowness_s_cm;
            ledger.book(photon.layer, distance * layer.slowness_s_cm, 0.0);
            if self.index_mismatch && self.reflects(photon, exit, rng) {
                continue;
            }
            match exit {
                Exit::Next if photon.layer + 1 == self.layers.len() => {
                    return Some(Outcome::Transmitted);
                }
                Exit::Next => photon.layer += 1,
                Exit::Previous if photon.layer == 0 => return Some(Outcome::Reflected),
                Exit::Previous => photon.layer -= 1,
            }
        }
    }
}

/// Where a photon of a beam with `profile`, travelling at polar cosine `cos_polar` in the
/// x–z plane, meets the top face: a point drawn from the profile in the beam's
/// cross-section (distance from the axis by [`BeamProfile::sample_radius_cm`], azimuth
/// uniform), projected along the beam onto z = 0, which stretches the x offset by
/// 1/cos θ. A narrow beam draws no random number and enters at the origin.
fn beam_entry_point<R: Rng + ?Sized>(
    profile: &BeamProfile,
    cos_polar: f64,
    rng: &mut R,
) -> Vector3<f64> {
    if *profile == BeamProfile::Narrow {
        return Vector3::zeros();
    }
    // 1 − ξ lies in (0, 1], so the Gaussian's logarithm stays finite.
    let radius = profile.sample_radius_cm(1.0 - rng.random::<f64>());
    let (sin, cos) = (std::f64::consts::TAU * rng.random::<f64>()).sin_cos();
    Vector3::new(radius * cos / cos_polar, radius * sin, 0.0)
}

/// Whether the segment from `p` along unit `u` of length `s` stays outside the sphere of
/// squared radius `inner_sq` (the end point is already known to be inside the outer one):
/// the closest approach to the centre, at t = clamp(−p·u, 0, s), is tested, squared.
#[inline(always)]
fn clear_of_inner_sphere(p: &Vector3<f64>, u: &Vector3<f64>, s: f64, inner_sq: f64) -> bool {
    let b = p.dot(u);
    let t = (-b).clamp(0.0, s);
    p.norm_squared() + t * (2.0 * b + t) >= inner_sq
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::Layer;

    fn nearly_clear_sphere() -> DirectWalker {
        // Core of radius 1 inside a sphere of radius 4; extinction so small that a flight
        // of optical depth 1 crosses everything.
        let layer = |sigma| Layer::new("", sigma, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        let medium = Medium::sphere(
            vec![(1.0, layer(1e-9)), (4.0, layer(2e-9))],
            Source::centre(),
        )
        .unwrap();
        DirectWalker::new(&medium, WalkLimits::default())
    }

    fn photon(position: Vector3<f64>, direction: Vector3<f64>, layer: usize) -> Photon {
        Photon {
            position,
            direction,
            layer,
            time_s: 0.0,
            scatterings: 0.0,
            steps: 0,
            weight: 1.0,
            absorbed: AbsorbedAlongPath::default(),
        }
    }

    #[test]
    fn a_ray_through_the_core_leaves_after_the_full_chord() {
        let walker = nearly_clear_sphere();
        // From (0, 0.5, 3) straight down: through the core, out at z = −√(16 − 0.25).
        let mut p = photon(Vector3::new(0.0, 0.5, 3.0), Vector3::new(0.0, 0.0, -1.0), 1);
        assert_eq!(
            walker.cross_shells(&mut p, 1.0, &mut NoLedger),
            Some(Outcome::Escaped)
        );
        let chord = 3.0 + 15.75f64.sqrt();
        assert!((p.time_s * SPEED_OF_LIGHT_CM_S / chord - 1.0).abs() < 1e-14);
        assert!((p.position.z + 15.75f64.sqrt()).abs() < 1e-12);
        // A ray that misses the core: from (0, 0, 3) along −x, out at x = −√7.
        let mut p = photon(Vector3::new(0.0, 0.0, 3.0), Vector3::new(-1.0, 0.0, 0.0), 1);
        assert_eq!(
            walker.cross_shells(&mut p, 1.0, &mut NoLedger),
            Some(Outcome::Escaped)
        );
        assert!((p.time_s * SPEED_OF_LIGHT_CM_S / 7f64.sqrt() - 1.0).abs() < 1e-14);
    }

    #[test]
    fn optical_depth_is_spent_layer_by_layer() {
        let walker = nearly_clear_sphere();
        // Down from z = 3: 2 cm in the envelope (τ = 4e-9), then into the core (1e-9/cm):
        // τ = 5e-9 ends 1 cm further, at the centre.
        let mut p = photon(Vector3::new(0.0, 0.0, 3.0), Vector3::new(0.0, 0.0, -1.0), 1);
        assert_eq!(walker.cross_shells(&mut p, 5e-9, &mut NoLedger), None);
        assert_eq!(p.layer, 0);
        assert!(p.position.z.abs() < 1e-6, "{}", p.position.z);
    }

    #[test]
    fn inner_sphere_test_sees_the_core() {
        let p = Vector3::new(0.0, 0.5, 3.0);
        let u = Vector3::new(0.0, 0.0, -1.0);
        // Passes through the core of radius 1 on the way to z = -3.
        assert!(!clear_of_inner_sphere(&p, &u, 6.0, 1.0));
        // Stops before reaching it.
        assert!(clear_of_inner_sphere(&p, &u, 1.5, 1.0));
        // Moving away from the core.
        assert!(clear_of_inner_sphere(&p, &(-u), 5.0, 1.0));
    }
}
