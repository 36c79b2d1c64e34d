//! Diffusion-theory estimates of the escape time on the model's own layers.
//!
//! * The random-walk rule of thumb: N ≈ τ² scatterings, t ≈ N · l̄ / v = τ · L / v.
//! * The mean exit time of the steady diffusion equation ∇·(D ∇T) = −1 with T = 0 on the
//!   surface, D = v / (3 σ_tr) per layer (v = c/n, σ_tr = σ_a + σ_s (1 − g)). For a sphere
//!   and a centred source this is T = ∫₀^R r / (3 D) dr = (1/c) ∫ r / l_tr dr
//!   (docs/references.md, Diffusion theory 1); for a uniform sphere R² / (2 l c), i.e. N = τ²/2.
//! * The same with the Milne extrapolated boundary: the surface moved out by
//!   q∞ = 0.7104461 transport mean free paths of the outermost layer (a slab: both faces),
//!   which for a uniform sphere gives N = (τ + q∞)² / 2. A slab face between different
//!   refractive indices is moved out by (2/3) A l_tr instead, A from the index ratio
//!   (Haskell et al. 1994).
//!
//! Everything is computed in closed form per layer through the diffusion Green's function, so
//! the residence time of each layer is available too. Absorption enters only through D: these
//! are the exit times of conservative diffusion.

use super::extrapolation::face_extension;
use crate::medium::{Geometry, Layer, Medium, Source};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Diffusion-theory view of one medium and source.
#[derive(Debug, Clone, PartialEq)]
pub struct DiffusionEstimate {
    /// Optical depth from the source to the surface along a radius (sphere) or the total
    /// optical thickness (slab).
    pub optical_depth: f64,
    /// Length of that path, cm.
    pub path_length_cm: f64,
    /// Smallest mean free path of any interacting layer, cm.
    pub mean_free_path_min_cm: f64,
    /// Largest mean free path of any interacting layer, cm.
    pub mean_free_path_max_cm: f64,
    /// Rule-of-thumb scatterings, τ².
    pub naive_scatterings: f64,
    /// Rule-of-thumb time τ · L · n̄ / c, s.
    pub naive_time_s: f64,
    /// Mean exit time of steady diffusion with T = 0 on the surface, s.
    pub mean_time_s: f64,
    /// Mean exit time with the Milne extrapolated boundary, s.
    pub mean_time_extrapolated_s: f64,
    /// Mean number of scatterings implied by `mean_time_s`.
    pub mean_scatterings: f64,
    /// Mean number of scatterings implied by `mean_time_extrapolated_s`.
    pub mean_scatterings_extrapolated: f64,
    /// Residence time in each layer (no extrapolation), s; sums to `mean_time_s`.
    pub layer_residence_s: Vec<f64>,
}

/// One layer as the diffusion equation sees it.
#[derive(Debug, Clone, Copy)]
struct DiffusionLayer {
    inner_cm: f64,
    outer_cm: f64,
    /// 1 / D, s/cm².
    inverse_diffusion: f64,
    /// Scatterings per second, v σ_s.
    scattering_rate: f64,
}

impl DiffusionLayer {
    fn from_layer(layer: &Layer, inner_cm: f64, outer_cm: f64) -> Self {
        let speed = SPEED_OF_LIGHT_CM_S / layer.refractive_index();
        Self {
            inner_cm,
            outer_cm,
            inverse_diffusion: 3.0 * layer.transport_extinction_per_cm() / speed,
            scattering_rate: speed * layer.scattering_per_cm(),
        }
    }
}

