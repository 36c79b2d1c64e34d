//! What each detector on a slab's faces saw: the detected fraction of the launched light
//! with its standard error, and the time of flight of the detected photons.

use serde::Serialize;

use crate::medium::{Face, Medium};
use crate::tally::Tally;

use super::run::{DistributionSummary, TimeSummary};

/// One detector's reading.
#[derive(Debug, Clone, Serialize)]
pub struct DetectorReading {
    /// The detector's label from the model (may be empty).
    pub name: String,
    /// "top" (reflected light, specular reflection included) or "bottom" (transmitted).
    pub face: Face,
    /// Inner radius around the beam axis, cm.
    pub inner_radius_cm: f64,
    /// Outer radius, cm.
    pub outer_radius_cm: f64,
    /// Half-angle of the acceptance cone outside the slab, degrees (from the numerical
    /// aperture and the ambient index where one was given).
    pub acceptance_half_angle_deg: f64,
    /// The numerical aperture, where the model gave one.
    pub numerical_aperture: Option<f64>,
    /// Detected fraction of the launched light (weights summed over launched photons).
    pub fraction: Option<f64>,
    /// Its standard error.
    pub stderr: Option<f64>,
    /// Time of flight of the detected photons (from launch to the face), s.
    pub time_of_flight: TimeSummary,
}

/// The readings of `medium`'s detectors from `tally` (empty for a medium without
/// detectors, or a tally that kept no optical counts).
pub fn detector_readings(medium: &Medium, tally: &Tally) -> Vec<DetectorReading> {
    let Some(optics) = tally.optics() else {
        return Vec::new();
    };
    medium
        .detectors()
        .iter()
        .zip(optics.detected())
        .map(|(detector, stats)| {
            let ambient = match detector.face {
                Face::Top => medium.ambient_above(),
                Face::Bottom => medium.ambient_below(),
            };
            let estimate = tally.fraction(stats);
            DetectorReading {
                name: detector.name.clone(),
                face: detector.face,
                inner_radius_cm: detector.inner_radius_cm,
                outer_radius_cm: detector.outer_radius_cm,
                acceptance_half_angle_deg: detector.half_angle_deg(ambient),
                numerical_aperture: match detector.acceptance {
                    crate::medium::detector::Acceptance::NumericalAperture(na) => Some(na),
                    crate::medium::detector::Acceptance::HalfAngleDeg(_) => None,
                },
                fraction: estimate.map(|e| e.value),
                stderr: estimate.map(|e| e.stderr),
                time_of_flight: DistributionSummary::of_time(stats).seconds(),
            }
        })
        .collect()
}
