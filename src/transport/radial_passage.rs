//! Shell-to-shell first passage of radial diffusion: from a start radius inside a cell
//! (c₀, c₁), the time until diffusion with coefficient D(r) first reaches an inner exit
//! radius a < c₀ or an outer one b > c₁, which of the two it reaches, and the expected
//! scatterings and absorptions on the way. Built once per cell of a model and sampled by
//! table look-up.
//!
//! **Discretisation.** The interval (a, b), widened at each exit by the Milne extrapolation
//! length (the walk's first crossing of a radius is an escape through a surface, see the
//! README's derivation), is cut into about 160 grid intervals, equally spaced in the
//! diffusion distance ∫ dr/√D. The radial generator L = r⁻² d/dr (r² D d/dr) becomes a
//! birth–death chain on the grid points with the exact scale-function conductances
//! 1/∫ dr/(r² D) between neighbours (so exit probabilities are exact) and lumped masses
//! ∫ φ_j r² dr, with φ_j the hat function of grid point j in the scale coordinate (so the
//! mean exit time is exact at every grid point; Gardiner, *Stochastic Methods*, ch. 5,
//! for the continuous formulas these reproduce). At the centre (a = 0) there is no inner
//! exit and the ball below the first grid point is lumped into it.
//!
//! **Laws.** With K the conductance matrix and M the masses, survival from grid point i
//! with exit through side σ is P_i(T > t, σ) = Σ_n e^{−λ_n t} φ_n(i) ⟨φ_n, h_σ⟩_M, where
//! K φ_n = λ_n M φ_n (M-orthonormal) and h_σ is the exit probability through σ. The
//! eigen-decomposition of the symmetric tridiagonal M^{-1/2} K M^{-1/2} is computed with the
//! rotations applied only to the rows needed ([`super::tridiagonal`]). The conditional law
//! of T given σ is tabulated on a logarithmic time grid (64 points per decade) from the
//! time where it is below e⁻³⁰ to 30/λ₁; beyond it the exact asymptotic tail, exponential
//! with rate λ₁, takes over. The expected scatterings in a passage given σ are
//! E[∫ v σ_s dt; σ] from the same expansion with rate-weighted masses; a passage of time t
//! is given t · E[∫ v σ_s dt; σ] / E[T; σ] scatterings (exact in the mean, and exact for
//! every passage where σ_s is uniform), and likewise an absorption hazard.
//!
//! Between grid points the start radius is interpolated linearly: exit probability, the
//! two quantiles of the same uniform number, and the rates.
//!
//! **Residence by shell.** The expected time spent in shell s before exiting through σ is
//! E[T_s; σ] = Σ_j G_ij m_j^(s) h_σ(j), with G = K⁻¹ the chain's Green's function (the
//! expected occupation of grid point j per unit mass, from start i; one tridiagonal solve
//! per start) and m_j^(s) the part of grid point j's mass ∫ φ_j r² dr that lies in shell s.
//! Summed over s it is the mean E[T; σ] above. A passage of time t books
//! t · E[T_s; σ] / E[T; σ] in shell s ([`super::ledger`]).

use rand::{Rng, RngExt};

use super::ledger::Ledger;
use super::radial_profile::{IntervalIntegrals, Piece, clip, interval_integrals, interval_parts};
use super::tridiagonal::symmetric_tridiagonal_eigen;
use crate::diffusion::first_passage;

/// Grid intervals across a cell's whole interval (before the minimum counts per part).
const GRID_INTERVALS: f64 = 160.0;
/// Fewest grid intervals across the start cell (the interpolation nodes).
const START_INTERVALS: usize = 24;
/// Points per decade of the tabulated time grid.
const POINTS_PER_DECADE: f64 = 64.0;

