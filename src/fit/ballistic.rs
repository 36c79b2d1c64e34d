//! The unscattered part of a collimated beam through a slab stack, in closed form.
//!
//! Along the refracted ray (Snell: n sin θ is the same in every layer) each layer
//! transmits e^(−σ d / cos θ) (Beer–Lambert, with σ = μa + μs the extinction) and each
//! interface reflects the Fresnel reflectance of unpolarised light (the same from either
//! side for a given pair of angles). The multiple reflections between interfaces are
//! summed incoherently with the adding rule of two elements a and b (front reflectance
//! R, transmittance T the same both ways, back reflectance R′):
//!
//! ```text
//! T = Tₐ T_b / (1 − R′ₐ R_b),  R = Rₐ + Tₐ² R_b / (1 − R′ₐ R_b),  R′ = R′_b + T_b² R′ₐ / (1 − R′ₐ R_b)
//! ```
//!
//! (the geometric series of the light bouncing between the two; docs/references.md, Fit 1).
//! This is what the walker's photons with no scattering do, so the result is the expected
//! value of the tally's unscattered photons, and the collimated transmittance a fit
//! predicts without Monte Carlo noise.

use crate::diffusion::boundary::fresnel_reflectance;
use crate::medium::{Medium, Source};

/// Unscattered light of a collimated beam, per incident photon.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Ballistic {
    /// Reflected by the front face before entering (the specular reflection).
    pub specular: f64,
    /// Reflected without scattering, the specular part included (light that came back from
    /// deeper interfaces too).
    pub reflectance: f64,
    /// Transmitted without scattering: the collimated transmittance.
    pub transmittance: f64,
}

/// One element of the stack: front reflectance, transmittance, back reflectance.
#[derive(Debug, Clone, Copy)]
struct Element {
    front: f64,
    through: f64,
    back: f64,
}

impl Element {
    /// `self` above `below`, by the adding rule.
    fn above(self, below: Element) -> Element {
        let bounce = 1.0 - self.back * below.front;
        if bounce <= 0.0 {
            // Both mirrors perfect: nothing gets through, everything returns.
            return Element {
                front: self.front + self.through * self.through,
                through: 0.0,
                back: below.back + below.through * below.through,
            };
        }
        Element {
            front: self.front + self.through * self.through * below.front / bounce,
            through: self.through * below.through / bounce,
            back: below.back + below.through * below.through * self.back / bounce,
        }
    }

    fn interface(reflectance: f64) -> Element {
        Element {
            front: reflectance,
            through: 1.0 - reflectance,
            back: reflectance,
        }
    }
}

/// The unscattered light of `medium` (a slab lit by a beam; `None` otherwise), with the
/// extinction of each layer taken from `extinction_per_cm(index)` (so that a fit can ask
/// about trial coefficients without building a medium).
pub fn unscattered_with(
    medium: &Medium,
    extinction_per_cm: impl Fn(usize) -> f64,
) -> Option<Ballistic> {
    let Source::Beam {
        polar_angle_deg, ..
    } = medium.source()
    else {
        return None;
    };
    let above = medium.ambient_above();
    let invariant = above * polar_angle_deg.to_radians().sin();
    let cosine_in = |n: f64| {
        let sine = invariant / n;
        (sine < 1.0).then(|| (1.0 - sine * sine).sqrt())
    };
    let face = |n1: f64, n2: f64| -> f64 {
        match (cosine_in(n1), cosine_in(n2)) {
            (Some(cos1), Some(_)) => fresnel_reflectance(cos1, n1, n2),
            _ => 1.0,
        }
    };
    let layers = medium.layers();
    let first = layers.first()?.refractive_index();
    let specular = face(above, first);
    let mut stack = Element::interface(specular);
    for (index, layer) in layers.iter().enumerate() {
        let n = layer.refractive_index();
        let (top, bottom) = medium.layer_bounds_cm(index);
        let through = match cosine_in(n) {
            Some(cos) => (-extinction_per_cm(index) * (bottom - top) / cos).exp(),
            None => 0.0,
        };
        stack = stack.above(Element {
            front: 0.0,
            through,
            back: 0.0,
        });
        let next = layers
            .get(index + 1)
            .map_or(medium.ambient_below(), |l| l.refractive_index());
        stack = stack.above(Element::interface(face(n, next)));
    }
    Some(Ballistic {
        specular,
        reflectance: stack.front,
        transmittance: stack.through,
    })
}

/// The unscattered light of `medium` with its own layers (`None` unless it is a slab lit by
/// a beam).
pub fn unscattered(medium: &Medium) -> Option<Ballistic> {
    unscattered_with(medium, |index| medium.layers()[index].extinction_per_cm())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::Layer;
    use crate::transport::PhaseFunction;

    fn slab(n: f64, extinction: f64) -> Medium {
        let layer = Layer::new("s", extinction, 0.5, PhaseFunction::Isotropic, n).unwrap();
        Medium::slab(vec![(1.0, layer)], 1.0, Source::normal_beam()).unwrap()
    }

    #[test]
    fn matched_slab_is_beer_lambert() {
        let b = unscattered(&slab(1.0, 2.0)).unwrap();
        assert!((b.transmittance - (-2.0f64).exp()).abs() < 1e-15);
        assert_eq!(b.specular, 0.0);
        assert_eq!(b.reflectance, 0.0);
    }

    #[test]
    fn clear_slab_has_the_two_face_series() {
        // One clear plate: T = (1 − r)² / (1 − r²) = (1 − r)/(1 + r), r = ((n−1)/(n+1))²
        // (the incoherent sum of the multiple reflections between two faces).
        // (A medium needs a layer with extinction; the closed form is asked with none.)
        let b = unscattered_with(&slab(1.5, 1.0), |_| 0.0).unwrap();
        let r: f64 = 0.04;
        assert!((b.specular - r).abs() < 1e-12);
        assert!((b.transmittance - (1.0 - r) / (1.0 + r)).abs() < 1e-12);
        assert!((b.reflectance + b.transmittance - 1.0).abs() < 1e-12);
    }

    #[test]
    fn absorbing_plate_series() {
        // T = (1 − r)² a / (1 − r² a²) with a = e^(−σd).
        let b = unscattered(&slab(1.5, 0.7)).unwrap();
        let (r, a): (f64, f64) = (0.04, (-0.7f64).exp());
        let expected = (1.0 - r).powi(2) * a / (1.0 - r * r * a * a);
        assert!((b.transmittance - expected).abs() < 1e-12);
        let reflected = r + (1.0 - r).powi(2) * r * a * a / (1.0 - r * r * a * a);
        assert!((b.reflectance - reflected).abs() < 1e-12);
    }
}