/// Diffusion estimates for `medium` with its own source.
pub fn estimate(medium: &Medium) -> DiffusionEstimate {
    let layers: Vec<DiffusionLayer> = medium
        .layers()
        .iter()
        .enumerate()
        .map(|(index, layer)| {
            let (inner, outer) = medium.layer_bounds_cm(index);
            DiffusionLayer::from_layer(layer, inner, outer)
        })
        .collect();
    let interacting = medium
        .layers()
        .iter()
        .filter(|l| l.extinction_per_cm() > 0.0)
        .map(Layer::mean_free_path_cm);
    let mean_free_path_min_cm = interacting.clone().fold(f64::INFINITY, f64::min);
    let mean_free_path_max_cm = interacting.fold(0.0, f64::max);

    let (optical_depth, path_length_cm, path_time_per_tau) = naive_path(medium);
    let naive_scatterings = optical_depth * optical_depth;
    let naive_time_s = optical_depth * path_time_per_tau;

    let (plain, extrapolated) = match medium.geometry() {
        Geometry::Sphere => {
            let r0 = match medium.source() {
                Source::SpherePoint { radius_cm } => radius_cm,
                _ => 0.0,
            };
            let outer = extrapolation_layer(medium, medium.layers().len() - 1, true);
            let mut extended = layers.clone();
            extended.extend(outer);
            (
                sphere_residence(&layers, r0),
                sphere_residence(&extended, r0),
            )
        }
        Geometry::Slab => {
            let top = extrapolation_layer(medium, 0, false);
            let bottom = extrapolation_layer(medium, medium.layers().len() - 1, true);
            let mut extended: Vec<DiffusionLayer> = top.into_iter().collect();
            extended.extend(layers.iter().copied());
            extended.extend(bottom);
            (
                slab_source_average(medium, &layers),
                slab_source_average(medium, &extended),
            )
        }
    };
    DiffusionEstimate {
        optical_depth,
        path_length_cm,
        mean_free_path_min_cm,
        mean_free_path_max_cm,
        naive_scatterings,
        naive_time_s,
        mean_time_s: plain.time_s,
        mean_time_extrapolated_s: extrapolated.time_s,
        mean_scatterings: plain.scatterings,
        mean_scatterings_extrapolated: extrapolated.scatterings,
        layer_residence_s: plain.per_layer_s,
    }
}

/// The pseudo-layer that extends layer `index` to its extrapolated boundary (`outward =
/// true`: beyond its outer boundary; else above its inner boundary, for a slab top); see
/// [`face_extension`]. `None` for a layer that does not scatter.
fn extrapolation_layer(medium: &Medium, index: usize, outward: bool) -> Option<DiffusionLayer> {
    let outside = match (medium.geometry(), outward) {
        (Geometry::Sphere, _) => 1.0,
        (Geometry::Slab, true) => medium.ambient_below(),
        (Geometry::Slab, false) => medium.ambient_above(),
    };
    let extension = face_extension(medium, index, outward, outside)?;
    let (inner, outer) = medium.layer_bounds_cm(index);
    let speed = SPEED_OF_LIGHT_CM_S / extension.refractive_index;
    let (from, to) = if outward {
        (outer, outer + extension.length_cm)
    } else {
        (inner - extension.length_cm, inner)
    };
    Some(DiffusionLayer {
        inner_cm: from,
        outer_cm: to,
        inverse_diffusion: 3.0 * extension.transport_per_cm / speed,
        scattering_rate: speed * extension.scattering_per_cm,
    })
}

/// Optical depth, length and time per unit optical depth (L n̄ / c / τ · τ ... i.e. L n̄ / c)
/// of the rule-of-thumb path: source to surface along a radius, or the slab thickness.
fn naive_path(medium: &Medium) -> (f64, f64, f64) {
    let start = match (medium.geometry(), medium.source()) {
        (Geometry::Sphere, Source::SpherePoint { radius_cm }) => radius_cm,
        _ => 0.0,
    };
    let mut tau = 0.0;
    let mut length = 0.0;
    let mut slow_length = 0.0;
    for (index, layer) in medium.layers().iter().enumerate() {
        let (inner, outer) = medium.layer_bounds_cm(index);
        let piece = (outer - inner.max(start)).max(0.0);
        tau += layer.extinction_per_cm() * piece;
        length += piece;
        slow_length += layer.refractive_index() * piece;
    }
    (tau, length, slow_length / SPEED_OF_LIGHT_CM_S)
}