/// What to build: the radial pieces and the radii of one cell.
#[derive(Debug, Clone)]
pub(super) struct CellSpec {
    /// Pieces covering `[inner_extrapolated, outer_extrapolated]` (from 0 for the centre).
    pub(super) pieces: Vec<Piece>,
    /// Inner exit radius a and its extrapolated radius a − q l_tr; `None` at the centre.
    pub(super) inner_exit: Option<(f64, f64)>,
    /// Start cell (c₀, c₁), cm.
    pub(super) start: (f64, f64),
    /// Outer exit radius b and its extrapolated radius b + q l_tr.
    pub(super) outer_exit: (f64, f64),
}

/// One sampled passage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Passage {
    /// Whether the outer exit was reached (else the inner one).
    pub(super) outward: bool,
    /// Duration, s.
    pub(super) time_s: f64,
    /// Expected scatterings during it.
    pub(super) scatterings: f64,
    /// Expected absorptions during it (the hazard: survival is e^(−hazard)).
    pub(super) absorption_hazard: f64,
    /// Part of `time_s` spent first in the central ball below the first start radius, s.
    lead_time_s: f64,
    /// The start radii (indices) interpolated between, and the weight of the upper one.
    between: (usize, usize, f64),
}

/// The tabulated first-passage laws of one cell.
#[derive(Debug, Clone)]
pub(super) struct PassageCell {
    inner_exit_cm: Option<f64>,
    outer_exit_cm: f64,
    /// Start radii (grid points in the start cell), ascending.
    start_cm: Vec<f64>,
    /// Probability of the outer exit from each start radius.
    outward_probability: Vec<f64>,
    /// ln t of the time grid (t in s).
    ln_time: Vec<f64>,
    /// Conditional CDFs on the time grid, `[side][start * grid + m]` (side 0 inward, 1
    /// outward).
    cdf: [Vec<f64>; 2],
    /// Slowest decay rate λ₁, 1/s: the tail beyond the grid.
    tail_rate: f64,
    /// Per side and start: E[scatterings; side] / E[T; side], 1/s.
    scattering_rate: [Vec<f64>; 2],
    /// Per side and start: E[absorptions; side] / E[T; side], 1/s.
    absorption_rate: [Vec<f64>; 2],
    /// Per side and start: E[T | side], s (for checks).
    #[cfg(test)]
    mean_time_s: [Vec<f64>; 2],
    /// Centre cells: D in the ball below the first start radius, cm²/s.
    centre_diffusion: Option<f64>,
    /// Centre cells: scattering and absorption rates in that ball, 1/s.
    centre_rates: (f64, f64),
    /// First shell (cell of the medium) the passage can visit.
    first_shell: usize,
    /// Number of shells from `first_shell` on that it can visit.
    shell_count: usize,
    /// Per side, `[start * shell_count + s]`: E[T_s; side] / E[T; side], the share of the
    /// passage's time spent in shell `first_shell + s`.
    time_share: [Vec<f64>; 2],
    /// Centre cells: each shell's share of the time in the central ball (diffusion from
    /// its centre, uniform D: share 3x² − 2x³ inside x = r / r₀).
    ball_share: Vec<(usize, f64)>,
}

