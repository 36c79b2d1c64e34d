//! The solved diffusion problem and what can be read from it: outcome fractions, the
//! escape-time distribution (survival, cumulative, density, quantiles, mean), the
//! time-resolved reflectance and transmittance of a slab, the late decay rate, and all of
//! it on arbitrary time-bin edges.

use super::source::Atom;
use super::stepping::History;
use crate::medium::Geometry;

/// Which way out a quantity counts.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Exit {
    /// Every escape: a sphere's surface, or either face of a slab.
    Any,
    /// A slab's top face, the one a beam enters by (diffuse reflection). Nothing for a
    /// sphere.
    Top,
    /// A slab's bottom face (transmission). Nothing for a sphere.
    Bottom,
}

/// Steady (time-integrated) values of the discretised problem, exact for its spatial
/// discretisation: from `K x = y₀` and `K z = C x`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Steady {
    /// Escaped through the start and end faces after diffusing, per launched photon.
    pub escaped: [f64; 2],
    /// ∫ t × escape rate dt through each face, s per launched photon.
    pub escape_time_moment_s: [f64; 2],
    /// Absorbed while diffusing, per launched photon.
    pub absorbed: f64,
}

/// The solution of the time-dependent diffusion problem of one medium and source. Built by
/// [`super::solve`]; every probability is per launched photon unless it says "conditional
/// on escape".
#[derive(Debug, Clone, PartialEq)]
pub struct EscapeSolution {
    pub(super) geometry: Geometry,
    pub(super) history: History,
    pub(super) atoms: Vec<Atom>,
    pub(super) specular: f64,
    pub(super) prompt_absorbed: f64,
    pub(super) steady: Steady,
    pub(super) decay_rate_per_s: f64,
    pub(super) residence_s: Vec<f64>,
    pub(super) nodes: usize,
    pub(super) extension_cm: [f64; 2],
}

impl EscapeSolution {
    /// Sphere or slab.
    pub fn geometry(&self) -> Geometry {
        self.geometry
    }

    /// Probability that a launched photon escapes (either face of a slab; the collimated
    /// transmission of a beam included, the specular reflection not), with absorption.
    /// From the steady problem, exact for the discretisation.
    pub fn escape_probability(&self) -> f64 {
        self.exit_probability(Exit::Any)
    }

    /// Probability of escaping by `exit` (steady values, see
    /// [`Self::escape_probability`]); 0 for [`Exit::Top`] and [`Exit::Bottom`] of a sphere.
    pub fn exit_probability(&self, exit: Exit) -> f64 {
        self.faces(exit)
            .iter()
            .map(|&face| {
                self.steady.escaped[face]
                    + self
                        .atoms
                        .iter()
                        .filter(|a| a.face == face)
                        .map(|a| a.probability)
                        .sum::<f64>()
            })
            .sum()
    }

    /// Diffuse reflectance of a slab: the fraction of launched photons that leave through
    /// the top face after entering (specular reflection not included). `None` for a
    /// sphere.
    pub fn reflected(&self) -> Option<f64> {
        (self.geometry == Geometry::Slab).then(|| self.exit_probability(Exit::Top))
    }

    /// Transmittance of a slab: the fraction of launched photons that leave through the
    /// bottom face, collimated transmission included ([`Self::collimated_transmission`]).
    /// `None` for a sphere.
    pub fn transmitted(&self) -> Option<f64> {
        (self.geometry == Geometry::Slab).then(|| self.exit_probability(Exit::Bottom))
    }

    /// Fraction of launched photons absorbed (while diffusing, and by a beam before its
    /// first isotropic scattering).
    pub fn absorbed(&self) -> f64 {
        self.steady.absorbed + self.prompt_absorbed
    }

    /// Fraction of launched photons reflected by the top face before entering (Fresnel;
    /// beam and diffuse sources). 0 for internal sources.
    pub fn specular(&self) -> f64 {
        self.specular
    }

