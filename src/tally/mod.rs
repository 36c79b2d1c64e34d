//! Per-photon outcomes and their mergeable, weighted summary.
//!
//! A [`Tally`] holds, for each way a photon can end (escaped a sphere, reflected or
//! transmitted by a slab, absorbed, censored by the step cap), the count, the sum of the
//! photons' weights, and the moments and histograms of their time in the medium and number
//! of scatterings. Memory does not grow with the number of photons, and merging two tallies
//! is exact and order-independent, so a run gives the same bits whatever the thread count
//! or shard split.
//!
//! **Weights.** Every photon carries a weight w ∈ [0, 1] ([`PhotonRecord::weight`]): 1 for
//! analog photons, less after implicit capture or absorption rescaling. Each weight is
//! rounded once to a multiple of 2⁻⁶³ ([`Weight`]) and summed as an integer, so weighted
//! sums merge exactly too. A tally starts *analog* (every weight exactly 1, and no weight
//! sums are stored: analog results are exactly as before); the first photon with another
//! weight makes it *weighted*, and every later figure uses the weights.
//!
//! **Estimates.** The fraction of photons ending one way is f = Σw / N (N launched), with
//! standard error √((Σw²/N − f²)/N): the standard error of the mean of the per-photon
//! scores wᵢ·𝟙(outcome) (for analog photons the binomial √(p(1 − p)/N)). Means and their
//! errors are in [`Moments`]; quantiles in [`LogHistogram`]. Kish's effective number of
//! photons (Σw)²/Σw² says how many analog photons the weighted ones are worth.
//!
//! **Soundness.** A `Tally` read with serde (shards, checkpoints, sweep points) is checked
//! as it is read ([`Tally::from_json`] gives the typed [`TallyError`]): counts that add up,
//! bins that exist, sums that fit their extremes and weights that photons of weight ≤ 1
//! can carry. A tally that passes is as sound as one recorded in memory.

mod bin_key;
mod detectors;
mod error;
mod exact_sum;
mod histogram;
mod moments;
mod path_stats;
mod residence;
mod resolved;
mod weight;

pub use bin_key::{RELATIVE_BIN_WIDTH, RESOLUTION_BITS};
pub use detectors::{DetectorWindow, OpticsTally, detector_windows};
pub use error::TallyError;
pub use exact_sum::ExactSum;
pub use histogram::{HistogramBin, LogHistogram, Regrouped, fine_bin_floor};
pub use moments::Moments;
pub use path_stats::PathStats;
pub use residence::{OutcomeResidence, PhotonResidence, ResidenceTally, ScoreSums};
pub use resolved::{BinSeries, ResolvedLayout, ResolvedTally};
pub use weight::{WEIGHT_FRACTION_BITS, Weight, WeightSum};

use serde::{Deserialize, Serialize};

use detectors::OpticsRepr;
use exact_sum::ExactSumRepr;
use path_stats::PathStatsRepr;
use resolved::ResolvedRepr;

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
    /// Statistical weight the photon carries into its outcome, in [0, 1] (1 for analog
    /// photons).
    pub weight: f64,
}

/// Weight that a weighted photon left in the medium at one interaction (implicit capture:
/// (1 − ω)·w), with where, for the resolved absorption tallies.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Deposit {
    /// Weight left, in [0, 1].
    pub weight: f64,
    /// Layer where it was left.
    pub layer: usize,
    /// Depth below a slab's top face, cm (the z coordinate; unused for spheres).
    pub depth_cm: f64,
}

/// What a weighted photon left in the medium along its walk (implicit capture), beside its
/// [`PhotonRecord`]. Empty for analog photons.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct AbsorbedAlongPath {
    /// Σ of the deposited weights.
    pub weight: f64,
    /// Σ deposit × time of the deposit, s (the mean time of absorption is this / `weight`).
    pub weighted_time_s: f64,
    /// Σ deposit × scatterings so far (the mean is this / `weight`).
    pub weighted_scatterings: f64,
    /// The deposits one by one, kept only when resolved tallies ask for them.
    pub deposits: Vec<Deposit>,
}

