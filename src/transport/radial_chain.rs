//! Radial diffusion passages for spheres: in a spherically symmetric medium the escape time
//! depends on the photon's radius alone, so deep inside, where diffusion holds, the walk can
//! jump from shell to shell of a fixed set of node radii with exact first-passage laws of
//! the radial diffusion ([`super::radial_passage`]), precomputed once per model.
//!
//! **Segments.** Shells joined by smooth boundaries (profile sub-shells), with σ_tr > 0,
//! form a region; within it, diffusion is trusted where the transport mean free path
//! changes by at most ε over γ transport mean free paths, l_tr |d ln l_tr/dr| ≤ ε/γ (the
//! neglected corrections to diffusion are of second order in that gradient). Each maximal
//! run of such shells is a segment [L, U]. Its lower end L is the centre or an exit.
//!
//! **Nodes.** Measured in transport optical depth from each exit end, nodes sit at γ, 2γ,
//! 4γ, … (at most half-way if both ends are exits, with a node half-way; up to the centre
//! otherwise). Cell k lies between nodes k and k + 1; a photon scattering in cell k (the
//! start domain excludes the outermost cell at each exit end, γ thick) diffuses until it
//! first reaches node k − 1 or node k + 2. So every passage starts at least γ transport mean
//! free paths from where it can end, and a walk from the centre of a star to its surface
//! needs one or two passages per doubling of the depth, about 2 log₂(τ/γ) in all, instead
//! of (R/(ε L_D))² small spheres.
//!
//! **A passage** starts at a scattering site x. For anisotropic scattering the walk keeps
//! the memory of the incoming direction u: its expected displacement from x is g l_tr u,
//! so diffusion starts at x + g l_tr u. It ends at the exit node's radius, at a uniformly
//! random point of that sphere (the medium is spherically symmetric), with the direction
//! of a first crossing (the Milne law, [`super::crossing`]) about the outward or inward
//! normal; the walk then finishes that flight directly. The exits are widened by the
//! extrapolation length q l_tr, the mean crossing cosine of the same law, which makes the
//! end point and the time consistent (README, "Accelerated walk").

use nalgebra::Vector3;
use rand::Rng;
use rayon::prelude::*;

use std::sync::Arc;

use super::crossing::{CrossingLaw, laws_of};
use super::radial_passage::{CellSpec, Passage, PassageCell};
use super::radial_profile::Piece;
use crate::medium::Medium;
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Settings the chain needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct ChainSettings {
    /// Smallest distance from a passage's start to its exits, transport mean free paths.
    pub(crate) gamma: f64,
    /// Largest change of l_tr over γ transport mean free paths where diffusion is trusted.
    pub(crate) epsilon: f64,
}

/// One passage as the walker applies it.
#[derive(Debug, Clone, Copy)]
pub(super) struct Transition<'a> {
    /// Radius of the exit node reached, cm.
    pub(super) exit_radius_cm: f64,
    /// The crossing law at the exit (of the shell the photon crosses it from).
    pub(super) exit_law: &'a CrossingLaw,
    /// The passage itself (side, time, scatterings, absorption hazard).
    pub(super) passage: Passage,
    /// The cell whose tables gave it.
    cell: &'a PassageCell,
}

impl Transition<'_> {
    /// Books `time_s` of the passage (all of it, or the part before an absorption) in
    /// `ledger`, split over the shells by its expected residence.
    pub(super) fn book<L: super::ledger::Ledger>(&self, time_s: f64, ledger: &mut L) {
        self.cell.book(&self.passage, time_s, ledger);
    }
}

/// A run of shells where radial passages apply.
#[derive(Debug, Clone)]
struct Segment {
    /// Node radii, ascending; `nodes_cm[0]` is the lower end (0 at the centre).
    nodes_cm: Vec<f64>,
    /// `cells[k]` spans nodes k and k + 1; `Some` where passages start.
    cells: Vec<Option<PassageCell>>,
    /// Radii between which passages start, cm.
    start_cm: (f64, f64),
}

/// The radial passages of a sphere, precomputed. Immutable and `Sync`.
#[derive(Debug, Clone)]
pub(super) struct RadialChain {
    segments: Vec<Segment>,
    /// Per layer: the segment and the squared radii (cm²) between which passages may start
    /// in that layer.
    start_domain: Vec<Option<(usize, f64, f64)>>,
    /// Per layer: g l_tr, cm (the displacement memory of an anisotropic scattering).
    persistence_cm: Vec<f64>,
    /// The distinct crossing laws of the layers.
    laws: Vec<Arc<CrossingLaw>>,
    /// Per layer: the index of its crossing law.
    law_of_layer: Vec<usize>,
    /// Outer radius of each layer, cm.
    boundaries_cm: Vec<f64>,
}