    /// Fraction of launched photons that cross the slab as part of the collimated beam and
    /// leave through the bottom at the straight-line time (part of
    /// [`Self::transmitted`]). 0 for internal sources.
    pub fn collimated_transmission(&self) -> f64 {
        self.atoms
            .iter()
            .filter(|a| a.face == 1 && a.time_s > 0.0)
            .map(|a| a.probability)
            .sum()
    }

    /// Mean escape time conditional on escape, s: `∫ t dE / ∫ dE` over every escape,
    /// collimated transmission included, from the steady moments (exact for the
    /// discretisation, no time-stepping error). `None` if nothing escapes.
    pub fn mean_escape_time_s(&self) -> Option<f64> {
        let total = self.escape_probability();
        if total <= 0.0 {
            return None;
        }
        let moment: f64 = self.steady.escape_time_moment_s.iter().sum::<f64>()
            + self
                .atoms
                .iter()
                .map(|a| a.time_s * a.probability)
                .sum::<f64>();
        Some(moment / total)
    }

    /// The late decay rate λ₁, s⁻¹: the smallest eigenvalue of the discretised diffusion
    /// operator (absorption included). Survival, escape rate and absorption rate all decay
    /// as e^(−λ₁ t) at late times. That of the discrete operator to rounding (bisection on
    /// its inertia); it converges to the continuum value at second order.
    pub fn decay_rate_per_s(&self) -> f64 {
        self.decay_rate_per_s
    }

    /// Fraction of the launched photons still diffusing inside the medium at time `t_s`
    /// (s): neither escaped nor absorbed. At t ≤ 0 it is the fraction the source puts into
    /// the diffusing medium (less than 1 after a specular reflection, a collimated
    /// transmission or absorption before the first isotropic scattering).
    pub fn survival(&self, t_s: f64) -> f64 {
        let h = &self.history;
        if t_s.is_nan() {
            return f64::NAN;
        }
        if t_s <= 0.0 {
            return h.content[0];
        }
        let tail = &h.tail;
        if t_s >= tail.start_s {
            return tail.content * (-tail.rate_per_s * (t_s - tail.start_s)).exp();
        }
        let slope = |k: usize| -(h.escape_rate[0][k] + h.escape_rate[1][k] + h.absorption_rate[k]);
        self.interpolate(&h.content, slope, t_s).max(0.0)
    }

    /// Fraction of the launched photons that have escaped by `exit` by time `t_s` (s),
    /// collimated transmission included at its straight-line time. Tends to the
    /// time-stepped total, which equals [`Self::exit_probability`] to the time-stepping
    /// error.
    pub fn escaped_by(&self, t_s: f64, exit: Exit) -> f64 {
        if t_s.is_nan() {
            return f64::NAN;
        }
        self.faces(exit)
            .iter()
            .map(|&face| {
                self.diffused_out_by(t_s, face)
                    + self
                        .atoms
                        .iter()
                        .filter(|a| a.face == face && a.time_s <= t_s)
                        .map(|a| a.probability)
                        .sum::<f64>()
            })
            .sum()
    }

    /// Escape rate by `exit` at time `t_s`, per launched photon per second: for a slab
    /// R(t) ([`Exit::Top`]) and T(t) ([`Exit::Bottom`]), the time-resolved reflectance and
    /// transmittance (collimated transmission, a delta at its straight-line time, left out).
    pub fn exit_rate_per_s(&self, t_s: f64, exit: Exit) -> f64 {
        if t_s.is_nan() {
            return f64::NAN;
        }
        self.faces(exit)
            .iter()
            .map(|&face| self.face_rate(t_s, face))
            .sum()
    }

    /// Cumulative distribution of the escape time conditional on escape (any exit) at
    /// `t_s` (s): [`Self::escaped_by`] over its limit. NaN if nothing escapes.
    pub fn escape_cdf(&self, t_s: f64) -> f64 {
        let total = self.escaped_total();
        if total <= 0.0 {
            return f64::NAN;
        }
        (self.escaped_by(t_s, Exit::Any) / total).min(1.0)
    }

    /// Probability density of the escape time conditional on escape, s⁻¹ (the collimated
    /// transmission, a point mass, left out). NaN if nothing escapes.
    pub fn escape_density_per_s(&self, t_s: f64) -> f64 {
        let total = self.escaped_total();
        if total <= 0.0 {
            return f64::NAN;
        }
        self.exit_rate_per_s(t_s, Exit::Any) / total
    }

