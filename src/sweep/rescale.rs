//! Absorption rescaling: one walk, many absorptions.
//!
//! When the points of a study differ only in how much the layers absorb, the photons' paths
//! need not be walked again for each point: absorption changes only the probability of
//! each path, so a walk at the least absorbing setting can be reweighted photon by photon
//! (importance sampling of the same paths). Per cell k, with nₖ the photon's interactions
//! and Lₖ its path length there (from the walk's [`PathLedger`]):
//!
//! * **albedo at fixed extinction** — w = w_walk ∏ₖ (ωₖ / ωₖ,walk)^nₖ (each scattering had
//!   probability ω);
//! * **absorption coefficient at fixed scattering coefficient** — w = w_walk
//!   exp(−Σₖ (μa,k − μa,k,walk) Lₖ) (the free-flight survival e^(−μa L) of the path).
//!
//! The walk is at the least absorbing setting of every cell, so each factor is at most 1
//! and weights stay in [0, 1]. Each point's photons then go to its tally as weighted
//! photons ([`Tally::record_weighted`]: the weight leaving the medium to the outcome, its
//! complement to absorption), so fractions, times and their errors are those of weighted
//! photons. Photons absorbed in the walk stay absorbed at every point (their paths are
//! impossible to leave by at more absorption).
//!
//! **When the weights collapse.** Far from the walked setting a few photons with short
//! paths carry nearly all the weight. A point whose Kish effective number of leaving
//! photons ([`Tally::effective_photons`]) is below [`ESS_FRACTION`] = 10 % of the photons
//! that left the walk is walked on its own instead (its row says so): the importance
//! sampling diagnostic of the trade (Kish 1965; common practice). Points walked on their
//! own are cheap exactly where rescaling fails: strong absorption ends walks early.
//!
//! The walk uses the direct walker: inside a diffusion jump the ledger holds expected, not
//! realised, interactions and paths, and a product of powers of expectations is biased.

use rayon::prelude::*;
use thiserror::Error;

use crate::medium::Medium;
use crate::simulation::{RunConfig, run};
use crate::tally::{AbsorbedAlongPath, ExactSum, Outcome, Tally};
use crate::transport::DirectWalker;
use crate::transport::PathLedger;
use crate::transport::rng::photon_rng;

/// Smallest Kish effective number of leaving photons a rescaled point may have, as a
/// fraction of the photons that left the walk; below it the point is walked on its own.
pub const ESS_FRACTION: f64 = 0.1;

/// Why a set of media cannot be rescaled from one walk (nothing was walked).
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum RescaleError {
    /// No absorption settings were given.
    #[error("no absorption settings to rescale: give at least one medium")]
    Empty,
    /// A point differs from the first in more than absorption.
    #[error(
        "point {point}: {what} is {value}, point 0 has {first}; rescaling needs points that \
         differ only in albedo (at fixed extinction) or absorption coefficient (at fixed \
         scattering coefficient)"
    )]
    NotAbsorptionOnly {
        /// Index of the point.
        point: usize,
        /// What differs (e.g. `cell 2 extinction`).
        what: String,
        /// Its value at the point.
        value: String,
        /// Its value at point 0.
        first: String,
    },
    /// No single point absorbs least in every cell (the walk must be one of the points).
    #[error(
        "no point absorbs least in every layer (cell {cell} absorbs least at point {best}, \
         another cell elsewhere): walk the points one by one"
    )]
    NoLeastAbsorbing {
        /// A cell whose least absorbing point differs from another cell's.
        cell: usize,
        /// That cell's least absorbing point.
        best: usize,
    },
    /// Resolved tallies were asked for (their absorption deposits cannot be rescaled).
    #[error("resolved tallies cannot be rescaled: run without them")]
    Resolved,
}

/// How one cell's absorption varies over the points.
#[derive(Debug, Clone, Copy, PartialEq)]
enum CellChange {
    /// The same optics at every point.
    Fixed,
    /// The albedo varies at fixed extinction.
    Albedo,
    /// The absorption coefficient varies at fixed scattering coefficient.
    AbsorptionCoefficient,
}

/// Which point is walked and how every other point's weights follow from it.
#[derive(Debug, Clone, PartialEq)]
pub struct RescalePlan {
    walk_point: usize,
    /// Per point, per cell: ln(ω / ω_walk) for albedo cells, μa − μa,walk (1/cm) for
    /// absorption-coefficient cells, 0 for fixed ones.
    steps: Vec<Vec<f64>>,
    changes: Vec<CellChange>,
}

