//! Late-time decay rates of time-of-flight histograms: a weighted log-linear fit of the
//! tail, with the diffusion curve fitted over the same window.

use serde::Serialize;

/// A log-linear fit of the late-time tail of a time-of-flight histogram, with the
/// diffusion curve fitted over the same bins with the same weights (so that both rates
/// describe the same stretch of time).
#[derive(Debug, Clone, Copy, Serialize)]
pub struct DecayFit {
    /// Fitted Monte Carlo decay rate, 1/s.
    pub rate_per_s: f64,
    /// Its standard error, 1/s.
    pub stderr_per_s: f64,
    /// Diffusion theory (extrapolated boundary) fitted over the same window, 1/s.
    pub diffusion_rate_per_s: Option<f64>,
    /// Start of the fitted window, s.
    pub from_s: f64,
    /// End of the fitted window, s.
    pub to_s: f64,
}

/// Weighted least-squares slope of ln(value) against the bin centre over bins
/// `start..=end`, weights `weights`; returns (slope, its standard error for Poisson counts).
fn weighted_log_slope(
    values: &[f64],
    weights: &[f64],
    start: usize,
    end: usize,
    bin_s: f64,
) -> Option<(f64, f64)> {
    let (mut sw, mut st, mut sy, mut stt, mut sty) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for i in start..=end {
        let (value, w) = (values[i], weights[i]);
        if value <= 0.0 || w <= 0.0 {
            continue;
        }
        let t = (i as f64 + 0.5) * bin_s;
        let y = value.ln();
        sw += w;
        st += w * t;
        sy += w * y;
        stt += w * t * t;
        sty += w * t * y;
    }
    let denominator = sw * stt - st * st;
    (denominator > 0.0).then(|| {
        (
            (sw * sty - st * sy) / denominator,
            (sw / denominator).sqrt(),
        )
    })
}

/// Fits ln(count) = a − k t by weighted least squares (weights = counts, the inverse
/// Poisson variance of ln count) over the late tail: from where the counts have fallen to
/// 1/20 of the peak (past the early, non-exponential part), to the last bin with at least 25
/// counts; fits `diffusion` (same bins) over the same window. `None` with fewer than 4
/// usable bins.
pub fn fit_late_decay(counts: &[u64], diffusion: &[f64], bin_s: f64) -> Option<DecayFit> {
    let peak_index = (0..counts.len()).max_by_key(|&i| counts[i])?;
    let peak = counts[peak_index];
    let start = (peak_index..counts.len()).find(|&i| 20 * counts[i] <= peak)?;
    let end = (start..counts.len()).rev().find(|&i| counts[i] >= 25)?;
    if end < start + 3 {
        return None;
    }
    let weights: Vec<f64> = counts.iter().map(|&c| c as f64).collect();
    let (slope, stderr) = weighted_log_slope(&weights, &weights, start, end, bin_s)?;
    let diffusion_rate_per_s = (diffusion.len() == counts.len())
        .then(|| weighted_log_slope(diffusion, &weights, start, end, bin_s))
        .flatten()
        .map(|(slope, _)| -slope);
    Some(DecayFit {
        rate_per_s: -slope,
        stderr_per_s: stderr,
        diffusion_rate_per_s,
        from_s: start as f64 * bin_s,
        to_s: (end + 1) as f64 * bin_s,
    })
}