    /// [`Self::escape_cdf`] at each of `edges_s` (s), e.g. the Monte Carlo histogram's bin
    /// edges, so that `cdf[k+1] − cdf[k]` is the theory's probability for bin k.
    pub fn escape_cdf_at(&self, edges_s: &[f64]) -> Vec<f64> {
        edges_s.iter().map(|&t| self.escape_cdf(t)).collect()
    }

    /// The escape-time quantile conditional on escape, s: the smallest t with
    /// `escape_cdf(t) ≥ p`, found by bisection to relative 1e−13. `None` for p outside
    /// (0, 1) or if nothing escapes.
    pub fn escape_quantile_s(&self, p: f64) -> Option<f64> {
        self.escape_quantiles_s(&[p]).pop().flatten()
    }

    /// [`Self::escape_quantile_s`] at each of `ps`, with the cumulative escapes at the
    /// stored time steps computed once for all of them (the same values, faster for many
    /// quantiles, e.g. the edges of equal-probability bins).
    pub fn escape_quantiles_s(&self, ps: &[f64]) -> Vec<Option<f64>> {
        let total = self.escaped_total();
        let times = &self.history.time_s;
        let value = |t: f64| self.escaped_by(t, Exit::Any);
        let at_steps: Vec<f64> = if total > 0.0 && ps.iter().any(|&p| p > 0.0 && p < 1.0) {
            times.iter().map(|&t| value(t)).collect()
        } else {
            Vec::new()
        };
        ps.iter()
            .map(|&p| {
                if !(p > 0.0 && p < 1.0) || total <= 0.0 {
                    return None;
                }
                let target = p * total;
                if value(0.0) >= target {
                    return Some(0.0);
                }
                let first = at_steps.partition_point(|&v| v < target);
                let mut high = if first < times.len() {
                    times[first]
                } else {
                    let mut t = self.history.tail.start_s.max(f64::MIN_POSITIVE);
                    let step = 1.0 / self.history.tail.rate_per_s;
                    let mut guard = 0;
                    while value(t) < target && guard < 4000 {
                        t += step * 2f64.powi(guard.min(60));
                        guard += 1;
                    }
                    t
                };
                let below = times.iter().rev().find(|&&t| t < high).copied();
                let mut low = below.unwrap_or(0.0);
                for _ in 0..200 {
                    let middle = 0.5 * (low + high);
                    if middle <= low || middle >= high || high - low <= 1e-13 * high {
                        break;
                    }
                    if value(middle) >= target {
                        high = middle;
                    } else {
                        low = middle;
                    }
                }
                Some(high)
            })
            .collect()
    }

    /// Mean time each model layer holds a launched photon, s (absorbed photons included,
    /// so the sum is the mean time a photon spends diffusing inside). The extrapolated
    /// continuation of a face counts to the face layer; transparent surface layers, which
    /// the solver treats as outside, hold nothing. From the steady problem.
    pub fn residence_s_by_layer(&self) -> &[f64] {
        &self.residence_s
    }

    /// Number of nodes of the spatial grid (unknowns).
    pub fn grid_nodes(&self) -> usize {
        self.nodes
    }

    /// Number of time steps taken before the exact single-mode tail.
    pub fn time_steps(&self) -> usize {
        self.history.time_s.len() - 1
    }

    /// Extrapolation lengths used at the top (slab) and at the outer / bottom face, cm (0
    /// where the density is held at zero on the face itself).
    pub fn extrapolation_lengths_cm(&self) -> [f64; 2] {
        self.extension_cm
    }

    /// The time-stepped total of escapes (diffusing and atoms), the normalisation of the
    /// conditional distribution.
    fn escaped_total(&self) -> f64 {
        let tail = &self.history.tail;
        let last = self.history.time_s.len() - 1;
        (0..2)
            .map(|face| self.history.escaped[face][last] + tail.escape_rate[face] / tail.rate_per_s)
            .sum::<f64>()
            + self.atoms.iter().map(|a| a.probability).sum::<f64>()
    }

