//! Diffusion-theory estimates of the escape time on the model's own layers.
//!
//! * The random-walk rule of thumb: N ≈ τ² scatterings, t ≈ N · l̄ / v = τ · L / v.
//! * The mean exit time of the steady diffusion equation ∇·(D ∇T) = −1 with T = 0 on the
//!   surface, D = v / (3 σ_tr) per layer (v = c/n, σ_tr = σ_a + σ_s (1 − g)). For a sphere
//!   and a centred source this is T = ∫₀^R r / (3 D) dr = (1/c) ∫ r / l_tr dr
//!   (../shared/REFERENCES.md item 3); for a uniform sphere R² / (2 l c), i.e. N = τ²/2.
//! * The same with the Milne extrapolated boundary: the surface moved out by
//!   q∞ = 0.7104461 transport mean free paths of the outermost layer (a slab: both faces),
//!   which for a uniform sphere gives N = (τ + q∞)² / 2. A slab face between different
//!   refractive indices is moved out by (2/3) A l_tr instead, A from the index ratio
//!   (Haskell et al. 1994).
//!
//! Everything is computed in closed form per layer through the diffusion Green's function, so
//! the residence time of each layer is available too. Absorption enters only through D: these
//! are the exit times of conservative diffusion.

use crate::medium::{Geometry, Layer, Medium, Source};
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Milne-problem extrapolation length q∞ in mean free paths (Chandrasekhar 1950,
/// Radiative Transfer, ch. III; ../shared/REFERENCES.md item 2).
pub const MILNE_EXTRAPOLATION_LENGTH: f64 = 0.710_446_1;

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

/// The pseudo-layer that extends layer `index` by q∞ transport mean free paths outward
/// (`outward = true`: beyond its outer boundary; else above its inner boundary, for a slab
/// top). `None` for a layer that does not scatter.
///
/// Where the surface layer is one sub-shell of a smooth profile (its inner division marked
/// smooth, [`Medium::is_sharp_boundary`]) and is thinner than q∞ transport optical depths,
/// the pseudo-layer takes the mean transport extinction and scattering of the outermost q∞
/// transport optical depths of the profile instead: the Milne boundary condition is a
/// statement in optical depth, and a tenuous outermost sub-shell (ρ → 0 at a stellar surface)
/// would otherwise set an extrapolation length of its own mean free path. For layers
/// bounded by sharp interfaces (every plain model) nothing changes.
fn extrapolation_layer(medium: &Medium, index: usize, outward: bool) -> Option<DiffusionLayer> {
    let layer = &medium.layers()[index];
    let transport = layer.transport_extinction_per_cm();
    let (inner, outer) = medium.layer_bounds_cm(index);
    let own_depth = transport * (outer - inner);
    let joined_to_next = |k: usize| {
        if outward {
            k > 0 && !medium.is_sharp_boundary(k - 1)
        } else {
            k + 1 < medium.layers().len() && !medium.is_sharp_boundary(k)
        }
    };
    if own_depth < MILNE_EXTRAPOLATION_LENGTH && joined_to_next(index) {
        // Average over the outermost q∞ transport optical depths of the smooth run.
        let (mut depth, mut length, mut scattering_length) = (0.0, 0.0, 0.0);
        let mut k = index;
        loop {
            let here = &medium.layers()[k];
            let (a, b) = medium.layer_bounds_cm(k);
            let sigma = here.transport_extinction_per_cm();
            let wanted = MILNE_EXTRAPOLATION_LENGTH - depth;
            let piece = if sigma * (b - a) > wanted {
                wanted / sigma
            } else {
                b - a
            };
            depth += sigma * piece;
            length += piece;
            scattering_length += here.scattering_per_cm() * piece;
            if depth >= MILNE_EXTRAPOLATION_LENGTH || !joined_to_next(k) {
                break;
            }
            k = if outward { k - 1 } else { k + 1 };
        }
        if depth <= 0.0 || length <= 0.0 {
            return None;
        }
        let mean_transport = depth / length;
        let speed = SPEED_OF_LIGHT_CM_S / layer.refractive_index();
        let extension = MILNE_EXTRAPOLATION_LENGTH / mean_transport;
        let (from, to) = if outward {
            (outer, outer + extension)
        } else {
            (inner - extension, inner)
        };
        return Some(DiffusionLayer {
            inner_cm: from,
            outer_cm: to,
            inverse_diffusion: 3.0 * mean_transport / speed,
            scattering_rate: speed * scattering_length / length,
        });
    }
    if transport <= 0.0 {
        return None;
    }
    let outside = match (medium.geometry(), outward) {
        (Geometry::Sphere, _) => 1.0,
        (Geometry::Slab, true) => medium.ambient_below(),
        (Geometry::Slab, false) => medium.ambient_above(),
    };
    let relative_index = layer.refractive_index() / outside;
    // Matched faces: the Milne length q∞ l_tr. A refractive face reflects part of the
    // diffuse light back: z_e = (2/3) A l_tr with A from the index ratio (Haskell et al.
    // 1994, JOSA A 11:2727); for n_rel < 1 the fit does not apply and A = 1 is used.
    let length = if relative_index == 1.0 {
        MILNE_EXTRAPOLATION_LENGTH / transport
    } else {
        let a = if relative_index > 1.0 {
            super::time_resolved::boundary_factor_a(relative_index)
        } else {
            1.0
        };
        2.0 * a / (3.0 * transport)
    };
    Some(if outward {
        DiffusionLayer::from_layer(layer, outer, outer + length)
    } else {
        DiffusionLayer::from_layer(layer, inner - length, inner)
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

/// Residence times in a slab of layers for a plane source at depth `z0` (planar Green's
/// function of (D T')' = −δ with T = 0 on both faces):
/// G(z) = W(min(z, z0)) (W_L − W(max(z, z0))) / W_L, W(z) = ∫ dz / D from the top.
fn slab_residence(layers: &[DiffusionLayer], z0: f64) -> Residence {
    let top = layers[0].inner_cm;
    let mut w_at = Vec::with_capacity(layers.len() + 1);
    let mut w = 0.0;
    w_at.push(0.0);
    for layer in layers {
        w += layer.inverse_diffusion * (layer.outer_cm - layer.inner_cm);
        w_at.push(w);
    }
    let w_total = w;
    let w_of = |z: f64| {
        let index = layers
            .iter()
            .position(|l| z <= l.outer_cm)
            .unwrap_or(layers.len() - 1);
        w_at[index] + layers[index].inverse_diffusion * (z - layers[index].inner_cm)
    };
    let w_source = w_of(z0.max(top));
    let green = |z: f64| {
        if w_total <= 0.0 {
            return 0.0;
        }
        let (low, high) = if z < z0 {
            (w_of(z), w_source)
        } else {
            (w_source, w_of(z))
        };
        low * (w_total - high) / w_total
    };
    let mut residence = Residence::default();
    for layer in layers {
        let (a, b) = (layer.inner_cm, layer.outer_cm);
        let split = z0.clamp(a, b);
        // G is linear in z on each side of the source inside a layer: trapezoids are exact.
        let time = (split - a) * (green(a) + green(split)) / 2.0
            + (b - split) * (green(split) + green(b)) / 2.0;
        residence.time_s += time;
        residence.scatterings += time * layer.scattering_rate;
        residence.per_layer_s.push(time);
    }
    residence
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
        Source::Beam { polar_angle_deg } => {
            beam_average(medium, layers, polar_angle_deg.to_radians().cos())
        }
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

/// Slab residence for a collimated beam entering at direction cosine `mu0`.
fn beam_average(medium: &Medium, layers: &[DiffusionLayer], mu0: f64) -> Residence {
    // Depth, time and layer at a given slant optical depth along the beam.
    let slant = |tau_target: f64| -> Option<(f64, f64)> {
        let mut tau = 0.0;
        let mut time = 0.0;
        for (index, layer) in medium.layers().iter().enumerate() {
            let (inner, outer) = medium.layer_bounds_cm(index);
            let slant_length = (outer - inner) / mu0;
            let piece_tau = layer.extinction_per_cm() * slant_length;
            let slowness = layer.refractive_index() / SPEED_OF_LIGHT_CM_S;
            if tau + piece_tau >= tau_target && layer.extinction_per_cm() > 0.0 {
                let s = (tau_target - tau) / layer.extinction_per_cm();
                return Some((inner + s * mu0, time + s * slowness));
            }
            tau += piece_tau;
            time += slant_length * slowness;
        }
        None
    };
    let total_slant_tau: f64 = medium
        .layers()
        .iter()
        .enumerate()
        .map(|(index, layer)| {
            let (inner, outer) = medium.layer_bounds_cm(index);
            layer.extinction_per_cm() * (outer - inner) / mu0
        })
        .sum();
    let collided = -(-total_slant_tau).exp_m1();
    let nodes = 2000;
    let mut average = Residence {
        per_layer_s: vec![0.0; layers.len()],
        ..Residence::default()
    };
    for k in 0..nodes {
        // Midpoint rule in the cumulative probability u = 1 − e^{−τ}.
        let u = collided * (k as f64 + 0.5) / nodes as f64;
        let tau = -(-u).ln_1p();
        let Some((depth, flight_s)) = slant(tau) else {
            continue;
        };
        let part = slab_residence(layers, depth);
        let weight = collided / nodes as f64;
        average.time_s += weight * (flight_s + part.time_s);
        average.scatterings += weight * (1.0 + part.scatterings);
        for (sum, value) in average.per_layer_s.iter_mut().zip(&part.per_layer_s) {
            *sum += weight * value;
        }
    }
    let ballistic_s: f64 = medium
        .layers()
        .iter()
        .enumerate()
        .map(|(index, layer)| {
            let (inner, outer) = medium.layer_bounds_cm(index);
            (outer - inner) / mu0 * layer.refractive_index() / SPEED_OF_LIGHT_CM_S
        })
        .sum();
    average.time_s += (1.0 - collided) * ballistic_s;
    average
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::transport::PhaseFunction;

    fn uniform_sphere(tau: f64, radius_cm: f64) -> Medium {
        let layer = Layer::new("", tau / radius_cm, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        Medium::sphere(vec![(radius_cm, layer)], Source::centre()).unwrap()
    }

    #[test]
    fn uniform_sphere_matches_r_squared_over_2lc() {
        // REFERENCES item 3: mean exit time R²/(6D) = R²/(2 l c), N = τ²/2; extrapolated
        // (τ + q∞)²/2.
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
        // T(0) = (1/c) ∫ r σ dr = (1/c) [σ1 a²/2 + σ2 (R² − a²)/2] (REFERENCES item 3).
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
        // From radius r0: (R² − r0²)/(6D) (REFERENCES item 3).
        let layer = Layer::new("", 10.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
        let medium =
            Medium::sphere(vec![(1.0, layer)], Source::SpherePoint { radius_cm: 0.6 }).unwrap();
        let estimate = estimate(&medium);
        let expected = 10.0 * (1.0 - 0.36) / (2.0 * SPEED_OF_LIGHT_CM_S);
        assert!((estimate.mean_time_s / expected - 1.0).abs() < 1e-12);
    }

    #[test]
    fn slab_midplane_source_gives_three_eighths_tau_squared() {
        // REFERENCES item 4: (3/8)(τ + 2 q∞)² with extrapolated boundaries; τ²·3/8 without.
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
}