/// The radial properties of one shell.
#[derive(Debug, Clone, Copy)]
struct Shell {
    inner_cm: f64,
    outer_cm: f64,
    /// Transport extinction, 1/cm.
    transport: f64,
    piece: Piece,
}

/// Where radial passages start in a sphere: the segments' node radii and start domains,
/// without the passage tables (cheap to compute, for cost estimates).
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct ChainLayout {
    /// Per segment: first and last shell, node radii (cm), start cells, start domain (cm).
    segments: Vec<SegmentLayout>,
}

#[derive(Debug, Clone, PartialEq)]
struct SegmentLayout {
    first: usize,
    last: usize,
    nodes_cm: Vec<f64>,
    start_cells: Vec<usize>,
    start_cm: (f64, f64),
}

impl ChainLayout {
    /// The layout for a sphere (`medium` must be one).
    pub(crate) fn new(medium: &Medium, settings: ChainSettings) -> Self {
        let shells = shells(medium);
        let segments = trusted_runs(medium, &shells, settings)
            .into_iter()
            .filter_map(|(first, last)| {
                let (nodes_cm, start_cells) = place_nodes(&shells[first..=last], settings)?;
                let centre = nodes_cm[0] == 0.0;
                let lowest = *start_cells.first()?;
                let highest = *start_cells.last()?;
                let start_cm = (
                    if centre && lowest == 0 {
                        0.0
                    } else {
                        nodes_cm[lowest]
                    },
                    nodes_cm[highest + 1],
                );
                Some(SegmentLayout {
                    first,
                    last,
                    nodes_cm,
                    start_cells,
                    start_cm,
                })
            })
            .collect();
        Self { segments }
    }

    /// Whether no passage can start anywhere.
    pub(crate) fn is_empty(&self) -> bool {
        self.segments.is_empty()
    }

    /// Number of node radii over all segments.
    pub(crate) fn node_count(&self) -> usize {
        self.segments.iter().map(|s| s.nodes_cm.len()).sum()
    }

    /// The radii (cm) between which passages start, per segment.
    pub(crate) fn start_domains_cm(&self) -> Vec<(f64, f64)> {
        self.segments.iter().map(|s| s.start_cm).collect()
    }
}

/// The radial properties of every shell of a sphere.
fn shells(medium: &Medium) -> Vec<Shell> {
    medium
        .layers()
        .iter()
        .enumerate()
        .map(|(index, layer)| {
            let (inner_cm, outer_cm) = medium.layer_bounds_cm(index);
            let transport = layer.transport_extinction_per_cm();
            let speed = SPEED_OF_LIGHT_CM_S / layer.refractive_index();
            Shell {
                inner_cm,
                outer_cm,
                transport,
                piece: Piece {
                    lower_cm: inner_cm,
                    upper_cm: outer_cm,
                    diffusion: if transport > 0.0 {
                        speed / (3.0 * transport)
                    } else {
                        0.0
                    },
                    scattering_rate: speed * layer.scattering_per_cm(),
                    absorption_rate: speed * layer.absorption_per_cm(),
                    shell: index,
                },
            }
        })
        .collect()
}

impl RadialChain {
    /// The chain for a sphere (`medium` must be one); empty if no segment is thick enough.
    pub(super) fn new(medium: &Medium, settings: ChainSettings) -> Self {
        let shells = shells(medium);
        let layout = ChainLayout::new(medium, settings);
        let (laws, law_of_layer) = laws_of(medium.layers().iter().map(|layer| *layer.phase()));
        // Extrapolation length per shell, cm: q l_tr with q the mean crossing cosine.
        let extrapolation_cm: Vec<f64> = shells
            .iter()
            .zip(&law_of_layer)
            .map(|(shell, &law)| laws[law].extrapolation_length() / shell.transport)
            .collect();
        let specs: Vec<(usize, usize, CellSpec)> = layout
            .segments
            .iter()
            .enumerate()
            .flat_map(|(index, segment)| {
                let run = &shells[segment.first..=segment.last];
                let extrapolation = &extrapolation_cm[segment.first..=segment.last];
                segment.start_cells.iter().map(move |&k| {
                    (
                        index,
                        k,
                        cell_spec(run, extrapolation, &segment.nodes_cm, k),
                    )
                })
            })
            .collect();
        let built: Vec<(usize, usize, PassageCell)> = specs
            .par_iter()
            .filter_map(|(segment, k, spec)| Some((*segment, *k, PassageCell::new(spec)?)))
            .collect();
        let mut segments: Vec<Segment> = layout
            .segments
            .iter()
            .map(|s| Segment {
                nodes_cm: s.nodes_cm.clone(),
                cells: vec![None; s.nodes_cm.len() - 1],
                start_cm: s.start_cm,
            })
            .collect();
        for (segment, k, cell) in built {
            segments[segment].cells[k] = Some(cell);
        }
        let mut start_domain = vec![None; shells.len()];
        for (index, segment) in layout.segments.iter().enumerate() {
            let (low, high) = segment.start_cm;
            for (layer, shell) in shells
                .iter()
                .enumerate()
                .take(segment.last + 1)
                .skip(segment.first)
            {
                if shell.outer_cm > low && shell.inner_cm < high {
                    start_domain[layer] = Some((index, low * low, high * high));
                }
            }
        }
        let persistence_cm = medium
            .layers()
            .iter()
            .map(|layer| {
                let transport = layer.transport_extinction_per_cm();
                if transport > 0.0 {
                    layer.phase().mean_cosine() / transport
                } else {
                    0.0
                }
            })
            .collect();
        Self {
            segments,
            start_domain,
            persistence_cm,
            laws,
            law_of_layer,
            boundaries_cm: medium.boundaries_cm().to_vec(),
        }
    }