impl PassageCell {
    /// Builds the tables of one cell; `None` where they cannot be computed in floating point
    /// (the eigen-decomposition does not converge, e.g. for optical-depth contrasts near
    /// 10¹⁷ within a cell): photons then take direct steps there.
    ///
    /// # Panics
    /// If the spec is inconsistent (radii out of order, pieces not covering the interval,
    /// a piece with D ≤ 0): the caller builds specs only from validated media.
    pub(super) fn new(spec: &CellSpec) -> Option<Self> {
        let grid = grid_points(spec);
        let centre = spec.inner_exit.is_none();
        let n = grid.len() - 1; // grid intervals; unknowns are points 1..n−1
        let unknowns = n - 1;
        // Integrals of each grid interval; at the centre, interval 0 is the ball.
        let integrals: Vec<IntervalIntegrals> = (0..n)
            .map(|i| {
                if centre && i == 0 {
                    let ball = clip(&spec.pieces, 0.0, grid[1]);
                    let mut volume = [0.0; 3];
                    for piece in &ball {
                        let v = super::radial_profile::volume(piece.lower_cm, piece.upper_cm);
                        volume[0] += v;
                        volume[1] += piece.scattering_rate * v;
                        volume[2] += piece.absorption_rate * v;
                    }
                    IntervalIntegrals {
                        scale: f64::INFINITY,
                        volume,
                        upper_share: volume,
                    }
                } else {
                    interval_integrals(&spec.pieces, grid[i], grid[i + 1])
                }
            })
            .collect();
        // Masses of unknown j (grid point j, 1 ≤ j ≤ n − 1) for weights 1, σ_s, σ_a.
        let masses: Vec<[f64; 3]> = (1..n)
            .map(|j| {
                let below = &integrals[j - 1];
                let above = &integrals[j];
                [0, 1, 2].map(|k| below.upper_share[k] + above.volume[k] - above.upper_share[k])
            })
            .collect();
        let conductance: Vec<f64> = integrals.iter().map(|i| 1.0 / i.scale).collect();
        // Exit probability through the outer side at each grid point (scale function).
        let mut scale_at = vec![0.0; n + 1];
        for i in 0..n {
            scale_at[i + 1] = scale_at[i]
                + if centre && i == 0 {
                    0.0
                } else {
                    integrals[i].scale
                };
        }
        let total_scale = scale_at[n];
        let outward: Vec<f64> = (0..=n)
            .map(|j| {
                if centre {
                    1.0
                } else {
                    scale_at[j] / total_scale
                }
            })
            .collect();
        let mut diagonal: Vec<f64> = (0..unknowns)
            .map(|u| {
                let j = u + 1;
                let below = if centre && j == 1 {
                    0.0
                } else {
                    conductance[j - 1]
                };
                (below + conductance[j]) / masses[u][0]
            })
            .collect();
        let mut off: Vec<f64> = (0..unknowns - 1)
            .map(|u| -conductance[u + 1] / (masses[u][0] * masses[u + 1][0]).sqrt())
            .collect();
        // Start points: grid points inside the start cell (inclusive).
        let (c0, c1) = spec.start;
        let starts: Vec<usize> = (1..n).filter(|&j| grid[j] >= c0 && grid[j] <= c1).collect();
        assert!(starts.len() >= 2, "the start cell needs grid points");
        let (first_shell, shell_count, time_share) =
            shell_shares(spec, &grid, &conductance, &outward, &starts);
        let mut rows: Vec<Vec<f64>> = starts
            .iter()
            .map(|&j| {
                let mut row = vec![0.0; unknowns];
                row[j - 1] = 1.0;
                row
            })
            .collect();
        // Projection rows per side σ (0 inward, 1 outward) and weight k: (M_k/√M) h_σ.
        for side in 0..2 {
            for k in 0..3 {
                rows.push(
                    (0..unknowns)
                        .map(|u| {
                            let h = if side == 1 {
                                outward[u + 1]
                            } else {
                                1.0 - outward[u + 1]
                            };
                            masses[u][k] / masses[u][0].sqrt() * h
                        })
                        .collect(),
                );
            }
        }
        symmetric_tridiagonal_eigen(&mut diagonal, &mut off, &mut rows).ok()?;
        let rates = diagonal;
        let tail_rate = rates[0];
        // Time grid: from where every start's CDF is below e^-30 to 30/λ₁.
        let xi_total = |from: f64, to: f64| -> f64 {
            clip(&spec.pieces, from, to)
                .iter()
                .map(|p| p.diffusion_distance(p.lower_cm, p.upper_cm))
                .sum()
        };
        let lower_end = spec.inner_exit.map(|(_, extrapolated)| extrapolated);
        let nearest = starts
            .iter()
            .map(|&j| {
                let up = xi_total(grid[j], grid[n]);
                let down = lower_end.map_or(f64::INFINITY, |low| xi_total(low, grid[j]));
                up.min(down)
            })
            .fold(f64::INFINITY, f64::min);
        let t_low = nearest * nearest / 120.0;
        let t_high = 30.0 / tail_rate;
        let decades = (t_high / t_low).log10();
        // A time grid more than 300 decades wide (or not a number) cannot be tabulated.
        if !decades.is_finite() || decades <= 0.0 || decades >= 300.0 {
            return None;
        }
        let points = (decades * POINTS_PER_DECADE).ceil() as usize + 1;
        let step = (t_high / t_low).ln() / (points - 1) as f64;
        let ln_time: Vec<f64> = (0..points).map(|m| t_low.ln() + m as f64 * step).collect();
        // e^(−λ_n t_m), row m contiguous over the modes that have not yet decayed below
        // e^-40 (the rates ascend, so those are a prefix).
        let decay: Vec<Vec<f64>> = ln_time
            .iter()
            .map(|&lt| {
                let t = lt.exp();
                rates
                    .iter()
                    .take_while(|&&lambda| lambda * t < 40.0)
                    .map(|&lambda| (-lambda * t).exp())
                    .collect()
            })
            .collect();
        let projections = &rows[starts.len()..];
        let mut cdf = [Vec::new(), Vec::new()];
        let mut scattering_rate = [Vec::new(), Vec::new()];
        let mut absorption_rate = [Vec::new(), Vec::new()];
        #[cfg(test)]
        let mut mean_time_s = [Vec::new(), Vec::new()];
        for (s, &j) in starts.iter().enumerate() {
            let scale = 1.0 / masses[j - 1][0].sqrt();
            let at_start = &rows[s];
            for side in 0..2 {
                let h = if side == 1 {
                    outward[j]
                } else {
                    1.0 - outward[j]
                };
                let [plain, scatter, absorb] = [0, 1, 2].map(|k| &projections[3 * side + k]);
                let coefficient: Vec<f64> = (0..unknowns)
                    .map(|m| at_start[m] * scale * plain[m])
                    .collect();
                let moment = |weights: &Vec<f64>| -> f64 {
                    (0..unknowns)
                        .map(|m| at_start[m] * scale * weights[m] / rates[m])
                        .sum()
                };
                let mean = moment(plain);
                if h <= 1e-12 || mean <= 0.0 {
                    // This exit cannot be reached from here (the centre has no inner exit).
                    cdf[side].extend(std::iter::repeat_n(1.0, points));
                    scattering_rate[side].push(0.0);
                    absorption_rate[side].push(0.0);
                    #[cfg(test)]
                    mean_time_s[side].push(0.0);
                    continue;
                }
                scattering_rate[side].push(moment(scatter) / mean);
                absorption_rate[side].push(moment(absorb) / mean);
                #[cfg(test)]
                mean_time_s[side].push(mean / h);
                let mut running: f64 = 0.0;
                for decay_at in decay.iter().take(points) {
                    let survival: f64 = decay_at.iter().zip(&coefficient).map(|(d, c)| d * c).sum();
                    let value = (1.0 - survival / h).clamp(0.0, 1.0);
                    running = running.max(value);
                    cdf[side].push(running);
                }
            }
        }
        let centre_piece = spec.pieces.first().filter(|_| centre);
        let ball_share = if centre {
            let radius = grid[starts[0]];
            clip(&spec.pieces, 0.0, radius)
                .iter()
                .map(|p| {
                    let below = |r: f64| {
                        let x = r / radius;
                        x * x * (3.0 - 2.0 * x)
                    };
                    (p.shell, below(p.upper_cm) - below(p.lower_cm))
                })
                .collect()
        } else {
            Vec::new()
        };
        Some(Self {
            inner_exit_cm: spec.inner_exit.map(|(radius, _)| radius),
            outer_exit_cm: spec.outer_exit.0,
            start_cm: starts.iter().map(|&j| grid[j]).collect(),
            outward_probability: starts.iter().map(|&j| outward[j]).collect(),
            ln_time,
            cdf,
            tail_rate,
            scattering_rate,
            absorption_rate,
            #[cfg(test)]
            mean_time_s,
            centre_diffusion: centre_piece.map(|p| p.diffusion),
            centre_rates: centre_piece
                .map_or((0.0, 0.0), |p| (p.scattering_rate, p.absorption_rate)),
            first_shell,
            shell_count,
            time_share,
            ball_share,
        })
    }