impl AbsorbedAlongPath {
    /// Nothing deposited yet (the deposit list keeps its memory).
    pub fn clear(&mut self) {
        self.weight = 0.0;
        self.weighted_time_s = 0.0;
        self.weighted_scatterings = 0.0;
        self.deposits.clear();
    }

    /// Adds one deposit of weight `weight` at `time_s` after `scatterings` scatterings.
    #[inline]
    pub fn add(&mut self, weight: f64, time_s: f64, scatterings: f64) {
        self.weight += weight;
        self.weighted_time_s += weight * time_s;
        self.weighted_scatterings += weight * scatterings;
    }
}

/// An estimate and its 1σ standard error.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Estimate {
    /// The value.
    pub value: f64,
    /// Its standard error.
    pub stderr: f64,
}

/// Walk-cost counters summed over photons (unweighted).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct WalkCounters {
    /// Total diffusion jumps.
    pub jumps: ExactSum,
    /// Total direct free-flight steps.
    pub direct_steps: ExactSum,
    /// Total time covered by jumps, s.
    pub jump_time_s: ExactSum,
    /// Total time of all photons with a finite time, s.
    pub total_time_s: ExactSum,
}

/// The mergeable summary of a set of photons (see the module docs).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Tally {
    launched: u64,
    weighted: bool,
    /// One per outcome, in the order of [`OUTCOME_NAMES`]; on the heap, so that a tally
    /// moves cheaply through the parallel fold of the photon loop.
    paths: Box<[PathStats; 6]>,
    walk: WalkCounters,
    resolved: Option<Box<ResolvedTally>>,
    /// Residence by cell and path by layer, per outcome (once a photon is recorded with
    /// its ledger, [`Tally::record_with_residence`]).
    residence: Option<Box<ResidenceTally>>,
    /// Collimated transmittance and detectors of a slab lit from outside.
    optics: Option<Box<OpticsTally>>,
}

/// Names of the outcomes, in the order of a tally's outcome array.
const OUTCOME_NAMES: [&str; 6] = [
    "escaped",
    "reflected",
    "specular",
    "transmitted",
    "absorbed",
    "censored",
];

impl Tally {
    /// An empty tally.
    pub fn new() -> Self {
        Self::default()
    }

    /// An empty tally that also keeps resolved slab counts on `layout` (if given).
    pub fn with_resolved(layout: Option<ResolvedLayout>) -> Self {
        Self {
            resolved: layout.map(|l| Box::new(ResolvedTally::new(l))),
            ..Self::default()
        }
    }

    /// An empty tally for a run on `medium`: resolved slab counts on `layout` (if given),
    /// and the optical counts (collimated transmittance, detectors) the medium calls for
    /// ([`OpticsTally::for_medium`]).
    pub fn for_run(medium: &crate::medium::Medium, layout: Option<ResolvedLayout>) -> Self {
        Self {
            optics: OpticsTally::for_medium(medium).map(Box::new),
            ..Self::with_resolved(layout)
        }
    }

    /// Collimated transmittance and detector counts, if this tally keeps them.
    pub fn optics(&self) -> Option<&OpticsTally> {
        self.optics.as_deref()
    }

    /// Resolved slab counts, if this tally keeps them.
    pub fn resolved(&self) -> Option<&ResolvedTally> {
        self.resolved.as_deref()
    }

    /// Counts one photon.
    ///
    /// # Panics
    /// If `record.weight` is not in [0, 1] (a walker bug, not a user input).
    #[inline]
    pub fn record(&mut self, record: &PhotonRecord) {
        let weight = Weight::new(record.weight).unwrap_or_else(|| {
            panic!(
                "photon weight {} outside [0, 1]: the walker must keep weights in range",
                record.weight
            )
        });
        if !weight.is_one() && !self.weighted {
            self.make_weighted();
        }
        self.launched += 1;
        if let Some(resolved) = &mut self.resolved {
            resolved.record(record, weight);
        }
        if let Some(optics) = &mut self.optics {
            optics.record(record, weight);
        }
        self.stats_mut(record.outcome)
            .add(record.time_s, record.scatterings, weight);
        self.walk.jumps.add(record.jumps);
        self.walk.direct_steps.add(record.direct_steps);
        self.walk.jump_time_s.add(record.jump_time_s);
        if record.time_s.is_finite() {
            self.walk.total_time_s.add(record.time_s);
        }
    }

