//! Residence time by cell and partial path length by declared layer, per outcome.
//!
//! For each way a photon can end, and each cell of the medium (a layer as the walker
//! indexes it; a sub-shell of a profile), the sums that give the mean time a photon of
//! that outcome spent in the cell; and for each declared layer of the model the mean path
//! length there. Each photon's values come from its ledger
//! ([`crate::transport::PathLedger`]; inside diffusion jumps they are expectations, which
//! leaves the means unbiased).
//!
//! **Estimates.** With the outcome's photons i (count n, weights wᵢ) and a photon's value
//! xᵢ (0 where it never entered the cell), the mean is the ratio m = Σwx / Σw and its
//! standard error the delta-method one of [`super::Moments`] (Cochran 1977, ch. 6):
//! var(m) ≈ n/(n − 1) · Σ wᵢ² (xᵢ − m)² / (Σw)², from the sums Σwx, Σw²x, Σw²x² kept here
//! and the outcome's Σw, Σw² and n kept by its [`super::PathStats`]. For analog photons
//! (w = 1) these are the sample mean and s/√n.
//!
//! Sums are exact ([`ExactSum`]) and a photon adds only to the cells it touched, so
//! merging is exact and order-independent like the rest of the tally.

use serde::{Deserialize, Serialize};

use super::error::TallyError;
use super::exact_sum::ExactSum;
use super::weight::Weight;
use super::{Estimate, OUTCOME_NAMES, Outcome, PathStats, outcome_index};

/// One photon's residence, as the tally reads it (the walker's ledger implements it).
pub trait PhotonResidence {
    /// Number of cells of the medium.
    fn cells(&self) -> usize;
    /// Number of declared layers of the model.
    fn declared_layers(&self) -> usize;
    /// The cells the photon touched (every other cell holds zero).
    fn touched_cells(&self) -> &[usize];
    /// Time in cell `cell`, s.
    fn time_in_cell(&self, cell: usize) -> f64;
    /// Adds the path in each declared layer, cm, to `out`.
    fn add_paths_by_layer_cm(&self, out: &mut [f64]);
}

/// Σwx, Σw²x and Σw²x² of one quantity over the photons of one outcome. While every
/// weight is 1, Σw²x equals Σwx and is not stored (`w2_x` absent), which saves a third of
/// the additions of analog runs.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScoreSums {
    w_x: ExactSum,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    w2_x: Option<ExactSum>,
    w2_x2: ExactSum,
}

impl ScoreSums {
    fn add(&mut self, x: f64, w: f64) {
        if w == 1.0 {
            self.w_x.add(x);
            if let Some(w2_x) = &mut self.w2_x {
                w2_x.add(x);
            }
            self.w2_x2.add(x * x);
        } else {
            let wx = w * x;
            self.w2_x
                .get_or_insert_with(|| self.w_x.clone())
                .add(w * wx);
            self.w_x.add(wx);
            self.w2_x2.add(wx * wx);
        }
    }

    /// Σw²x (equal to Σwx while every weight is 1).
    fn w2_x(&self) -> &ExactSum {
        self.w2_x.as_ref().unwrap_or(&self.w_x)
    }

    fn merge(&mut self, other: &ScoreSums) {
        match (&mut self.w2_x, &other.w2_x) {
            (Some(mine), theirs) => mine.merge(theirs.as_ref().unwrap_or(&other.w_x)),
            (None, Some(theirs)) => {
                let mut w2_x = self.w_x.clone();
                w2_x.merge(theirs);
                self.w2_x = Some(w2_x);
            }
            (None, None) => {}
        }
        self.w_x.merge(&other.w_x);
        self.w2_x2.merge(&other.w2_x2);
    }

    /// The mean over the outcome's photons and its standard error (module docs), given
    /// their count, Σw and Σw².
    fn estimate(&self, count: u64, weight: f64, weight_squared: f64) -> Option<Estimate> {
        if count == 0 || weight <= 0.0 {
            return None;
        }
        let m = self.w_x.value() / weight;
        let n = count as f64;
        let spread =
            (self.w2_x2.value() - 2.0 * m * self.w2_x().value() + m * m * weight_squared).max(0.0);
        let stderr = if count > 1 {
            (n / (n - 1.0) * spread).sqrt() / weight
        } else {
            f64::NAN
        };
        Some(Estimate { value: m, stderr })
    }

