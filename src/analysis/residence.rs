//! Where the photons spent their time, from the Monte Carlo residence tally beside steady
//! diffusion on the same cells, and the mean path length in each declared layer.
//!
//! **The time budget.** For each cell (a layer as the walker indexes it; a sub-shell of a
//! profile) the mean time that the photons which left the medium spent in it, and the mean
//! time they spent in it and every cell below it (inside its outer radius; above its
//! bottom face in a slab), with standard errors from the tally. Beside it the residence of
//! steady diffusion with the run's source ([`crate::diffusion::estimate`]: the Green's
//! function of the diffusion equation with the surface at the boundary; sums to its mean
//! exit time). The *half-time radius* is where the cumulative share crosses one half
//! (interpolated linearly in volume inside a shell of a sphere, in depth inside a slab's
//! layer). Its Monte Carlo error is σ_F / F′, with σ_F the standard error of the mean
//! cumulative time at that radius over the mean total time (which leaves out the
//! correlation between the two; it usually makes the true error smaller) and F′ the slope
//! of the diffusion curve there.
//!
//! **Partial path lengths.** The mean path length in each declared layer per outcome, cm,
//! and for slabs its ratio to the layer's thickness, the differential pathlength factor
//! (Delpy et al. 1988, Phys. Med. Biol. 33:1433; docs/references.md, Residence 2).

use serde::Serialize;

use crate::diffusion;
use crate::medium::{Geometry, Medium, Source};
use crate::tally::{Estimate, Outcome, Tally};
use crate::transport::ledger::declared_layer_of_cells;

/// One cell of the time budget.
#[derive(Debug, Clone, Serialize)]
pub struct CellBudget {
    /// Inner radius (sphere) or top depth (slab), cm.
    pub inner_cm: f64,
    /// Outer radius (sphere) or bottom depth (slab), cm.
    pub outer_cm: f64,
    /// Declared layer of the model the cell belongs to.
    pub layer: usize,
    /// Monte Carlo: mean time in the cell, s (null without photons).
    pub time_s: Option<Estimate>,
    /// Monte Carlo: mean time in this cell and all cells below it, s.
    pub cumulative_time_s: Option<Estimate>,
    /// Steady diffusion: residence time in the cell, s.
    pub diffusion_time_s: f64,
}

/// The Monte Carlo time budget beside diffusion's, on the model's cells.
#[derive(Debug, Clone, Serialize)]
pub struct ResidenceBudget {
    /// Which photons: "escaped" (sphere) or "reflected or transmitted" (slab).
    pub photons: String,
    /// Monte Carlo mean time of those photons, s (the sum over the cells).
    pub mean_time_s: Option<Estimate>,
    /// Where steady diffusion starts its photons: "the run's source", or "the centre" for
    /// an energy-generation source (whose photons start where the energy is released).
    pub diffusion_source: String,
    /// Steady diffusion: the sum over the cells of `diffusion_time_s`, s (the mean exit
    /// time of a point source; for sources on a slab's face, the residence of the source
    /// placed as [`crate::diffusion::estimate`] places it).
    pub diffusion_mean_time_s: f64,
    /// Monte Carlo radius (sphere) or depth (slab) inside which half the time is spent,
    /// cm, with its approximate error (module docs).
    pub half_time_cm: Option<Estimate>,
    /// The same for steady diffusion, cm.
    pub diffusion_half_time_cm: Option<f64>,
    /// Every cell, innermost (topmost) first.
    pub cells: Vec<CellBudget>,
}

/// The mean path in one declared layer for one outcome.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct PathEstimate {
    /// Mean path length per photon of the outcome, cm.
    pub mean_cm: f64,
    /// Its standard error, cm.
    pub stderr_cm: f64,
    /// Slabs: mean path / layer thickness, the differential pathlength factor (null for
    /// spheres).
    pub pathlength_factor: Option<f64>,
}

