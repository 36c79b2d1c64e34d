//! Optical tallies of a slab lit from outside: the collimated (unscattered) transmittance
//! and what each detector on the faces sees. Each is a [`PathStats`] (count, weights, time
//! of flight), so it merges exactly like the outcomes it is part of.

use serde::{Deserialize, Serialize};

use super::error::TallyError;
use super::path_stats::{PathStats, PathStatsRepr};
use super::weight::Weight;
use super::{Outcome, PhotonRecord};
use crate::medium::{Face, Medium, Source};

/// A detector as the tally applies it: a ring on a face, in cm, and the smallest exit
/// cosine it accepts (from its half-angle or numerical aperture and the ambient index).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DetectorWindow {
    /// The face.
    pub face: Face,
    /// Inner radius around the beam axis, cm.
    pub inner_radius_cm: f64,
    /// Outer radius, cm.
    pub outer_radius_cm: f64,
    /// Smallest |cos| of the exit direction against the face normal (outside the slab).
    pub min_exit_cosine: f64,
}

impl DetectorWindow {
    /// Whether a photon that ended as `record` enters this detector: it left through the
    /// detector's face (top: diffusely or specularly reflected; bottom: transmitted), at a
    /// distance from the axis in [inner, outer), within the acceptance cone.
    #[inline]
    pub fn accepts(&self, record: &PhotonRecord) -> bool {
        let face_matches = match self.face {
            Face::Top => matches!(record.outcome, Outcome::Reflected | Outcome::Specular),
            Face::Bottom => record.outcome == Outcome::Transmitted,
        };
        if !face_matches {
            return false;
        }
        let [x, y, _] = record.position_cm;
        let rho = x.hypot(y);
        rho >= self.inner_radius_cm
            && rho < self.outer_radius_cm
            && record.direction[2].abs() >= self.min_exit_cosine
    }

    fn is_sane(&self) -> bool {
        self.inner_radius_cm.is_finite()
            && self.inner_radius_cm >= 0.0
            && self.outer_radius_cm.is_finite()
            && self.outer_radius_cm > self.inner_radius_cm
            && (0.0..=1.0).contains(&self.min_exit_cosine)
    }
}

/// The detector windows of `medium` (empty for a medium without detectors).
pub fn detector_windows(medium: &Medium) -> Vec<DetectorWindow> {
    medium
        .detectors()
        .iter()
        .map(|detector| {
            let ambient = match detector.face {
                Face::Top => medium.ambient_above(),
                Face::Bottom => medium.ambient_below(),
            };
            DetectorWindow {
                face: detector.face,
                inner_radius_cm: detector.inner_radius_cm,
                outer_radius_cm: detector.outer_radius_cm,
                min_exit_cosine: detector.min_exit_cosine(ambient),
            }
        })
        .collect()
}

/// Collimated transmittance and detector counts (see the module docs).
#[derive(Debug, Clone, PartialEq)]
pub struct OpticsTally {
    windows: Vec<DetectorWindow>,
    collimated_transmitted: PathStats,
    detected: Vec<PathStats>,
}

impl OpticsTally {
    /// Empty counts for `windows`.
    pub fn new(windows: Vec<DetectorWindow>) -> Self {
        Self {
            detected: vec![PathStats::new(); windows.len()],
            windows,
            collimated_transmitted: PathStats::new(),
        }
    }

    /// The optical tally a run on `medium` keeps: for a slab lit by a beam, or a slab with
    /// detectors; None otherwise.
    pub fn for_medium(medium: &Medium) -> Option<Self> {
        let beam = matches!(medium.source(), Source::Beam { .. });
        (beam || !medium.detectors().is_empty()).then(|| Self::new(detector_windows(medium)))
    }

    /// The detector windows, in the model's order.
    pub fn windows(&self) -> &[DetectorWindow] {
        &self.windows
    }

    /// Photons transmitted without a single scattering (after any number of reflections
    /// at the faces).
    pub fn collimated_transmitted(&self) -> &PathStats {
        &self.collimated_transmitted
    }

    /// What each detector saw, in the order of [`Self::windows`].
    pub fn detected(&self) -> &[PathStats] {
        &self.detected
    }

    /// Counts one photon of weight `weight`.
    #[inline]
    pub(crate) fn record(&mut self, record: &PhotonRecord, weight: Weight) {
        if record.outcome == Outcome::Transmitted && record.scatterings == 0.0 {
            self.collimated_transmitted
                .add(record.time_s, record.scatterings, weight);
        }
        for (window, stats) in self.windows.iter().zip(self.detected.iter_mut()) {
            if window.accepts(record) {
                stats.add(record.time_s, record.scatterings, weight);
            }
        }
    }

    /// Keeps weights from now on.
    pub(crate) fn make_weighted(&mut self) {
        self.collimated_transmitted.make_weighted();
        self.detected.iter_mut().for_each(PathStats::make_weighted);
    }

    /// Whether `other` has the same detectors (and so can be merged).
    pub fn compatible(&self, other: &OpticsTally) -> bool {
        self.windows == other.windows
    }

    /// Adds counts made with the same detectors (see [`OpticsTally::compatible`]).
    pub(crate) fn merge(&mut self, other: &OpticsTally) {
        self.collimated_transmitted
            .merge(&other.collimated_transmitted);
        for (mine, theirs) in self.detected.iter_mut().zip(&other.detected) {
            mine.merge(theirs);
        }
    }

