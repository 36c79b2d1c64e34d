//! Diffusion times of a star beside the mean exit time from the centre: weighted by where the
//! energy is released, its radiant energy content over its luminosity, and the residence
//! time of the radiative flux.
//!
//! With A(r) = (1/c) ∫₀^r r′ σ_tr(r′) dr′ on the model's shells, the mean first-passage time
//! of steady diffusion from radius r₀ to the surface R is T(r₀) = A(R) − A(r₀) (the mean
//! exit time from the centre is A(R): the steady first-passage equation ∇·(D∇T) = −1 with
//! D = c l / 3, Redner 2001, *A Guide to First-Passage Processes*). Then:
//!
//! * **Luminosity-weighted** ([`luminosity_weighted_time_s`]): the mean of T(r₀) over where
//!   the energy is released, t_L = ∫ T(r₀) dL(r₀) / L, which by exchanging the integrals is
//!   (1/(cL)) ∫₀^R r σ_tr(r) L(r) dr. It is the mean age of the energy leaving the star, and
//!   what a Monte Carlo run from the energy-generation source measures.
//! * **Flux-weighted mean residence time** ([`flux_weighted_time_s`]): the radiant energy the
//!   star must hold for diffusion to carry its flux, over the flux, U_F / L, where the energy
//!   density u_F obeys Fick's law with the local luminosity, L(r) = −4π r² (c / (3σ_tr)) du_F/dr,
//!   with u_F = 0 at the surface. By Little's law (mean time in a steady system = content /
//!   throughput) it equals t_L exactly; it is computed here by the other route, from u_F(r)
//!   shell by shell, so the two printed side by side check each other.
//! * **Energy content over luminosity** ([`energy_content_time_s`]): U_rad / L with
//!   U_rad = ∫ a T⁴ dV, the radiant energy of the model's own temperature. It equals U_F / L
//!   where the model's temperature is the one radiative diffusion of its luminosity needs
//!   (radiative equilibrium, as in Eddington's standard model); it differs where the model's
//!   temperature gradient is set otherwise (convective zones, a polytrope's fixed index).
//!
//! The extrapolated (Milne) variant adds the extrapolation layer's time, which is the same
//! from every starting radius below the surface.

use crate::medium::profile::RadialStructure;
use crate::medium::profile::structure::gauss4;
use crate::medium::{EmissionSampler, Geometry, Medium};
use crate::units::{RADIATION_CONSTANT_CGS, SPEED_OF_LIGHT_CM_S};

/// The shells of a sphere as (inner cm, outer cm, σ_tr per cm), up to `limit_cm`.
fn shells_below(medium: &Medium, limit_cm: f64) -> Vec<(f64, f64, f64)> {
    (0..medium.layers().len())
        .map(|k| {
            let (a, b) = medium.layer_bounds_cm(k);
            (
                a,
                b.min(limit_cm),
                medium.layers()[k].transport_extinction_per_cm(),
            )
        })
        .filter(|(a, b, _)| b > a)
        .collect()
}

/// (1/(c L(r_end))) ∫₀^r_end r σ_tr(r) L(r) dr over the shells, L the source's enclosed
/// luminosity. Exact: L is a polynomial inside each shell (shells never straddle table rows).
fn weighted(emission: &EmissionSampler, shells: &[(f64, f64, f64)], end_cm: f64) -> f64 {
    let total = emission.luminosity_inside(end_cm);
    let integral: f64 = shells
        .iter()
        .map(|&(a, b, sigma)| sigma * gauss4(a, b, |r| r * emission.luminosity_inside(r)))
        .sum();
    integral / (SPEED_OF_LIGHT_CM_S * total)
}

/// Mean exit time of steady diffusion from radius `from_cm` to `to_cm` (absorbing there), s:
/// (1/c) ∫ r σ_tr dr over the shells between.
pub fn time_between_s(medium: &Medium, from_cm: f64, to_cm: f64) -> f64 {
    shells_below(medium, to_cm)
        .iter()
        .map(|&(a, b, sigma)| {
            let a = a.max(from_cm);
            if b > a {
                sigma * (b * b - a * a) / 2.0
            } else {
                0.0
            }
        })
        .sum::<f64>()
        / SPEED_OF_LIGHT_CM_S
}