/// Mean path lengths in one declared layer of the model, per outcome (null where the
/// outcome does not apply to the geometry or no photon ended that way).
#[derive(Debug, Clone, Serialize)]
pub struct LayerPath {
    /// Index of the layer in the model file's `layers`.
    pub layer: usize,
    /// Its name (may be empty).
    pub name: String,
    /// Thickness (slab) or radial extent (sphere), cm.
    pub thickness_cm: f64,
    /// Spheres: photons that escaped.
    pub escaped: Option<PathEstimate>,
    /// Slabs: photons reflected (left through the top face after entering).
    pub reflected: Option<PathEstimate>,
    /// Slabs: photons transmitted.
    pub transmitted: Option<PathEstimate>,
    /// Photons absorbed (their path until absorption).
    pub absorbed: Option<PathEstimate>,
}

impl ResidenceBudget {
    /// The budget of a run's `tally` on `medium`; `None` if the tally keeps no residence.
    pub fn new(medium: &Medium, tally: &Tally) -> Option<Self> {
        let residence = tally.residence()?;
        if residence.cells() != medium.layers().len() {
            return None;
        }
        let sphere = medium.geometry() == Geometry::Sphere;
        let (photons, outcomes) = if sphere {
            ("escaped", vec![(Outcome::Escaped, tally.escaped())])
        } else {
            (
                "reflected or transmitted",
                vec![
                    (Outcome::Reflected, tally.reflected()),
                    (Outcome::Transmitted, tally.transmitted()),
                ],
            )
        };
        let estimate = diffusion::estimate(medium);
        let declared = declared_layer_of_cells(medium);
        let cells: Vec<CellBudget> = (0..residence.cells())
            .map(|cell| {
                let (inner_cm, outer_cm) = medium.layer_bounds_cm(cell);
                CellBudget {
                    inner_cm,
                    outer_cm,
                    layer: declared[cell],
                    time_s: residence.mean_time_in_cell_of(&outcomes, cell),
                    cumulative_time_s: residence.mean_time_through_cell_of(&outcomes, cell),
                    diffusion_time_s: estimate.layer_residence_s[cell],
                }
            })
            .collect();
        let mean_time_s = cells.last().and_then(|c| c.cumulative_time_s);
        let diffusion_cumulative: Vec<f64> = cells
            .iter()
            .scan(0.0, |sum, c| {
                *sum += c.diffusion_time_s;
                Some(*sum)
            })
            .collect();
        let diffusion_total: f64 = estimate.layer_residence_s.iter().sum();
        let diffusion_half_time_cm = half_point(&cells, &diffusion_cumulative, sphere);
        let half_time_cm = mean_time_s.and_then(|total| {
            let cumulative: Vec<f64> = cells
                .iter()
                .map(|c| c.cumulative_time_s.map_or(0.0, |e| e.value))
                .collect();
            let value = half_point(&cells, &cumulative, sphere)?;
            // σ_F at the cell boundary nearest the half point, over the slope of the
            // diffusion curve there.
            let k = cells
                .iter()
                .position(|c| c.outer_cm >= value)
                .unwrap_or(cells.len() - 1);
            let sigma_f = cells[k].cumulative_time_s.map_or(f64::NAN, |e| e.stderr) / total.value;
            let slope = diffusion_slope(&cells, &diffusion_cumulative, diffusion_total, k);
            Some(Estimate {
                value,
                stderr: if slope > 0.0 {
                    sigma_f / slope
                } else {
                    f64::NAN
                },
            })
        });
        Some(Self {
            photons: photons.into(),
            mean_time_s,
            diffusion_source: if medium.source() == Source::EnergyGeneration {
                "the centre".into()
            } else {
                "the run's source".into()
            },
            diffusion_mean_time_s: diffusion_total,
            half_time_cm,
            diffusion_half_time_cm,
            cells,
        })
    }