    /// Books `time_s` of `passage` (its whole time, or the part before an absorption) in
    /// `ledger`, split over the shells by the expected shares of its start and side.
    pub(super) fn book<L: Ledger>(&self, passage: &Passage, time_s: f64, ledger: &mut L) {
        let scale = if passage.time_s > 0.0 {
            time_s / passage.time_s
        } else {
            0.0
        };
        let lead = scale * passage.lead_time_s;
        if lead > 0.0 {
            for &(shell, share) in &self.ball_share {
                ledger.book_diffusing(shell, share * lead);
            }
        }
        let rest = time_s - lead;
        let (lower, upper, w) = passage.between;
        let shares = &self.time_share[passage.outward as usize];
        let count = self.shell_count;
        let below = &shares[lower * count..(lower + 1) * count];
        let above = &shares[upper * count..(upper + 1) * count];
        for (s, (a, b)) in below.iter().zip(above).enumerate() {
            let share = a + w * (b - a);
            if share > 0.0 {
                ledger.book_diffusing(self.first_shell + s, share * rest);
            }
        }
    }

    /// The inner exit radius (None at the centre) and the outer one, cm.
    pub(super) fn exits_cm(&self) -> (Option<f64>, f64) {
        (self.inner_exit_cm, self.outer_exit_cm)
    }

