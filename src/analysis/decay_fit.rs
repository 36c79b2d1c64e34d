//! Late-time decay rates of time-of-flight histograms: where the tail has become one
//! exponential, and the maximum-likelihood rate of the Monte Carlo counts over it, with the
//! diffusion curve's rate over the same window.
//!
//! **Window.** Late on, the flux leaving a diffusive slab decays as e^(−k t). The window
//! starts at the first bin after the diffusion curve's peak from which on the curve's local
//! rate ln(dᵢ/dᵢ₊₁)/Δt stays within [`SINGLE_MODE_TOLERANCE`] of its last value on the grid:
//! where diffusion itself has settled into its slowest mode. Without a usable diffusion
//! curve, it starts where the counts have fallen to 1/20 of their peak (common practice).
//!
//! **Rate.** After the window's start t₀ the bin index j of a photon is geometric,
//! P(j) = (1 − q) qʲ with q = e^(−k Δt), whatever the bins' width. The photons later than
//! the grid are censored at the grid's end. The maximum-likelihood q over the n counted
//! photons and the m censored ones is q = S/(S + n), S = Σ j + m J (J bins in the window),
//! and its standard error comes from the Fisher information (n/(1 − q)² + S/q²). This uses
//! every photon of the tail, however few fall in each late bin: a log-linear fit of the
//! counts needs many photons per bin and is biased where they are few.

use serde::Serialize;

/// Largest relative departure of the diffusion curve's local decay rate from its final value
/// for a bin to count as single-mode.
pub const SINGLE_MODE_TOLERANCE: f64 = 0.02;

/// Fewest photons in the window (counted or later than the grid) for a rate.
pub const MIN_TAIL_PHOTONS: u64 = 10;

/// A maximum-likelihood fit of the late-time tail of a time-of-flight histogram, with the
/// diffusion curve's rate over the same window.
#[derive(Debug, Clone, Copy, Serialize)]
pub struct DecayFit {
    /// Fitted Monte Carlo decay rate, 1/s.
    pub rate_per_s: f64,
    /// Its standard error, 1/s.
    pub stderr_per_s: f64,
    /// Diffusion theory (extrapolated boundary) over the same window, 1/s.
    pub diffusion_rate_per_s: Option<f64>,
    /// Start of the fitted window, s.
    pub from_s: f64,
    /// End of the fitted window, s (the end of the grid: later photons count as censored).
    pub to_s: f64,
    /// Photons in the window, later-than-the-grid ones included.
    pub photons: u64,
}

/// Local decay rates ln(dᵢ/dᵢ₊₁)/Δt of `curve`, `None` where a value is not positive.
fn local_rates(curve: &[f64], bin_s: f64) -> Vec<Option<f64>> {
    curve
        .windows(2)
        .map(|pair| {
            (pair[0] > 0.0 && pair[1] > 0.0 && pair[0].is_finite() && pair[1].is_finite())
                .then(|| (pair[0] / pair[1]).ln() / bin_s)
        })
        .collect()
}

/// The first bin after the curve's peak from which on its local rate stays within
/// [`SINGLE_MODE_TOLERANCE`] of its last value, and that rate; `None` if the curve never
/// settles (or has no positive tail).
fn single_mode_start(curve: &[f64], bin_s: f64) -> Option<(usize, f64)> {
    let peak = (0..curve.len()).max_by(|&a, &b| curve[a].total_cmp(&curve[b]))?;
    let rates = local_rates(curve, bin_s);
    let last = (peak..rates.len()).rev().find(|&i| rates[i].is_some())?;
    let final_rate = rates[last]?;
    if final_rate <= 0.0 {
        return None;
    }
    let settled =
        |i: usize| rates[i].is_some_and(|r| (r / final_rate - 1.0).abs() <= SINGLE_MODE_TOLERANCE);
    let mut start = last;
    while start > peak && settled(start - 1) {
        start -= 1;
    }
    // The mean rate over the settled stretch, from the curve's values at its ends.
    let rate = (curve[start] / curve[last + 1]).ln() / ((last + 1 - start) as f64 * bin_s);
    Some((start, rate))
}

