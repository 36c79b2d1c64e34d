//! The per-photon ledger: how long one photon stayed in each cell of the medium and how
//! many interactions it had there.
//!
//! A *cell* is one of the medium's internal layers, as the walkers index them: a plain
//! layer of the model, or one sub-shell of a tabulated profile. Each cell belongs to one
//! *declared layer* of the model file (a profile layer holds many cells), and
//! [`PathLedger::path_in_layer_cm`] sums its cells' paths.
//!
//! **What is recorded.**
//! * Direct flights: each flight's time goes to the cell it crosses, segment by segment
//!   where a flight crosses boundaries, so the ledger's total equals the photon's time
//!   (up to rounding) and the path in a cell is exactly (c/n) × its time there.
//!   Interactions: every scattering, and the absorption that ends a walk, in the cell
//!   where it happens.
//! * Diffusion jumps (slabs) and radial passages (spheres) do not follow the photon inside
//!   the jump. They add, for the sampled jump time t, the *expected* split of t over the
//!   cells given where the jump started and, for passages, which exit it took:
//!   t × E[time in cell; exit] / E[T; exit], and v σ_s of each cell times its time as the
//!   expected scatterings there. By the tower property, E[ledger entry] equals the expected
//!   true residence (the jump's own law stands in for the walk it replaces), so means over
//!   photons (the residence tally, mean partial paths) are unbiased wherever the jump law
//!   is; a single photon's entries inside a jump are expectations, not a realised path
//!   ([`PathLedger::includes_expectations`] says whether any are).
//!
//! **Cost.** The buffers are allocated once ([`PathLedger::for_medium`]) and reused:
//! [`PathLedger::clear`] resets only the cells the last photon touched. The direct walker
//! adds a flight's time to a local sum and books it once per stay in a cell.

use std::sync::Arc;

use crate::medium::Medium;
use crate::units::SPEED_OF_LIGHT_CM_S;

/// What the ledger knows about the medium's cells, shared by every ledger of one medium.
#[derive(Debug)]
struct CellMap {
    /// Declared layer (index in the model file's `layers`) of each cell.
    declared_layer: Vec<usize>,
    /// Number of declared layers.
    declared_layers: usize,
    /// Speed of light in each cell, c/n, cm/s.
    speed_cm_s: Vec<f64>,
    /// Scatterings per second in each cell, v σ_s, 1/s.
    scattering_rate_per_s: Vec<f64>,
}

/// Per-photon residence times and interactions by cell (see the module docs). Reusable:
/// the walkers clear it at the start of each photon.
#[derive(Debug, Clone)]
pub struct PathLedger {
    map: Arc<CellMap>,
    /// Time in each cell, s.
    time_s: Vec<f64>,
    /// Interactions in each cell (scatterings, and the final absorption).
    interactions: Vec<f64>,
    /// Cells with an entry for this photon, in the order first touched.
    touched: Vec<usize>,
    /// Whether each cell is in `touched`.
    marked: Vec<bool>,
    /// Whether some entry is a jump's expectation.
    expected: bool,
}

/// The declared layer of each cell of `medium`: sub-shells of a tabulated profile belong
/// to the profile's layer, other cells are one declared layer each, in order.
pub fn declared_layer_of_cells(medium: &Medium) -> Vec<usize> {
    let cells = medium.layers().len();
    let mut declared = Vec::with_capacity(cells);
    let mut next = 0usize;
    let mut cell = 0usize;
    let profiles = medium.profiles();
    while cell < cells {
        match profiles.iter().find(|p| p.first_sub_shell == cell) {
            Some(profile) => {
                let count = profile.sub_shells.clamp(1, cells - cell);
                let layer = profile.model_layer.max(next);
                declared.extend(std::iter::repeat_n(layer, count));
                next = layer + 1;
                cell += count;
            }
            None => {
                declared.push(next);
                next += 1;
                cell += 1;
            }
        }
    }
    declared
}