    /// Counts one photon with its residence by cell and path by layer (from the walker's
    /// ledger). A tally keeps residence sums once the first photon comes with them; every
    /// photon of a run must then come with them.
    ///
    /// # Panics
    /// As [`Tally::record`], or if the residence has other cells or layers than earlier
    /// photons'.
    pub fn record_with_residence(
        &mut self,
        record: &PhotonRecord,
        residence: &dyn PhotonResidence,
    ) {
        self.record(record);
        let weight = Weight::new(record.weight).expect("checked by record");
        self.residence
            .get_or_insert_with(|| {
                Box::new(ResidenceTally::new(
                    residence.cells(),
                    residence.declared_layers(),
                ))
            })
            .record(record.outcome, weight, residence);
    }

    /// Residence by cell and path by layer, if this tally keeps them.
    pub fn residence(&self) -> Option<&ResidenceTally> {
        self.residence.as_deref()
    }

    /// Mean time that photons ending with `outcome` spent in cell `cell`, s, with its
    /// standard error (`None` without residence sums or such photons).
    pub fn mean_time_in_cell(&self, outcome: Outcome, cell: usize) -> Option<Estimate> {
        self.residence_of(outcome)?
            .mean_time_in_cell(outcome, self.stats(outcome), cell)
    }

    /// Mean time that photons ending with `outcome` spent in cells 0 to `cell` (inside its
    /// outer radius, or above its bottom face), s, with its standard error.
    pub fn mean_time_through_cell(&self, outcome: Outcome, cell: usize) -> Option<Estimate> {
        self.residence_of(outcome)?
            .mean_time_through_cell(outcome, self.stats(outcome), cell)
    }

    /// Mean path length in declared layer `layer` of the photons ending with `outcome`,
    /// cm, with its standard error (`None` without residence sums or such photons).
    pub fn mean_path_in_layer(&self, outcome: Outcome, layer: usize) -> Option<Estimate> {
        self.residence_of(outcome)?
            .mean_path_in_layer(outcome, self.stats(outcome), layer)
    }

    /// The residence sums that describe photons ending with `outcome`: none for the
    /// absorbed share of a weighted tally, whose residence is not tallied (a weighted
    /// photon's weight is absorbed all along its path, not at one place and time).
    fn residence_of(&self, outcome: Outcome) -> Option<&ResidenceTally> {
        if self.weighted && outcome == Outcome::Absorbed {
            return None;
        }
        self.residence()
    }

    /// [`Tally::record_weighted`] with the photon's residence by cell and path by layer
    /// (from the walker's ledger), booked to the outcome it left by with its final weight.
    /// The absorbed share carries no residence ([`Tally::mean_path_in_layer`] and the
    /// per-cell means give `None` for absorbed photons of a weighted tally).
    ///
    /// # Panics
    /// As [`Tally::record_weighted`] and [`Tally::record_with_residence`].
    pub fn record_weighted_with_residence(
        &mut self,
        record: &PhotonRecord,
        path: &AbsorbedAlongPath,
        residence: &dyn PhotonResidence,
    ) {
        self.record_weighted(record, path);
        let cells = (residence.cells(), residence.declared_layers());
        let sums = self
            .residence
            .get_or_insert_with(|| Box::new(ResidenceTally::new(cells.0, cells.1)));
        if record.outcome != Outcome::Absorbed
            && let Some(weight) = Weight::new(record.weight).filter(|w| !w.is_zero())
        {
            sums.record(record.outcome, weight, residence);
        }
    }

