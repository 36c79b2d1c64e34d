//! What was measured: total (or diffuse) reflectance, transmittance and, optionally, the
//! collimated transmittance, each with its standard uncertainty, and the checks every
//! measurement must pass before a fit starts.

use serde::Serialize;

use super::error::FitError;

/// One measured fraction of the incident light and its standard uncertainty (1σ, absolute).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Measured {
    /// The measured fraction, in [0, 1].
    pub value: f64,
    /// Its standard uncertainty (1σ, same units), ≥ 0; 0 when not known.
    pub uncertainty: f64,
}

impl Measured {
    /// A value with uncertainty `uncertainty`.
    pub fn new(value: f64, uncertainty: f64) -> Self {
        Self { value, uncertainty }
    }
}

/// The measurements a fit matches.
///
/// * `reflectance`: the total reflectance, the specular reflection of the front face
///   included (the integrating-sphere convention), unless `specular_included` is false;
///   then the diffuse reflectance (everything reflected but the front-face reflection).
/// * `transmittance`: the total transmittance (unscattered light included) when
///   `collimated_transmittance` is `None`; the diffuse transmittance (light scattered at
///   least once) when it is given.
/// * `collimated_transmittance`: the unscattered transmittance, if measured.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Measurement {
    /// Reflectance (see the type's docs).
    pub reflectance: Measured,
    /// Transmittance (see the type's docs).
    pub transmittance: Measured,
    /// Collimated (unscattered) transmittance, if measured.
    pub collimated_transmittance: Option<Measured>,
    /// Whether `reflectance` includes the specular reflection of the front face.
    pub specular_included: bool,
}

impl Measurement {
    /// The measured values in the order the fit uses: R, T and, if given, Tc.
    pub fn values(&self) -> Vec<Measured> {
        let mut values = vec![self.reflectance, self.transmittance];
        values.extend(self.collimated_transmittance);
        values
    }

    /// Names of the measured values, in the order of [`Measurement::values`].
    pub fn names(&self) -> Vec<&'static str> {
        let mut names = vec!["reflectance", "transmittance"];
        if self.collimated_transmittance.is_some() {
            names.push("collimated_transmittance");
        }
        names
    }

    /// Total transmittance: T, plus Tc when T is the diffuse part only.
    pub fn total_transmittance(&self) -> f64 {
        self.transmittance.value + self.collimated_transmittance.map_or(0.0, |c| c.value)
    }

    /// Checks every value: fractions in [0, 1], uncertainties finite and ≥ 0, everything
    /// measured adding up to at most 1 (energy conservation), and a collimated
    /// transmittance > 0 (zero would need an infinite extinction).
    ///
    /// # Errors
    /// [`FitError::Measurement`] naming the value, or [`FitError::NoSolution`] when the sum
    /// exceeds 1.
    pub fn check(&self) -> Result<(), FitError> {
        check_fraction("reflectance", self.reflectance)?;
        check_fraction("transmittance", self.transmittance)?;
        if let Some(collimated) = self.collimated_transmittance {
            check_fraction("collimated_transmittance", collimated)?;
            if collimated.value <= 0.0 {
                return Err(FitError::Measurement {
                    field: "collimated_transmittance",
                    value: collimated.value,
                    expected: "a fraction > 0 (a collimated transmittance of 0 fixes no \
                               extinction; leave it out)"
                        .into(),
                });
            }
        }
        let sum = self.reflectance.value + self.total_transmittance();
        if sum > 1.0 {
            let terms = if self.collimated_transmittance.is_some() {
                "R + T + Tc"
            } else {
                "R + T"
            };
            return Err(FitError::NoSolution(format!(
                "{terms} = {sum:.6} exceeds 1: a passive sample cannot send back and through \
                 more light than falls on it (check the calibration of the measurements)"
            )));
        }
        Ok(())
    }
}

/// Checks one measured fraction and its uncertainty.
fn check_fraction(field: &'static str, measured: Measured) -> Result<(), FitError> {
    if !(0.0..=1.0).contains(&measured.value) {
        return Err(FitError::Measurement {
            field,
            value: measured.value,
            expected: "a fraction of the incident light between 0 and 1".into(),
        });
    }
    if !(measured.uncertainty.is_finite() && measured.uncertainty >= 0.0) {
        return Err(FitError::Measurement {
            field: match field {
                "reflectance" => "reflectance uncertainty",
                "transmittance" => "transmittance uncertainty",
                _ => "collimated_transmittance uncertainty",
            },
            value: measured.uncertainty,
            expected: "a finite standard uncertainty >= 0".into(),
        });
    }
    Ok(())
}
