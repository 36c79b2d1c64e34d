//! Time integration of `C w′ = −K w` from the source's initial photons: one backward-Euler
//! step to damp the stiff modes of a point start, then TR-BDF2 (Bank, Coughran, Fichtner,
//! Grosse, Rose & Smith 1985, IEEE Trans. Electron Devices 32:1992; Hosea & Shampine 1996,
//! Appl. Numer. Math. 20:21), a one-step, second-order, L-stable scheme: a trapezoidal stage
//! to t + γΔt and a BDF2 stage to t + Δt, γ = 2 − √2. Each stage is one tridiagonal solve.
//!
//! The escaped and absorbed photons are integrated by the same stages as the density, so
//! photons inside + escaped + absorbed stays equal to the initial number to rounding at
//! every step. Steps grow geometrically, Δt = ε t, until t reaches 2/λ₁, and stay at 2ε/λ₁
//! after: the history resolves the fastest early escapes and the late exponential alike.
//! Integration stops once the density is the slowest eigenmode alone (its C-weighted
//! residual below 1e−6) or nearly every photon is gone; from there on the solution is
//! exactly `a₁ x₁ e^(−λ₁ (t − t_end))`.

use super::SolverError;
use super::system::System;
use super::tridiagonal::solve;

/// Relative C-norm of the part of the density outside the slowest mode below which the
/// rest of the evolution is that mode alone.
const SINGLE_MODE_RESIDUAL: f64 = 1e-6;
/// Fraction of the initial photons still inside below which integration stops anyway.
const EMPTY: f64 = 1e-15;
/// Upper bound on the number of steps (never reached in practice: a problem needs
/// ~ (ln(range) + 30) / ε steps).
const MAX_STEPS: usize = 1_000_000;
/// Work budget of one integration, grid nodes × steps (about 0.45 s on the development
/// machine; the Sun-like star and a 1 000-layer slab need a small part of it).
pub(super) const WORK_BUDGET: f64 = 1.5e7;

/// The late exponential from the end of the history on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Tail {
    /// Where the history ends, s.
    pub start_s: f64,
    /// λ₁, s⁻¹.
    pub rate_per_s: f64,
    /// Photons inside at `start_s` in the slowest mode.
    pub content: f64,
    /// Escape rates through the two faces at `start_s`, s⁻¹.
    pub escape_rate: [f64; 2],
    /// Absorption rate at `start_s`, s⁻¹.
    pub absorption_rate: f64,
}

/// The integrated history, per launched photon.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct History {
    /// Times, s (the first is 0).
    pub time_s: Vec<f64>,
    /// Escaped through the start and end faces by each time.
    pub escaped: [Vec<f64>; 2],
    /// Escape rates through the two faces at each time, s⁻¹.
    pub escape_rate: [Vec<f64>; 2],
    /// Absorbed by each time.
    pub absorbed: Vec<f64>,
    /// Absorption rate at each time, s⁻¹.
    pub absorption_rate: Vec<f64>,
    /// Photons inside at each time.
    pub content: Vec<f64>,
    /// What follows the last time.
    pub tail: Tail,
}

/// One recorded state.
struct State {
    time_s: f64,
    escaped: [f64; 2],
    absorbed: f64,
}

impl History {
    fn record(&mut self, system: &System, state: &State, w: &[f64]) {
        let rates = system.escape_rates(w);
        self.time_s.push(state.time_s);
        for (face, rate) in rates.into_iter().enumerate() {
            self.escaped[face].push(state.escaped[face]);
            self.escape_rate[face].push(rate);
        }
        self.absorbed.push(state.absorbed);
        self.absorption_rate.push(system.absorption_rate(w));
        self.content.push(system.content(w));
    }
}

