//! Boundary conditions of diffusion theory at a free face: the Fresnel-weighted effective
//! reflection of diffuse light, the boundary factor A, and the extrapolation length at
//! which the diffusion density is taken to vanish.
//!
//! In the P1 (diffusion) approximation the radiance at a face is `L = φ/(4π) + 3 J·ŝ/(4π)`.
//! Asking that the diffuse light coming back in through the face be the Fresnel-reflected
//! part of the light going out gives the partial-current boundary condition
//! `φ = 2 A D′ ∂φ/∂n` (D′ = 1/(3 σ_tr), n the inward normal) with
//!
//! ```text
//! A = (1 + R_j) / (1 − R_φ),   R_φ = ∫₀¹ 2μ R_F(μ) dμ,   R_j = ∫₀¹ 3μ² R_F(μ) dμ,
//! ```
//!
//! `R_F(μ)` the Fresnel reflectance of unpolarised light meeting the face from inside at
//! direction cosine μ (Haskell, Svaasand, Tsay, Feng, McAdams & Tromberg 1994, JOSA A
//! 11:2727, eqs. 2.14–2.20; their `R_eff = (R_φ + R_j)/(2 − R_φ + R_j)` gives the same A as
//! `(1 + R_eff)/(1 − R_eff)`). The density then vanishes, to first order, at the
//! extrapolated distance `z_e = 2 A D′ = (2/3) A l_tr` outside the face.
//!
//! The integrals are computed here, not fitted, so A is right for every relative index:
//! A = 1 for matched faces, 2.948 at n_rel = 1.4, 49 at n_rel = 4 (where total internal
//! reflection returns all but a 4 % cone of the diffuse light), and slightly above 1 for
//! n_rel < 1. At a matched face the exact transport result for a half-space is used
//! instead: the Milne extrapolation length `q∞ = 0.7104461 l_tr` (Chandrasekhar 1950), which
//! the diffusion value 2/3 approximates.

use super::quadrature::gauss_legendre_5;

/// Milne-problem extrapolation length q∞ in mean free paths (Chandrasekhar 1950,
/// *Radiative Transfer*, ch. III).
pub const MILNE_EXTRAPOLATION_LENGTH: f64 = 0.710_446_1;

/// Panels of the composite 5-point Gauss–Legendre rule for the Fresnel moments; the
/// integrands are smooth after the change of variable below, so 64 panels give ~1e−15.
const FRESNEL_PANELS: usize = 64;

/// Reflectance of unpolarised light going from index `n1` into index `n2` at incidence
/// cosine `cos_incidence` (0..=1): the mean of the s and p Fresnel reflectances (Born &
/// Wolf, *Principles of Optics*, §1.5.2), 1 beyond the critical angle. The walker uses this
/// same function (`transport::fresnel`), so both sides of a comparison see one law.
#[inline]
pub fn fresnel_reflectance(cos_incidence: f64, n1: f64, n2: f64) -> f64 {
    if n1 == n2 {
        return 0.0;
    }
    let cos_i = cos_incidence.clamp(0.0, 1.0);
    let ratio = n1 / n2;
    let sin_t_squared = ratio * ratio * (1.0 - cos_i * cos_i);
    if sin_t_squared >= 1.0 {
        return 1.0;
    }
    let cos_t = (1.0 - sin_t_squared).sqrt();
    let s = (n1 * cos_i - n2 * cos_t) / (n1 * cos_i + n2 * cos_t);
    let p = (n1 * cos_t - n2 * cos_i) / (n1 * cos_t + n2 * cos_i);
    0.5 * (s * s + p * p)
}

/// The Fresnel moments `(R_φ, R_j) = (∫₀¹ 2μ R_F dμ, ∫₀¹ 3μ² R_F dμ)` for diffuse light
/// inside a medium of relative index `n_rel = n_inside / n_outside` (Haskell et al. 1994).
///
/// For `n_rel > 1` the cone μ < μ_c = √(1 − 1/n_rel²) is totally reflected (exactly μ_c²
/// and μ_c³); above it the integral is taken over the transmitted cosine ν, with
/// `μ dμ = ν dν / n_rel²`, which removes the square-root kink of R_F at the critical angle.
pub fn fresnel_moments(n_rel: f64) -> (f64, f64) {
    if n_rel == 1.0 || n_rel.is_nan() {
        return (0.0, 0.0);
    }
    if n_rel > 1.0 {
        let n2 = n_rel * n_rel;
        let mu_c2 = 1.0 - 1.0 / n2;
        let mu_c = mu_c2.sqrt();
        let mu_of = |nu: f64| (1.0 - (1.0 - nu * nu) / n2).sqrt();
        let r_phi = gauss_legendre_5(
            |nu| 2.0 * nu / n2 * fresnel_reflectance(mu_of(nu), n_rel, 1.0),
            0.0,
            1.0,
            FRESNEL_PANELS,
        );
        let r_j = gauss_legendre_5(
            |nu| {
                let mu = mu_of(nu);
                3.0 * mu * nu / n2 * fresnel_reflectance(mu, n_rel, 1.0)
            },
            0.0,
            1.0,
            FRESNEL_PANELS,
        );
        (mu_c2 + r_phi, mu_c2 * mu_c + r_j)
    } else {
        let r_phi = gauss_legendre_5(
            |mu| 2.0 * mu * fresnel_reflectance(mu, n_rel, 1.0),
            0.0,
            1.0,
            FRESNEL_PANELS,
        );
        let r_j = gauss_legendre_5(
            |mu| 3.0 * mu * mu * fresnel_reflectance(mu, n_rel, 1.0),
            0.0,
            1.0,
            FRESNEL_PANELS,
        );
        (r_phi, r_j)
    }
}

