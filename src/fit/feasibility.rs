//! Measurements no absorption and scattering coefficients of the layer can produce, found
//! before any Monte Carlo from the closed forms of [`super::ballistic`]:
//!
//! * a total transmittance above that of the sample with neither absorption nor
//!   scattering (only the Fresnel losses of the interfaces), for a normal beam: scattering
//!   turns light away from the forward direction and lets the faces trap it, so no sample
//!   transmits more than the clear one;
//! * a total reflectance below the specular reflection of the front face;
//! * for a normal beam, a reflectance below what a non-scattering sample with the same
//!   total transmittance reflects (the Fresnel reflections of the unscattered beam):
//!   scattering only adds light coming back;
//! * a collimated transmittance above that of the clear sample.
//!
//! A value counts as outside only when it is outside by more than twice its stated
//! uncertainty.

use super::ballistic::{Ballistic, unscattered_with};
use super::error::FitError;
use super::measurement::Measurement;
use super::sample::Sample;
use crate::medium::Source;

/// The unscattered light with the fitted layer's extinction set to `extinction_per_cm`.
fn ballistic(sample: &Sample, extinction_per_cm: f64) -> Ballistic {
    let medium = sample.medium();
    unscattered_with(medium, |index| {
        if index == sample.layer() {
            extinction_per_cm
        } else {
            medium.layers()[index].extinction_per_cm()
        }
    })
    .expect("a sample is a slab lit by a beam")
}

/// Checks the measurements against the limits above.
///
/// # Errors
/// [`FitError::NoSolution`] with the limit that is broken.
pub fn check_reachable(sample: &Sample, measurement: &Measurement) -> Result<(), FitError> {
    let clear = ballistic(sample, 0.0);
    let normal = matches!(sample.medium().source(), Source::Beam { polar_angle_deg, .. } if polar_angle_deg == 0.0);
    let r = measurement.reflectance;
    let total_t = measurement.total_transmittance();
    let sigma_t = (measurement.transmittance.uncertainty.powi(2)
        + measurement
            .collimated_transmittance
            .map_or(0.0, |c| c.uncertainty.powi(2)))
    .sqrt();
    if normal && total_t > clear.transmittance + 2.0 * sigma_t {
        return Err(FitError::NoSolution(format!(
            "the total transmittance {total_t:.6} exceeds {:.6}, what the sample transmits \
             with neither absorption nor scattering (only the Fresnel losses of its \
             interfaces); no coefficients >= 0 reach it",
            clear.transmittance
        )));
    }
    if measurement.specular_included && r.value < clear.specular - 2.0 * r.uncertainty {
        return Err(FitError::NoSolution(format!(
            "the reflectance {:.6} is below the specular reflection of the front face \
             ({:.6}), which is part of every total reflectance (was the specular part \
             excluded? then pass --exclude-specular)",
            r.value, clear.specular
        )));
    }
    if let Some(collimated) = measurement.collimated_transmittance
        && collimated.value > clear.transmittance + 2.0 * collimated.uncertainty
    {
        return Err(FitError::NoSolution(format!(
            "the collimated transmittance {:.6} exceeds {:.6}, that of the sample with \
             neither absorption nor scattering",
            collimated.value, clear.transmittance
        )));
    }
    if normal && total_t < clear.transmittance {
        let d = sample.thickness_cm();
        let (mut lo, mut hi) = ((1e-12 / d).ln(), (1e3 / d).ln());
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if ballistic(sample, mid.exp()).transmittance > total_t {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        let absorber = ballistic(sample, (0.5 * (lo + hi)).exp());
        let floor = if measurement.specular_included {
            absorber.reflectance
        } else {
            absorber.reflectance - absorber.specular
        };
        if r.value < floor - 2.0 * r.uncertainty - 1e-12 {
            return Err(FitError::NoSolution(format!(
                "the reflectance {:.6} is below {floor:.6}, what a sample that only absorbs \
                 reflects at the same total transmittance {total_t:.6} (the Fresnel \
                 reflections of the unscattered beam); scattering only adds reflected light",
                r.value
            )));
        }
    }
    Ok(())
}
