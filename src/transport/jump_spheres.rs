//! Local diffusion jumps: the random-walk procedure of Fleck & Canfield (1984, J. Comput.
//! Phys. 54:508) in the form of the modified random walk of Min et al. (2009, A&A
//! 497:155), used for slabs (spheres use radial passages, [`super::radial_chain`]).
//!
//! After an interaction the walker finds R₀, the distance to the nearest sharp interface,
//! the surface, or the place where the transport mean free path l_tr has changed by more
//! than a relative tolerance ε from its local value. If R₀ ≥ γ l_tr, the walk inside the
//! sphere of radius R₀ is replaced by one jump:
//!
//! * **time** — the first-passage law of 3-D diffusion out of a sphere from its centre
//!   ([`crate::diffusion::first_passage`]), with D = v l_tr / 3 at the centre and the
//!   radius widened to R₀ + q l_tr (q: the extrapolation length of a first crossing);
//! * **exit point** — on the sphere, with density (1 + k·n̂)/4π: k = (R₀/2) ∇D/D, the
//!   first-order drift along ∇D (derived in the README from the backward equation
//!   D₀Δu + ∇D·∇u = 0), plus 3δ/R₀ for an anisotropic scattering, whose walk starts
//!   effectively at δ = g l_tr u from the scattering site (u the incoming direction; the
//!   harmonic measure of a sphere seen from δ is (1 + 3δ·n̂/R₀)/4π to first order, and the
//!   mean time from there is (R² − δ²)/(6D));
//! * **direction at the exit** — the direction of a first crossing ([`super::crossing`]);
//! * **scatterings** — v σ_s t, exact in the mean in a uniform layer;
//! * **absorption** — survival e^(−v σ_a t) (analog); an absorbed photon ends at the jump's
//!   centre at a time drawn from the truncated exponential of that hazard.

use nalgebra::Vector3;
use rand::{Rng, RngExt};

use std::sync::Arc;

use super::crossing::{CrossingLaw, laws_of};
use super::direct::Photon;
use super::direction;
use super::ledger::Ledger;
use crate::diffusion::first_passage;
use crate::medium::{Geometry, Medium};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Settings of the local jumps.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct LocalSettings {
    /// Jump only where R₀ ≥ γ l_tr.
    pub(super) gamma: f64,
    /// Relative change of l_tr allowed inside a jump sphere.
    pub(super) epsilon: f64,
    /// Tilt exits along ∇D.
    pub(super) drift_correction: bool,
}

/// What a jump needs to know about one layer, precomputed.
#[derive(Debug, Clone)]
struct JumpRegion {
    /// Inner edge of the nearly uniform region around this layer (radius or depth), cm.
    lower_cm: f64,
    /// Outer edge of that region, cm.
    upper_cm: f64,
    /// Whether a sphere's region reaches the centre (no inner edge).
    reaches_centre: bool,
    /// Transport extinction σ_tr, 1/cm (0: no jumps here).
    transport_per_cm: f64,
    /// Diffusion coefficient at the layer's middle, cm²/s.
    diffusion_mid: f64,
    /// dD/dr (sphere) or dD/dz (slab) across the smooth profile, cm/s.
    diffusion_slope: f64,
    /// The layer's middle, cm.
    mid_cm: f64,
    /// Scatterings per second, v σ_s.
    scattering_rate: f64,
    /// Absorptions per second, v σ_a.
    absorption_rate: f64,
    /// g l_tr, cm: the displacement memory of an anisotropic scattering.
    persistence_cm: f64,
    /// Index of the layer's crossing law.
    law: usize,
}

/// How one jump ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct JumpOutcome {
    /// Time the jump took (until absorption, if absorbed), s.
    pub(super) elapsed_s: f64,
    /// Whether the photon was absorbed during it (analog walks).
    pub(super) absorbed: bool,
    /// Weighted walks: the survival factor of the jump and where in it the loss falls on
    /// average (`None` without absorption).
    pub(super) capture: Option<PassageCapture>,
}

