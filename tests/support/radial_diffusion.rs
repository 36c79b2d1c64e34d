//! An independent reference for escape-time distributions of spheres: the time-dependent
//! radial diffusion equation on the model's own shells, solved by finite volumes and
//! Crank–Nicolson time steps (two backward-Euler steps first, which damp the oscillation
//! Crank–Nicolson shows after a discontinuous start; Rannacher 1984, Numer. Math. 43:309).
//!
//! The survival u(r, t) = P(T > t) of a photon starting at radius r obeys the backward
//! equation ∂u/∂t = r⁻² ∂_r(r² D ∂_r u), u(r, 0) = 1, u = 0 at the surface moved out by the
//! Milne extrapolation length q∞ l_tr of the outermost shell, D = c l_tr / 3 per shell
//! (Chandrasekhar 1950, q∞ = 0.7104461). Cells are the model's shells; the escape-time CDF
//! from the centre is 1 − u in the innermost cell. A different method from the walker's
//! passage tables (eigen-expansions) and Monte Carlo sampling.

use sojourn::medium::Medium;
use sojourn::units::SPEED_OF_LIGHT_CM_S;

/// The escape-time CDF from the centre of `medium` (a sphere) at the times `times_s`
/// (ascending), with `substeps` time steps spread logarithmically before the first time
/// and between consecutive times.
pub fn centre_escape_cdf(medium: &Medium, times_s: &[f64], substeps: usize) -> Vec<f64> {
    let count = medium.layers().len();
    let diffusion: Vec<f64> = medium
        .layers()
        .iter()
        .map(|l| SPEED_OF_LIGHT_CM_S / (3.0 * l.transport_extinction_per_cm()))
        .collect();
    let bounds: Vec<(f64, f64)> = (0..count).map(|i| medium.layer_bounds_cm(i)).collect();
    let volume: Vec<f64> = bounds
        .iter()
        .map(|(a, b)| (b.powi(3) - a.powi(3)) / 3.0)
        .collect();
    let centre: Vec<f64> = bounds.iter().map(|(a, b)| 0.5 * (a + b)).collect();
    // Conductance between cells i and i + 1 through their common face, and from the last
    // cell to the extrapolated surface.
    let mut conductance = vec![0.0; count];
    for i in 0..count - 1 {
        let face = bounds[i].1;
        let resistance =
            (face - centre[i]) / diffusion[i] + (centre[i + 1] - face) / diffusion[i + 1];
        conductance[i] = face * face / resistance;
    }
    let last = count - 1;
    let surface = bounds[last].1;
    let extrapolation = 0.710_446_1 / medium.layers()[last].transport_extinction_per_cm();
    conductance[last] =
        surface * surface / ((surface - centre[last] + extrapolation) / diffusion[last]);
    // V du/dt = −A u, A tridiagonal: A_ii = C_{i−1} + C_i, A_{i,i±1} = −C.
    let step = |u: &mut Vec<f64>, dt: f64, theta: f64| {
        // (V + θ dt A) u_new = (V − (1 − θ) dt A) u_old.
        let mut rhs = vec![0.0; count];
        for i in 0..count {
            let below = if i > 0 { conductance[i - 1] } else { 0.0 };
            let mut au = (below + conductance[i]) * u[i];
            if i > 0 {
                au -= below * u[i - 1];
            }
            if i < last {
                au -= conductance[i] * u[i + 1];
            }
            rhs[i] = volume[i] * u[i] - (1.0 - theta) * dt * au;
        }
        // Thomas algorithm.
        let mut diag: Vec<f64> = (0..count)
            .map(|i| {
                let below = if i > 0 { conductance[i - 1] } else { 0.0 };
                volume[i] + theta * dt * (below + conductance[i])
            })
            .collect();
        let off: Vec<f64> = (0..last).map(|i| -theta * dt * conductance[i]).collect();
        for i in 1..count {
            let factor = off[i - 1] / diag[i - 1];
            diag[i] -= factor * off[i - 1];
            rhs[i] -= factor * rhs[i - 1];
        }
        u[last] = rhs[last] / diag[last];
        for i in (0..last).rev() {
            u[i] = (rhs[i] - off[i] * u[i + 1]) / diag[i];
        }
    };
    let mut u = vec![1.0; count];
    let mut now = 0.0;
    let mut first = true;
    let mut cdf = Vec::with_capacity(times_s.len());
    for &target in times_s {
        let start = if now > 0.0 { now } else { target * 1e-6 };
        if first {
            // Two backward-Euler steps to `start`.
            step(&mut u, 0.5 * start, 1.0);
            step(&mut u, 0.5 * start, 1.0);
            now = start;
            first = false;
        }
        let ratio = (target / now).powf(1.0 / substeps as f64);
        for _ in 0..substeps {
            let next = (now * ratio).min(target);
            step(&mut u, next - now, 0.5);
            now = next;
        }
        cdf.push(1.0 - u[0]);
    }
    cdf
}

/// Quantiles of the centre escape time for probabilities `probabilities`, by bisection in
/// log t on [`centre_escape_cdf`] over a grid of `points` times from `t_low` to `t_high`.
pub fn centre_escape_quantiles(
    medium: &Medium,
    probabilities: &[f64],
    t_low: f64,
    t_high: f64,
    points: usize,
) -> Vec<f64> {
    let times: Vec<f64> = (0..points)
        .map(|k| t_low * (t_high / t_low).powf(k as f64 / (points - 1) as f64))
        .collect();
    let cdf = centre_escape_cdf(medium, &times, 20);
    probabilities
        .iter()
        .map(|&p| {
            let k = cdf.partition_point(|&c| c < p).clamp(1, points - 1);
            let f = (p - cdf[k - 1]) / (cdf[k] - cdf[k - 1]);
            (times[k - 1].ln() + f * (times[k].ln() - times[k - 1].ln())).exp()
        })
        .collect()
}