    fn check(&self) -> Result<(), &'static str> {
        let (a, b, c) = (self.w_x.value(), self.w2_x().value(), self.w2_x2.value());
        if !(a.is_finite() && b.is_finite() && c.is_finite()) {
            return Err("a sum that is not finite");
        }
        if a < 0.0 || b < 0.0 || c < 0.0 {
            return Err("a negative sum of times or paths");
        }
        if b > a * (1.0 + 1e-12) {
            return Err("Σw²x above Σwx, impossible for weights ≤ 1");
        }
        Ok(())
    }
}

/// The sums of one outcome: time by cell (s), time in the cells up to and including each
/// cell (s: inside its outer radius, or above its bottom face) and path by declared layer
/// (cm).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OutcomeResidence {
    time_by_cell_s: Vec<ScoreSums>,
    time_through_cell_s: Vec<ScoreSums>,
    path_by_layer_cm: Vec<ScoreSums>,
}

impl OutcomeResidence {
    fn new(cells: usize, layers: usize) -> Self {
        Self {
            time_by_cell_s: vec![ScoreSums::default(); cells],
            time_through_cell_s: vec![ScoreSums::default(); cells],
            path_by_layer_cm: vec![ScoreSums::default(); layers],
        }
    }

    fn merge(&mut self, other: &OutcomeResidence) {
        for (a, b) in self.time_by_cell_s.iter_mut().zip(&other.time_by_cell_s) {
            a.merge(b);
        }
        for (a, b) in self
            .time_through_cell_s
            .iter_mut()
            .zip(&other.time_through_cell_s)
        {
            a.merge(b);
        }
        for (a, b) in self
            .path_by_layer_cm
            .iter_mut()
            .zip(&other.path_by_layer_cm)
        {
            a.merge(b);
        }
    }
}

/// Residence time by cell and path by declared layer, per outcome (module docs).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ResidenceTally {
    cells: usize,
    layers: usize,
    /// Per outcome, in the order of the tally's outcomes; `None` until one is recorded.
    by_outcome: [Option<Box<OutcomeResidence>>; 6],
    /// The per-layer paths of the photon being recorded (not serialised, not compared).
    #[serde(skip)]
    scratch: Scratch,
}

/// A reusable buffer that takes no part in comparisons.
#[derive(Debug, Clone, Default)]
struct Scratch(Vec<f64>);

impl PartialEq for Scratch {
    fn eq(&self, _: &Scratch) -> bool {
        true
    }
}

impl ResidenceTally {
    /// Empty sums for `cells` cells and `layers` declared layers.
    pub fn new(cells: usize, layers: usize) -> Self {
        Self {
            cells,
            layers,
            by_outcome: Default::default(),
            scratch: Scratch::default(),
        }
    }

    /// Number of cells.
    pub fn cells(&self) -> usize {
        self.cells
    }

    /// Number of declared layers.
    pub fn layers(&self) -> usize {
        self.layers
    }

    /// Whether `other` has the same cells and layers (safe to merge).
    pub fn compatible(&self, other: &ResidenceTally) -> bool {
        self.cells == other.cells && self.layers == other.layers
    }

    /// Adds one photon that ended with `outcome`, of weight `weight`.
    ///
    /// # Panics
    /// If the photon's residence has other cells or layers than this tally.
    pub fn record(&mut self, outcome: Outcome, weight: Weight, photon: &dyn PhotonResidence) {
        assert!(
            photon.cells() == self.cells && photon.declared_layers() == self.layers,
            "a photon's residence of {} cells and {} layers recorded into a tally of {} and {}",
            photon.cells(),
            photon.declared_layers(),
            self.cells,
            self.layers
        );
        let (cells, layers) = (self.cells, self.layers);
        let sums = self.by_outcome[outcome_index(outcome)]
            .get_or_insert_with(|| Box::new(OutcomeResidence::new(cells, layers)));
        let w = weight.value();
        let mut lowest = cells;
        for &cell in photon.touched_cells() {
            let time = photon.time_in_cell(cell);
            if time != 0.0 {
                sums.time_by_cell_s[cell].add(time, w);
                lowest = lowest.min(cell);
            }
        }
        let mut through = 0.0;
        for cell in lowest..cells {
            through += photon.time_in_cell(cell);
            sums.time_through_cell_s[cell].add(through, w);
        }
        let scratch = &mut self.scratch.0;
        scratch.clear();
        scratch.resize(layers, 0.0);
        photon.add_paths_by_layer_cm(scratch);
        for (layer, &path) in scratch.iter().enumerate() {
            if path != 0.0 {
                sums.path_by_layer_cm[layer].add(path, w);
            }
        }
    }