    /// Whether the chain has any passage at all.
    pub(super) fn is_empty(&self) -> bool {
        self.segments.is_empty()
    }

    /// The squared radii between which passages start in layer `layer`, if any.
    #[inline]
    pub(super) fn may_start(&self, position: &Vector3<f64>, layer: usize) -> bool {
        match self.start_domain[layer] {
            Some((_, low_sq, high_sq)) => {
                let r_sq = position.norm_squared();
                r_sq >= low_sq && r_sq <= high_sq
            }
            None => false,
        }
    }

    /// A passage from a scattering site at `position` in layer `layer`, reached with
    /// direction `incoming` (`None` for an isotropic source), if one starts there.
    pub(super) fn transition<R: Rng + ?Sized>(
        &self,
        position: &Vector3<f64>,
        layer: usize,
        incoming: Option<&Vector3<f64>>,
        rng: &mut R,
    ) -> Option<Transition<'_>> {
        let (index, _, _) = self.start_domain[layer]?;
        let effective = match incoming {
            Some(u) if self.persistence_cm[layer] != 0.0 => {
                position + self.persistence_cm[layer] * u
            }
            _ => *position,
        };
        let radius = effective.norm();
        let segment = &self.segments[index];
        if radius < segment.start_cm.0 || radius > segment.start_cm.1 {
            return None;
        }
        let k = segment
            .nodes_cm
            .partition_point(|&node| node <= radius)
            .saturating_sub(1)
            .min(segment.cells.len() - 1);
        let cell = segment.cells[k]
            .as_ref()
            .or_else(|| k.checked_sub(1).and_then(|j| segment.cells[j].as_ref()))?;
        let passage = cell.sample(radius, rng);
        let (inner, outer) = cell.exits_cm();
        let exit_radius_cm = if passage.outward {
            outer
        } else {
            inner.expect("a passage without an inner exit is always outward")
        };
        // The shell the photon crosses the exit from: below it going out, above it going in.
        let from = if passage.outward {
            self.boundaries_cm.partition_point(|&b| b < exit_radius_cm)
        } else {
            self.boundaries_cm.partition_point(|&b| b <= exit_radius_cm)
        }
        .min(self.boundaries_cm.len() - 1);
        Some(Transition {
            exit_radius_cm,
            exit_law: &self.laws[self.law_of_layer[from]],
            passage,
            cell,
        })
    }
}

/// Maximal runs (first, last shell) of shells joined by smooth boundaries, interacting,
/// where l_tr changes by at most ε over γ l_tr.
fn trusted_runs(medium: &Medium, shells: &[Shell], settings: ChainSettings) -> Vec<(usize, usize)> {
    let count = shells.len();
    let joined = |i: usize| i + 1 < count && !medium.is_sharp_boundary(i);
    let limit = settings.epsilon / settings.gamma;
    let mut runs = Vec::new();
    let mut i = 0;
    while i < count {
        if shells[i].transport <= 0.0 {
            i += 1;
            continue;
        }
        // The region: i..=j joined smoothly, all interacting.
        let mut j = i;
        while joined(j) && shells[j + 1].transport > 0.0 {
            j += 1;
        }
        let mid = |k: usize| 0.5 * (shells[k].inner_cm + shells[k].outer_cm);
        let ln_l = |k: usize| -shells[k].transport.ln();
        let gradient = |k: usize| -> f64 {
            let (lo, hi) = (k.saturating_sub(1).max(i), (k + 1).min(j));
            if hi == lo {
                return 0.0;
            }
            (ln_l(hi) - ln_l(lo)).abs() / (mid(hi) - mid(lo)) / shells[k].transport
        };
        let mut k = i;
        while k <= j {
            if gradient(k) <= limit {
                let start = k;
                while k < j && gradient(k + 1) <= limit {
                    k += 1;
                }
                runs.push((start, k));
            }
            k += 1;
        }
        i = j + 1;
    }
    runs
}