impl RescalePlan {
    /// Checks that `media` differ only in absorption and finds the walk point.
    ///
    /// # Errors
    /// [`RescaleError`] naming the first point and quantity that prevents rescaling.
    pub fn new(media: &[Medium]) -> Result<Self, RescaleError> {
        let first = media.first().ok_or(RescaleError::Empty)?;
        let cells = first.layers().len();
        let differs = |point: usize, what: String, value: String, first: String| {
            Err(RescaleError::NotAbsorptionOnly {
                point,
                what,
                value,
                first,
            })
        };
        for (point, medium) in media.iter().enumerate().skip(1) {
            if medium.geometry() != first.geometry() {
                return differs(
                    point,
                    "the geometry".into(),
                    format!("{:?}", medium.geometry()),
                    format!("{:?}", first.geometry()),
                );
            }
            if medium.layers().len() != cells || medium.boundaries_cm() != first.boundaries_cm() {
                return differs(
                    point,
                    "the layer boundaries".into(),
                    format!("{:?} cm", medium.boundaries_cm()),
                    format!("{:?} cm", first.boundaries_cm()),
                );
            }
            if medium.source() != first.source()
                || medium.source_layer() != first.source_layer()
                || medium.emission().is_some()
                || first.emission().is_some()
            {
                return differs(
                    point,
                    "the source".into(),
                    format!("{:?}", medium.source()),
                    format!("{:?}", first.source()),
                );
            }
            if medium.ambient_above() != first.ambient_above()
                || medium.ambient_below() != first.ambient_below()
            {
                return differs(
                    point,
                    "the ambient index".into(),
                    format!("{} / {}", medium.ambient_above(), medium.ambient_below()),
                    format!("{} / {}", first.ambient_above(), first.ambient_below()),
                );
            }
            for (cell, (a, b)) in medium.layers().iter().zip(first.layers()).enumerate() {
                if a.phase() != b.phase() {
                    return differs(
                        point,
                        format!("cell {cell} phase function"),
                        format!("{:?}", a.phase()),
                        format!("{:?}", b.phase()),
                    );
                }
                if a.refractive_index() != b.refractive_index() {
                    return differs(
                        point,
                        format!("cell {cell} refractive index"),
                        a.refractive_index().to_string(),
                        b.refractive_index().to_string(),
                    );
                }
            }
        }
        let mut changes = Vec::with_capacity(cells);
        for cell in 0..cells {
            let all = |f: &dyn Fn(&Medium) -> f64| {
                media.iter().all(|m| f(m).to_bits() == f(first).to_bits())
            };
            let extinction = |m: &Medium| m.layers()[cell].extinction_per_cm();
            let albedo = |m: &Medium| m.layers()[cell].albedo();
            let scattering = |m: &Medium| m.layers()[cell].scattering_per_cm();
            let change = if all(&extinction) && all(&albedo) {
                CellChange::Fixed
            } else if all(&extinction) {
                CellChange::Albedo
            } else if all(&scattering) {
                CellChange::AbsorptionCoefficient
            } else {
                let point = media
                    .iter()
                    .position(|m| scattering(m).to_bits() != scattering(first).to_bits())
                    .unwrap_or(0);
                return differs(
                    point,
                    format!("cell {cell} extinction and scattering coefficient"),
                    format!(
                        "{} and {} /cm",
                        extinction(&media[point]),
                        scattering(&media[point])
                    ),
                    format!("{} and {} /cm", extinction(first), scattering(first)),
                );
            };
            changes.push(change);
        }
        // The least absorbing point of each varying cell; one point must be it for all.
        let absorption = |m: &Medium, cell: usize| m.layers()[cell].absorption_per_cm();
        let least = |cell: usize| {
            (0..media.len())
                .min_by(|&a, &b| {
                    absorption(&media[a], cell).total_cmp(&absorption(&media[b], cell))
                })
                .unwrap_or(0)
        };
        let varying: Vec<usize> = (0..cells)
            .filter(|&c| changes[c] != CellChange::Fixed)
            .collect();
        let walk_point = varying.first().map_or(0, |&c| least(c));
        for &cell in &varying {
            let best = least(cell);
            if absorption(&media[walk_point], cell) > absorption(&media[best], cell) {
                return Err(RescaleError::NoLeastAbsorbing { cell, best });
            }
        }
        let walk = &media[walk_point];
        let steps = media
            .iter()
            .map(|m| {
                (0..cells)
                    .map(|cell| match changes[cell] {
                        CellChange::Fixed => 0.0,
                        CellChange::Albedo => {
                            let (here, walked) =
                                (m.layers()[cell].albedo(), walk.layers()[cell].albedo());
                            if here == walked {
                                0.0
                            } else {
                                (here / walked).ln()
                            }
                        }
                        CellChange::AbsorptionCoefficient => {
                            absorption(m, cell) - absorption(walk, cell)
                        }
                    })
                    .collect()
            })
            .collect();
        Ok(Self {
            walk_point,
            steps,
            changes,
        })
    }