    /// Adds another tally's sums (exact).
    ///
    /// # Panics
    /// If the cells or layers differ: check [`Self::compatible`] first.
    pub fn merge(&mut self, other: &ResidenceTally) {
        assert!(
            self.compatible(other),
            "residence tallies of different media cannot be merged"
        );
        for (mine, theirs) in self.by_outcome.iter_mut().zip(&other.by_outcome) {
            match (mine.as_mut(), theirs) {
                (Some(mine), Some(theirs)) => mine.merge(theirs),
                (None, Some(theirs)) => *mine = Some(theirs.clone()),
                _ => {}
            }
        }
    }

    /// Mean time in cell `cell` of the photons in `stats` (those that ended with
    /// `outcome`), s, with its standard error; `None` if no such photon was recorded.
    pub fn mean_time_in_cell(
        &self,
        outcome: Outcome,
        stats: &PathStats,
        cell: usize,
    ) -> Option<Estimate> {
        self.sums(outcome, stats)?
            .time_by_cell_s
            .get(cell)?
            .estimate(stats.count(), stats.weight(), stats.weight_squared())
    }

    /// Mean time that the photons in `stats` (those that ended with `outcome`) spent in
    /// cells 0 to `cell` (inside the cell's outer radius, or above its bottom face), s,
    /// with its standard error.
    pub fn mean_time_through_cell(
        &self,
        outcome: Outcome,
        stats: &PathStats,
        cell: usize,
    ) -> Option<Estimate> {
        self.sums(outcome, stats)?
            .time_through_cell_s
            .get(cell)?
            .estimate(stats.count(), stats.weight(), stats.weight_squared())
    }

    /// Mean path in declared layer `layer` of the photons in `stats` (those that ended
    /// with `outcome`), cm, with its standard error.
    pub fn mean_path_in_layer(
        &self,
        outcome: Outcome,
        stats: &PathStats,
        layer: usize,
    ) -> Option<Estimate> {
        self.sums(outcome, stats)?
            .path_by_layer_cm
            .get(layer)?
            .estimate(stats.count(), stats.weight(), stats.weight_squared())
    }

    /// Mean time in cells 0 to `cell` of the photons of several outcomes together (each
    /// given with its stats), s, with its standard error: e.g. every photon that left a
    /// slab through either face.
    pub fn mean_time_through_cell_of(
        &self,
        outcomes: &[(Outcome, &PathStats)],
        cell: usize,
    ) -> Option<Estimate> {
        self.pooled(outcomes, |sums| sums.time_through_cell_s.get(cell))
    }

    /// Mean time in cell `cell` of the photons of several outcomes together, s.
    pub fn mean_time_in_cell_of(
        &self,
        outcomes: &[(Outcome, &PathStats)],
        cell: usize,
    ) -> Option<Estimate> {
        self.pooled(outcomes, |sums| sums.time_by_cell_s.get(cell))
    }

    fn pooled(
        &self,
        outcomes: &[(Outcome, &PathStats)],
        pick: impl Fn(&OutcomeResidence) -> Option<&ScoreSums>,
    ) -> Option<Estimate> {
        let mut pooled = ScoreSums::default();
        let (mut count, mut weight, mut weight_squared) = (0u64, 0.0, 0.0);
        for &(outcome, stats) in outcomes {
            let Some(sums) = self.sums(outcome, stats) else {
                continue;
            };
            pooled.merge(pick(sums)?);
            count += stats.count();
            weight += stats.weight();
            weight_squared += stats.weight_squared();
        }
        pooled.estimate(count, weight, weight_squared)
    }

    fn sums(&self, outcome: Outcome, stats: &PathStats) -> Option<&OutcomeResidence> {
        if stats.count() == 0 {
            return None;
        }
        self.by_outcome[outcome_index(outcome)].as_deref()
    }

