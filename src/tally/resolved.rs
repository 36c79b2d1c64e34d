//! Resolved slab tallies (opt-in): time of flight of reflected and transmitted light,
//! absorption by layer and by depth, emergent angular distribution, and the radial
//! distribution of reflectance around a pencil beam's entry point. All counts are integers
//! on fixed bins, so they merge exactly.

use serde::{Deserialize, Serialize};

use super::{Outcome, PhotonRecord};

/// Bins of a [`ResolvedTally`].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ResolvedLayout {
    /// Width of a time-of-flight bin, s (bins start at 0).
    pub time_bin_s: f64,
    /// Number of time-of-flight bins (later times are counted apart).
    pub time_bins: usize,
    /// Width of a depth bin, cm (bins start at the top face).
    pub depth_bin_cm: f64,
    /// Number of depth bins (covering the slab).
    pub depth_bins: usize,
    /// Number of bins in the exit cosine |μ| on [0, 1].
    pub cosine_bins: usize,
    /// Width of a radial bin around the entry point, cm.
    pub radial_bin_cm: f64,
    /// Number of radial bins (farther exits are counted apart).
    pub radial_bins: usize,
    /// Number of layers of the medium.
    pub layers: usize,
}

impl ResolvedLayout {
    /// Whether the layout is usable: positive finite widths, at least one bin of each kind,
    /// and no more than 10⁷ bins of any kind (a guard against damaged files).
    pub fn is_sane(&self) -> bool {
        let width = |w: f64| w.is_finite() && w > 0.0;
        let count = |n: usize| (1..=10_000_000).contains(&n);
        width(self.time_bin_s)
            && width(self.depth_bin_cm)
            && width(self.radial_bin_cm)
            && count(self.time_bins)
            && count(self.depth_bins)
            && count(self.cosine_bins)
            && count(self.radial_bins)
            && count(self.layers)
    }
}

/// Resolved counts of a slab run (see the module docs).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ResolvedTally {
    /// The bins.
    pub layout: ResolvedLayout,
    /// Reflected photons per time-of-flight bin; the last element counts later times.
    pub reflected_by_time: Vec<u64>,
    /// Transmitted photons per time-of-flight bin; the last element counts later times.
    pub transmitted_by_time: Vec<u64>,
    /// Absorbed photons per layer.
    pub absorbed_by_layer: Vec<u64>,
    /// Absorbed photons per depth bin.
    pub absorbed_by_depth: Vec<u64>,
    /// Reflected photons per bin of exit cosine |μ| (outside the slab).
    pub reflected_by_cosine: Vec<u64>,
    /// Transmitted photons per bin of exit cosine |μ| (outside the slab).
    pub transmitted_by_cosine: Vec<u64>,
    /// Reflected photons per bin of distance from the entry point; the last element counts
    /// farther exits.
    pub reflected_by_radius: Vec<u64>,
}

fn bin(value: f64, width: f64, bins: usize) -> usize {
    if value.is_nan() || value < 0.0 {
        return 0;
    }
    ((value / width) as usize).min(bins)
}

impl ResolvedTally {
    /// Empty counts on `layout`.
    pub fn new(layout: ResolvedLayout) -> Self {
        Self {
            layout,
            reflected_by_time: vec![0; layout.time_bins + 1],
            transmitted_by_time: vec![0; layout.time_bins + 1],
            absorbed_by_layer: vec![0; layout.layers],
            absorbed_by_depth: vec![0; layout.depth_bins],
            reflected_by_cosine: vec![0; layout.cosine_bins],
            transmitted_by_cosine: vec![0; layout.cosine_bins],
            reflected_by_radius: vec![0; layout.radial_bins + 1],
        }
    }

    /// Counts one photon.
    pub fn record(&mut self, record: &PhotonRecord) {
        let layout = &self.layout;
        let cosine_bin = || {
            let mu = record.direction[2].abs();
            ((mu * layout.cosine_bins as f64) as usize).min(layout.cosine_bins - 1)
        };
        match record.outcome {
            Outcome::Reflected => {
                self.reflected_by_time[bin(record.time_s, layout.time_bin_s, layout.time_bins)] +=
                    1;
                self.reflected_by_cosine[cosine_bin()] += 1;
                let [x, y, _] = record.position_cm;
                let radius = x.hypot(y);
                self.reflected_by_radius[bin(radius, layout.radial_bin_cm, layout.radial_bins)] +=
                    1;
            }
            Outcome::Transmitted => {
                self.transmitted_by_time
                    [bin(record.time_s, layout.time_bin_s, layout.time_bins)] += 1;
                self.transmitted_by_cosine[cosine_bin()] += 1;
            }
            Outcome::Absorbed => {
                if let Some(count) = self.absorbed_by_layer.get_mut(record.layer) {
                    *count += 1;
                }
                let depth = bin(
                    record.position_cm[2],
                    layout.depth_bin_cm,
                    layout.depth_bins - 1,
                );
                self.absorbed_by_depth[depth] += 1;
            }
            Outcome::Escaped | Outcome::Specular | Outcome::Censored => {}
        }
    }

    /// Adds counts made on the same layout.
    pub fn merge(&mut self, other: &ResolvedTally) {
        fn add(mine: &mut [u64], theirs: &[u64]) {
            for (a, b) in mine.iter_mut().zip(theirs) {
                *a += b;
            }
        }
        add(&mut self.reflected_by_time, &other.reflected_by_time);
        add(&mut self.transmitted_by_time, &other.transmitted_by_time);
        add(&mut self.absorbed_by_layer, &other.absorbed_by_layer);
        add(&mut self.absorbed_by_depth, &other.absorbed_by_depth);
        add(&mut self.reflected_by_cosine, &other.reflected_by_cosine);
        add(
            &mut self.transmitted_by_cosine,
            &other.transmitted_by_cosine,
        );
        add(&mut self.reflected_by_radius, &other.reflected_by_radius);
    }

    /// Whether `other` has the same layout and consistent vector lengths.
    pub fn compatible(&self, other: &ResolvedTally) -> bool {
        if !self.layout.is_sane() || self.layout != other.layout {
            return false;
        }
        let fresh = ResolvedTally::new(self.layout);
        self.layout == other.layout
            && [&self, &other].iter().all(|t| {
                t.reflected_by_time.len() == fresh.reflected_by_time.len()
                    && t.transmitted_by_time.len() == fresh.transmitted_by_time.len()
                    && t.absorbed_by_layer.len() == fresh.absorbed_by_layer.len()
                    && t.absorbed_by_depth.len() == fresh.absorbed_by_depth.len()
                    && t.reflected_by_cosine.len() == fresh.reflected_by_cosine.len()
                    && t.transmitted_by_cosine.len() == fresh.transmitted_by_cosine.len()
                    && t.reflected_by_radius.len() == fresh.reflected_by_radius.len()
            })
    }
}