    /// Start radii covered, cm.
    #[cfg(test)]
    pub(super) fn start_radii(&self) -> &[f64] {
        &self.start_cm
    }

    /// E[T | side] from start radius index `start` (side: true outward), s.
    #[cfg(test)]
    pub(super) fn mean_time_s(&self, start: usize, outward: bool) -> f64 {
        self.mean_time_s[outward as usize][start]
    }

    /// Probability of the outer exit from start radius index `start`.
    #[cfg(test)]
    pub(super) fn outward_probability(&self, start: usize) -> f64 {
        self.outward_probability[start]
    }

    /// Conditional CDF of the passage time given the side, from start index `start`, at
    /// time `t_s` (linear in ln t between grid points).
    #[cfg(test)]
    pub(super) fn cdf(&self, start: usize, outward: bool, t_s: f64) -> f64 {
        let row = self.row(outward as usize, start);
        let lt = t_s.ln();
        let m = self.ln_time.partition_point(|&x| x <= lt);
        if m == 0 {
            return 0.0;
        }
        if m == self.ln_time.len() {
            let last = row[m - 1];
            let t_last = self.ln_time[m - 1].exp();
            return 1.0 - (1.0 - last) * (-self.tail_rate * (t_s - t_last)).exp();
        }
        let f = (lt - self.ln_time[m - 1]) / (self.ln_time[m] - self.ln_time[m - 1]);
        row[m - 1] + f * (row[m] - row[m - 1])
    }

    fn row(&self, side: usize, start: usize) -> &[f64] {
        let points = self.ln_time.len();
        &self.cdf[side][start * points..(start + 1) * points]
    }

    /// The passage time of quantile `u` from start index `start` through `side`, s.
    fn quantile(&self, side: usize, start: usize, u: f64) -> f64 {
        let row = self.row(side, start);
        let m = row.partition_point(|&c| c <= u);
        if m == 0 {
            return self.ln_time[0].exp();
        }
        if m == row.len() {
            // Beyond the grid: the exact exponential tail with the slowest rate.
            let last = row[m - 1];
            let remaining = ((1.0 - u) / (1.0 - last)).max(f64::MIN_POSITIVE);
            return self.ln_time[m - 1].exp() - remaining.ln() / self.tail_rate;
        }
        let (c0, c1) = (row[m - 1], row[m]);
        let f = if c1 > c0 { (u - c0) / (c1 - c0) } else { 0.0 };
        (self.ln_time[m - 1] + f * (self.ln_time[m] - self.ln_time[m - 1])).exp()
    }

