//! Detectors on a slab's faces: rings or discs centred on the beam axis (the normal through
//! x = y = 0, where the beam's centre enters), each with an acceptance cone given as a
//! half-angle or a numerical aperture in the ambient medium on its side.

use serde::{Deserialize, Serialize};

use super::{MediumError, Quantity};

/// A face of a slab.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Face {
    /// The top face (z = 0), where a beam enters: reflected light.
    Top,
    /// The bottom face: transmitted light.
    Bottom,
}

impl Face {
    /// The face's name as written in model files and reports.
    pub fn name(self) -> &'static str {
        match self {
            Face::Top => "top",
            Face::Bottom => "bottom",
        }
    }
}

/// How wide a detector's acceptance cone is, about the face's outward normal.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Acceptance {
    /// Half-angle of the cone outside the slab, degrees, in (0, 90].
    HalfAngleDeg(f64),
    /// Numerical aperture NA = n sin θ in the ambient medium of index n (0 < NA < n).
    NumericalAperture(f64),
}

/// A ring (or, with inner radius 0, a disc) on one face of a slab. It detects light leaving
/// through that face at a distance ρ from the beam axis with inner ≤ ρ < outer, travelling
/// within its acceptance cone (outside the slab).
#[derive(Debug, Clone, PartialEq)]
pub struct Detector {
    /// A label for reports (may be empty).
    pub name: String,
    /// The face it sits on.
    pub face: Face,
    /// Inner radius, cm (0 for a disc).
    pub inner_radius_cm: f64,
    /// Outer radius, cm.
    pub outer_radius_cm: f64,
    /// The acceptance cone.
    pub acceptance: Acceptance,
}

impl Detector {
    /// Checks the detector against the ambient index `ambient_index` on its face: radii
    /// finite with 0 ≤ inner < outer, a half-angle in (0, 90] degrees, a numerical aperture
    /// in (0, ambient index). Field names are relative (`inner_radius`, ...).
    ///
    /// # Errors
    /// [`MediumError`] naming the field, the value and what was expected.
    pub fn check(&self, ambient_index: f64) -> Result<(), MediumError> {
        let (inner, outer) = (self.inner_radius_cm, self.outer_radius_cm);
        if !(inner.is_finite() && inner >= 0.0) {
            return Err(MediumError::value(
                "inner_radius",
                inner,
                Quantity::Length,
                "a finite radius >= 0",
            ));
        }
        if !(outer.is_finite() && outer > inner) {
            return Err(MediumError::value(
                "outer_radius",
                outer,
                Quantity::Length,
                format!("a finite radius greater than inner_radius ({inner} cm)"),
            ));
        }
        match self.acceptance {
            Acceptance::HalfAngleDeg(angle) => {
                if !(angle > 0.0 && angle <= 90.0) {
                    return Err(MediumError::value(
                        "acceptance_half_angle_deg",
                        angle,
                        Quantity::AngleDeg,
                        "a half-angle in (0, 90] degrees",
                    ));
                }
            }
            Acceptance::NumericalAperture(aperture) => {
                if !(aperture > 0.0 && aperture < ambient_index) {
                    return Err(MediumError::value(
                        "numerical_aperture",
                        aperture,
                        Quantity::Dimensionless,
                        format!(
                            "a numerical aperture n sin(θ) in (0, {ambient_index}), below the \
                             ambient index on the {} face",
                            self.face.name()
                        ),
                    ));
                }
            }
        }
        Ok(())
    }

    /// Half-angle of the acceptance cone outside the slab, degrees, for the ambient index
    /// `ambient_index` on its face: θ = asin(NA / n) for a numerical aperture.
    pub fn half_angle_deg(&self, ambient_index: f64) -> f64 {
        match self.acceptance {
            Acceptance::HalfAngleDeg(angle) => angle,
            Acceptance::NumericalAperture(aperture) => {
                (aperture / ambient_index).asin().to_degrees()
            }
        }
    }

    /// The smallest |cos| of the exit direction against the face normal that the detector
    /// accepts, for the ambient index on its face (0 for a 90° half-angle).
    pub fn min_exit_cosine(&self, ambient_index: f64) -> f64 {
        let angle = self.half_angle_deg(ambient_index);
        if angle >= 90.0 {
            0.0
        } else {
            angle.to_radians().cos()
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ring(acceptance: Acceptance) -> Detector {
        Detector {
            name: "ring".into(),
            face: Face::Top,
            inner_radius_cm: 0.1,
            outer_radius_cm: 0.2,
            acceptance,
        }
    }

    #[test]
    fn numerical_aperture_is_n_sin_theta() {
        // NA 0.5 in water-like n = 1.33: θ = asin(0.5/1.33).
        let detector = ring(Acceptance::NumericalAperture(0.5));
        let expected = (0.5f64 / 1.33).asin();
        assert!((detector.half_angle_deg(1.33).to_radians() - expected).abs() < 1e-15);
        assert!((detector.min_exit_cosine(1.33) - expected.cos()).abs() < 1e-15);
        assert!(detector.check(1.33).is_ok());
        assert!(detector.check(1.0).is_ok());
        let too_wide = ring(Acceptance::NumericalAperture(1.0));
        assert!(too_wide.check(1.0).is_err());
    }

    #[test]
    fn bad_rings_are_refused() {
        let mut detector = ring(Acceptance::HalfAngleDeg(90.0));
        assert!(detector.check(1.0).is_ok());
        assert_eq!(detector.min_exit_cosine(1.0), 0.0);
        detector.inner_radius_cm = 0.2;
        let error = detector.check(1.0).unwrap_err().to_string();
        assert!(error.contains("outer_radius"), "{error}");
        detector.inner_radius_cm = f64::NAN;
        assert!(detector.check(1.0).is_err());
        let detector = ring(Acceptance::HalfAngleDeg(0.0));
        assert!(detector.check(1.0).is_err());
    }
}