/// Effective reflection coefficient of a face for diffuse light inside a medium of relative
/// index `n_rel = n_inside / n_outside` (> 0): `R_eff = (R_φ + R_j)/(2 − R_φ + R_j)` with
/// the Fresnel moments of [`fresnel_moments`] (Haskell et al. 1994, JOSA A 11:2727).
/// Dimensionless, in [0, 1). 0 at `n_rel = 1`, 0.4935 at 1.4.
pub fn effective_reflection(n_rel: f64) -> f64 {
    let (r_phi, r_j) = fresnel_moments(n_rel);
    (r_phi + r_j) / (2.0 - r_phi + r_j)
}

/// Boundary factor `A = (1 + R_j)/(1 − R_φ) = (1 + R_eff)/(1 − R_eff)` of the
/// partial-current boundary condition (Haskell et al. 1994); the extrapolated boundary lies
/// `z_e = 2 A D′ = (2/3) A l_tr` outside the face. Dimensionless, ≥ 1 for `n_rel ≥ 1`;
/// finite for every finite `n_rel > 0`.
pub fn boundary_factor_a(n_rel: f64) -> f64 {
    let (r_phi, r_j) = fresnel_moments(n_rel);
    (1.0 + r_j) / (1.0 - r_phi)
}

/// Extrapolation length of a face in transport mean free paths: the Milne value
/// q∞ = 0.7104461 for a matched face (`n_rel == 1`), `(2/3) A(n_rel)` otherwise.
///
/// The two differ by 6 % as `n_rel → 1`: the Milne value is the exact transport result for
/// a matched half-space with isotropic scattering, the other the P1 estimate that is the
/// only one available for a refractive face.
pub fn extrapolation_length_mfp(n_rel: f64) -> f64 {
    if n_rel == 1.0 {
        MILNE_EXTRAPOLATION_LENGTH
    } else {
        2.0 * boundary_factor_a(n_rel) / 3.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Independent midpoint-rule evaluation of the moments over μ directly (the kink at the
    /// critical angle costs accuracy, hence many points and a loose tolerance: at n = 10 the
    /// open cone μ > 0.995 holds only 2 000 of the points).
    fn moments_by_midpoint(n_rel: f64) -> (f64, f64) {
        let n = 400_000;
        let (mut r_phi, mut r_j) = (0.0, 0.0);
        for i in 0..n {
            let mu = (i as f64 + 0.5) / n as f64;
            let r = fresnel_reflectance(mu, n_rel, 1.0);
            r_phi += 2.0 * mu * r / n as f64;
            r_j += 3.0 * mu * mu * r / n as f64;
        }
        (r_phi, r_j)
    }

    #[test]
    fn moments_match_a_direct_midpoint_rule() {
        for n_rel in [0.6, 0.9, 1.1, 1.33, 1.4, 2.0, 3.9, 4.0, 10.0] {
            let (a, b) = fresnel_moments(n_rel);
            let (c, d) = moments_by_midpoint(n_rel);
            assert!(
                (a - c).abs() < 1e-6 && (b - d).abs() < 1e-6,
                "{n_rel}: {a} {c} {b} {d}"
            );
        }
    }

    #[test]
    fn matched_face_and_known_values() {
        assert_eq!(boundary_factor_a(1.0), 1.0);
        assert_eq!(extrapolation_length_mfp(1.0), MILNE_EXTRAPOLATION_LENGTH);
        // R_eff(1.4) = (R_φ + R_j)/(2 − R_φ + R_j) from the Fresnel moments recomputed above by
        // the midpoint rule (docs/references.md, Diffusion solver 4). Haskell et al. 1994
        // (JOSA A 11:2727) tabulate R_eff; their ≈ 0.493 for n = 1.4 is recalled, not read,
        // and checked loosely.
        let (r_phi, r_j) = moments_by_midpoint(1.4);
        let recomputed = (r_phi + r_j) / (2.0 - r_phi + r_j);
        assert!((effective_reflection(1.4) - recomputed).abs() < 1e-6);
        assert!((effective_reflection(1.4) - 0.493).abs() < 0.002);
        // A large index: total internal reflection leaves a cone of cosine above
        // √(1 − 1/16) = 0.968 open; A stays finite and positive (the old polynomial fit of
        // R_eff exceeded 1 here and made A negative).
        for n_rel in [3.9, 4.0, 20.0] {
            let a = boundary_factor_a(n_rel);
            assert!(a.is_finite() && a > 40.0, "{n_rel}: {a}");
        }
        // A(4) from the moments of the midpoint rule above: 49.047.
        let (r_phi, r_j) = moments_by_midpoint(4.0);
        let midpoint = (1.0 + r_j) / (1.0 - r_phi);
        assert!((boundary_factor_a(4.0) / midpoint - 1.0).abs() < 1e-4);
        assert!((boundary_factor_a(4.0) - 49.05).abs() < 0.01);
        // Below 1 nothing is totally reflected and A is close to 1.
        let a = boundary_factor_a(0.7);
        assert!(a > 1.0 && a < 1.3, "{a}");
    }

    #[test]
    fn fresnel_at_normal_incidence() {
        // ((n − 1)/(n + 1))² (Born & Wolf §1.5.2).
        assert!((fresnel_reflectance(1.0, 1.5, 1.0) - 0.04).abs() < 1e-15);
        assert_eq!(fresnel_reflectance(0.1, 1.5, 1.0), 1.0);
    }
}
