//! Fresnel reflection and Snell refraction of unpolarised light at a plane interface.

use nalgebra::Vector3;

/// Reflectance of unpolarised light (Born & Wolf, Principles of Optics, §1.5.2), 1 beyond
/// the critical angle (total internal reflection): the one law that diffusion theory's
/// boundary conditions also use.
pub use crate::diffusion::boundary::fresnel_reflectance;

/// The direction after refraction from `n1` into `n2` across a plane of constant z (Snell's
/// law): the tangential component scales by n1/n2, the normal component keeps its sign.
/// Only call below the critical angle.
pub fn refract_across_z(direction: &Vector3<f64>, n1: f64, n2: f64) -> Vector3<f64> {
    let ratio = n1 / n2;
    let (x, y) = (direction.x * ratio, direction.y * ratio);
    let z = (1.0 - x * x - y * y).max(0.0).sqrt().copysign(direction.z);
    Vector3::new(x, y, z)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn normal_incidence_is_the_textbook_value() {
        // ((n − 1)/(n + 1))² at normal incidence (Born & Wolf §1.5.2; docs/references.md,
        // Transport 3: 0.04 for n = 1.5 against 1.0), the same in both directions.
        assert!((fresnel_reflectance(1.0, 1.0, 1.5) - 0.04).abs() < 1e-15);
        assert!((fresnel_reflectance(1.0, 1.5, 1.0) - 0.04).abs() < 1e-15);
        assert!((fresnel_reflectance(1.0, 1.0, 1.33) - (0.33f64 / 2.33).powi(2)).abs() < 1e-15);
    }

    #[test]
    fn total_internal_reflection_beyond_the_critical_angle() {
        // Glass to air: critical angle asin(1/1.5) = 41.81°.
        let critical = (1.0f64 / 1.5).asin();
        assert_eq!(fresnel_reflectance((critical + 0.01).cos(), 1.5, 1.0), 1.0);
        assert!(fresnel_reflectance((critical - 0.01).cos(), 1.5, 1.0) < 1.0);
        // At grazing incidence everything is reflected either way.
        assert!((fresnel_reflectance(0.0, 1.0, 1.5) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn brewster_angle_reflects_only_s() {
        // At Brewster's angle tan θ = n2/n1 the p reflectance vanishes; the unpolarised
        // reflectance is half the s reflectance, sin²(θi − θt)/ (2 sin²(θi + θt)).
        let theta = 1.5f64.atan();
        let theta_t = (theta.sin() / 1.5).asin();
        let expected = 0.5 * ((theta - theta_t).sin() / (theta + theta_t).sin()).powi(2);
        assert!((fresnel_reflectance(theta.cos(), 1.0, 1.5) - expected).abs() < 1e-12);
    }

    #[test]
    fn refraction_obeys_snell() {
        let theta = 0.6f64;
        let d = Vector3::new(theta.sin(), 0.0, theta.cos());
        let t = refract_across_z(&d, 1.0, 1.5);
        assert!((t.x - theta.sin() / 1.5).abs() < 1e-15);
        assert!((t.norm() - 1.0).abs() < 1e-15);
        assert!(t.z > 0.0);
    }
}