    /// Samples a passage from radius `radius_cm` (inside the start cell; radii below the
    /// first start radius, at the centre, first diffuse out to it through a uniform ball).
    pub(super) fn sample<R: Rng + ?Sized>(&self, radius_cm: f64, rng: &mut R) -> Passage {
        let mut lead = Passage {
            outward: true,
            time_s: 0.0,
            scatterings: 0.0,
            absorption_hazard: 0.0,
            lead_time_s: 0.0,
            between: (0, 0, 0.0),
        };
        let first = self.start_cm[0];
        let radius = if radius_cm < first {
            if let Some(diffusion) = self.centre_diffusion {
                // Out of the small central ball to its surface: the sphere's first-passage
                // law (exact from its centre for uniform D).
                let t = first_passage::sample(rng) * first * first / diffusion;
                lead.time_s = t;
                lead.scatterings = t * self.centre_rates.0;
                lead.absorption_hazard = t * self.centre_rates.1;
            }
            first
        } else {
            radius_cm.min(*self.start_cm.last().expect("start radii"))
        };
        let upper = self
            .start_cm
            .partition_point(|&r| r <= radius)
            .clamp(1, self.start_cm.len() - 1);
        let lower = upper - 1;
        let (r0, r1) = (self.start_cm[lower], self.start_cm[upper]);
        let w = ((radius - r0) / (r1 - r0)).clamp(0.0, 1.0);
        let lerp = |a: f64, b: f64| a + w * (b - a);
        let p_out = lerp(
            self.outward_probability[lower],
            self.outward_probability[upper],
        );
        let outward = rng.random::<f64>() < p_out;
        let side = outward as usize;
        let u: f64 = rng.random();
        let time_s = lerp(self.quantile(side, lower, u), self.quantile(side, upper, u));
        let scatter = lerp(
            self.scattering_rate[side][lower],
            self.scattering_rate[side][upper],
        );
        let absorb = lerp(
            self.absorption_rate[side][lower],
            self.absorption_rate[side][upper],
        );
        Passage {
            outward,
            time_s: lead.time_s + time_s,
            scatterings: lead.scatterings + time_s * scatter,
            absorption_hazard: lead.absorption_hazard + time_s * absorb,
            lead_time_s: lead.time_s,
            between: (lower, upper, w),
        }
    }
}

/// The shells a cell's passages can visit (first, count) and, per side and start grid
/// point, each shell's share of the expected passage time (module docs, *Residence by
/// shell*). `conductance[i]` joins grid points i and i + 1 (0 for the central ball),
/// `outward[j]` is the outer exit probability from grid point j.
fn shell_shares(
    spec: &CellSpec,
    grid: &[f64],
    conductance: &[f64],
    outward: &[f64],
    starts: &[usize],
) -> (usize, usize, [Vec<f64>; 2]) {
    let centre = spec.inner_exit.is_none();
    let n = grid.len() - 1;
    let unknowns = n - 1;
    let first_shell = spec.pieces.iter().map(|p| p.shell).min().unwrap_or(0);
    let last_shell = spec.pieces.iter().map(|p| p.shell).max().unwrap_or(0);
    let count = last_shell - first_shell + 1;
    // Each interval's parts by shell: (shell, volume, share of the upper grid point).
    let parts: Vec<Vec<(usize, f64, f64)>> = (0..n)
        .map(|i| {
            if centre && i == 0 {
                clip(&spec.pieces, 0.0, grid[1])
                    .iter()
                    .map(|p| {
                        let v = super::radial_profile::volume(p.lower_cm, p.upper_cm);
                        (p.shell, v, v)
                    })
                    .collect()
            } else {
                interval_parts(&spec.pieces, grid[i], grid[i + 1])
            }
        })
        .collect();
    // The mass of unknown u (grid point u + 1) by shell.
    let node_mass = |u: usize| {
        let j = u + 1;
        parts[j - 1]
            .iter()
            .map(|&(shell, _, upper)| (shell, upper))
            .chain(
                parts[j]
                    .iter()
                    .map(|&(shell, volume, upper)| (shell, volume - upper)),
            )
    };
    // K: diagonal and the entries joining unknowns u and u + 1.
    let diagonal: Vec<f64> = (0..unknowns)
        .map(|u| {
            let j = u + 1;
            let below = if centre && j == 1 {
                0.0
            } else {
                conductance[j - 1]
            };
            below + conductance[j]
        })
        .collect();
    let off: Vec<f64> = (0..unknowns.saturating_sub(1))
        .map(|u| -conductance[u + 1])
        .collect();
    let mut shares = [
        vec![0.0; starts.len() * count],
        vec![0.0; starts.len() * count],
    ];
    for (index, &j) in starts.iter().enumerate() {
        let mut unit = vec![0.0; unknowns];
        unit[j - 1] = 1.0;
        let green = solve_tridiagonal(&diagonal, &off, &unit);
        for (side, share) in shares.iter_mut().enumerate() {
            let row = &mut share[index * count..(index + 1) * count];
            for (u, g) in green.iter().enumerate() {
                let h = if side == 1 {
                    outward[u + 1]
                } else {
                    1.0 - outward[u + 1]
                };
                let weight = g * h;
                if weight <= 0.0 {
                    continue;
                }
                for (shell, mass) in node_mass(u) {
                    row[shell - first_shell] += weight * mass.max(0.0);
                }
            }
            let total: f64 = row.iter().sum();
            if total > 0.0 && total.is_finite() {
                row.iter_mut().for_each(|x| *x /= total);
            } else {
                row.iter_mut().for_each(|x| *x = 0.0);
            }
        }
    }
    (first_shell, count, shares)
}