    /// Face indices (0 start, 1 end) an exit counts.
    fn faces(&self, exit: Exit) -> &'static [usize] {
        match (self.geometry, exit) {
            (_, Exit::Any) => &[0, 1],
            (Geometry::Sphere, _) => &[],
            (Geometry::Slab, Exit::Top) => &[0],
            (Geometry::Slab, Exit::Bottom) => &[1],
        }
    }

    /// Escaped through `face` by diffusing, by time `t_s`.
    fn diffused_out_by(&self, t_s: f64, face: usize) -> f64 {
        let h = &self.history;
        if t_s <= 0.0 {
            return 0.0;
        }
        let tail = &h.tail;
        if t_s >= tail.start_s {
            let last = h.time_s.len() - 1;
            let decayed = -(-tail.rate_per_s * (t_s - tail.start_s)).exp_m1();
            return h.escaped[face][last] + tail.escape_rate[face] / tail.rate_per_s * decayed;
        }
        self.interpolate(&h.escaped[face], |k| h.escape_rate[face][k], t_s)
    }

    /// Escape rate through `face` at `t_s`, s⁻¹.
    fn face_rate(&self, t_s: f64, face: usize) -> f64 {
        let h = &self.history;
        if t_s <= 0.0 {
            return 0.0;
        }
        let tail = &h.tail;
        if t_s >= tail.start_s {
            return tail.escape_rate[face] * (-tail.rate_per_s * (t_s - tail.start_s)).exp();
        }
        let k = self.interval(t_s);
        let (t0, t1) = (h.time_s[k], h.time_s[k + 1]);
        let values = &h.escaped[face];
        if k == 0 {
            return (values[1] - values[0]) / (t1 - t0);
        }
        let rate = &h.escape_rate[face];
        hermite_slope(t0, t1, values[k], values[k + 1], rate[k], rate[k + 1], t_s).max(0.0)
    }

    /// Index k of the step interval [t_k, t_{k+1}) holding `t_s` (inside the history).
    fn interval(&self, t_s: f64) -> usize {
        let times = &self.history.time_s;
        times
            .partition_point(|&t| t <= t_s)
            .saturating_sub(1)
            .min(times.len() - 2)
    }

    /// Cubic Hermite interpolation of `values` (with derivatives `slope(k)`) at `t_s`
    /// inside the history, kept between the two end values; linear on the first
    /// (backward-Euler) interval.
    fn interpolate(&self, values: &[f64], slope: impl Fn(usize) -> f64, t_s: f64) -> f64 {
        let times = &self.history.time_s;
        let k = self.interval(t_s);
        let (t0, t1) = (times[k], times[k + 1]);
        let (v0, v1) = (values[k], values[k + 1]);
        let s = ((t_s - t0) / (t1 - t0)).clamp(0.0, 1.0);
        if k == 0 {
            return v0 + s * (v1 - v0);
        }
        let h = t1 - t0;
        let (s2, s3) = (s * s, s * s * s);
        let value = (2.0 * s3 - 3.0 * s2 + 1.0) * v0
            + (s3 - 2.0 * s2 + s) * h * slope(k)
            + (-2.0 * s3 + 3.0 * s2) * v1
            + (s3 - s2) * h * slope(k + 1);
        value.clamp(v0.min(v1), v0.max(v1))
    }
}

/// Derivative at `t` of the cubic Hermite interpolant on [t0, t1] with values v0, v1 and
/// derivatives m0, m1.
fn hermite_slope(t0: f64, t1: f64, v0: f64, v1: f64, m0: f64, m1: f64, t: f64) -> f64 {
    let h = t1 - t0;
    let s = ((t - t0) / h).clamp(0.0, 1.0);
    let s2 = s * s;
    ((6.0 * s2 - 6.0 * s) * v0 + (6.0 * s - 6.0 * s2) * v1) / h
        + (3.0 * s2 - 4.0 * s + 1.0) * m0
        + (3.0 * s2 - 2.0 * s) * m1
}
