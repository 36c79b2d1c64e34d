//! The accelerated walker: diffusion jumps deep inside nearly uniform regions, exact direct
//! steps everywhere else.
//!
//! This is the random-walk procedure of Fleck & Canfield (1984, J. Comput. Phys. 54:508) in
//! the form of the modified random walk of Min et al. (2009, A&A 497:155). After every
//! interaction (and at an isotropic source) the walker finds R₀, the distance to the nearest
//! sharp interface, the surface, or the place where the transport mean free path l_tr has
//! changed by more than a relative tolerance ε from its local value. If R₀ ≥ γ l_tr, the
//! many scatterings inside the sphere of radius R₀ are replaced by one jump:
//!
//! * **time** — drawn from the exact first-passage law of 3-D diffusion out of a sphere from
//!   its centre ([`crate::diffusion::first_passage`]), with D = v l_tr / 3 at the centre and
//!   the radius extrapolated to R₀ + q∞ l_tr (q∞ = 0.7104, the Milne extrapolation length).
//!   A discrete walk leaves a sphere later than continuous diffusion predicts; for a uniform
//!   sphere the extrapolated radius reproduces the transport mean (τ + q∞)²/2 to 0.1 % at
//!   τ = 10 (measured, see the README);
//! * **exit point** — uniform on the sphere, tilted to first order towards increasing D:
//!   with D(x) = D₀(1 + a·x) the exit density is (1 + (R₀/2) a·n̂)/4π (derived in the
//!   README's "Accelerated walk" section from the backward equation D₀Δu + ∇D·∇u = 0). The
//!   mean exit time from the centre has no first-order term, so the residual bias is O(ε²);
//! * **direction at the exit** — not isotropic: the first crossing of a large sphere is an
//!   escape from a diffusing half-space, so the cosine to the outward normal is drawn from
//!   the Milne-problem law μ H(μ) ([`super::crossing`]);
//! * **scatterings** — advanced by the expected number v σ_s t (f64);
//! * **absorption** — the photon survives the jump with probability e^(−σ_a v t) (analog).
//!
//! After a jump the photon continues its interrupted flight (free paths are memoryless) with
//! exact direct stepping; near the surface and at sharp interfaces it takes only direct
//! steps.

use nalgebra::Vector3;
use rand::{Rng, RngExt};

use super::crossing::sample_crossing_cosine;
use super::direct::{DirectWalker, JumpSites, Photon, Stop, WalkLimits};
use super::direction;
use crate::diffusion::{MILNE_EXTRAPOLATION_LENGTH, first_passage};
use crate::medium::{Geometry, Medium};
use crate::tally::{Outcome, PhotonRecord};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Parameters of the accelerated walk.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Acceleration {
    /// Jump only where R₀ ≥ γ transport mean free paths.
    pub gamma: f64,
    /// Relative change of the transport mean free path allowed across a jump sphere.
    pub epsilon: f64,
    /// Tilt the exit point along ∇D (first-order drift correction).
    pub drift_correction: bool,
}

impl Default for Acceleration {
    /// Defaults chosen by measurement (README, "Accelerated walk").
    fn default() -> Self {
        Self {
            gamma: 10.0,
            epsilon: 0.1,
            drift_correction: true,
        }
    }
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
}

/// The accelerated walker for one medium. Immutable and `Sync`.
#[derive(Debug, Clone)]
pub struct AcceleratedWalker {
    direct: DirectWalker,
    geometry: Geometry,
    boundaries_cm: Vec<f64>,
    regions: Vec<JumpRegion>,
    settings: Acceleration,
}

impl AcceleratedWalker {
    /// A walker for `medium` with per-photon `limits` and acceleration `settings`.
    pub fn new(medium: &Medium, limits: WalkLimits, settings: Acceleration) -> Self {
        Self {
            direct: DirectWalker::new(medium, limits),
            geometry: medium.geometry(),
            boundaries_cm: medium.boundaries_cm().to_vec(),
            regions: jump_regions(medium, settings.epsilon),
            settings,
        }
    }