/// Implicit capture over a diffusion passage with absorption hazard h (absorption rate ×
/// time, taken as uniform in time): the weight survives with e^(−h), and the lost weight
/// falls, on average, at the fraction 1/h − 1/(e^h − 1) of the passage (the mean of the
/// exponential law of rate h truncated to [0, 1]).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct PassageCapture {
    /// Survival factor e^(−h).
    pub(super) survival: f64,
    /// Mean time of the loss, as a fraction of the passage.
    pub(super) mean_fraction: f64,
}

impl PassageCapture {
    /// The capture over hazard `hazard` > 0.
    pub(super) fn of_hazard(hazard: f64) -> Self {
        let mean_fraction = if hazard < 1e-4 {
            0.5 - hazard / 12.0
        } else {
            1.0 / hazard - 1.0 / hazard.exp_m1()
        };
        Self {
            survival: (-hazard).exp(),
            mean_fraction,
        }
    }
}

/// Local diffusion jumps for one medium. Immutable and `Sync`.
#[derive(Debug, Clone)]
pub(super) struct LocalJumps {
    geometry: Geometry,
    boundaries_cm: Vec<f64>,
    regions: Vec<JumpRegion>,
    settings: LocalSettings,
    /// The distinct crossing laws of the layers (empty where only the cost is wanted).
    laws: Vec<Arc<CrossingLaw>>,
}

impl LocalJumps {
    /// The jumps for `medium`, with the crossing law of each layer's phase function.
    pub(super) fn new(medium: &Medium, settings: LocalSettings) -> Self {
        let (laws, law_of_layer) = laws_of(medium.layers().iter().map(|layer| *layer.phase()));
        let mut jumps = Self::layout(medium, settings);
        for (region, law) in jumps.regions.iter_mut().zip(law_of_layer) {
            region.law = law;
        }
        jumps.laws = laws;
        jumps
    }

    /// Where the jumps apply, without the crossing laws (for cost estimates; `jump` must
    /// not be called on it).
    pub(super) fn layout(medium: &Medium, settings: LocalSettings) -> Self {
        Self {
            geometry: medium.geometry(),
            boundaries_cm: medium.boundaries_cm().to_vec(),
            regions: jump_regions(medium, settings.epsilon),
            settings,
            laws: Vec::new(),
        }
    }

    /// Whether any layer allows jumps at all (some region γ transport mean free paths
    /// across).
    pub(super) fn is_empty(&self) -> bool {
        self.regions.iter().all(|region| {
            let width = region.upper_cm - region.lower_cm;
            let reach = if region.reaches_centre {
                width
            } else {
                0.5 * width
            };
            reach * region.transport_per_cm < self.settings.gamma
        })
    }

    /// Radius of the jump sphere at `position` in layer `layer`, if a jump applies there,
    /// with the radius (sphere) or depth (slab) of the position, cm.
    #[inline]
    pub(super) fn jump_radius(&self, position: &Vector3<f64>, layer: usize) -> Option<(f64, f64)> {
        let region = &self.regions[layer];
        if region.transport_per_cm <= 0.0 {
            return None;
        }
        let coordinate = self.coordinate(position);
        let radius_cm = if region.reaches_centre {
            region.upper_cm - coordinate
        } else {
            (coordinate - region.lower_cm).min(region.upper_cm - coordinate)
        };
        (radius_cm * region.transport_per_cm >= self.settings.gamma)
            .then_some((radius_cm, coordinate))
    }

    /// Radius (sphere) or depth (slab) of a position, cm.
    fn coordinate(&self, position: &Vector3<f64>) -> f64 {
        match self.geometry {
            Geometry::Sphere => position.norm(),
            Geometry::Slab => position.z,
        }
    }

    /// Unit vector along which the radius (sphere) or depth (slab) grows at `position`,
    /// whose radius or depth is `coordinate`.
    fn outward(&self, position: &Vector3<f64>, coordinate: f64) -> Option<Vector3<f64>> {
        match self.geometry {
            Geometry::Sphere => (coordinate > 0.0).then(|| position / coordinate),
            Geometry::Slab => Some(Vector3::new(0.0, 0.0, 1.0)),
        }
    }