    /// The point that is walked (absorbing least in every cell).
    pub fn walk_point(&self) -> usize {
        self.walk_point
    }

    /// Number of points.
    pub fn points(&self) -> usize {
        self.steps.len()
    }

    /// The factor by which point `point` multiplies the weight of a photon whose walk left
    /// `ledger` (1 for the walked point).
    fn factor(&self, point: usize, ledger: &PathLedger) -> f64 {
        let steps = &self.steps[point];
        let mut log = 0.0;
        for &cell in ledger.touched_cells() {
            let step = steps[cell];
            if step == 0.0 {
                continue;
            }
            log += match self.changes[cell] {
                CellChange::Fixed => 0.0,
                CellChange::Albedo => step * ledger.interactions_in_cell(cell),
                CellChange::AbsorptionCoefficient => -step * ledger.path_in_cell_cm(cell),
            };
        }
        if log == 0.0 { 1.0 } else { log.exp().min(1.0) }
    }
}

/// One point of a rescaled study.
#[derive(Debug, Clone)]
pub struct RescaledPoint {
    /// The point's photons (weighted where rescaled).
    pub tally: Tally,
    /// Whether the point's tally comes from the shared walk (`false`: walked on its own,
    /// or the walked point itself).
    pub reweighted: bool,
    /// Kish's effective number of photons that left the medium, over the rescaled weights
    /// ([`Tally::effective_photons`]).
    pub effective_photons: f64,
}

/// The result of [`run_rescaled`].
#[derive(Debug, Clone)]
pub struct RescaledRun {
    /// One per medium, in order.
    pub points: Vec<RescaledPoint>,
    /// The point that was walked for all.
    pub walk_point: usize,
    /// Points walked on their own because their weights collapsed (warn about these).
    pub walked_alone: Vec<usize>,
    /// Wall-clock time of everything, s.
    pub elapsed_s: f64,
}