    /// Follows one photon from the source until it leaves, is absorbed or hits the step cap.
    /// Where no jump applies it draws exactly the random numbers of the direct walker, so
    /// both give identical photons in media too thin for jumps.
    pub fn walk<R: Rng + ?Sized>(&self, rng: &mut R) -> PhotonRecord {
        let (mut photon, reflected_at_entry) = self.direct.launch(rng);
        if reflected_at_entry {
            return photon.record(Outcome::Specular, 0.0, 0.0, 0.0);
        }
        let max_steps = self.direct.limits().max_steps;
        let (mut jumps, mut jump_time_s) = (0.0, 0.0);
        let mut at_jump_site = self.direct.source_is_isotropic()
            && self.jump_radius(&photon.position, photon.layer).is_some();
        let outcome = loop {
            if at_jump_site {
                match self.jump_radius(&photon.position, photon.layer) {
                    Some((radius_cm, coordinate)) if photon.steps < max_steps => {
                        photon.steps += 1;
                        jumps += 1.0;
                        let (elapsed_s, absorbed) =
                            self.jump(&mut photon, radius_cm, coordinate, rng);
                        jump_time_s += elapsed_s;
                        if absorbed {
                            break Outcome::Absorbed;
                        }
                    }
                    Some(_) => break Outcome::Censored,
                    None => self.direct.scatter(&mut photon, rng),
                }
            }
            match self.direct.follow(&mut photon, rng, &Sites(self)) {
                Stop::Ended(outcome) => break outcome,
                Stop::JumpSite => at_jump_site = true,
            }
        };
        let flights = photon.steps as f64 - jumps;
        photon.record(outcome, jumps, flights, jump_time_s)
    }

    /// Radius of the jump sphere at `position` in layer `layer`, if a jump applies there,
    /// with the photon's radius (sphere) or depth (slab), cm.
    fn jump_radius(&self, position: &Vector3<f64>, layer: usize) -> Option<(f64, f64)> {
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

    /// One diffusion jump of radius `radius_cm` from radius or depth `coordinate`; returns the time it took and whether the
    /// photon was absorbed during it.
    fn jump<R: Rng + ?Sized>(
        &self,
        photon: &mut Photon,
        radius_cm: f64,
        coordinate: f64,
        rng: &mut R,
    ) -> (f64, bool) {
        let region = &self.regions[photon.layer];
        let diffusion = (region.diffusion_mid
            + region.diffusion_slope * (coordinate - region.mid_cm))
            .max(0.5 * region.diffusion_mid);
        let effective_radius = radius_cm + MILNE_EXTRAPOLATION_LENGTH / region.transport_per_cm;
        let elapsed_s =
            first_passage::sample(rng) * effective_radius * effective_radius / diffusion;

        let tilt_axis = (self.settings.drift_correction && region.diffusion_slope != 0.0)
            .then(|| self.outward(&photon.position, coordinate))
            .flatten();
        let normal = match tilt_axis {
            Some(outward) => {
                // Exit density (1 + k cos ψ)/4π about ∇D, k = R₀ |∇D| / (2 D) ≤ ε/2.
                let k = (radius_cm * region.diffusion_slope.abs() / (2.0 * diffusion)).min(1.0);
                tilted_direction(&(outward * region.diffusion_slope.signum()), k, rng)
            }
            None => direction::isotropic(rng),
        };
        photon.position += radius_cm * normal;
        photon.layer = self.locate(self.coordinate(&photon.position));
        photon.time_s += elapsed_s;
        photon.scatterings += region.scattering_rate * elapsed_s;
        let absorbed = region.absorption_rate > 0.0
            && rng.random::<f64>() >= (-region.absorption_rate * elapsed_s).exp();
        photon.direction = direction::scatter(&normal, sample_crossing_cosine(rng), rng);
        (elapsed_s, absorbed)
    }

    /// Index of the layer holding radius or depth `coordinate`.
    fn locate(&self, coordinate: f64) -> usize {
        self.boundaries_cm
            .partition_point(|&b| b <= coordinate)
            .min(self.boundaries_cm.len() - 1)
    }
}

/// The jump sites of an accelerated walker, as the direct walker asks for them.
struct Sites<'a>(&'a AcceleratedWalker);

impl JumpSites for Sites<'_> {
    #[inline]
    fn jump_here(&self, position: &Vector3<f64>, layer: usize) -> bool {
        self.0.jump_radius(position, layer).is_some()
    }
}

/// A unit vector n with density (1 + k a·n)/4π on the sphere (0 ≤ k ≤ 1), by rejection from
/// the isotropic law: accept with probability (1 + k a·n)/(1 + k), at least 1/2 and above
/// 0.95 for the k ≤ ε/2 of a jump.
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
            }
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

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