impl PathLedger {
    /// An empty ledger for the cells of `medium`.
    pub fn for_medium(medium: &Medium) -> Self {
        let declared_layer = declared_layer_of_cells(medium);
        let declared_layers = declared_layer.last().map_or(0, |&l| l + 1);
        let speed_cm_s: Vec<f64> = medium
            .layers()
            .iter()
            .map(|l| SPEED_OF_LIGHT_CM_S / l.refractive_index())
            .collect();
        let scattering_rate_per_s = medium
            .layers()
            .iter()
            .zip(&speed_cm_s)
            .map(|(l, v)| v * l.scattering_per_cm())
            .collect();
        let cells = declared_layer.len();
        Self {
            map: Arc::new(CellMap {
                declared_layer,
                declared_layers,
                speed_cm_s,
                scattering_rate_per_s,
            }),
            time_s: vec![0.0; cells],
            interactions: vec![0.0; cells],
            touched: Vec::new(),
            marked: vec![false; cells],
            expected: false,
        }
    }

    /// Forgets the last photon (cost proportional to the cells it touched).
    pub fn clear(&mut self) {
        for &cell in &self.touched {
            self.time_s[cell] = 0.0;
            self.interactions[cell] = 0.0;
            self.marked[cell] = false;
        }
        self.touched.clear();
        self.expected = false;
    }

    /// Number of cells (the medium's internal layers).
    pub fn cells(&self) -> usize {
        self.time_s.len()
    }

    /// Number of declared layers of the model.
    pub fn declared_layers(&self) -> usize {
        self.map.declared_layers
    }

    /// The declared layer that cell `cell` belongs to.
    pub fn layer_of_cell(&self, cell: usize) -> usize {
        self.map.declared_layer[cell]
    }

    /// Time the photon spent in cell `cell`, s.
    pub fn time_in_cell(&self, cell: usize) -> f64 {
        self.time_s[cell]
    }

    /// Interactions in cell `cell`: scatterings, plus 1 where the photon was absorbed
    /// (expected values inside jumps).
    pub fn interactions_in_cell(&self, cell: usize) -> f64 {
        self.interactions[cell]
    }

    /// Path length in cell `cell`, cm: (c/n) × the time there.
    pub fn path_in_cell_cm(&self, cell: usize) -> f64 {
        self.time_s[cell] * self.map.speed_cm_s[cell]
    }

    /// Path length in declared layer `layer`, cm (the sum over its cells).
    pub fn path_in_layer_cm(&self, layer: usize) -> f64 {
        self.touched
            .iter()
            .filter(|&&cell| self.map.declared_layer[cell] == layer)
            .map(|&cell| self.path_in_cell_cm(cell))
            .sum()
    }

    /// Adds the path in each declared layer, cm, to `out` (length [`Self::declared_layers`]).
    ///
    /// # Panics
    /// If `out` is shorter than the number of declared layers.
    pub fn add_paths_by_layer_cm(&self, out: &mut [f64]) {
        for &cell in &self.touched {
            out[self.map.declared_layer[cell]] += self.path_in_cell_cm(cell);
        }
    }

    /// Interactions in declared layer `layer` (the sum over its cells).
    pub fn interactions_in_layer(&self, layer: usize) -> f64 {
        self.touched
            .iter()
            .filter(|&&cell| self.map.declared_layer[cell] == layer)
            .map(|&cell| self.interactions[cell])
            .sum()
    }

    /// The cells with an entry for this photon, in the order first touched (the others
    /// hold zeros).
    pub fn touched_cells(&self) -> &[usize] {
        &self.touched
    }

    /// Time over all cells, s (the photon's time in the medium, up to rounding).
    pub fn total_time_s(&self) -> f64 {
        self.touched.iter().map(|&cell| self.time_s[cell]).sum()
    }

    /// Whether some entry is the expectation of a diffusion jump rather than a followed
    /// flight (see the module docs).
    pub fn includes_expectations(&self) -> bool {
        self.expected
    }

    #[inline(always)]
    fn touch(&mut self, cell: usize) {
        if !self.marked[cell] {
            self.marked[cell] = true;
            self.touched.push(cell);
        }
    }
}

