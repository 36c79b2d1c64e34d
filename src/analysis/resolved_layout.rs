//! The bins of a slab's resolved tallies, chosen from the physics before the run:
//!
//! - **time of flight**: 200 bins over the longer of four diffusion mean times and eight
//!   diffusion decay times, so that the curves cover the whole decay;
//! - **depth**: bins a quarter of a transport mean free path l′ = 1/(μa + μs′) wide
//!   (thickness-weighted μa and μs′), at least 20 and at most 1000 across the slab;
//! - **exit angle**: bins of equal width in |cos θ|, which are bins of equal solid angle
//!   (dΩ = 2π dμ);
//! - **distance from the beam axis** (R(ρ) and T(ρ)): logarithmic, 10 bins per decade,
//!   from 0.01 l′ to the distance light is expected to reach: 14/μeff (where the diffusion
//!   fall-off e^(−μeff ρ) reaches 10⁻⁶, μeff = √(3 μa/l′)) but no farther than
//!   max(20 l′, 10 × thickness), the lateral spread of light in a non-absorbing slab;
//!   the user may give the range in l′ instead ([`RadialRange`]).

use crate::diffusion::time_resolved::{Boundary, DiffusionSlab};
use crate::diffusion::{self};
use crate::medium::Medium;
use crate::tally::ResolvedLayout;

use super::slab_optics::equivalent_optics;
use super::theory::theory_estimate;

/// Logarithmic radial bins given by the user, in transport mean free paths l′.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RadialRange {
    /// Lower edge of the first bin, l′ (> 0).
    pub min_mfp: f64,
    /// Upper edge of the last bin, l′ (> `min_mfp`).
    pub max_mfp: f64,
}

/// Radial bins per decade of ρ.
pub const RADIAL_BINS_PER_DECADE: f64 = 10.0;

/// The transport mean free path l′ = 1/(μa + μs′) of the slab's thickness-weighted optics,
/// cm (the thickness for a slab that neither absorbs nor scatters).
pub fn transport_mean_free_path_cm(medium: &Medium) -> f64 {
    let optics = equivalent_optics(medium);
    let transport = optics.mua_per_cm + optics.musp_per_cm;
    if transport > 0.0 {
        1.0 / transport
    } else {
        medium.size_cm()
    }
}

/// Default resolved-tally bins for a slab (see the module docs); `time_bin_s` overrides the
/// time-bin width.
pub fn resolved_layout(
    medium: &Medium,
    time_bin_s: Option<f64>,
    time_bins: usize,
    cosine_bins: usize,
) -> ResolvedLayout {
    resolved_layout_with(medium, time_bin_s, time_bins, cosine_bins, None)
}

/// As [`resolved_layout`], with the radial bins over `radial` (in transport mean free
/// paths) where given.
pub fn resolved_layout_with(
    medium: &Medium,
    time_bin_s: Option<f64>,
    time_bins: usize,
    cosine_bins: usize,
    radial: Option<RadialRange>,
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
    let thickness = medium.size_cm();
    let transport = transport_mean_free_path_cm(medium);
    let depth_bins = ((thickness / (0.25 * transport)).ceil() as usize).clamp(20, 1000);
    let (radial_min_cm, radial_max_cm) = match radial {
        Some(range) => (range.min_mfp * transport, range.max_mfp * transport),
        None => default_radial_range(medium, transport),
    };
    let radial_bins = ((radial_max_cm / radial_min_cm).log10() * RADIAL_BINS_PER_DECADE)
        .ceil()
        .max(1.0) as usize;
    ResolvedLayout {
        time_bin_s: time_bin_s.unwrap_or(span / time_bins as f64),
        time_bins,
        depth_bin_cm: thickness / depth_bins as f64,
        depth_bins,
        cosine_bins,
        radial_min_cm,
        radial_max_cm,
        radial_bins,
        layers: medium.layers().len(),
    }
}

/// The default radial range, cm (see the module docs).
fn default_radial_range(medium: &Medium, transport_cm: f64) -> (f64, f64) {
    let optics = equivalent_optics(medium);
    let spread = (20.0 * transport_cm).max(10.0 * medium.size_cm());
    let mu_eff = (3.0 * optics.mua_per_cm / transport_cm).sqrt();
    let reach = if mu_eff > 0.0 {
        (14.0 / mu_eff).min(spread)
    } else {
        spread
    };
    let max = reach.max(20.0 * transport_cm).min(1e4 * transport_cm);
    (0.01 * transport_cm, max)
}