    /// Counts one photon walked with implicit capture (weighted absorption).
    ///
    /// The photon's final weight w (`record.weight`; 0 for a photon ended by Russian
    /// roulette, whose outcome is [`Outcome::Absorbed`]) goes to its outcome, and the
    /// complement 1 − w, exact on the fixed-point grid, to the absorbed photons, with the
    /// deposit-weighted mean time and scatterings of `path` (the photon's own if it
    /// deposited nothing). Each photon thus scores exactly 1 in total, the absorbed
    /// fraction Σ(1 − w)/N is an unbiased estimate of the absorptance (E[w] is the analog
    /// probability of leaving), and a photon can count in two outcomes. The single
    /// deposits of `path`, if any, go to the resolved absorption-by-layer and -by-depth
    /// series. A photon that lost no weight is counted as by [`Tally::record`].
    ///
    /// # Panics
    /// If a weight is not in [0, 1] (a walker bug, not a user input).
    pub fn record_weighted(&mut self, record: &PhotonRecord, path: &AbsorbedAlongPath) {
        let ended_absorbed = record.outcome == Outcome::Absorbed;
        if !ended_absorbed && record.weight == 1.0 && path.deposits.is_empty() {
            self.record(record);
            return;
        }
        let out = if ended_absorbed {
            Weight::new(0.0).expect("0 is a weight")
        } else {
            Weight::new(record.weight).unwrap_or_else(|| {
                panic!(
                    "photon weight {} outside [0, 1]: the walker must keep weights in range",
                    record.weight
                )
            })
        };
        if !self.weighted {
            self.make_weighted();
        }
        self.launched += 1;
        if !ended_absorbed && !out.is_zero() {
            if let Some(resolved) = &mut self.resolved {
                resolved.record(record, out);
            }
            if let Some(optics) = &mut self.optics {
                optics.record(record, out);
            }
            self.stats_mut(record.outcome)
                .add(record.time_s, record.scatterings, out);
            if record.time_s.is_finite() {
                self.walk.total_time_s.add(record.time_s);
            }
        }
        let share = out.complement();
        if !share.is_zero() {
            let (time_s, scatterings) = if path.weight > 0.0 {
                (
                    path.weighted_time_s / path.weight,
                    path.weighted_scatterings / path.weight,
                )
            } else {
                (record.time_s, record.scatterings)
            };
            self.stats_mut(Outcome::Absorbed)
                .add(time_s, scatterings, share);
            if time_s.is_finite() {
                self.walk.total_time_s.add(time_s);
            }
        }
        if let Some(resolved) = &mut self.resolved {
            for deposit in &path.deposits {
                let weight = Weight::new(deposit.weight)
                    .unwrap_or_else(|| panic!("deposit {} outside [0, 1]", deposit.weight));
                resolved.deposit(deposit.layer, deposit.depth_cm, weight);
            }
        }
        self.walk.jumps.add(record.jumps);
        self.walk.direct_steps.add(record.direct_steps);
        self.walk.jump_time_s.add(record.jump_time_s);
    }

    fn stats_mut(&mut self, outcome: Outcome) -> &mut PathStats {
        &mut self.paths[outcome_index(outcome)]
    }

    fn stats(&self, outcome: Outcome) -> &PathStats {
        &self.paths[outcome_index(outcome)]
    }

    fn path_stats(&self) -> &[PathStats; 6] {
        &self.paths
    }

    /// Keeps weights from now on (every photon so far has weight 1).
    fn make_weighted(&mut self) {
        self.weighted = true;
        self.paths.iter_mut().for_each(PathStats::make_weighted);
        if let Some(resolved) = &mut self.resolved {
            resolved.make_weighted();
        }
        if let Some(optics) = &mut self.optics {
            optics.make_weighted();
        }
    }