/// Where a walker books residence; [`NoLedger`] books nothing and compiles away.
pub(crate) trait Ledger {
    /// Followed flights: `time_s` in `cell`, and `interactions` there.
    fn book(&mut self, cell: usize, time_s: f64, interactions: f64);
    /// Part of a diffusion jump: `time_s` in `cell` (an expectation), with the cell's
    /// expected scatterings v σ_s × `time_s`.
    fn book_diffusing(&mut self, cell: usize, time_s: f64);
}

/// The ledger of a walk that keeps none.
pub(crate) struct NoLedger;

impl Ledger for NoLedger {
    #[inline(always)]
    fn book(&mut self, _: usize, _: f64, _: f64) {}

    #[inline(always)]
    fn book_diffusing(&mut self, _: usize, _: f64) {}
}

impl Ledger for PathLedger {
    #[inline(always)]
    fn book(&mut self, cell: usize, time_s: f64, interactions: f64) {
        self.touch(cell);
        self.time_s[cell] += time_s;
        self.interactions[cell] += interactions;
    }

    #[inline]
    fn book_diffusing(&mut self, cell: usize, time_s: f64) {
        self.touch(cell);
        self.expected = true;
        self.time_s[cell] += time_s;
        self.interactions[cell] += time_s * self.map.scattering_rate_per_s[cell];
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::{Layer, Source};
    use crate::transport::PhaseFunction;

    #[test]
    fn books_by_cell_and_clears_only_what_was_touched() {
        let layer = |n| Layer::new("", 1.0, 0.9, PhaseFunction::Isotropic, n).unwrap();
        let medium = Medium::slab(
            vec![(1.0, layer(1.0)), (2.0, layer(1.5)), (1.0, layer(1.0))],
            1.0,
            Source::normal_beam(),
        )
        .unwrap();
        let mut ledger = PathLedger::for_medium(&medium);
        assert_eq!(ledger.cells(), 3);
        assert_eq!(ledger.declared_layers(), 3);
        ledger.book(1, 2.0e-10, 3.0);
        ledger.book(1, 1.0e-10, 1.0);
        ledger.book_diffusing(2, 1.0e-10);
        assert_eq!(ledger.touched_cells(), &[1, 2]);
        assert_eq!(ledger.time_in_cell(1), 3.0e-10);
        assert_eq!(ledger.interactions_in_cell(1), 4.0);
        // Path = (c/n) t.
        let expected = 3.0e-10 * SPEED_OF_LIGHT_CM_S / 1.5;
        assert!((ledger.path_in_layer_cm(1) / expected - 1.0).abs() < 1e-15);
        // v σ_s t with σ = 1/cm, albedo 0.9, n = 1.
        let scatterings = 1.0e-10 * SPEED_OF_LIGHT_CM_S * 0.9;
        assert!((ledger.interactions_in_cell(2) / scatterings - 1.0).abs() < 1e-15);
        assert!(ledger.includes_expectations());
        ledger.clear();
        assert!(ledger.touched_cells().is_empty());
        assert_eq!(ledger.time_in_cell(1), 0.0);
        assert!(!ledger.includes_expectations());
    }

    /// The ledger of every photon adds up to its time, and keeping it changes nothing.
    fn check_walks(
        medium: &Medium,
        walk: impl Fn(&mut crate::transport::rng::PhotonRng) -> crate::tally::PhotonRecord,
        walk_booking: impl Fn(
            &mut crate::transport::rng::PhotonRng,
            &mut PathLedger,
        ) -> crate::tally::PhotonRecord,
        tolerance: f64,
    ) -> bool {
        let mut ledger = PathLedger::for_medium(medium);
        let mut any_expected = false;
        for photon in 0..300 {
            let plain = walk(&mut crate::transport::rng::photon_rng(3, 0, photon));
            let mut rng = crate::transport::rng::photon_rng(3, 0, photon);
            let booked = walk_booking(&mut rng, &mut ledger);
            assert_eq!(plain, booked, "photon {photon}");
            let total = ledger.total_time_s();
            assert!(booked.time_s >= 0.0, "{booked:?}");
            assert!(
                (total - booked.time_s).abs() <= tolerance * booked.time_s,
                "photon {photon}: ledger {total:e} s, walk {:e} s",
                booked.time_s
            );
            let interactions: f64 = (0..ledger.cells())
                .map(|c| ledger.interactions_in_cell(c))
                .sum();
            let absorbed = f64::from(booked.outcome == crate::tally::Outcome::Absorbed);
            assert!(
                (interactions - booked.scatterings - absorbed).abs()
                    <= 1e-6 * (1.0 + booked.scatterings),
                "photon {photon}: {interactions} interactions, {} scatterings",
                booked.scatterings
            );
            any_expected |= ledger.includes_expectations();
        }
        any_expected
    }

    #[test]
    fn direct_walks_book_their_whole_time() {
        use crate::transport::{DirectWalker, WalkLimits};
        let layer =
            |s, a, n| Layer::new("", s, a, PhaseFunction::henyey_greenstein(0.8).unwrap(), n);
        let slab = Medium::slab(
            vec![
                (0.1, layer(50.0, 0.95, 1.4).unwrap()),
                (0.3, layer(20.0, 0.99, 1.33).unwrap()),
            ],
            1.0,
            Source::normal_beam(),
        )
        .unwrap();
        let walker = DirectWalker::new(&slab, WalkLimits::default());
        let expected = check_walks(
            &slab,
            |rng| walker.walk(rng),
            |rng, ledger| walker.walk_with_ledger(rng, ledger),
            1e-12,
        );
        assert!(!expected);
        let shell = |s| Layer::new("", s, 0.9, PhaseFunction::Isotropic, 1.0).unwrap();
        let sphere = Medium::sphere(
            vec![(1.0, shell(10.0)), (2.0, shell(3.0)), (3.0, shell(1.0))],
            Source::centre(),
        )
        .unwrap();
        let walker = DirectWalker::new(&sphere, WalkLimits::default());
        check_walks(
            &sphere,
            |rng| walker.walk(rng),
            |rng, ledger| walker.walk_with_ledger(rng, ledger),
            1e-12,
        );
    }

    #[test]
    fn accelerated_walks_book_their_whole_time() {
        use crate::transport::{AcceleratedWalker, Acceleration, WalkLimits};
        // A sphere of 12 shells, τ = 600 in all (radial passages), and a thick slab (local
        // jumps).
        let shells = (1..=12)
            .map(|k| {
                let sigma = 100.0 - 5.0 * k as f64;
                let layer = Layer::new("", sigma, 0.999, PhaseFunction::Isotropic, 1.0).unwrap();
                (0.6 * k as f64 / 1.2, layer)
            })
            .collect();
        let sphere = Medium::sphere(shells, Source::centre()).unwrap();
        let walker =
            AcceleratedWalker::new(&sphere, WalkLimits::default(), Acceleration::default());
        assert!(walker.has_jumps());
        let expected = check_walks(
            &sphere,
            |rng| walker.walk(rng),
            |rng, ledger| walker.walk_with_ledger(rng, ledger),
            1e-9,
        );
        assert!(expected);
        let layer = |s| {
            Layer::new(
                "",
                s,
                0.999,
                PhaseFunction::henyey_greenstein(0.5).unwrap(),
                1.0,
            )
        };
        let slab = Medium::slab(
            vec![(1.0, layer(200.0).unwrap()), (1.0, layer(300.0).unwrap())],
            1.0,
            Source::normal_beam(),
        )
        .unwrap();
        let walker = AcceleratedWalker::new(&slab, WalkLimits::default(), Acceleration::default());
        assert!(walker.has_jumps());
        let expected = check_walks(
            &slab,
            |rng| walker.walk(rng),
            |rng, ledger| walker.walk_with_ledger(rng, ledger),
            1e-9,
        );
        assert!(expected);
    }
}
