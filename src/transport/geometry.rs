//! Ray–boundary distances for spherical shells and plane-parallel layers: small pure
//! functions, written to stay accurate when the photon sits on a boundary.

use nalgebra::Vector3;

/// Which way a photon leaves its layer.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Exit {
    /// Into the layer with the next index (outward in a sphere, downward in a slab).
    Next,
    /// Into the layer with the previous index (inward in a sphere, upward in a slab).
    Previous,
}

/// Distance along unit direction `u` from `p` to the boundary of the spherical shell
/// `inner ≤ |x| ≤ outer` (radii squared given), and which boundary is hit.
/// `inner_sq = 0` means a full ball. Uses the cancellation-free root forms.
#[inline]
pub fn shell_exit(p: &Vector3<f64>, u: &Vector3<f64>, inner_sq: f64, outer_sq: f64) -> (f64, Exit) {
    let b = p.dot(u);
    let pp = p.dot(p);
    if inner_sq > 0.0 && b < 0.0 {
        let c_inner = pp - inner_sq;
        let disc = b * b - c_inner;
        if disc > 0.0 {
            return (c_inner.max(0.0) / (-b + disc.sqrt()), Exit::Previous);
        }
    }
    let c_outer = pp - outer_sq;
    let root = (b * b - c_outer).max(0.0).sqrt();
    let distance = if b > 0.0 {
        (-c_outer).max(0.0) / (b + root)
    } else {
        -b + root
    };
    (distance, Exit::Next)
}

/// Distance along direction cosine `uz` from depth `z` to the faces `top ≤ z ≤ bottom` of a
/// plane layer (depth increases downward), and which face is hit. Infinite for `uz = 0`.
#[inline]
pub fn plane_exit(z: f64, uz: f64, top: f64, bottom: f64) -> (f64, Exit) {
    if uz > 0.0 {
        (((bottom - z) / uz).max(0.0), Exit::Next)
    } else if uz < 0.0 {
        (((top - z) / uz).max(0.0), Exit::Previous)
    } else {
        (f64::INFINITY, Exit::Next)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn from_the_centre_the_exit_is_the_radius() {
        let p = Vector3::zeros();
        let u = Vector3::new(0.6, 0.0, 0.8);
        let (d, exit) = shell_exit(&p, &u, 0.0, 4.0);
        assert!((d - 2.0).abs() < 1e-15);
        assert_eq!(exit, Exit::Next);
    }

    #[test]
    fn inward_ray_hits_the_inner_shell_first() {
        // From (0,0,3) straight inward: inner radius 1 is 2 away.
        let p = Vector3::new(0.0, 0.0, 3.0);
        let u = Vector3::new(0.0, 0.0, -1.0);
        let (d, exit) = shell_exit(&p, &u, 1.0, 16.0);
        assert!((d - 2.0).abs() < 1e-15);
        assert_eq!(exit, Exit::Previous);
        // A ray that misses the inner sphere goes to the outer one: chord from (0,0,3),
        // direction -x: exits at x = -sqrt(16 - 9).
        let u = Vector3::new(-1.0, 0.0, 0.0);
        let (d, exit) = shell_exit(&p, &u, 1.0, 16.0);
        assert!((d - 7f64.sqrt()).abs() < 1e-14);
        assert_eq!(exit, Exit::Next);
    }

    #[test]
    fn on_the_outer_boundary_moving_in_gives_the_full_chord() {
        let p = Vector3::new(0.0, 0.0, 2.0);
        let u = Vector3::new(0.0, 0.0, -1.0);
        let (d, _) = shell_exit(&p, &u, 0.0, 4.0);
        assert!((d - 4.0).abs() < 1e-14);
    }

    #[test]
    fn plane_distances() {
        assert_eq!(plane_exit(1.0, 0.5, 0.0, 3.0), (4.0, Exit::Next));
        assert_eq!(plane_exit(1.0, -0.5, 0.0, 3.0), (2.0, Exit::Previous));
        assert!(plane_exit(1.0, 0.0, 0.0, 3.0).0.is_infinite());
    }
}
