//! The late decay of a run's escape times beside the diffusion solver's λ₁.
//!
//! Late in the walk the photons still inside have forgotten where they started, and
//! diffusion theory says the escape-time density decays as e^(−λ₁ t), λ₁ the smallest
//! eigenvalue of the diffusion operator (absorption included). The window starts where
//! the solver's own escape-time distribution has become that single exponential: the
//! first of its 5 %, 10 %, … 95 % points after which the rate of its tail,
//! S(t₀) / ∫_{t₀}^∞ S dt (S = 1 − F, conditional on escape), is within
//! [`SINGLE_MODE_TOLERANCE`] of λ₁. The Monte Carlo rate over the same window is the
//! maximum-likelihood rate of an exponential tail, (n − 1)/Σ(t − t₀) over the n escapes
//! after t₀ (unbiased for an exponential; with weights, Σw/Σw(t − t₀) scaled by
//! (n_eff − 1)/n_eff), with standard error rate/√n_eff. Times come from the tally's bins
//! (0.1 % wide, bin centres), t₀ is moved down to a bin edge.

use serde::Serialize;

use crate::diffusion::transient::EscapeSolution;
use crate::tally::{PathStats, fine_bin_floor};
use crate::units::format_duration;

use super::escape_ks::KS_MIN_ESCAPES;

/// Largest relative difference between the solver's tail rate over the window and λ₁ for
/// the window to count as single-mode.
pub const SINGLE_MODE_TOLERANCE: f64 = 0.005;

/// The late decay rate of the Monte Carlo escape times beside diffusion's λ₁.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LateDecay {
    /// Start of the window, s (the window runs to the last escape).
    pub from_s: f64,
    /// Effective number of Monte Carlo escapes in the window.
    pub photons: f64,
    /// Monte Carlo decay rate over the window, 1/s.
    pub rate_per_s: f64,
    /// Its standard error, 1/s.
    pub stderr_per_s: f64,
    /// Diffusion's late decay rate λ₁, 1/s.
    pub diffusion_rate_per_s: f64,
}

/// The rate of the solver's conditional escape-time tail after `from_s`:
/// S(t₀) / ∫_{t₀}^∞ S dt, by Simpson's rule over 40/λ₁ in steps of 0.1/λ₁ (S has decayed
/// by e⁻⁴⁰ there).
fn tail_rate_per_s(solution: &EscapeSolution, from_s: f64) -> f64 {
    let lambda = solution.decay_rate_per_s();
    let step = 0.1 / lambda;
    let points = 401;
    let survival = |t: f64| 1.0 - solution.escape_cdf(t);
    let integral: f64 = (0..points)
        .map(|k| {
            let weight = if k == 0 || k == points - 1 {
                1.0
            } else if k % 2 == 1 {
                4.0
            } else {
                2.0
            };
            weight * survival(from_s + k as f64 * step)
        })
        .sum::<f64>()
        * step
        / 3.0;
    survival(from_s) / integral
}

/// The late decay of `escapes` against `solution`. `Err` holds the note saying why there is
/// none.
pub fn late_decay(escapes: &PathStats, solution: &EscapeSolution) -> Result<LateDecay, String> {
    let lambda = solution.decay_rate_per_s();
    let probabilities: Vec<f64> = (1..20).map(|k| k as f64 / 20.0).collect();
    let from_s = solution
        .escape_quantiles_s(&probabilities)
        .into_iter()
        .flatten()
        .find(|&t| (tail_rate_per_s(solution, t) / lambda - 1.0).abs() <= SINGLE_MODE_TOLERANCE)
        .and_then(fine_bin_floor)
        .ok_or(
            "no late-decay comparison: diffusion's escape times do not settle into one \
             exponential before their 95 % point",
        )?;
    let histogram = escapes.time_histogram();
    let fine = histogram
        .contiguous()
        .ok_or("no late-decay comparison: no escape time")?;
    let (mut weight, mut spread) = (0.0, 0.0);
    for ((&low, &high), &w) in fine.edges.iter().zip(&fine.edges[1..]).zip(&fine.weights) {
        if low >= from_s {
            weight += w;
            spread += w * (0.5 * (low + high) - from_s);
        }
    }
    let all: f64 = fine.weights.iter().sum::<f64>() + histogram.zero_weight();
    let photons = if all > 0.0 {
        escapes.effective_count() * weight / all
    } else {
        0.0
    };
    if photons < KS_MIN_ESCAPES as f64 || spread <= 0.0 {
        return Err(format!(
            "no late-decay comparison: {} photons escaped after {}, where diffusion's tail \
             is one exponential; at least {KS_MIN_ESCAPES} are needed",
            photons.round(),
            format_duration(from_s)
        ));
    }
    let rate_per_s = weight / spread * (photons - 1.0) / photons;
    Ok(LateDecay {
        from_s,
        photons,
        rate_per_s,
        stderr_per_s: rate_per_s / photons.sqrt(),
        diffusion_rate_per_s: lambda,
    })
}