/// Integrates `system` from its initial photons, with first step `first_step_s`, growth
/// `epsilon` and the slowest eigenpair `(lambda, mode)` (mode C-normalised).
pub(super) fn integrate(
    system: &System,
    first_step_s: f64,
    epsilon: f64,
    lambda: f64,
    mode: &[f64],
) -> Result<History, SolverError> {
    let n = system.len();
    let initial_content: f64 = system.initial.iter().sum();
    let mut history = History {
        time_s: Vec::new(),
        escaped: [Vec::new(), Vec::new()],
        escape_rate: [Vec::new(), Vec::new()],
        absorbed: Vec::new(),
        absorption_rate: Vec::new(),
        content: Vec::new(),
        tail: Tail {
            start_s: 0.0,
            rate_per_s: lambda,
            content: 0.0,
            escape_rate: [0.0; 2],
            absorption_rate: 0.0,
        },
    };
    let mut w: Vec<f64> = system
        .initial
        .iter()
        .zip(&system.capacity)
        .map(|(y, c)| y / c)
        .collect();
    let mut state = State {
        time_s: 0.0,
        escaped: [0.0; 2],
        absorbed: 0.0,
    };
    history.record(system, &state, &w);
    let mut rhs = vec![0.0; n];
    let mut scratch = vec![0.0; n];
    let mut stage = vec![0.0; n];
    let mut stiffness = vec![0.0; n];
    // Backward Euler to t₁: (C + Δt K) w₁ = C w₀.
    let step = first_step_s;
    rhs.copy_from_slice(&system.initial);
    solve(system, 1.0, step, &rhs, &mut stage, &mut scratch);
    std::mem::swap(&mut w, &mut stage);
    let rates = system.escape_rates(&w);
    state.time_s = step;
    state.escaped = [step * rates[0], step * rates[1]];
    state.absorbed = step * system.absorption_rate(&w);
    history.record(system, &state, &w);

    let gamma = 2.0 - std::f64::consts::SQRT_2;
    let bdf_beta = (1.0 - gamma) / (2.0 - gamma);
    let bdf_new = 1.0 / (gamma * (2.0 - gamma));
    let bdf_old = (1.0 - gamma) * (1.0 - gamma) / (gamma * (2.0 - gamma));
    let mut steps = 1;
    loop {
        let dt = epsilon * state.time_s.min(2.0 / lambda);
        // Trapezoidal stage to t + γΔt.
        let half = 0.5 * gamma * dt;
        system.apply_stiffness(&w, &mut stiffness);
        for i in 0..n {
            rhs[i] = system.capacity[i] * w[i] - half * stiffness[i];
        }
        solve(system, 1.0, half, &rhs, &mut stage, &mut scratch);
        let (rates_old, absorption_old) = (system.escape_rates(&w), system.absorption_rate(&w));
        let (rates_mid, absorption_mid) =
            (system.escape_rates(&stage), system.absorption_rate(&stage));
        let escaped_mid = [
            state.escaped[0] + half * (rates_old[0] + rates_mid[0]),
            state.escaped[1] + half * (rates_old[1] + rates_mid[1]),
        ];
        let absorbed_mid = state.absorbed + half * (absorption_old + absorption_mid);
        // BDF2 stage to t + Δt.
        for i in 0..n {
            rhs[i] = system.capacity[i] * (bdf_new * stage[i] - bdf_old * w[i]);
        }
        solve(system, 1.0, bdf_beta * dt, &rhs, &mut w, &mut scratch);
        let rates_new = system.escape_rates(&w);
        for face in 0..2 {
            state.escaped[face] = bdf_new * escaped_mid[face] - bdf_old * state.escaped[face]
                + bdf_beta * dt * rates_new[face];
        }
        state.absorbed = bdf_new * absorbed_mid - bdf_old * state.absorbed
            + bdf_beta * dt * system.absorption_rate(&w);
        state.time_s += dt;
        history.record(system, &state, &w);
        steps += 1;
        if (steps * n) as f64 > WORK_BUDGET {
            return Err(SolverError::TooMuchWork {
                nodes: n,
                steps,
                budget: WORK_BUDGET,
            });
        }
        let content = system.content(&w);
        let late = state.time_s * lambda > 1.0;
        if content <= EMPTY * initial_content
            || steps >= MAX_STEPS
            || (late && steps % 4 == 0 && single_mode(system, &w, mode))
        {
            break;
        }
    }
    // The tail: the projection on the slowest mode.
    let amplitude: f64 = mode
        .iter()
        .zip(&w)
        .zip(&system.capacity)
        .map(|((x, v), c)| x * c * v)
        .sum();
    let pure: Vec<f64> = mode.iter().map(|x| amplitude * x).collect();
    history.tail = Tail {
        start_s: state.time_s,
        rate_per_s: lambda,
        content: system.content(&pure),
        escape_rate: system.escape_rates(&pure),
        absorption_rate: system.absorption_rate(&pure),
    };
    Ok(history)
}

/// Whether `w` is the C-normalised `mode` alone to [`SINGLE_MODE_RESIDUAL`].
fn single_mode(system: &System, w: &[f64], mode: &[f64]) -> bool {
    let (mut norm, mut projection) = (0.0, 0.0);
    for i in 0..system.len() {
        norm += system.capacity[i] * w[i] * w[i];
        projection += system.capacity[i] * w[i] * mode[i];
    }
    norm > 0.0 && (norm - projection * projection) <= SINGLE_MODE_RESIDUAL.powi(2) * norm
}