/// Solves the symmetric tridiagonal system with `diagonal` and `off` (entry u joins u and
/// u + 1) for `rhs` (Thomas algorithm; the matrix is a positive definite conductance
/// matrix, so no pivoting is needed).
fn solve_tridiagonal(diagonal: &[f64], off: &[f64], rhs: &[f64]) -> Vec<f64> {
    let n = diagonal.len();
    let mut c = vec![0.0; n];
    let mut d = vec![0.0; n];
    for i in 0..n {
        let lower = if i > 0 { off[i - 1] } else { 0.0 };
        let pivot = diagonal[i] - if i > 0 { lower * c[i - 1] } else { 0.0 };
        c[i] = if i + 1 < n { off[i] / pivot } else { 0.0 };
        d[i] = (rhs[i] - if i > 0 { lower * d[i - 1] } else { 0.0 }) / pivot;
    }
    let mut x = d;
    for i in (0..n.saturating_sub(1)).rev() {
        x[i] -= c[i] * x[i + 1];
    }
    x
}

/// Grid points from the inner end (0 at the centre, else the extrapolated inner exit) to
/// the extrapolated outer exit, equally spaced in ∫ dr/√D within each part and with points
/// at the exits and the start cell's ends.
fn grid_points(spec: &CellSpec) -> Vec<f64> {
    let (c0, c1) = spec.start;
    let (b, b_extrapolated) = spec.outer_exit;
    let mut ends = Vec::new();
    let mut minimum = Vec::new();
    match spec.inner_exit {
        Some((a, a_extrapolated)) => {
            ends.push(a_extrapolated);
            if a > a_extrapolated {
                ends.push(a);
                minimum.push(2);
            }
        }
        None => ends.push(0.0),
    }
    for (radius, fewest) in [(c0, 4), (c1, START_INTERVALS), (b, 4), (b_extrapolated, 2)] {
        if radius > *ends.last().expect("an end") {
            ends.push(radius);
            minimum.push(fewest);
        }
    }
    let distance = |from: f64, to: f64| -> f64 {
        clip(&spec.pieces, from, to)
            .iter()
            .map(|p| p.diffusion_distance(p.lower_cm, p.upper_cm))
            .sum()
    };
    let lengths: Vec<f64> = ends.windows(2).map(|w| distance(w[0], w[1])).collect();
    let total: f64 = lengths.iter().sum();
    let mut points = vec![ends[0]];
    for (part, window) in ends.windows(2).enumerate() {
        let count = ((GRID_INTERVALS * lengths[part] / total).round() as usize).max(minimum[part]);
        let pieces = clip(&spec.pieces, window[0], window[1]);
        for k in 1..count {
            let target = lengths[part] * k as f64 / count as f64;
            points.push(radius_at_distance(&pieces, window[0], target));
        }
        points.push(window[1]);
    }
    points
}