    /// One jump from the photon's position (a scattering site reached with direction
    /// `incoming`, or an isotropic source), if one applies there. Its time goes to `ledger`
    /// split over the cells the jump sphere covers ([`Self::book_jump`]).
    pub(super) fn jump<R: Rng + ?Sized, L: Ledger>(
        &self,
        photon: &mut Photon,
        incoming: Option<&Vector3<f64>>,
        weighted: bool,
        rng: &mut R,
        ledger: &mut L,
    ) -> Option<JumpOutcome> {
        let (radius_cm, coordinate) = self.jump_radius(&photon.position, photon.layer)?;
        let region = &self.regions[photon.layer];
        let crossing = &self.laws[region.law];
        let diffusion = (region.diffusion_mid
            + region.diffusion_slope * (coordinate - region.mid_cm))
            .max(0.5 * region.diffusion_mid);
        let offset = incoming.map_or(Vector3::zeros(), |u| region.persistence_cm * u);
        let effective_radius =
            radius_cm + crossing.extrapolation_length() / region.transport_per_cm;
        let elapsed_s = first_passage::sample(rng)
            * (effective_radius * effective_radius - offset.norm_squared()).max(0.0)
            / diffusion;
        let capture = (weighted && region.absorption_rate > 0.0 && elapsed_s > 0.0)
            .then(|| PassageCapture::of_hazard(region.absorption_rate * elapsed_s));
        if !weighted && region.absorption_rate > 0.0 {
            let hazard = region.absorption_rate * elapsed_s;
            if rng.random::<f64>() >= (-hazard).exp() {
                // Absorbed: when, given that it happened during the jump.
                let fraction = fraction_before_absorption(rng.random::<f64>(), hazard);
                let time = fraction * elapsed_s;
                photon.time_s += time;
                photon.scatterings += region.scattering_rate * time;
                self.book_jump(photon.layer, coordinate, radius_cm, time, ledger);
                ledger.book(photon.layer, 0.0, 1.0);
                return Some(JumpOutcome {
                    elapsed_s: time,
                    absorbed: true,
                    capture: None,
                });
            }
        }
        // Tilt of the exit point: drift along ∇D and the scattering's memory.
        let mut tilt = 3.0 * offset / radius_cm;
        if self.settings.drift_correction
            && region.diffusion_slope != 0.0
            && let Some(outward) = self.outward(&photon.position, coordinate)
        {
            tilt += outward * (radius_cm * region.diffusion_slope / (2.0 * diffusion));
        }
        let strength = tilt.norm();
        let normal = if strength > 0.0 {
            tilted_direction(&(tilt / strength), strength.min(1.0), rng)
        } else {
            direction::isotropic(rng)
        };
        self.book_jump(photon.layer, coordinate, radius_cm, elapsed_s, ledger);
        photon.position += radius_cm * normal;
        photon.layer = self.locate(self.coordinate(&photon.position));
        photon.time_s += elapsed_s;
        photon.scatterings += region.scattering_rate * elapsed_s;
        photon.direction = direction::scatter(&normal, crossing.sample_cosine(rng), rng);
        Some(JumpOutcome {
            elapsed_s,
            absorbed: false,
            capture,
        })
    }

    /// Books `time_s` of a jump from depth `centre_cm` in a sphere of radius `radius_cm`
    /// over the slab's cells: diffusion from the centre of a ball of radius R spends time
    /// with density ∝ 1/ρ − 1/R (the Green's function of the ball; Redner 2001, *A Guide to
    /// First-Passage Processes*, ch. 6), which puts the share 3(R − |h|)²/(2R³) dh at
    /// height h (docs/references.md, Residence 1). A sphere's jump (not used by the walker)
    /// books everything in the starting cell.
    fn book_jump<L: Ledger>(
        &self,
        cell: usize,
        centre_cm: f64,
        radius_cm: f64,
        time_s: f64,
        ledger: &mut L,
    ) {
        if self.geometry != Geometry::Slab || radius_cm <= 0.0 {
            ledger.book_diffusing(cell, time_s);
            return;
        }
        let below = |height_cm: f64| ball_height_share((height_cm - centre_cm) / radius_cm);
        let first = self.locate(centre_cm - radius_cm);
        let last = self.locate(centre_cm + radius_cm);
        for index in first..=last {
            let top = if index == 0 {
                f64::NEG_INFINITY
            } else {
                self.boundaries_cm[index - 1]
            };
            let share = below(self.boundaries_cm[index]) - below(top);
            if share > 0.0 {
                ledger.book_diffusing(index, share * time_s);
            }
        }
    }