/// Mean exit time, scatterings and per-layer residence.
#[derive(Debug, Clone, Default)]
struct Residence {
    time_s: f64,
    scatterings: f64,
    per_layer_s: Vec<f64>,
}

/// Residence times in a sphere of shells for a source at radius `r0`, from the Green's
/// function of (1/r²)(r² D T')' = −δ: 4π r² G(r) = r² H(max(r, r0)) with
/// H(r) = ∫_r^R dr' / (r'² D(r')).
fn sphere_residence(layers: &[DiffusionLayer], r0: f64) -> Residence {
    // H at each layer's outer boundary, from the surface inward.
    let mut h_outer = vec![0.0; layers.len()];
    for index in (0..layers.len().saturating_sub(1)).rev() {
        let above = &layers[index + 1];
        h_outer[index] = h_outer[index + 1]
            + above.inverse_diffusion * (1.0 / above.inner_cm - 1.0 / above.outer_cm);
    }
    let h = |index: usize, r: f64| {
        let layer = &layers[index];
        h_outer[index] + layer.inverse_diffusion * (1.0 / r - 1.0 / layer.outer_cm)
    };
    let source_layer = layers
        .iter()
        .position(|l| r0 < l.outer_cm)
        .unwrap_or(layers.len() - 1);
    let h_source = if r0 > 0.0 { h(source_layer, r0) } else { 0.0 };
    let mut residence = Residence::default();
    for (index, layer) in layers.iter().enumerate() {
        let (a, b) = (layer.inner_cm, layer.outer_cm);
        let split = r0.clamp(a, b);
        // Below the source radius: G constant at its value at r0.
        let inside = h_source * (split.powi(3) - a.powi(3)) / 3.0;
        // Above: ∫ r² H(r) dr in closed form.
        let cube = b.powi(3) - split.powi(3);
        let outside = h_outer[index] * cube / 3.0
            + layer.inverse_diffusion * ((b * b - split * split) / 2.0 - cube / (3.0 * b));
        let time = inside + outside;
        residence.time_s += time;
        residence.scatterings += time * layer.scattering_rate;
        residence.per_layer_s.push(time);
    }
    residence
}

/// The planar Green's function of (D T')' = −δ(z − z0) with T = 0 on both faces of a list
/// of layers, G(z, z0) = W(min(z, z0)) (W_L − W(max(z, z0))) / W_L with W(z) = ∫ dz / D
/// from the top, prepared once so that the residence time for one source depth costs
/// O(log L) (a binary search and prefix sums) and a whole source distribution O(L + nodes).
///
/// G is linear in z on each side of the source inside a layer, so its integral over a
/// layer is the trapezoid of its end values: for a layer above the source
/// (W_L − W_s)/W_L · ∫ W dz, for a layer below W_s/W_L · ∫ (W_L − W) dz.
struct SlabGreen<'a> {
    layers: &'a [DiffusionLayer],
    /// W at the top of each layer, and at the bottom of the last (s/cm).
    w_at: Vec<f64>,
    /// W_L, the value at the bottom.
    w_total: f64,
    /// ∫ W dz over each layer.
    w_integral: Vec<f64>,
    /// Prefix sums of ∫ W dz (time weight of layers above the source), and the same
    /// weighted by each layer's scattering rate.
    above_time: Vec<f64>,
    above_scatterings: Vec<f64>,
    /// Suffix sums of ∫ (W_L − W) dz (layers below the source), plain and weighted.
    below_time: Vec<f64>,
    below_scatterings: Vec<f64>,
}

/// Where a plane source sits in a [`SlabGreen`] and what it contributes.
struct SourcePlace {
    /// Layer holding the source.
    layer: usize,
    /// (W_L − W_s)/W_L: factor of the layers above.
    above: f64,
    /// W_s/W_L: factor of the layers below.
    below: f64,
    /// Residence time in the source layer itself, s.
    own_time: f64,
}