/// Node radii of a run of shells and the indices of its start cells, or `None` if the
/// run is too thin for any passage.
fn place_nodes(run: &[Shell], settings: ChainSettings) -> Option<(Vec<f64>, Vec<usize>)> {
    let gamma = settings.gamma;
    let lower = run[0].inner_cm;
    let centre = lower == 0.0;
    // Cumulative transport optical depth at each shell's outer edge, from the lower end.
    let mut depth = Vec::with_capacity(run.len());
    let mut total = 0.0;
    for shell in run {
        total += shell.transport * (shell.outer_cm - shell.inner_cm);
        depth.push(total);
    }
    let radius_at = |t: f64| -> f64 {
        let k = depth.partition_point(|&d| d < t).min(run.len() - 1);
        let below = if k == 0 { 0.0 } else { depth[k - 1] };
        let shell = &run[k];
        (shell.inner_cm + (t - below) / shell.transport).clamp(shell.inner_cm, shell.outer_cm)
    };
    let reach = if centre { total } else { 0.5 * total };
    let mut steps = Vec::new();
    let mut d = gamma;
    while d < reach {
        steps.push(d);
        d *= 2.0;
    }
    if steps.is_empty() {
        return None;
    }
    let mut depths: Vec<f64> = vec![0.0, total];
    depths.extend(steps.iter().map(|d| total - d));
    if !centre {
        depths.extend(steps.iter().copied());
        let last = *steps.last().expect("steps");
        if 0.5 * total - last > 0.5 * gamma {
            depths.push(0.5 * total);
        }
    }
    depths.sort_by(f64::total_cmp);
    depths.dedup_by(|a, b| (*a - *b).abs() < 1e-3 * gamma);
    let mut nodes: Vec<f64> = depths.iter().map(|&t| radius_at(t)).collect();
    nodes[0] = lower;
    *nodes.last_mut().expect("nodes") = run[run.len() - 1].outer_cm;
    nodes.dedup();
    let cells = nodes.len() - 1;
    let first = if centre { 0 } else { 1 };
    if cells < 2 || first + 2 > cells {
        return None;
    }
    let start_cells: Vec<usize> = (first..=cells - 2).collect();
    (!start_cells.is_empty()).then_some((nodes, start_cells))
}

/// The first-passage problem of start cell `k`: exits at nodes k − 1 and k + 2 (no inner
/// exit at the centre), each widened by the extrapolation length of its shell
/// (`extrapolation_cm`, per shell of `run`).
fn cell_spec(run: &[Shell], extrapolation_cm: &[f64], nodes: &[f64], k: usize) -> CellSpec {
    let centre = nodes[0] == 0.0;
    let shell_index = |radius: f64, above: bool| -> usize {
        run.partition_point(|s| {
            if above {
                s.outer_cm <= radius
            } else {
                s.outer_cm < radius
            }
        })
        .min(run.len() - 1)
    };
    let shell_at = |radius: f64, above: bool| -> &Shell { &run[shell_index(radius, above)] };
    let inner = if k == 0 || (k == 1 && centre) {
        None
    } else {
        let a = nodes[k - 1];
        Some((a, (a - extrapolation_cm[shell_index(a, true)]).max(0.0)))
    };
    let b = nodes[k + 2];
    let top = shell_at(b, false);
    let b_extrapolated = b + extrapolation_cm[shell_index(b, false)];
    let from = inner.map_or(0.0, |(a, _)| a);
    let mut pieces: Vec<Piece> = run
        .iter()
        .filter(|s| s.outer_cm > from && s.inner_cm < b)
        .map(|s| Piece {
            lower_cm: s.inner_cm.max(from),
            upper_cm: s.outer_cm.min(b),
            ..s.piece
        })
        .collect();
    if let Some((a, a_extrapolated)) = inner
        && a_extrapolated < a
    {
        let bottom = shell_at(a, true);
        pieces.insert(
            0,
            Piece {
                lower_cm: a_extrapolated,
                upper_cm: a,
                ..bottom.piece
            },
        );
    }
    pieces.push(Piece {
        lower_cm: b,
        upper_cm: b_extrapolated,
        ..top.piece
    });
    CellSpec {
        pieces,
        inner_exit: inner,
        start: (nodes[k], nodes[k + 1]),
        outer_exit: (b, b_extrapolated),
    }
}