    /// Adds another tally (exact; any order gives the same state).
    ///
    /// # Panics
    /// If both keep resolved counts on different layouts: check [`Tally::compatible`]
    /// before merging tallies from elsewhere.
    pub fn merge(&mut self, other: &Tally) {
        if other.weighted && !self.weighted {
            self.make_weighted();
        }
        self.launched += other.launched;
        for (mine, theirs) in self.paths.iter_mut().zip(other.paths.iter()) {
            mine.merge(theirs);
        }
        self.walk.jumps.merge(&other.walk.jumps);
        self.walk.direct_steps.merge(&other.walk.direct_steps);
        self.walk.jump_time_s.merge(&other.walk.jump_time_s);
        self.walk.total_time_s.merge(&other.walk.total_time_s);
        match (&mut self.resolved, &other.resolved) {
            (Some(mine), Some(theirs)) => {
                assert!(
                    mine.compatible(theirs),
                    "resolved tallies on different layouts cannot be merged; check \
                     Tally::compatible first"
                );
                mine.merge(theirs);
            }
            (None, Some(theirs)) => {
                let mut theirs = theirs.clone();
                if self.weighted {
                    theirs.make_weighted();
                }
                self.resolved = Some(theirs);
            }
            _ => {}
        }
        match (&mut self.residence, &other.residence) {
            (Some(mine), Some(theirs)) => mine.merge(theirs),
            (None, Some(theirs)) => self.residence = Some(theirs.clone()),
            _ => {}
        }
        match (&mut self.optics, &other.optics) {
            (Some(mine), Some(theirs)) => {
                assert!(
                    mine.compatible(theirs),
                    "optical tallies with different detectors cannot be merged; check \
                     Tally::compatible first"
                );
                mine.merge(theirs);
            }
            (None, Some(theirs)) => {
                let mut theirs = theirs.clone();
                if self.weighted {
                    theirs.make_weighted();
                }
                self.optics = Some(theirs);
            }
            _ => {}
        }
    }

    /// Whether `other` keeps resolved counts on the same layout, or neither keeps any, and
    /// residence sums on the same cells (safe to merge).
    pub fn compatible(&self, other: &Tally) -> bool {
        let optics = match (&self.optics, &other.optics) {
            (Some(a), Some(b)) => a.compatible(b),
            (None, None) => true,
            _ => false,
        };
        let resolved = match (&self.resolved, &other.resolved) {
            (Some(a), Some(b)) => a.compatible(b),
            (None, None) => true,
            _ => false,
        };
        let residence = match (&self.residence, &other.residence) {
            (Some(a), Some(b)) => a.compatible(b),
            _ => true,
        };
        optics && resolved && residence
    }

    /// Photons launched.
    pub fn launched(&self) -> u64 {
        self.launched
    }

    /// Whether some photon carried a weight other than 1.
    pub fn is_weighted(&self) -> bool {
        self.weighted
    }

    /// Kish's effective number of photons, (Σw)²/Σw², over the weights of the photons that
    /// left the medium or were censored (every outcome but absorption, whose entries are
    /// the complements of those weights, see [`Tally::record_weighted`]): how many analog
    /// photons leaving the medium the weighted ones are worth for times and distributions.
    /// The number launched for an analog run.
    pub fn effective_photons(&self) -> f64 {
        if !self.weighted {
            return self.launched as f64;
        }
        let mut weight = WeightSum::ZERO;
        let mut squared = 0.0;
        for (index, stats) in self.path_stats().iter().enumerate() {
            if index == outcome_index(Outcome::Absorbed) {
                continue;
            }
            weight.merge(stats.weight_sum());
            squared += stats.weight_squared();
        }
        if squared > 0.0 {
            weight.value() * weight.value() / squared
        } else {
            0.0
        }
    }

    /// Photons that left a sphere.
    pub fn escaped(&self) -> &PathStats {
        self.stats(Outcome::Escaped)
    }

    /// Photons that left a slab through the top face.
    pub fn reflected(&self) -> &PathStats {
        self.stats(Outcome::Reflected)
    }

    /// Photons reflected by the top face before entering (specular reflection).
    pub fn specular(&self) -> &PathStats {
        self.stats(Outcome::Specular)
    }

    /// Photons that left a slab through the bottom face.
    pub fn transmitted(&self) -> &PathStats {
        self.stats(Outcome::Transmitted)
    }

