//! Per-photon outcomes and their mergeable summary.
//!
//! A [`Tally`] holds, for each way a photon can end (escaped a sphere, reflected or
//! transmitted by a slab, absorbed, censored by the step cap), the count and the moments and
//! log-binned histograms of its time in the medium and its number of scatterings. Memory does
//! not grow with the number of photons, and merging two tallies is exact and
//! order-independent, so a run gives the same bits whatever the thread count or shard split.

mod exact_sum;
mod histogram;
mod moments;
mod resolved;

pub use exact_sum::ExactSum;
pub use histogram::{LogHistogram, LogLayout};
pub use moments::Moments;
pub use resolved::{ResolvedLayout, ResolvedTally};

use serde::{Deserialize, Serialize};

/// How one photon's walk ended.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Outcome {
    /// Left a sphere through its surface.
    Escaped,
    /// Left a slab through its top face (the face the beam enters) after entering it:
    /// diffuse reflection.
    Reflected,
    /// Reflected by the top face of a slab before entering it (Fresnel reflection of the
    /// incident beam or diffuse illumination).
    Specular,
    /// Left a slab through its bottom face.
    Transmitted,
    /// Absorbed inside the medium.
    Absorbed,
    /// Stopped by the per-photon step cap; its fate is unknown.
    Censored,
}

/// What the walker reports about one photon.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PhotonRecord {
    /// How the walk ended.
    pub outcome: Outcome,
    /// Time spent in the medium, s.
    pub time_s: f64,
    /// Number of scatterings (f64: can exceed 2^64 in accelerated stellar walks).
    pub scatterings: f64,
    /// Diffusion jumps taken (accelerated walker; 0 for direct walks).
    pub jumps: f64,
    /// Direct free-flight steps taken.
    pub direct_steps: f64,
    /// Part of `time_s` covered by diffusion jumps, s.
    pub jump_time_s: f64,
    /// Final position, cm (where it left or was absorbed).
    pub position_cm: [f64; 3],
    /// Final direction of flight (outside the medium for photons that left it).
    pub direction: [f64; 3],
    /// Layer holding the photon at the end (for absorbed photons: where it was absorbed).
    pub layer: usize,
}

/// Time and scattering statistics of the photons that ended one way.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PathStats {
    /// Time in the medium, s.
    pub time_s: Moments,
    /// Number of scatterings.
    pub scatterings: Moments,
    /// Histogram of time in the medium, s.
    pub time_histogram: LogHistogram,
    /// Histogram of the number of scatterings.
    pub scattering_histogram: LogHistogram,
}

impl Default for PathStats {
    fn default() -> Self {
        Self {
            time_s: Moments::new(),
            scatterings: Moments::new(),
            time_histogram: LogHistogram::new(LogLayout::TIME_S),
            scattering_histogram: LogHistogram::new(LogLayout::SCATTERINGS),
        }
    }
}

impl PathStats {
    /// Number of photons counted.
    pub fn count(&self) -> u64 {
        self.time_s.count()
    }

    fn add(&mut self, time_s: f64, scatterings: f64) {
        self.time_s.add(time_s);
        self.scatterings.add(scatterings);
        self.time_histogram.add(time_s);
        self.scattering_histogram.add(scatterings);
    }

    /// Adds another set of statistics.
    pub fn merge(&mut self, other: &PathStats) {
        self.time_s.merge(&other.time_s);
        self.scatterings.merge(&other.scatterings);
        self.time_histogram.merge(&other.time_histogram);
        self.scattering_histogram.merge(&other.scattering_histogram);
    }

    fn compatible(&self, other: &PathStats) -> bool {
        self.time_histogram.compatible(&other.time_histogram)
            && self
                .scattering_histogram
                .compatible(&other.scattering_histogram)
    }

    fn repair_after_load(&mut self) -> bool {
        self.time_histogram.repair_after_load() && self.scattering_histogram.repair_after_load()
    }
}

/// Walk-cost counters summed over photons (f64: exact below 2^53 per photon batch).
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct WalkCounters {
    /// Total diffusion jumps.
    pub jumps: ExactSum,
    /// Total direct free-flight steps.
    pub direct_steps: ExactSum,
    /// Total time covered by jumps, s.
    pub jump_time_s: ExactSum,
    /// Total time of all photons, s.
    pub total_time_s: ExactSum,
}

/// The mergeable summary of a set of photons.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Tally {
    launched: u64,
    escaped: PathStats,
    reflected: PathStats,
    #[serde(default)]
    specular: PathStats,
    transmitted: PathStats,
    absorbed: PathStats,
    censored: PathStats,
    walk: WalkCounters,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    resolved: Option<ResolvedTally>,
}

impl Tally {
    /// An empty tally.
    pub fn new() -> Self {
        Self::default()
    }