impl<'a> SlabGreen<'a> {
    fn new(layers: &'a [DiffusionLayer]) -> Self {
        let mut w_at = Vec::with_capacity(layers.len() + 1);
        let mut w = 0.0;
        w_at.push(0.0);
        for layer in layers {
            w += layer.inverse_diffusion * (layer.outer_cm - layer.inner_cm);
            w_at.push(w);
        }
        let w_total = w;
        let w_integral: Vec<f64> = layers
            .iter()
            .enumerate()
            .map(|(k, l)| (l.outer_cm - l.inner_cm) * (w_at[k] + w_at[k + 1]) / 2.0)
            .collect();
        let complement = |k: usize| {
            let l = &layers[k];
            w_total * (l.outer_cm - l.inner_cm) - w_integral[k]
        };
        let mut above_time = vec![0.0; layers.len() + 1];
        let mut above_scatterings = vec![0.0; layers.len() + 1];
        for k in 0..layers.len() {
            above_time[k + 1] = above_time[k] + w_integral[k];
            above_scatterings[k + 1] =
                above_scatterings[k] + w_integral[k] * layers[k].scattering_rate;
        }
        let mut below_time = vec![0.0; layers.len() + 1];
        let mut below_scatterings = vec![0.0; layers.len() + 1];
        for k in (0..layers.len()).rev() {
            below_time[k] = below_time[k + 1] + complement(k);
            below_scatterings[k] =
                below_scatterings[k + 1] + complement(k) * layers[k].scattering_rate;
        }
        Self {
            layers,
            w_at,
            w_total,
            w_integral,
            above_time,
            above_scatterings,
            below_time,
            below_scatterings,
        }
    }

    /// The source at depth `z0` (moved inside the layers if it lies outside).
    fn place(&self, z0: f64) -> SourcePlace {
        let layers = self.layers;
        let top = layers[0].inner_cm;
        let bottom = layers[layers.len() - 1].outer_cm;
        let z0 = z0.max(top).min(bottom);
        let layer = layers
            .partition_point(|l| l.outer_cm < z0)
            .min(layers.len() - 1);
        if self.w_total <= 0.0 {
            return SourcePlace {
                layer,
                above: 0.0,
                below: 0.0,
                own_time: 0.0,
            };
        }
        let here = &layers[layer];
        let (a, b) = (here.inner_cm, here.outer_cm);
        let z0 = z0.max(a).min(b);
        let (w_a, w_b) = (self.w_at[layer], self.w_at[layer + 1]);
        let w_source = w_a + here.inverse_diffusion * (z0 - a);
        let above = (self.w_total - w_source) / self.w_total;
        let below = w_source / self.w_total;
        let own_time = (z0 - a) * (w_a + w_source) / 2.0 * above
            + (b - z0) * (self.w_total - (w_source + w_b) / 2.0) * below;
        SourcePlace {
            layer,
            above,
            below,
            own_time,
        }
    }

    /// Mean residence time (s) and scatterings for a plane source at `place`.
    fn totals(&self, place: &SourcePlace) -> (f64, f64) {
        let s = place.layer;
        let time = place.above * self.above_time[s]
            + place.below * self.below_time[s + 1]
            + place.own_time;
        let scatterings = place.above * self.above_scatterings[s]
            + place.below * self.below_scatterings[s + 1]
            + place.own_time * self.layers[s].scattering_rate;
        (time, scatterings)
    }

    /// Residence time of layer `k` (s) for a plane source at `place`.
    fn layer_time(&self, place: &SourcePlace, k: usize) -> f64 {
        match k.cmp(&place.layer) {
            std::cmp::Ordering::Less => place.above * self.w_integral[k],
            std::cmp::Ordering::Greater => place.below * self.complement(k),
            std::cmp::Ordering::Equal => place.own_time,
        }
    }

    /// ∫ (W_L − W) dz over layer `k`.
    fn complement(&self, k: usize) -> f64 {
        let l = &self.layers[k];
        self.w_total * (l.outer_cm - l.inner_cm) - self.w_integral[k]
    }
}

