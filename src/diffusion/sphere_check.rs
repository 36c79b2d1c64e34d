//! The whole escape-time distribution against theory: for a uniform, conservative sphere
//! with a centred source, the Kolmogorov–Smirnov distance between the Monte Carlo escape
//! times and the exact first-passage distribution of diffusion out of a sphere
//! (docs/references.md, Diffusion theory 1), with the surface moved out to the Milne extrapolated
//! radius R + q∞ l_tr.

use super::boundary::MILNE_EXTRAPOLATION_LENGTH;
use super::first_passage;
use crate::medium::{Geometry, Medium, Source};
use crate::tally::PathStats;
use crate::units::SPEED_OF_LIGHT_CM_S;

/// Radius (cm) and diffusion coefficient (cm²/s) of the diffusion sphere equivalent to
/// `medium`, if it is one uniform, conservative sphere with a centred source.
pub fn equivalent_sphere(medium: &Medium) -> Option<(f64, f64)> {
    if medium.geometry() != Geometry::Sphere || medium.layers().len() != 1 {
        return None;
    }
    if medium.source() != Source::centre() {
        return None;
    }
    let layer = &medium.layers()[0];
    let transport = layer.transport_extinction_per_cm();
    if layer.albedo() < 1.0 || transport <= 0.0 {
        return None;
    }
    let speed = SPEED_OF_LIGHT_CM_S / layer.refractive_index();
    let diffusion = speed / (3.0 * transport);
    let radius = medium.size_cm() + MILNE_EXTRAPOLATION_LENGTH / transport;
    Some((radius, diffusion))
}

/// KS distance between the escape-time histogram of `escapes` and the first-passage CDF of
/// the equivalent diffusion sphere, evaluated at the histogram's bin edges (a lower bound of
/// the unbinned statistic; bins are at most 0.1 % wide), with every photon counted with its
/// weight (the weighted empirical cdf). `None` where no equivalent sphere exists or some
/// time is zero, negative or not finite.
pub fn first_passage_ks_distance(medium: &Medium, escapes: &PathStats) -> Option<f64> {
    let (radius, diffusion) = equivalent_sphere(medium)?;
    let histogram = escapes.time_histogram();
    let unbinned = histogram.zero_count() + histogram.negative_count();
    if histogram.total() == 0 || unbinned > 0 || histogram.non_finite_count() > 0 {
        return None;
    }
    let bins = histogram.contiguous()?;
    let total: f64 = bins.weights.iter().sum();
    if total <= 0.0 {
        return None;
    }
    let cdf = |t: f64| first_passage::cdf(t * diffusion / (radius * radius));
    let mut below = 0.0;
    let mut distance = cdf(bins.edges[0]);
    for (weight, &edge) in bins.weights.iter().zip(&bins.edges[1..]) {
        below += weight;
        distance = distance.max((below / total - cdf(edge)).abs());
    }
    Some(distance)
}