    /// Photons absorbed.
    pub fn absorbed(&self) -> &PathStats {
        self.stats(Outcome::Absorbed)
    }

    /// Photons stopped by the step cap.
    pub fn censored(&self) -> &PathStats {
        self.stats(Outcome::Censored)
    }

    /// Every photon that left the medium, whichever way (sphere surface or either slab face).
    pub fn all_escapes(&self) -> PathStats {
        let mut all = self.escaped().clone();
        all.merge(self.reflected());
        all.merge(self.transmitted());
        all
    }

    /// Walk-cost counters.
    pub fn walk(&self) -> &WalkCounters {
        &self.walk
    }

    /// Fraction of the launched weight that ended in `stats`, f = Σw / N, with its
    /// standard error √((Σw²/N − f²)/N) (binomial √(f(1 − f)/N) for analog photons).
    /// `None` when no photon was launched: the fraction is then undefined, not 0.
    pub fn fraction(&self, stats: &PathStats) -> Option<Estimate> {
        if self.launched == 0 {
            return None;
        }
        let n = self.launched as f64;
        if !stats.is_weighted() {
            let p = stats.count() as f64 / n;
            return Some(Estimate {
                value: p,
                stderr: (p * (1.0 - p) / n).sqrt(),
            });
        }
        let f = stats.weight() / n;
        let second = stats.weight_squared() / n;
        Some(Estimate {
            value: f,
            stderr: ((second - f * f).max(0.0) / n).sqrt(),
        })
    }

    /// Reads a tally from JSON, checking it (see the module docs).
    ///
    /// # Errors
    /// [`TallyError`] naming the field that is malformed or contradicts the rest.
    pub fn from_json(value: serde_json::Value) -> Result<Tally, TallyError> {
        let repr: TallyRepr = serde_path_to_error::deserialize(value).map_err(|error| {
            let path = error.path().to_string();
            TallyError::malformed(
                if path == "." { String::new() } else { path },
                error.into_inner().to_string(),
            )
        })?;
        Tally::from_repr(repr)
    }

    fn from_repr(repr: TallyRepr) -> Result<Tally, TallyError> {
        let mut tally = Tally {
            launched: repr.launched,
            weighted: repr.weighted,
            ..Tally::default()
        };
        let given = [
            repr.escaped,
            repr.reflected,
            repr.specular,
            repr.transmitted,
            repr.absorbed,
            repr.censored,
        ];
        let mut counted = Some(0u64);
        for ((slot, name), stats) in tally.paths.iter_mut().zip(OUTCOME_NAMES).zip(given) {
            let stats = PathStats::from_repr(stats).map_err(|e| e.within(name))?;
            if stats.count() > 0 && stats.is_weighted() != repr.weighted {
                return Err(mode_error(name, repr.weighted));
            }
            counted = counted.and_then(|c| c.checked_add(stats.count()));
            *slot = stats;
        }
        // A weighted photon counts in its outcome and, for the weight it lost, among the
        // absorbed ones (see `record_weighted`): between N and 2N entries.
        let counts_fit = match counted {
            Some(c) if repr.weighted => {
                c >= tally.launched && c - tally.launched <= tally.paths[4].count()
            }
            other => other == Some(tally.launched),
        };
        if !counts_fit {
            return Err(TallyError::mismatch(
                "launched",
                "photons launched, against the sum of the outcomes",
                tally.launched,
                counted.map_or("more than 2^64".into(), |c| c.to_string()),
            ));
        }
        tally.walk = repr.walk.check(&tally)?;
        if let Some(resolved) = repr.resolved {
            let resolved = ResolvedTally::from_repr(resolved).map_err(|e| e.within("resolved"))?;
            if resolved.is_weighted() && !repr.weighted {
                return Err(mode_error("resolved", false));
            }
            tally.resolved = Some(Box::new(resolved));
            tally.check_resolved()?;
        }
        if let Some(residence) = repr.residence {
            residence.check(tally.paths.each_ref().map(PathStats::count))?;
            tally.residence = Some(Box::new(residence));
        }
        if let Some(optics) = repr.optics {
            let optics = OpticsTally::from_repr(optics).map_err(|e| e.within("optics"))?;
            tally.optics = Some(Box::new(optics));
            tally.check_optics()?;
        }
        if tally.weighted {
            tally.make_weighted();
        }
        Ok(tally)
    }