    /// The Monte Carlo cumulative share (mean time inside / mean total) at each cell's
    /// outer edge, with its approximate error (module docs).
    pub fn monte_carlo_shares(&self) -> Vec<(f64, Estimate)> {
        let Some(total) = self.mean_time_s.filter(|t| t.value > 0.0) else {
            return Vec::new();
        };
        self.cells
            .iter()
            .filter_map(|c| {
                let e = c.cumulative_time_s?;
                Some((
                    c.outer_cm,
                    Estimate {
                        value: e.value / total.value,
                        stderr: e.stderr / total.value,
                    },
                ))
            })
            .collect()
    }

    /// The diffusion cumulative share at each cell's outer edge.
    pub fn diffusion_shares(&self) -> Vec<(f64, f64)> {
        let mut sum = 0.0;
        self.cells
            .iter()
            .map(|c| {
                sum += c.diffusion_time_s;
                (c.outer_cm, sum / self.diffusion_mean_time_s)
            })
            .collect()
    }
}

/// Where `cumulative` (at the cells' outer edges, from the first cell) reaches half its
/// last value: linear in volume inside a sphere's shell, in depth inside a slab's layer.
fn half_point(cells: &[CellBudget], cumulative: &[f64], sphere: bool) -> Option<f64> {
    let total = *cumulative.last()?;
    if total.is_nan() || total <= 0.0 {
        return None;
    }
    let target = 0.5 * total;
    let mut before = 0.0;
    for (cell, &after) in cells.iter().zip(cumulative) {
        if after >= target && after > before {
            let part = ((target - before) / (after - before)).clamp(0.0, 1.0);
            let (a, b) = (cell.inner_cm, cell.outer_cm);
            return Some(if sphere {
                (a.powi(3) + part * (b.powi(3) - a.powi(3))).cbrt()
            } else {
                a + part * (b - a)
            });
        }
        before = after;
    }
    None
}

/// Slope of the diffusion cumulative share at cell `k`'s outer edge, per cm: a central
/// difference over the neighbouring edges.
fn diffusion_slope(cells: &[CellBudget], cumulative: &[f64], total: f64, k: usize) -> f64 {
    let lo = k.saturating_sub(1);
    let hi = (k + 1).min(cells.len() - 1);
    let (r_lo, f_lo) = if lo == k {
        (cells[k].inner_cm, cumulative[k] - cells[k].diffusion_time_s)
    } else {
        (cells[lo].outer_cm, cumulative[lo])
    };
    let (r_hi, f_hi) = (cells[hi].outer_cm, cumulative[hi]);
    if r_hi > r_lo && total > 0.0 {
        (f_hi - f_lo) / total / (r_hi - r_lo)
    } else {
        0.0
    }
}

/// The mean path in each declared layer of `medium`, per outcome, from `tally` (empty if
/// the tally keeps no residence).
pub fn path_by_layer(medium: &Medium, tally: &Tally) -> Vec<LayerPath> {
    let Some(residence) = tally.residence() else {
        return Vec::new();
    };
    let declared = declared_layer_of_cells(medium);
    if residence.cells() != declared.len() {
        return Vec::new();
    }
    let slab = medium.geometry() == Geometry::Slab;
    (0..residence.layers())
        .filter_map(|layer| {
            let first = declared.iter().position(|&l| l == layer)?;
            let last = declared.iter().rposition(|&l| l == layer)?;
            let thickness_cm = medium.layer_bounds_cm(last).1 - medium.layer_bounds_cm(first).0;
            let path = |outcome: Outcome, applies: bool| -> Option<PathEstimate> {
                if !applies {
                    return None;
                }
                let e = tally.mean_path_in_layer(outcome, layer)?;
                Some(PathEstimate {
                    mean_cm: e.value,
                    stderr_cm: e.stderr,
                    pathlength_factor: slab.then(|| e.value / thickness_cm),
                })
            };
            Some(LayerPath {
                layer,
                name: medium.layers()[first].name().to_string(),
                thickness_cm,
                escaped: path(Outcome::Escaped, !slab),
                reflected: path(Outcome::Reflected, slab),
                transmitted: path(Outcome::Transmitted, slab),
                absorbed: path(Outcome::Absorbed, true),
            })
        })
        .collect()
}