/// Runs `config.photons` photons once through the least absorbing of `media` with the
/// direct walker and rescales them to every medium (see the module docs), walking on its
/// own any point whose weights collapse (with `config.method`). Point i's own walk, and
/// the shared walk of the walk point, use random stream i (as the points of a sweep do);
/// `config.stream` is not used, the seed, photon range, step cap and absorption treatment
/// are.
///
/// # Errors
/// [`RescaleError`] before any photon is walked, when the media differ in more than
/// absorption or resolved tallies are asked for.
pub fn run_rescaled(media: &[Medium], config: &RunConfig) -> Result<RescaledRun, RescaleError> {
    let plan = RescalePlan::new(media)?;
    if config.resolved.is_some() {
        return Err(RescaleError::Resolved);
    }
    let started = std::time::Instant::now();
    let walk = plan.walk_point;
    let walker =
        DirectWalker::new(&media[walk], config.limits).with_absorption(config.absorption, false);
    let weighted = config.absorption == crate::simulation::Absorption::Weighted;
    let stream = walk as u64;
    let points = plan.points();
    // Points whose weights collapse already in a pilot of the first photons are walked on
    // their own without being rescaled (rescaling them would cost as much as walking them).
    let pilot = pilot_collapse(&plan, &walker, &media[walk], config, stream);
    let rescale: Vec<bool> = (0..points).map(|p| !pilot[p]).collect();
    let fresh = || vec![Tally::new(); points];
    let end = config.first_photon + config.photons;
    // One batch of one job per thread: each job holds a tally per point, whose merges
    // cost more than short jobs save.
    let batch = config.photons.max(1);
    let mut tallies = fresh();
    let mut start = config.first_photon;
    let empty = AbsorbedAlongPath::default();
    while start < end {
        let stop = (start + batch).min(end);
        // One job per thread: each holds a tally per point, and merging those costs more
        // than the photons of a short job.
        let jobs = rayon::current_num_threads().max(1) as u64;
        let ranges: Vec<(u64, u64)> = (0..jobs)
            .map(|k| {
                let span = stop - start;
                (start + span * k / jobs, start + span * (k + 1) / jobs)
            })
            .filter(|(a, b)| a < b)
            .collect();
        let part = ranges
            .into_par_iter()
            .map(|(first, last)| {
                let mut tallies = fresh();
                let mut absorbed = AbsorbedAlongPath::default();
                let mut ledger = PathLedger::for_medium(&media[walk]);
                for photon in first..last {
                    let mut rng = photon_rng(config.seed, stream, photon);
                    let record =
                        walker.walk_weighted_with_ledger(&mut rng, &mut absorbed, &mut ledger);
                    for (point, tally) in tallies.iter_mut().enumerate() {
                        if !rescale[point] {
                            continue;
                        }
                        if point == walk {
                            if weighted {
                                tally.record_weighted(&record, &absorbed);
                            } else {
                                tally.record(&record);
                            }
                        } else if record.outcome == Outcome::Absorbed {
                            tally.record_weighted(&record, &empty);
                        } else {
                            let mut rescaled = record;
                            rescaled.weight *= plan.factor(point, &ledger);
                            tally.record_weighted(&rescaled, &empty);
                        }
                    }
                }
                tallies
            })
            .reduce(fresh, |mut a, b| {
                a.iter_mut().zip(&b).for_each(|(a, b)| a.merge(b));
                a
            });
        tallies.iter_mut().zip(&part).for_each(|(a, b)| a.merge(b));
        start = stop;
    }
    let walked = &tallies[walk];
    let left_walk = walked.launched() - walked.absorbed().count();
    let mut walked_alone = Vec::new();
    let points = tallies
        .into_iter()
        .enumerate()
        .map(|(point, tally)| {
            let effective = tally.effective_photons();
            if point != walk && (!rescale[point] || effective < ESS_FRACTION * left_walk as f64) {
                walked_alone.push(point);
                let own = run(
                    &media[point],
                    &RunConfig {
                        stream: point as u64,
                        ..config.clone()
                    },
                )
                .tally;
                RescaledPoint {
                    effective_photons: own.effective_photons(),
                    tally: own,
                    reweighted: false,
                }
            } else {
                RescaledPoint {
                    effective_photons: effective,
                    tally,
                    reweighted: point != walk,
                }
            }
        })
        .collect();
    Ok(RescaledRun {
        points,
        walk_point: walk,
        walked_alone,
        elapsed_s: started.elapsed().as_secs_f64(),
    })
}

/// Most photons of the pilot that decides which points are not worth rescaling (it takes
/// 5 % of the photons, at least 100, at most this).
const PILOT_PHOTONS: u64 = 1_000;

/// Per point, whether its Kish effective number of leaving photons over the first photons
/// of the walk (5 % of them, between 100 and [`PILOT_PHOTONS`]) is below [`ESS_FRACTION`] of the pilot photons
/// that left (sums exact and in photon order, so the decision is the same for any thread
/// count).
fn pilot_collapse(
    plan: &RescalePlan,
    walker: &DirectWalker,
    medium: &Medium,
    config: &RunConfig,
    stream: u64,
) -> Vec<bool> {
    let photons = (config.photons / 20)
        .clamp(100, PILOT_PHOTONS)
        .min(config.photons);
    let points = plan.points();
    let mut sums = vec![(ExactSum::new(), ExactSum::new()); points];
    let mut left = 0u64;
    let mut absorbed = AbsorbedAlongPath::default();
    let mut ledger = PathLedger::for_medium(medium);
    for photon in config.first_photon..config.first_photon + photons {
        let mut rng = photon_rng(config.seed, stream, photon);
        let record = walker.walk_weighted_with_ledger(&mut rng, &mut absorbed, &mut ledger);
        if record.outcome == Outcome::Absorbed {
            continue;
        }
        left += 1;
        for (point, (sum, squares)) in sums.iter_mut().enumerate() {
            let w = record.weight * plan.factor(point, &ledger);
            sum.add(w);
            squares.add(w * w);
        }
    }
    sums.iter()
        .enumerate()
        .map(|(point, (sum, squares))| {
            let (v1, v2) = (sum.value(), squares.value());
            let effective = if v2 > 0.0 { v1 * v1 / v2 } else { 0.0 };
            point != plan.walk_point && left > 0 && effective < ESS_FRACTION * left as f64
        })
        .collect()
}

/// Whether `media` (two or more) could be rescaled from one walk (nothing walked).
pub fn can_rescale(media: &[Medium]) -> bool {
    media.len() > 1 && RescalePlan::new(media).is_ok()
}