/// Residence times in a slab of layers for a plane source at depth `z0` (planar Green's
/// function of (D T')' = −δ with T = 0 on both faces; see [`SlabGreen`]).
fn slab_residence(layers: &[DiffusionLayer], z0: f64) -> Residence {
    let green = SlabGreen::new(layers);
    let place = green.place(z0);
    let (time_s, scatterings) = green.totals(&place);
    Residence {
        time_s,
        scatterings,
        per_layer_s: (0..layers.len())
            .map(|k| green.layer_time(&place, k))
            .collect(),
    }
}

/// Slab residence for the medium's source: a point or plane source at its depth; for a beam
/// the average over the exponential distribution of first-collision depths (plus the flight
/// time to that depth), with the uncollided photons leaving ballistically; for diffuse
/// illumination the beam average over cosine-weighted incidence (16 nodes, midpoint rule
/// in μ²). Refraction at the entry face is not modelled here.
fn slab_source_average(medium: &Medium, layers: &[DiffusionLayer]) -> Residence {
    match medium.source() {
        Source::SlabPoint { depth_cm } | Source::SlabPlane { depth_cm } => {
            slab_residence(layers, depth_cm)
        }
        Source::Beam {
            polar_angle_deg, ..
        } => beam_average(medium, layers, polar_angle_deg.to_radians().cos()),
        Source::Diffuse => {
            let nodes = 16;
            let mut average = Residence {
                per_layer_s: vec![0.0; layers.len()],
                ..Residence::default()
            };
            for k in 0..nodes {
                let mu0 = ((k as f64 + 0.5) / nodes as f64).sqrt();
                let part = beam_average(medium, layers, mu0);
                average.time_s += part.time_s / nodes as f64;
                average.scatterings += part.scatterings / nodes as f64;
                for (sum, value) in average.per_layer_s.iter_mut().zip(&part.per_layer_s) {
                    *sum += value / nodes as f64;
                }
            }
            average
        }
        Source::SpherePoint { .. } | Source::EnergyGeneration => beam_average(medium, layers, 1.0),
    }
}