/// The luminosity-weighted mean exit time t_L from the medium's energy-generation profile to
/// its surface, s (plain boundary; None without energy generation or for a slab). For the
/// Milne extrapolated boundary add [`extrapolation_time_s`].
pub fn luminosity_weighted_time_s(medium: &Medium) -> Option<f64> {
    if medium.geometry() != Geometry::Sphere {
        return None;
    }
    let emission = medium.emission()?;
    let end = medium.size_cm();
    Some(weighted(emission, &shells_below(medium, end), end))
}

/// The luminosity-weighted mean exit time to radius `to_cm` (absorbing there) of the energy
/// released below it, s: ∫_{r₀ < to} (time from r₀ to `to`) dL(r₀) / L(to). None without
/// energy generation below `to_cm`.
pub fn luminosity_weighted_time_to_s(medium: &Medium, to_cm: f64) -> Option<f64> {
    let emission = medium.emission()?;
    if emission.luminosity_inside(to_cm) <= 0.0 {
        return None;
    }
    Some(weighted(emission, &shells_below(medium, to_cm), to_cm))
}

/// The time the Milne extrapolation layer adds to every mean exit time from inside the
/// sphere, s: the extrapolated minus the plain mean exit time from the centre.
pub fn extrapolation_time_s(medium: &Medium) -> Option<f64> {
    let centred = medium.with_sphere_source(0.0).ok()?;
    let estimate = super::estimate(&centred);
    Some(estimate.mean_time_extrapolated_s - estimate.mean_time_s)
}

/// The flux-weighted mean residence time U_F / L, s (see the module documentation): u_F from
/// the surface inwards, shell by shell, u_F(r) = u_F(b) + (3σ_tr/(4πc)) ∫_r^b L(r′)/r′² dr′,
/// and U_F = ∫ 4π r² u_F dr. None without energy generation or for a slab.
pub fn flux_weighted_time_s(medium: &Medium) -> Option<f64> {
    if medium.geometry() != Geometry::Sphere {
        return None;
    }
    let emission = medium.emission()?;
    let pi4 = 4.0 * std::f64::consts::PI;
    let shells = shells_below(medium, medium.size_cm());
    let mut u_outer = 0.0;
    let mut content = 0.0;
    for &(a, b, sigma) in shells.iter().rev() {
        let coefficient = 3.0 * sigma / (pi4 * SPEED_OF_LIGHT_CM_S);
        let u = |r: f64| {
            u_outer + coefficient * gauss4(r, b, |x| emission.luminosity_inside(x) / (x * x))
        };
        content += pi4 * gauss4(a, b, |r| r * r * u(r));
        u_outer = u(a);
    }
    Some(content / emission.luminosity_erg_s())
}

/// The radiant energy U_rad = ∫ a T⁴ dV of the structure (to its surface), erg, and
/// U_rad / L, s. None without temperatures or luminosity.
pub fn energy_content_time_s(structure: &RadialStructure) -> Option<(f64, f64)> {
    let luminosity = structure.luminosity_erg_s().filter(|l| *l > 0.0)?;
    let rows = structure.rows();
    let mut energy = 0.0;
    for pair in rows.windows(2) {
        let (t0, t1) = (pair[0].temperature_k?, pair[1].temperature_k?);
        let (a, b) = (pair[0].radius_cm, pair[1].radius_cm);
        // T linear in r: a T⁴ r² is a polynomial of degree 6, exact with 4 points.
        energy += 4.0
            * std::f64::consts::PI
            * RADIATION_CONSTANT_CGS
            * gauss4(a, b, |r| {
                let t = t0 + (t1 - t0) * (r - a) / (b - a);
                t.powi(4) * r * r
            });
    }
    Some((energy, energy / luminosity))
}