    /// Checks a tally read from a file against the outcomes' photon counts.
    pub(super) fn check(&self, counts: [u64; 6]) -> Result<(), TallyError> {
        for (index, sums) in self.by_outcome.iter().enumerate() {
            let name = OUTCOME_NAMES[index];
            let Some(sums) = sums else { continue };
            if counts[index] == 0 {
                return Err(TallyError::mismatch(
                    format!("residence.by_outcome[{index}]"),
                    format!("residence sums for the {name} photons, against their count"),
                    "sums",
                    0,
                ));
            }
            for (field, list, expected) in [
                ("time_by_cell_s", &sums.time_by_cell_s, self.cells),
                ("time_through_cell_s", &sums.time_through_cell_s, self.cells),
                ("path_by_layer_cm", &sums.path_by_layer_cm, self.layers),
            ] {
                if list.len() != expected {
                    return Err(TallyError::mismatch(
                        format!("residence.by_outcome[{index}].{field}"),
                        "entries, against the number of cells or layers",
                        list.len(),
                        expected,
                    ));
                }
                for (k, item) in list.iter().enumerate() {
                    item.check().map_err(|problem| {
                        TallyError::malformed(
                            format!("residence.by_outcome[{index}].{field}[{k}]"),
                            problem,
                        )
                    })?;
                }
            }
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::tally::{PhotonRecord, Tally};

    /// A photon's residence given as dense lists.
    struct Dense {
        time_s: Vec<f64>,
        touched: Vec<usize>,
        paths_cm: Vec<f64>,
    }

    impl PhotonResidence for Dense {
        fn cells(&self) -> usize {
            self.time_s.len()
        }
        fn declared_layers(&self) -> usize {
            self.paths_cm.len()
        }
        fn touched_cells(&self) -> &[usize] {
            &self.touched
        }
        fn time_in_cell(&self, cell: usize) -> f64 {
            self.time_s[cell]
        }
        fn add_paths_by_layer_cm(&self, out: &mut [f64]) {
            for (o, p) in out.iter_mut().zip(&self.paths_cm) {
                *o += p;
            }
        }
    }

    fn photon(k: u64) -> (PhotonRecord, Dense) {
        let a = 0.1 + 0.01 * (k % 7) as f64;
        let b = if k.is_multiple_of(3) { 0.0 } else { 0.3 * a };
        let record = PhotonRecord {
            outcome: if k.is_multiple_of(5) {
                Outcome::Absorbed
            } else {
                Outcome::Escaped
            },
            time_s: a + b,
            scatterings: 3.0,
            jumps: 0.0,
            direct_steps: 4.0,
            jump_time_s: 0.0,
            position_cm: [0.0; 3],
            direction: [0.0, 0.0, 1.0],
            layer: 0,
            weight: if k.is_multiple_of(4) { 0.5 } else { 1.0 },
        };
        let residence = Dense {
            time_s: vec![a, b],
            touched: if b > 0.0 { vec![1, 0] } else { vec![0] },
            paths_cm: vec![2.0 * a, 2.0 * b],
        };
        (record, residence)
    }

    #[test]
    fn merging_is_exact_and_estimates_are_the_sample_means() {
        let mut whole = Tally::new();
        let mut parts = [Tally::new(), Tally::new(), Tally::new()];
        for k in 0..300 {
            let (record, residence) = photon(k);
            whole.record_with_residence(&record, &residence);
            parts[(k % 3) as usize].record_with_residence(&record, &residence);
        }
        let mut merged = Tally::new();
        for part in parts.iter().rev() {
            merged.merge(part);
        }
        assert_eq!(merged, whole);
        // The weighted mean of cell 0 for escaped photons, by hand.
        let (mut wx, mut w) = (0.0, 0.0);
        for k in 0..300 {
            let (record, residence) = photon(k);
            if record.outcome == Outcome::Escaped {
                wx += record.weight * residence.time_s[0];
                w += record.weight;
            }
        }
        let mean = whole.mean_time_in_cell(Outcome::Escaped, 0).unwrap();
        assert!((mean.value - wx / w).abs() < 1e-15, "{mean:?}");
        assert!(mean.stderr > 0.0 && mean.stderr < 0.01);
        // Cells 0..=1 hold the whole time.
        let through = whole.mean_time_through_cell(Outcome::Escaped, 1).unwrap();
        let in_cells = whole.mean_time_in_cell(Outcome::Escaped, 0).unwrap().value
            + whole.mean_time_in_cell(Outcome::Escaped, 1).unwrap().value;
        assert!((through.value - in_cells).abs() < 1e-14);
        assert!(whole.mean_path_in_layer(Outcome::Reflected, 0).is_none());
    }

    #[test]
    fn residence_survives_json_and_damage_is_named() {
        let mut tally = Tally::new();
        for k in 0..50 {
            let (record, residence) = photon(k);
            tally.record_with_residence(&record, &residence);
        }
        let value = serde_json::to_value(&tally).unwrap();
        let back = Tally::from_json(value.clone()).unwrap();
        assert_eq!(back, tally);
        let mut shortened = value.clone();
        shortened["residence"]["by_outcome"][0]["time_by_cell_s"]
            .as_array_mut()
            .unwrap()
            .pop();
        let error = Tally::from_json(shortened).unwrap_err().to_string();
        assert!(
            error.contains("residence.by_outcome[0].time_by_cell_s"),
            "{error}"
        );
        let mut orphan = value;
        orphan["residence"]["by_outcome"][1] = orphan["residence"]["by_outcome"][0].clone();
        let error = Tally::from_json(orphan).unwrap_err().to_string();
        assert!(error.contains("residence.by_outcome[1]"), "{error}");
    }
}