    /// Index of the layer holding radius or depth `coordinate`.
    fn locate(&self, coordinate: f64) -> usize {
        self.boundaries_cm
            .partition_point(|&b| b <= coordinate)
            .min(self.boundaries_cm.len() - 1)
    }
}

/// Where in a jump of absorption hazard `hazard` (> 0) an absorption that happened during
/// it took place, as a fraction of the jump's time, from a uniform number `u`: the
/// exponential law truncated to [0, 1], inverted, x = −ln(1 − u (1 − e^(−h)))/h.
pub(super) fn fraction_before_absorption(u: f64, hazard: f64) -> f64 {
    (-(u * (-hazard).exp_m1()).ln_1p() / hazard).clamp(0.0, 1.0)
}

/// Share of a ball's residence time (diffusion from its centre) below height u R:
/// (1 + u)³/2 for u ≤ 0, 1 − (1 − u)³/2 above (clamped to [0, 1]).
fn ball_height_share(u: f64) -> f64 {
    let u = u.clamp(-1.0, 1.0);
    if u <= 0.0 {
        0.5 * (1.0 + u).powi(3)
    } else {
        1.0 - 0.5 * (1.0 - u).powi(3)
    }
}

/// A unit vector n with density (1 + k a·n)/4π on the sphere (0 ≤ k ≤ 1), by rejection from
/// the isotropic law: accept with probability (1 + k a·n)/(1 + k), at least 1/2.
fn tilted_direction<R: Rng + ?Sized>(axis: &Vector3<f64>, k: f64, rng: &mut R) -> Vector3<f64> {
    loop {
        let candidate = direction::isotropic(rng);
        if rng.random::<f64>() * (1.0 + k) <= 1.0 + k * axis.dot(&candidate) {
            return candidate;
        }
    }
}

