//! Monte Carlo against diffusion theory: ratios of means and the distance between the
//! escape-time distributions.

use serde::Serialize;

use crate::diffusion::{self, DiffusionEstimate};
use crate::medium::Medium;
use crate::tally::PathStats;

/// Monte Carlo against diffusion theory.
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// Monte Carlo mean escape time / diffusion mean exit time with the extrapolated
    /// boundary.
    pub time_ratio: Option<f64>,
    /// 1σ uncertainty of `time_ratio` (from the Monte Carlo standard error).
    pub time_ratio_stderr: Option<f64>,
    /// Monte Carlo mean escape time / diffusion mean exit time without extrapolation.
    pub time_ratio_plain: Option<f64>,
    /// Monte Carlo mean escape time / the rule of thumb's time.
    pub naive_time_ratio: Option<f64>,
    /// Monte Carlo mean scatterings / diffusion (extrapolated) scatterings.
    pub scatterings_ratio: Option<f64>,
    /// Kolmogorov–Smirnov distance between the Monte Carlo escape times and the exact
    /// first-passage distribution of diffusion out of the extrapolated sphere (uniform,
    /// conservative sphere with a centred source only; null otherwise).
    pub ks_distance: Option<f64>,
}

/// Monte Carlo `escapes` on `medium` against the diffusion `estimate`.
pub fn compare(medium: &Medium, escapes: &PathStats, estimate: &DiffusionEstimate) -> Comparison {
    let mean = escapes.time_s.mean();
    let stderr = escapes.time_s.std_error();
    let ratio = |reference: f64| mean.filter(|_| reference > 0.0).map(|m| m / reference);
    let time_ratio = ratio(estimate.mean_time_extrapolated_s);
    Comparison {
        time_ratio,
        time_ratio_stderr: stderr
            .filter(|_| estimate.mean_time_extrapolated_s > 0.0)
            .map(|s| s / estimate.mean_time_extrapolated_s),
        time_ratio_plain: ratio(estimate.mean_time_s),
        naive_time_ratio: ratio(estimate.naive_time_s),
        scatterings_ratio: escapes
            .scatterings
            .mean()
            .filter(|_| estimate.mean_scatterings_extrapolated > 0.0)
            .map(|n| n / estimate.mean_scatterings_extrapolated),
        ks_distance: diffusion::first_passage_ks_distance(medium, escapes),
    }
}