    /// The parts to check against the tally's outcomes: `(field, stats, outcomes it is
    /// part of)`.
    pub(crate) fn parts(&self) -> Vec<(String, &PathStats, &'static [Outcome])> {
        let mut parts: Vec<(String, &PathStats, &'static [Outcome])> = vec![(
            "collimated_transmitted".to_string(),
            &self.collimated_transmitted,
            &[Outcome::Transmitted],
        )];
        for (index, (window, stats)) in self.windows.iter().zip(&self.detected).enumerate() {
            let outcomes: &'static [Outcome] = match window.face {
                Face::Top => &[Outcome::Reflected, Outcome::Specular],
                Face::Bottom => &[Outcome::Transmitted],
            };
            parts.push((format!("detected[{index}]"), stats, outcomes));
        }
        parts
    }

    /// Rebuilds the counts from their serialised form: sane windows, one series per
    /// window, each part sound.
    pub(crate) fn from_repr(repr: OpticsRepr) -> Result<Self, TallyError> {
        if let Some(index) = repr.windows.iter().position(|w| !w.is_sane()) {
            return Err(TallyError::OutOfRange {
                field: format!("windows[{index}]"),
                value: format!("{:?}", repr.windows[index]),
                allowed: "finite radii 0 <= inner < outer and a cosine in [0, 1]".into(),
            });
        }
        if repr.detected.len() != repr.windows.len() {
            return Err(TallyError::mismatch(
                "detected",
                "detector series, against the detector windows",
                repr.detected.len(),
                repr.windows.len(),
            ));
        }
        let collimated_transmitted = PathStats::from_repr(repr.collimated_transmitted)
            .map_err(|e| e.within("collimated_transmitted"))?;
        let detected = repr
            .detected
            .into_iter()
            .enumerate()
            .map(|(index, stats)| {
                PathStats::from_repr(stats).map_err(|e| e.within(&format!("detected[{index}]")))
            })
            .collect::<Result<Vec<_>, _>>()?;
        Ok(Self {
            windows: repr.windows,
            collimated_transmitted,
            detected,
        })
    }
}

/// Serialised form of an [`OpticsTally`], as read.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct OpticsRepr {
    windows: Vec<DetectorWindow>,
    collimated_transmitted: PathStatsRepr,
    detected: Vec<PathStatsRepr>,
}

impl Serialize for OpticsTally {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        #[derive(Serialize)]
        struct Out<'a> {
            windows: &'a [DetectorWindow],
            collimated_transmitted: &'a PathStats,
            detected: &'a [PathStats],
        }
        Out {
            windows: &self.windows,
            collimated_transmitted: &self.collimated_transmitted,
            detected: &self.detected,
        }
        .serialize(serializer)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn record(outcome: Outcome, position: [f64; 3], direction: [f64; 3]) -> PhotonRecord {
        PhotonRecord {
            outcome,
            time_s: 1e-12,
            scatterings: 3.0,
            jumps: 0.0,
            direct_steps: 4.0,
            jump_time_s: 0.0,
            position_cm: position,
            direction,
            layer: 0,
            weight: 1.0,
        }
    }

    #[test]
    fn a_ring_sees_its_face_radii_and_cone_only() {
        let ring = DetectorWindow {
            face: Face::Top,
            inner_radius_cm: 1.0,
            outer_radius_cm: 2.0,
            min_exit_cosine: 0.9,
        };
        let up = [0.0, 0.0, -1.0];
        assert!(ring.accepts(&record(Outcome::Reflected, [0.6, 0.8, 0.0], up)));
        assert!(ring.accepts(&record(Outcome::Specular, [1.5, 0.0, 0.0], up)));
        // Outer edge excluded, inner edge included (ρ = 1 exactly).
        assert!(!ring.accepts(&record(Outcome::Reflected, [2.0, 0.0, 0.0], up)));
        assert!(!ring.accepts(&record(Outcome::Reflected, [0.5, 0.0, 0.0], up)));
        // Wrong face, and outside the cone (cos 0.8 < 0.9).
        assert!(!ring.accepts(&record(Outcome::Transmitted, [1.5, 0.0, 1.0], up)));
        assert!(!ring.accepts(&record(
            Outcome::Reflected,
            [1.5, 0.0, 0.0],
            [0.6, 0.0, -0.8]
        )));
    }

    #[test]
    fn optics_round_trip_and_refuse_damage() {
        let window = DetectorWindow {
            face: Face::Bottom,
            inner_radius_cm: 0.0,
            outer_radius_cm: 1.0,
            min_exit_cosine: 0.0,
        };
        let mut tally = OpticsTally::new(vec![window]);
        let mut unscattered = record(Outcome::Transmitted, [0.1, 0.0, 1.0], [0.0, 0.0, 1.0]);
        unscattered.scatterings = 0.0;
        tally.record(&unscattered, Weight::ONE);
        tally.record(
            &record(Outcome::Transmitted, [0.5, 0.0, 1.0], [0.0, 0.6, 0.8]),
            Weight::new(0.5).unwrap(),
        );
        assert_eq!(tally.collimated_transmitted().count(), 1);
        assert_eq!(tally.detected()[0].count(), 2);
        assert_eq!(tally.detected()[0].weight(), 1.5);
        let value = serde_json::to_value(&tally).unwrap();
        let repr: OpticsRepr = serde_json::from_value(value.clone()).unwrap();
        assert_eq!(OpticsTally::from_repr(repr).unwrap(), tally);
        let mut bad = value;
        bad["windows"][0]["outer_radius_cm"] = serde_json::json!(-1.0);
        let repr: OpticsRepr = serde_json::from_value(bad).unwrap();
        let error = OpticsTally::from_repr(repr).unwrap_err().to_string();
        assert!(error.contains("windows[0]"), "{error}");
    }
}