    /// An empty tally that also keeps resolved slab counts on `layout` (if given).
    pub fn with_resolved(layout: Option<ResolvedLayout>) -> Self {
        Self {
            resolved: layout.map(ResolvedTally::new),
            ..Self::default()
        }
    }

    /// Resolved slab counts, if this tally keeps them.
    pub fn resolved(&self) -> Option<&ResolvedTally> {
        self.resolved.as_ref()
    }

    /// Counts one photon.
    pub fn record(&mut self, record: &PhotonRecord) {
        self.launched += 1;
        if let Some(resolved) = &mut self.resolved {
            resolved.record(record);
        }
        let stats = match record.outcome {
            Outcome::Escaped => &mut self.escaped,
            Outcome::Reflected => &mut self.reflected,
            Outcome::Specular => &mut self.specular,
            Outcome::Transmitted => &mut self.transmitted,
            Outcome::Absorbed => &mut self.absorbed,
            Outcome::Censored => &mut self.censored,
        };
        stats.add(record.time_s, record.scatterings);
        self.walk.jumps.add(record.jumps);
        self.walk.direct_steps.add(record.direct_steps);
        self.walk.jump_time_s.add(record.jump_time_s);
        self.walk.total_time_s.add(record.time_s);
    }

    /// Adds another tally (exact; any order gives the same state).
    pub fn merge(&mut self, other: &Tally) {
        self.launched += other.launched;
        self.escaped.merge(&other.escaped);
        self.reflected.merge(&other.reflected);
        self.specular.merge(&other.specular);
        self.transmitted.merge(&other.transmitted);
        self.absorbed.merge(&other.absorbed);
        self.censored.merge(&other.censored);
        self.walk.jumps.merge(&other.walk.jumps);
        self.walk.direct_steps.merge(&other.walk.direct_steps);
        self.walk.jump_time_s.merge(&other.walk.jump_time_s);
        self.walk.total_time_s.merge(&other.walk.total_time_s);
        match (&mut self.resolved, &other.resolved) {
            (Some(mine), Some(theirs)) => mine.merge(theirs),
            (None, Some(theirs)) => self.resolved = Some(theirs.clone()),
            _ => {}
        }
    }

    /// Whether `other` was made with the same histogram layouts (safe to merge).
    pub fn compatible(&self, other: &Tally) -> bool {
        let resolved = match (&self.resolved, &other.resolved) {
            (Some(a), Some(b)) => a.compatible(b),
            (None, None) => true,
            _ => false,
        };
        resolved
            && self
                .path_stats()
                .iter()
                .zip(other.path_stats())
                .all(|(a, b)| a.compatible(b))
    }

    /// Restores internal invariants after deserialising an untrusted tally.
    /// Returns `false` if the data are inconsistent.
    pub fn repair_after_load(&mut self) -> bool {
        let mut ok = true;
        for stats in [
            &mut self.escaped,
            &mut self.reflected,
            &mut self.specular,
            &mut self.transmitted,
            &mut self.absorbed,
            &mut self.censored,
        ] {
            ok &= stats.repair_after_load();
        }
        let counted: u64 = self.path_stats().iter().map(|s| s.count()).sum();
        ok && counted == self.launched
    }

    fn path_stats(&self) -> [&PathStats; 6] {
        [
            &self.escaped,
            &self.reflected,
            &self.specular,
            &self.transmitted,
            &self.absorbed,
            &self.censored,
        ]
    }

    /// Photons launched.
    pub fn launched(&self) -> u64 {
        self.launched
    }

    /// Photons that left a sphere.
    pub fn escaped(&self) -> &PathStats {
        &self.escaped
    }

    /// Photons that left a slab through the top face.
    pub fn reflected(&self) -> &PathStats {
        &self.reflected
    }

    /// Photons reflected by the top face before entering (specular reflection).
    pub fn specular(&self) -> &PathStats {
        &self.specular
    }

    /// Photons that left a slab through the bottom face.
    pub fn transmitted(&self) -> &PathStats {
        &self.transmitted
    }

    /// Photons absorbed.
    pub fn absorbed(&self) -> &PathStats {
        &self.absorbed
    }

    /// Photons stopped by the step cap.
    pub fn censored(&self) -> &PathStats {
        &self.censored
    }

    /// Every photon that left the medium, whichever way (sphere surface or either slab face).
    pub fn all_escapes(&self) -> PathStats {
        let mut all = self.escaped.clone();
        all.merge(&self.reflected);
        all.merge(&self.transmitted);
        all
    }

    /// Walk-cost counters.
    pub fn walk(&self) -> &WalkCounters {
        &self.walk
    }

    /// Fraction of launched photons counted in `stats`, with its binomial standard error.
    pub fn fraction(&self, stats: &PathStats) -> (f64, f64) {
        if self.launched == 0 {
            return (0.0, 0.0);
        }
        let n = self.launched as f64;
        let p = stats.count() as f64 / n;
        (p, (p * (1.0 - p) / n).sqrt())
    }
}