/// For each layer, the region of nearly uniform transport mean free path around it, its
/// diffusion coefficient and gradient.
fn jump_regions(medium: &Medium, epsilon: f64) -> Vec<JumpRegion> {
    let layers = medium.layers();
    let count = layers.len();
    let transport: Vec<f64> = layers
        .iter()
        .map(|l| l.transport_extinction_per_cm())
        .collect();
    let speed: Vec<f64> = layers
        .iter()
        .map(|l| SPEED_OF_LIGHT_CM_S / l.refractive_index())
        .collect();
    let diffusion: Vec<f64> = (0..count)
        .map(|i| {
            if transport[i] > 0.0 {
                speed[i] / (3.0 * transport[i])
            } else {
                0.0
            }
        })
        .collect();
    let mid: Vec<f64> = (0..count)
        .map(|i| {
            let (inner, outer) = medium.layer_bounds_cm(i);
            0.5 * (inner + outer)
        })
        .collect();
    let smooth_above = |i: usize| i + 1 < count && !medium.is_sharp_boundary(i);
    let close = |i: usize, j: usize| {
        transport[j] > 0.0 && (transport[j] / transport[i] - 1.0).abs() <= epsilon
    };
    (0..count)
        .map(|i| {
            let (mut low, mut high) = (i, i);
            while low > 0 && smooth_above(low - 1) && close(i, low - 1) {
                low -= 1;
            }
            while smooth_above(high) && close(i, high + 1) {
                high += 1;
            }
            let lower_cm = medium.layer_bounds_cm(low).0;
            let upper_cm = medium.layer_bounds_cm(high).1;
            // Gradient of D along the smooth profile: central difference between neighbours
            // joined by smooth boundaries, one-sided at the ends of the profile.
            let below = (i > 0 && smooth_above(i - 1) && diffusion[i - 1] > 0.0).then(|| i - 1);
            let above = (smooth_above(i) && diffusion[i + 1] > 0.0).then(|| i + 1);
            let diffusion_slope = match (below, above) {
                (Some(b), Some(a)) => (diffusion[a] - diffusion[b]) / (mid[a] - mid[b]),
                (Some(b), None) => (diffusion[i] - diffusion[b]) / (mid[i] - mid[b]),
                (None, Some(a)) => (diffusion[a] - diffusion[i]) / (mid[a] - mid[i]),
                (None, None) => 0.0,
            };
            JumpRegion {
                lower_cm,
                upper_cm,
                reaches_centre: medium.geometry() == Geometry::Sphere && lower_cm == 0.0,
                transport_per_cm: transport[i],
                diffusion_mid: diffusion[i],
                diffusion_slope: if diffusion[i] > 0.0 {
                    diffusion_slope
                } else {
                    0.0
                },
                mid_cm: mid[i],
                scattering_rate: speed[i] * layers[i].scattering_per_cm(),
                absorption_rate: speed[i] * layers[i].absorption_per_cm(),
                persistence_cm: if transport[i] > 0.0 {
                    layers[i].phase().mean_cosine() / transport[i]
                } else {
                    0.0
                },
                law: 0,
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn absorption_fractions_follow_the_truncated_exponential() {
        // CDF (1 − e^(−hx))/(1 − e^(−h)) on [0, 1]: the inverse at u gives back u.
        for hazard in [1e-6, 0.3, 2.0, 40.0] {
            for u in [0.0, 0.1, 0.5, 0.9, 1.0] {
                let x = fraction_before_absorption(u, hazard);
                assert!((0.0..=1.0).contains(&x), "h = {hazard}, u = {u}: {x}");
                let cdf = (-hazard * x).exp_m1() / (-hazard).exp_m1();
                assert!((cdf - u).abs() < 1e-9, "h = {hazard}, u = {u}: {cdf}");
            }
        }
    }

    #[test]
    fn ball_height_share_integrates_the_green_function() {
        // Midpoint rule over the ball of the residence density 1/ρ − 1/R (R = 1) at heights
        // below u, against the closed form.
        let n = 120;
        let h = 2.0 / n as f64;
        let mut by_height = vec![0.0; n];
        for i in 0..n {
            for j in 0..n {
                for (k, slice) in by_height.iter_mut().enumerate() {
                    let p = [i, j, k].map(|c| -1.0 + (c as f64 + 0.5) * h);
                    let rho = (p[0] * p[0] + p[1] * p[1] + p[2] * p[2]).sqrt();
                    if rho < 1.0 {
                        *slice += 1.0 / rho - 1.0;
                    }
                }
            }
        }
        let total: f64 = by_height.iter().sum();
        let mut below = 0.0;
        for (k, part) in by_height.iter().enumerate() {
            below += part / total;
            let u = -1.0 + (k + 1) as f64 * h;
            assert!((below - ball_height_share(u)).abs() < 5e-3, "u = {u}");
        }
    }

    #[test]
    fn tilted_directions_have_mean_cosine_k_over_three() {
        // Density (1 + k c)/2 in c = a·n on [−1, 1]: mean ∫ c (1 + k c)/2 dc = k/3. The
        // standard deviation of c is below 0.58, so 4σ with 2·10⁵ draws is 0.0052.
        let axis = Vector3::new(0.0, 0.6, -0.8);
        let mut rng = crate::transport::rng::photon_rng(9, 0, 0);
        for k in [0.0, 0.05, 0.5, 1.0] {
            let n = 200_000;
            let mean: f64 = (0..n)
                .map(|_| axis.dot(&tilted_direction(&axis, k, &mut rng)))
                .sum::<f64>()
                / n as f64;
            assert!((mean - k / 3.0).abs() < 0.0052, "k = {k}: {mean}");
        }
    }
}