/// Slab residence for a collimated beam entering at direction cosine `mu0`: the average of
/// [`slab_residence`] over the first-collision depths (2000 nodes, midpoint rule in the
/// cumulative probability), in O(L + nodes log L).
fn beam_average(medium: &Medium, layers: &[DiffusionLayer], mu0: f64) -> Residence {
    // Cumulative slant optical depth and flight time at the top of each model layer.
    let model = medium.layers();
    let mut slant_tau = Vec::with_capacity(model.len() + 1);
    let mut slant_time = Vec::with_capacity(model.len() + 1);
    let (mut tau, mut time) = (0.0, 0.0);
    slant_tau.push(0.0);
    slant_time.push(0.0);
    for (index, layer) in model.iter().enumerate() {
        let (inner, outer) = medium.layer_bounds_cm(index);
        let slant_length = (outer - inner) / mu0;
        tau += layer.extinction_per_cm() * slant_length;
        time += slant_length * layer.refractive_index() / SPEED_OF_LIGHT_CM_S;
        slant_tau.push(tau);
        slant_time.push(time);
    }
    let total_slant_tau = tau;
    let ballistic_s = time;
    // The first interacting layer at or below each layer.
    let mut next_interacting = vec![model.len(); model.len() + 1];
    for index in (0..model.len()).rev() {
        next_interacting[index] = if model[index].extinction_per_cm() > 0.0 {
            index
        } else {
            next_interacting[index + 1]
        };
    }
    // Depth and flight time at slant optical depth `target`.
    let slant = |target: f64| -> Option<(f64, f64)> {
        let first = slant_tau[1..].partition_point(|&t| t < target);
        let index = *next_interacting.get(first)?;
        let layer = model.get(index)?;
        let (inner, _) = medium.layer_bounds_cm(index);
        let s = (target - slant_tau[index]) / layer.extinction_per_cm();
        let slowness = layer.refractive_index() / SPEED_OF_LIGHT_CM_S;
        Some((inner + s * mu0, slant_time[index] + s * slowness))
    };
    let collided = -(-total_slant_tau).exp_m1();
    let green = SlabGreen::new(layers);
    let nodes = 2000;
    let weight = collided / nodes as f64;
    let mut average = Residence::default();
    // Per source layer: Σ weight · (W_L − W_s)/W_L, Σ weight · W_s/W_L, own residence.
    let mut above = vec![0.0; layers.len()];
    let mut below = vec![0.0; layers.len()];
    let mut own = vec![0.0; layers.len()];
    for k in 0..nodes {
        // Midpoint rule in the cumulative probability u = 1 − e^{−τ}.
        let u = collided * (k as f64 + 0.5) / nodes as f64;
        let tau = -(-u).ln_1p();
        let Some((depth, flight_s)) = slant(tau) else {
            continue;
        };
        let place = green.place(depth);
        let (time_s, scatterings) = green.totals(&place);
        average.time_s += weight * (flight_s + time_s);
        average.scatterings += weight * (1.0 + scatterings);
        above[place.layer] += weight * place.above;
        below[place.layer] += weight * place.below;
        own[place.layer] += weight * place.own_time;
    }
    // Layer k collects I_k from sources below it and (W_L h_k − I_k) from sources above.
    let mut sources_below: f64 = above.iter().sum();
    let mut sources_above = 0.0;
    average.per_layer_s = Vec::with_capacity(layers.len());
    for k in 0..layers.len() {
        sources_below -= above[k];
        average.per_layer_s.push(
            sources_below.max(0.0) * green.w_integral[k]
                + sources_above * green.complement(k)
                + own[k],
        );
        sources_above += below[k];
    }
    average.time_s += (1.0 - collided) * ballistic_s;
    average
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diffusion::MILNE_EXTRAPOLATION_LENGTH;
    use crate::transport::PhaseFunction;

    fn uniform_sphere(tau: f64, radius_cm: f64) -> Medium {
        let layer = Layer::new("", tau / radius_cm, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        Medium::sphere(vec![(radius_cm, layer)], Source::centre()).unwrap()
    }

    #[test]
    fn uniform_sphere_matches_r_squared_over_2lc() {
        // docs/references.md, Diffusion theory 1: mean exit time R²/(6D) = R²/(2 l c), N = τ²/2;
        // extrapolated (τ + q∞)²/2.
        let (tau, radius) = (50.0, 3.0);
        let estimate = estimate(&uniform_sphere(tau, radius));
        let l = radius / tau;
        let expected = radius * radius / (2.0 * l * SPEED_OF_LIGHT_CM_S);
        assert!((estimate.mean_time_s / expected - 1.0).abs() < 1e-12);
        assert!((estimate.mean_scatterings / (tau * tau / 2.0) - 1.0).abs() < 1e-12);
        let q = MILNE_EXTRAPOLATION_LENGTH;
        assert!(
            (estimate.mean_scatterings_extrapolated / ((tau + q).powi(2) / 2.0) - 1.0).abs()
                < 1e-12
        );
        assert_eq!(estimate.naive_scatterings, tau * tau);
    }

    #[test]
    fn two_zone_sphere_matches_the_piecewise_integral() {
        // T(0) = (1/c) ∫ r σ dr = (1/c) [σ1 a²/2 + σ2 (R² − a²)/2] (docs/references.md, Diffusion
        // theory 1).
        let inner = Layer::new("", 100.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        let outer = Layer::new("", 1.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        let medium = Medium::sphere(vec![(0.5, inner), (2.0, outer)], Source::centre()).unwrap();
        let estimate = estimate(&medium);
        let expected = (100.0 * 0.25 / 2.0 + 1.0 * (4.0 - 0.25) / 2.0) / SPEED_OF_LIGHT_CM_S;
        assert!((estimate.mean_time_s / expected - 1.0).abs() < 1e-12);
        let sum: f64 = estimate.layer_residence_s.iter().sum();
        assert!((sum / estimate.mean_time_s - 1.0).abs() < 1e-12);
    }

    #[test]
    fn off_centre_source_in_a_uniform_sphere() {
        // From radius r0: (R² − r0²)/(6D) (docs/references.md, Diffusion theory 1).
        let layer = Layer::new("", 10.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        let medium =
            Medium::sphere(vec![(1.0, layer)], Source::SpherePoint { radius_cm: 0.6 }).unwrap();
        let estimate = estimate(&medium);
        let expected = 10.0 * (1.0 - 0.36) / (2.0 * SPEED_OF_LIGHT_CM_S);
        assert!((estimate.mean_time_s / expected - 1.0).abs() < 1e-12);
    }

    #[test]
    fn slab_midplane_source_gives_three_eighths_tau_squared() {
        // docs/references.md, Diffusion theory 2: (3/8)(τ + 2 q∞)² with extrapolated boundaries;
        // τ²·3/8 without.
        let tau = 40.0;
        let layer = Layer::new("", tau, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        let medium =
            Medium::slab(vec![(1.0, layer)], 1.0, Source::SlabPoint { depth_cm: 0.5 }).unwrap();
        let estimate = estimate(&medium);
        assert!((estimate.mean_scatterings / (0.375 * tau * tau) - 1.0).abs() < 1e-12);
        let q = MILNE_EXTRAPOLATION_LENGTH;
        let expected = 0.375 * (tau + 2.0 * q).powi(2);
        assert!((estimate.mean_scatterings_extrapolated / expected - 1.0).abs() < 1e-12);
    }

    #[test]
    fn large_refractive_index_against_air_gives_finite_estimates() {
        // An index of 3.9 or more used to make the fitted R_eff exceed 1, A negative, the
        // extrapolated pseudo-layer inverted, and a clamp panic. With A from the Fresnel
        // integrals the face is pushed out by (2/3) A l_tr with A ≈ 46 at 3.9.
        for n in [3.9, 4.0, 20.0] {
            for source in [
                Source::normal_beam(),
                Source::Diffuse,
                Source::SlabPoint { depth_cm: 0.0 },
                Source::SlabPlane { depth_cm: 1.0 },
            ] {
                let layer = Layer::new("", 20.0, 0.99, PhaseFunction::Isotropic, n).unwrap();
                let medium = Medium::slab(vec![(1.0, layer)], 1.0, source).unwrap();
                let estimate = estimate(&medium);
                assert!(
                    estimate.mean_time_extrapolated_s.is_finite()
                        && estimate.mean_time_extrapolated_s > estimate.mean_time_s,
                    "n = {n}, {source:?}: {estimate:?}"
                );
            }
        }
    }

    #[test]
    fn many_layer_slab_matches_one_layer() {
        // 1 000 identical layers are one layer: the prefix-sum Green's function gives the
        // same mean times as the single layer (to rounding), for every source kind.
        let layer = Layer::new("", 50.0, 0.995, PhaseFunction::Isotropic, 1.0).unwrap();
        for source in [
            Source::normal_beam(),
            Source::Diffuse,
            Source::SlabPlane { depth_cm: 0.37 },
        ] {
            let one = Medium::slab(vec![(1.0, layer.clone())], 1.0, source).unwrap();
            let many = Medium::slab(vec![(1e-3, layer.clone()); 1000], 1.0, source).unwrap();
            let (a, b) = (estimate(&one), estimate(&many));
            for (x, y) in [
                (a.mean_time_s, b.mean_time_s),
                (a.mean_time_extrapolated_s, b.mean_time_extrapolated_s),
                (a.mean_scatterings, b.mean_scatterings),
            ] {
                // The beam average puts its 2 000 first-collision depths into different
                // layers, which changes only the rounding.
                assert!((x / y - 1.0).abs() < 1e-9, "{source:?}: {x} vs {y}");
            }
            // Residences add up to the mean (a beam's mean adds the flight time to the
            // first collision, which no layer's residence holds).
            let total: f64 = b.layer_residence_s.iter().sum();
            let one_total: f64 = a.layer_residence_s.iter().sum();
            assert!((total / one_total - 1.0).abs() < 1e-9, "{source:?}");
            if let Source::SlabPlane { .. } = source {
                assert!((total / b.mean_time_s - 1.0).abs() < 1e-12);
            }
        }
    }
}