    /// The optical counts are parts of their outcomes: no more photons or weight than
    /// those, and weights only in a weighted tally.
    fn check_optics(&self) -> Result<(), TallyError> {
        let Some(optics) = &self.optics else {
            return Ok(());
        };
        for (name, stats, outcomes) in optics.parts() {
            if stats.count() > 0 && stats.is_weighted() && !self.weighted {
                return Err(mode_error(&format!("optics.{name}"), false));
            }
            let (count, weight) = outcomes.iter().fold((0u64, 0.0), |(c, w), &o| {
                let s = self.stats(o);
                (c.saturating_add(s.count()), w + s.weight())
            });
            if stats.count() > count || stats.weight() > weight * (1.0 + 1e-12) {
                return Err(TallyError::mismatch(
                    format!("optics.{name}"),
                    "photons counted, against the outcomes they are part of",
                    stats.count(),
                    format!("at most {count}"),
                ));
            }
        }
        Ok(())
    }

    /// The resolved series hold exactly the photons (and weights) of their outcomes.
    fn check_resolved(&self) -> Result<(), TallyError> {
        let Some(resolved) = &self.resolved else {
            return Ok(());
        };
        for (name, outcome, count, weight) in resolved.outcome_totals() {
            let stats = self.stats(outcome);
            if count != stats.count() {
                return Err(TallyError::mismatch(
                    format!("resolved.{name}"),
                    format!(
                        "photons in the bins, against the {} photons",
                        outcome_name(outcome)
                    ),
                    count,
                    stats.count(),
                ));
            }
            if resolved.is_weighted() && weight != stats.weight_sum() {
                return Err(TallyError::mismatch(
                    format!("resolved.{name}"),
                    format!(
                        "weight in the bins (2^-63 units), against the {} photons'",
                        outcome_name(outcome)
                    ),
                    weight.raw(),
                    stats.weight_sum().raw(),
                ));
            }
        }
        let (count, weight) = resolved.absorbed_by_layer_totals();
        if !resolved.is_weighted()
            && (count > self.absorbed().count() || weight > self.absorbed().weight_sum())
        {
            return Err(TallyError::mismatch(
                "resolved.absorbed_by_layer",
                "photons in the bins, against the absorbed photons",
                count,
                format!("at most {}", self.absorbed().count()),
            ));
        }
        Ok(())
    }
}

/// Where `outcome` sits in [`OUTCOME_NAMES`] and in a tally's outcome array.
fn outcome_index(outcome: Outcome) -> usize {
    match outcome {
        Outcome::Escaped => 0,
        Outcome::Reflected => 1,
        Outcome::Specular => 2,
        Outcome::Transmitted => 3,
        Outcome::Absorbed => 4,
        Outcome::Censored => 5,
    }
}

fn outcome_name(outcome: Outcome) -> &'static str {
    OUTCOME_NAMES[outcome_index(outcome)]
}

fn mode_error(name: &str, weighted: bool) -> TallyError {
    TallyError::weights(
        name,
        if weighted {
            "no weights, though the tally is weighted"
        } else {
            "weights, though the tally is analog (every weight 1)"
        },
    )
}

/// Serialised form of [`WalkCounters`].
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct WalkRepr {
    jumps: ExactSumRepr,
    direct_steps: ExactSumRepr,
    jump_time_s: ExactSumRepr,
    total_time_s: ExactSumRepr,
}

