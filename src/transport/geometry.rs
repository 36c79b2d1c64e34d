//! Ray–boundary distances for plane-parallel layers (sphere crossings are walked along
//! the ray in the direct walker).

/// Which way a photon leaves its layer.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Exit {
    /// Into the layer with the next index (outward in a sphere, downward in a slab).
    Next,
    /// Into the layer with the previous index (inward in a sphere, upward in a slab).
    Previous,
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
    fn plane_distances() {
        assert_eq!(plane_exit(1.0, 0.5, 0.0, 3.0), (4.0, Exit::Next));
        assert_eq!(plane_exit(1.0, -0.5, 0.0, 3.0), (2.0, Exit::Previous));
        assert!(plane_exit(1.0, 0.0, 0.0, 3.0).0.is_infinite());
    }
}