/// The radius at diffusion distance `target` from `from` across `pieces` (which start at
/// `from`).
fn radius_at_distance(pieces: &[Piece], from: f64, target: f64) -> f64 {
    let mut covered = 0.0;
    let mut radius = from;
    for piece in pieces {
        let length = piece.diffusion_distance(piece.lower_cm, piece.upper_cm);
        if covered + length >= target {
            return piece.lower_cm + (target - covered) * piece.diffusion.sqrt();
        }
        covered += length;
        radius = piece.upper_cm;
    }
    radius
}

#[cfg(test)]
mod tests {
    use super::*;

    fn uniform(lower: f64, upper: f64, diffusion: f64) -> Piece {
        Piece {
            lower_cm: lower,
            upper_cm: upper,
            diffusion,
            scattering_rate: 3.0,
            absorption_rate: 0.0,
            shell: 0,
        }
    }

    #[test]
    fn ball_mean_times_are_exact_and_the_law_is_the_sphere_first_passage_law() {
        // Uniform ball of radius 1 (no extrapolation), D = 1: from radius r the mean exit
        // time is (1 − r²)/6 (Redner 2001, A Guide to First-Passage Processes, ch. 6), and
        // from the centre the time follows the first-passage law of `first_passage`.
        let spec = CellSpec {
            pieces: vec![uniform(0.0, 1.0, 1.0)],
            inner_exit: None,
            start: (0.0, 0.5),
            outer_exit: (1.0, 1.0),
        };
        let cell = PassageCell::new(&spec).unwrap();
        for (k, &r) in cell.start_radii().iter().enumerate() {
            let exact = (1.0 - r * r) / 6.0;
            let got = cell.mean_time_s(k, true);
            assert!(
                (got / exact - 1.0).abs() < 1e-9,
                "r = {r}: {got} vs {exact}"
            );
            assert_eq!(cell.outward_probability(k), 1.0);
        }
        // CDF from the first start radius (≈ the centre) against the exact law, at its
        // quartiles; the small offset of the first grid point moves it by < 1e-3.
        for p in [0.05, 0.25, 0.5, 0.75, 0.95] {
            let t = first_passage::quantile(p);
            let got = cell.cdf(0, true, t);
            assert!((got - p).abs() < 2e-3, "p = {p}: {got}");
        }
    }

    #[test]
    fn shell_exit_probabilities_and_means_follow_the_closed_forms() {
        // Uniform shell 1 < r < 3, D = 2, no extrapolation: P(outer) from r is
        // (1/a − 1/r)/(1/a − 1/b) and the mean exit time solves (1/r²)(r² D T′)′ = −1:
        // T = (−r² + A + B/r)/(6D) with T(a) = T(b) = 0 (Redner 2001, ch. 6).
        let (a, b, d) = (1.0f64, 3.0f64, 2.0);
        let spec = CellSpec {
            pieces: vec![uniform(a, b, d)],
            inner_exit: Some((a, a)),
            start: (1.6, 2.2),
            outer_exit: (b, b),
        };
        let cell = PassageCell::new(&spec).unwrap();
        let big_b = -(b * b - a * a) / (1.0 / a - 1.0 / b);
        let big_a = a * a - big_b / a;
        for (k, &r) in cell.start_radii().iter().enumerate() {
            let p = (1.0 / a - 1.0 / r) / (1.0 / a - 1.0 / b);
            assert!((cell.outward_probability(k) - p).abs() < 1e-12);
            let exact = (-r * r + big_a + big_b / r) / (6.0 * d);
            let mean = p * cell.mean_time_s(k, true) + (1.0 - p) * cell.mean_time_s(k, false);
            assert!(
                (mean / exact - 1.0).abs() < 1e-9,
                "r = {r}: {mean} vs {exact}"
            );
        }
    }
}