impl WalkRepr {
    /// The counters, checked against the tally's outcomes.
    fn check(self, tally: &Tally) -> Result<WalkCounters, TallyError> {
        let exact = |name: &str, repr: ExactSumRepr| {
            ExactSum::from_repr(repr).map_err(|e| e.within("walk").within(name))
        };
        let walk = WalkCounters {
            jumps: exact("jumps", self.jumps)?,
            direct_steps: exact("direct_steps", self.direct_steps)?,
            jump_time_s: exact("jump_time_s", self.jump_time_s)?,
            total_time_s: exact("total_time_s", self.total_time_s)?,
        };
        for (name, sum) in [
            ("jumps", &walk.jumps),
            ("direct_steps", &walk.direct_steps),
            ("jump_time_s", &walk.jump_time_s),
        ] {
            if sum.value() < 0.0 {
                return Err(TallyError::OutOfRange {
                    field: format!("walk.{name}"),
                    value: format!("{:e}", sum.value()),
                    allowed: "[0, ∞) (a sum of counts or times)".into(),
                });
            }
        }
        let mut times = ExactSum::new();
        for stats in tally.path_stats() {
            times.merge(stats.time_s().exact_sum());
        }
        if times != walk.total_time_s {
            return Err(TallyError::mismatch(
                "walk.total_time_s",
                "total time, against the sum of the outcomes' times",
                format!("{:e}", walk.total_time_s.value()),
                format!("{:e}", times.value()),
            ));
        }
        let (jump, total) = (walk.jump_time_s.value(), walk.total_time_s.value());
        if jump > total * (1.0 + 1e-9) {
            return Err(TallyError::OutOfRange {
                field: "walk.jump_time_s".into(),
                value: format!("{jump:e} s"),
                allowed: format!("[0, {total:e} s] (part of the total time)"),
            });
        }
        Ok(walk)
    }
}

/// Serialised form of [`WalkCounters`], as written.
#[derive(Serialize)]
struct WalkOut {
    jumps: ExactSumRepr,
    direct_steps: ExactSumRepr,
    jump_time_s: ExactSumRepr,
    total_time_s: ExactSumRepr,
}

impl Serialize for WalkCounters {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        WalkOut {
            jumps: self.jumps.to_repr(),
            direct_steps: self.direct_steps.to_repr(),
            jump_time_s: self.jump_time_s.to_repr(),
            total_time_s: self.total_time_s.to_repr(),
        }
        .serialize(serializer)
    }
}

/// Serialised form of a [`Tally`], as read.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
struct TallyRepr {
    launched: u64,
    #[serde(default)]
    weighted: bool,
    escaped: PathStatsRepr,
    reflected: PathStatsRepr,
    specular: PathStatsRepr,
    transmitted: PathStatsRepr,
    absorbed: PathStatsRepr,
    censored: PathStatsRepr,
    walk: WalkRepr,
    #[serde(default)]
    resolved: Option<ResolvedRepr>,
    #[serde(default)]
    residence: Option<ResidenceTally>,
    optics: Option<OpticsRepr>,
}

/// Serialised form of a [`Tally`], as written.
#[derive(Serialize)]
struct TallyOut<'a> {
    launched: u64,
    weighted: bool,
    escaped: &'a PathStats,
    reflected: &'a PathStats,
    specular: &'a PathStats,
    transmitted: &'a PathStats,
    absorbed: &'a PathStats,
    censored: &'a PathStats,
    walk: &'a WalkCounters,
    #[serde(skip_serializing_if = "Option::is_none")]
    resolved: Option<&'a ResolvedTally>,
    #[serde(skip_serializing_if = "Option::is_none")]
    residence: Option<&'a ResidenceTally>,
    optics: Option<&'a OpticsTally>,
}

impl Serialize for Tally {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        TallyOut {
            launched: self.launched,
            weighted: self.weighted,
            escaped: self.escaped(),
            reflected: self.reflected(),
            specular: self.specular(),
            transmitted: self.transmitted(),
            absorbed: self.absorbed(),
            censored: self.censored(),
            walk: &self.walk,
            resolved: self.resolved.as_deref(),
            residence: self.residence.as_deref(),
            optics: self.optics.as_deref(),
        }
        .serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for Tally {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let repr = TallyRepr::deserialize(deserializer)?;
        Tally::from_repr(repr).map_err(serde::de::Error::custom)
    }
}

#[cfg(test)]
mod tests;
