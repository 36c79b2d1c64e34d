//! Unit direction vectors: isotropic sampling and rotation by a scattering angle.

use nalgebra::Vector3;
use rand::{Rng, RngExt};

/// A uniformly random unit vector (Marsaglia 1972, Ann. Math. Stat. 43:645): no
/// trigonometric calls.
#[inline]
pub fn isotropic<R: Rng + ?Sized>(rng: &mut R) -> Vector3<f64> {
    loop {
        let a = 2.0 * rng.random::<f64>() - 1.0;
        let b = 2.0 * rng.random::<f64>() - 1.0;
        let s = a * a + b * b;
        if s < 1.0 {
            let factor = 2.0 * (1.0 - s).sqrt();
            return Vector3::new(a * factor, b * factor, 1.0 - 2.0 * s);
        }
    }
}

/// (cos φ, sin φ) for a uniformly random azimuth φ, from a point in the unit disc.
#[inline]
fn random_azimuth<R: Rng + ?Sized>(rng: &mut R) -> (f64, f64) {
    loop {
        let a = 2.0 * rng.random::<f64>() - 1.0;
        let b = 2.0 * rng.random::<f64>() - 1.0;
        let s = a * a + b * b;
        if s < 1.0 && s > 0.0 {
            return ((a * a - b * b) / s, 2.0 * a * b / s);
        }
    }
}

/// The direction `direction` turned by the polar angle whose cosine is `cos_theta`, with a
/// uniformly random azimuth about the old direction. Uses the standard rotation in the
/// photon's frame, switching to the fixed frame near the poles where it would divide by
/// sin θ_z ≈ 0; the result is renormalised so rounding never accumulates.
#[inline]
pub fn scatter<R: Rng + ?Sized>(
    direction: &Vector3<f64>,
    cos_theta: f64,
    rng: &mut R,
) -> Vector3<f64> {
    let (cos_phi, sin_phi) = random_azimuth(rng);
    let sin_theta = (1.0 - cos_theta * cos_theta).max(0.0).sqrt();
    let (ux, uy, uz) = (direction.x, direction.y, direction.z);
    let turned = if uz.abs() > 1.0 - 1e-10 {
        Vector3::new(
            sin_theta * cos_phi,
            sin_theta * sin_phi,
            cos_theta * uz.signum(),
        )
    } else {
        let root = (1.0 - uz * uz).sqrt();
        Vector3::new(
            sin_theta * (ux * uz * cos_phi - uy * sin_phi) / root + ux * cos_theta,
            sin_theta * (uy * uz * cos_phi + ux * sin_phi) / root + uy * cos_theta,
            -sin_theta * cos_phi * root + uz * cos_theta,
        )
    };
    turned / turned.norm()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::transport::rng::photon_rng;

    #[test]
    fn scattering_keeps_the_requested_angle_and_unit_length() {
        let mut rng = photon_rng(3, 0, 0);
        for _ in 0..1000 {
            let old = isotropic(&mut rng);
            let cos_theta = 2.0 * rng.random::<f64>() - 1.0;
            let new = scatter(&old, cos_theta, &mut rng);
            assert!((new.norm() - 1.0).abs() < 1e-12);
            assert!((new.dot(&old) - cos_theta).abs() < 1e-9);
        }
        let pole = Vector3::new(0.0, 0.0, -1.0);
        let new = scatter(&pole, 0.5, &mut rng);
        assert!((new.dot(&pole) - 0.5).abs() < 1e-9);
    }
}