/// Fits the late decay of `counts` (photons per time bin of width `bin_s`, s; `later` the
/// photons after the last bin) beside `diffusion` (the diffusion curve on the same bins, or
/// empty): see the module documentation. `None` with fewer than [`MIN_TAIL_PHOTONS`]
/// photons in the window or fewer than 2 bins.
pub fn fit_late_decay(
    counts: &[u64],
    later: u64,
    diffusion: &[f64],
    bin_s: f64,
) -> Option<DecayFit> {
    let from_diffusion = (diffusion.len() == counts.len())
        .then(|| single_mode_start(diffusion, bin_s))
        .flatten();
    let start = match from_diffusion {
        Some((start, _)) => start,
        None => {
            let peak_index = (0..counts.len()).max_by_key(|&i| counts[i])?;
            let peak = counts[peak_index];
            (peak_index..counts.len()).find(|&i| 20 * counts[i] <= peak)?
        }
    };
    let bins = counts.len() - start;
    if bins < 2 {
        return None;
    }
    let counted: u64 = counts[start..].iter().sum();
    let photons = counted + later;
    if photons < MIN_TAIL_PHOTONS || counted == 0 {
        return None;
    }
    let index_sum: f64 = counts[start..]
        .iter()
        .enumerate()
        .map(|(j, &c)| j as f64 * c as f64)
        .sum::<f64>()
        + later as f64 * bins as f64;
    let n = counted as f64;
    if index_sum <= 0.0 {
        return None;
    }
    let q = index_sum / (index_sum + n);
    let information = n / (1.0 - q).powi(2) + index_sum / (q * q);
    let rate_per_s = -q.ln() / bin_s;
    let stderr_per_s = 1.0 / (information.sqrt() * q * bin_s);
    Some(DecayFit {
        rate_per_s,
        stderr_per_s,
        diffusion_rate_per_s: from_diffusion.map(|(_, rate)| rate),
        from_s: start as f64 * bin_s,
        to_s: counts.len() as f64 * bin_s,
        photons,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand::distr::{Distribution, Open01};
    use rand_xoshiro::Xoshiro256PlusPlus;

    /// Histogram of `n` exponential times of rate `rate` on `bins` bins of `bin_s`, and the
    /// photons later than the grid.
    fn exponential_counts(n: usize, rate: f64, bins: usize, bin_s: f64) -> (Vec<u64>, u64) {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(17);
        let mut counts = vec![0u64; bins];
        let mut later = 0;
        for _ in 0..n {
            let u: f64 = Open01.sample(&mut rng);
            let t = -u.ln() / rate;
            match ((t / bin_s) as usize).min(bins) {
                i if i < bins => counts[i] += 1,
                _ => later += 1,
            }
        }
        (counts, later)
    }

    #[test]
    fn recovers_an_exponential_rate_within_its_error_even_with_sparse_late_bins() {
        // 400 photons over 200 bins: most late bins hold 0–2 photons, where a log-linear fit
        // fails. Exact rate 2.5 /s; the estimate must fall within 4σ, and σ ≈ rate/√n.
        let (counts, later) = exponential_counts(400, 2.5, 200, 0.01);
        let fit = fit_late_decay(&counts, later, &[], 0.01).unwrap();
        assert!(
            (fit.rate_per_s - 2.5).abs() < 4.0 * fit.stderr_per_s,
            "{fit:?}"
        );
        let expected_sigma = 2.5 / (fit.photons as f64).sqrt();
        assert!(
            (fit.stderr_per_s / expected_sigma - 1.0).abs() < 0.1,
            "{fit:?}"
        );
    }

    #[test]
    fn photons_beyond_the_grid_are_censored_not_lost() {
        // A grid covering only 1/rate: 63 % of the photons are counted, the rest are later.
        // The diffusion curve e^(−t) is one exponential from the start, so the window is the
        // whole grid.
        let (counts, later) = exponential_counts(20_000, 1.0, 100, 0.01);
        assert!(later > 5_000);
        let curve: Vec<f64> = (0..100).map(|i| (-(i as f64 + 0.5) * 0.01).exp()).collect();
        let fit = fit_late_decay(&counts, later, &curve, 0.01).unwrap();
        assert_eq!(fit.from_s, 0.0);
        assert_eq!(fit.photons, 20_000);
        assert!((fit.diffusion_rate_per_s.unwrap() - 1.0).abs() < 1e-9);
        assert!(
            (fit.rate_per_s - 1.0).abs() < 4.0 * fit.stderr_per_s,
            "{fit:?}"
        );
    }

    #[test]
    fn the_window_starts_where_the_diffusion_curve_is_one_exponential() {
        // A two-mode curve e^(−t) + e^(−9t): its local rate 1 + 8x/(1 + x), x = e^(−8t), is
        // within 2 % of 1 after t = ln(7.98/0.02)/8 ≈ 0.749.
        let bin_s = 0.01;
        let curve: Vec<f64> = (0..1000)
            .map(|i| {
                let t = (i as f64 + 0.5) * bin_s;
                (-t).exp() + (-9.0 * t).exp()
            })
            .collect();
        let (start, rate) = single_mode_start(&curve, bin_s).unwrap();
        let from = start as f64 * bin_s;
        assert!((from - 0.749).abs() < 0.02, "window from {from}");
        assert!((rate - 1.0).abs() < 0.01, "rate {rate}");
    }

    #[test]
    fn too_few_photons_give_no_rate() {
        assert!(fit_late_decay(&[5, 3, 1, 0], 0, &[], 0.1).is_none());
    }
}
