//! The Kolmogorov–Smirnov comparison of a run's escape times with the escape-time
//! distribution of the diffusion solver ([`crate::diffusion::transient`]), on every run
//! where enough photons escaped.
//!
//! **Bins.** The tally keeps escape times in bins 0.1 % wide, thousands of them over a few
//! decades; calibrating a KS p-value on that many bins costs a good part of a second. The
//! comparison regroups them into [`KS_BINS`] bins of equal probability under the solver's
//! distribution (edges at its quantiles k/[`KS_BINS`], each moved down to the edge of the
//! tally bin holding it, so every photon falls in exactly one bin), and evaluates the
//! solver's cumulative distribution at those same edges. The distance is taken at the edges
//! only, where both cumulative distributions are known exactly: binning can hide at most the
//! probability of one bin, 1/[`KS_BINS`] = 0.0025, against the tolerances of 0.01 and 0.03
//! the verdict uses.
//!
//! **p-value.** Calibrated for that grid: multinomial histograms on the same bins, drawn from
//! the solver's own bin probabilities, give the null distribution of the binned distance
//! ([`crate::diffusion::ks::binned_ks_test_sequential`], with Besag & Clifford's sequential
//! stopping so that a clear agreement costs some 40 draws and a clear rejection none). The
//! effective sample size is the number of escapes for analog photons, Kish's (Σw)²/Σw² for
//! weighted ones.

use crate::diffusion::ks::{BinnedSample, SequentialCalibration, binned_ks_test_sequential};
use crate::diffusion::transient::EscapeSolution;
use crate::tally::{PathStats, fine_bin_floor};
use crate::units::format_significant;

/// Fewest (effective) escaped photons for a Kolmogorov–Smirnov test; below that the
/// distance says little (its typical null value 0.87/√n exceeds 0.087).
pub const KS_MIN_ESCAPES: u64 = 100;

/// Bins of equal diffusion probability the escape times are regrouped into.
pub const KS_BINS: usize = 400;

/// The binned KS comparison of one run's escape times with the solver's distribution.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EscapeKs {
    /// Largest gap between the two cumulative distributions at the bin edges.
    pub distance: f64,
    /// Calibrated p-value of `distance` for this grid and sample size.
    pub p_value: f64,
    /// Number of bins, the two open ones below the first and above the last edge included
    /// (fewer than [`KS_BINS`] where quantiles share a tally bin).
    pub bins: usize,
    /// Time of the edge with the largest gap, s.
    pub at_s: f64,
    /// Effective number of escaped photons.
    pub effective_photons: f64,
}

/// The binned KS test of `escapes` against `solution`'s escape-time distribution
/// (conditional on escape). `Err` holds the note saying why there is none.
pub fn escape_time_ks(escapes: &PathStats, solution: &EscapeSolution) -> Result<EscapeKs, String> {
    let effective = escapes.effective_count();
    if effective.is_nan() || effective < KS_MIN_ESCAPES as f64 {
        let escaped = if escapes.is_weighted() {
            format!("{} (effective number)", format_significant(effective, 4))
        } else {
            escapes.count().to_string()
        };
        return Err(format!(
            "no KS test: {escaped} photons escaped, fewer than {KS_MIN_ESCAPES}"
        ));
    }
    let histogram = escapes.time_histogram();
    if histogram.non_finite_count() + histogram.negative_count() > 0 {
        return Err("no KS test: some escape times are negative or not finite".into());
    }
    let probabilities: Vec<f64> = (1..KS_BINS).map(|k| k as f64 / KS_BINS as f64).collect();
    let mut edges: Vec<f64> = solution
        .escape_quantiles_s(&probabilities)
        .into_iter()
        .flatten()
        .filter_map(fine_bin_floor)
        .collect();
    edges.dedup();
    if edges.len() < 2 {
        return Err(
            "no KS test: the diffusion escape-time distribution has fewer than two distinct \
             quantiles"
                .into(),
        );
    }
    let theory = solution.escape_cdf_at(&edges);
    if theory.iter().any(|f| !f.is_finite()) {
        return Err("no KS test: the diffusion escape-time distribution is undefined".into());
    }
    let fine = histogram.contiguous().ok_or("no KS test: no escape time")?;
    let mut counts = vec![0.0; edges.len() - 1];
    let (mut below, mut above) = (histogram.zero_weight(), 0.0);
    for (&low, &weight) in fine.edges.iter().zip(&fine.weights) {
        match edges.partition_point(|&e| e <= low) {
            0 => below += weight,
            cell if cell == edges.len() => above += weight,
            cell => counts[cell - 1] += weight,
        }
    }
    let sample = BinnedSample {
        edges: &edges,
        counts: &counts,
        below,
        above,
        effective_size: effective,
    };
    let test = binned_ks_test_sequential(&sample, &theory, &SequentialCalibration::default())
        .map_err(|e| format!("no KS test: {e}"))?;
    let total = below + counts.iter().sum::<f64>() + above;
    let mut cumulative = below;
    let (mut largest, mut at_s) = ((cumulative / total - theory[0]).abs(), edges[0]);
    for ((count, f), &edge) in counts.iter().zip(&theory[1..]).zip(&edges[1..]) {
        cumulative += count;
        let gap = (cumulative / total - f).abs();
        if gap > largest {
            (largest, at_s) = (gap, edge);
        }
    }
    Ok(EscapeKs {
        distance: test.distance,
        p_value: test.p_value,
        bins: edges.len() + 1,
        at_s,
        effective_photons: effective,
    })
}
