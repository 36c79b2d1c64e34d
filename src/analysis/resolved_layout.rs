//! The bins of a slab's resolved tallies, chosen from diffusion theory before the run so
//! that the time-of-flight curves cover the whole decay.

use crate::diffusion::time_resolved::{Boundary, DiffusionSlab};
use crate::diffusion::{self};
use crate::medium::Medium;
use crate::tally::ResolvedLayout;

use super::slab_optics::equivalent_optics;
use super::theory::theory_estimate;

/// Default resolved-tally bins for a slab: 200 time bins over the longer of four diffusion
/// mean times and eight diffusion decay times (extrapolated boundary; the mean time with the
/// source where [`theory_estimate`] puts it, or for a slab thinner than 1/μs′ the first
/// collisions of the beam), 100 depth bins,
/// `cosine_bins` exit-cosine bins, 100 radial bins over 20 transport mean free paths of the
/// top layer. `time_bin_s` overrides the time-bin width.
pub fn resolved_layout(
    medium: &Medium,
    time_bin_s: Option<f64>,
    time_bins: usize,
    cosine_bins: usize,
) -> ResolvedLayout {
    let estimate = theory_estimate(medium).unwrap_or_else(|| diffusion::estimate(medium));
    let decay_time = DiffusionSlab::new(equivalent_optics(medium), Boundary::Extrapolated)
        .map(|slab| 1.0 / slab.decay_rate_per_s())
        .unwrap_or(0.0);
    let span = (4.0 * estimate.mean_time_extrapolated_s).max(8.0 * decay_time);
    let span = if span > 0.0 && span.is_finite() {
        span
    } else {
        4.0 * estimate.naive_time_s.max(1e-15)
    };
    let top_transport = medium.layers()[0].transport_extinction_per_cm();
    let radial_range = if top_transport > 0.0 {
        20.0 / top_transport
    } else {
        medium.size_cm()
    };
    ResolvedLayout {
        time_bin_s: time_bin_s.unwrap_or(span / time_bins as f64),
        time_bins,
        depth_bin_cm: medium.size_cm() / 100.0,
        depth_bins: 100,
        cosine_bins,
        radial_bin_cm: radial_range / 100.0,
        radial_bins: 100,
        layers: medium.layers().len(),
    }
}
