//! Kolmogorov–Smirnov statistics for comparing Monte Carlo escape times with theory.
//!
//! One-sample distance from sorted samples or from a histogram, the two-sample distance,
//! and the asymptotic Kolmogorov distribution for critical values and p-values (Press,
//! Teukolsky, Vetterling & Flannery, *Numerical Recipes*, 3rd ed., 2007, §14.3.3, including
//! the Stephens correction for finite samples).
//!
//! ```
//! use sojourn::diffusion::ks::{kolmogorov_p_value, ks_distance_sorted};
//!
//! let samples = [0.1, 0.4, 0.7];
//! let d = ks_distance_sorted(&samples, |x: f64| x.clamp(0.0, 1.0));
//! assert!((d - 0.3).abs() < 1e-15);
//! let p = kolmogorov_p_value(d, samples.len() as f64);
//! assert!(p > 0.5);
//! ```

use std::f64::consts::PI;

/// One-sample Kolmogorov–Smirnov statistic `D = sup_x |F_n(x) − F(x)|` of ascending-sorted
/// samples against the model cdf `cdf`.
///
/// Exact for a continuous `cdf`: evaluates `max_i max(i/n − F(x_i), F(x_i) − (i−1)/n)`,
/// which also handles ties. Dimensionless, in [0, 1]. Returns NaN for no samples. Samples
/// must be sorted (checked in debug builds only).
pub fn ks_distance_sorted(samples_sorted: &[f64], cdf: impl Fn(f64) -> f64) -> f64 {
    debug_assert!(
        samples_sorted.windows(2).all(|w| w[0] <= w[1]),
        "samples must be sorted ascending"
    );
    let n = samples_sorted.len();
    if n == 0 {
        return f64::NAN;
    }
    let nf = n as f64;
    let mut d: f64 = 0.0;
    for (i, &x) in samples_sorted.iter().enumerate() {
        let f = cdf(x);
        let above = (i + 1) as f64 / nf - f;
        let below = f - i as f64 / nf;
        d = d.max(above).max(below);
    }
    d
}

/// Empirical cdf at each edge: `F_emp(edges[j]) = Σ_{i<j} counts[i] / total`.
fn empirical_at_edges(edges: &[f64], counts: &[u64], total: u64) -> Vec<f64> {
    assert_eq!(
        edges.len(),
        counts.len() + 1,
        "need one more edge than there are bins"
    );
    let counted: u64 = counts.iter().sum();
    assert!(
        counted <= total,
        "bins hold {counted} samples but the total is {total}"
    );
    debug_assert!(edges.windows(2).all(|w| w[0] < w[1]), "edges must increase");
    let t = total as f64;
    let mut cum = 0u64;
    let mut out = Vec::with_capacity(edges.len());
    out.push(0.0);
    for &c in counts {
        cum += c;
        out.push(cum as f64 / t);
    }
    out
}

/// Kolmogorov–Smirnov distance evaluated from a histogram, at the bin edges only:
/// `max_j |F_emp(edges[j]) − F(edges[j])|`.
///
/// `counts[i]` holds the samples in `[edges[i], edges[i+1])` (`edges.len() ==
/// counts.len() + 1`, increasing), `total` all samples; the `total − Σ counts` samples not
/// in any bin are taken to lie above the last edge (an overflow bin), and none below the
/// first. Dimensionless.
///
/// This is a **lower bound** of the exact statistic of the unbinned samples: the sup over
/// all x is at least its value at the edges, where the histogram knows the empirical cdf
/// exactly (for a continuous distribution). Its resolution is the bin width: inside a bin
/// the exact value can exceed it by up to the larger of the bin's empirical and model
/// probability; [`ks_distance_binned_bounds`] returns that bracket. Returns NaN if
/// `total` is 0.
///
/// # Panics
///
/// If `edges.len() != counts.len() + 1` or the counts add up to more than `total`.
pub fn ks_distance_binned(
    edges: &[f64],
    counts: &[u64],
    total: u64,
    cdf: impl Fn(f64) -> f64,
) -> f64 {
    ks_distance_binned_bounds(edges, counts, total, cdf).0
}

/// Bracket `(lower, upper)` of the exact one-sample KS statistic of samples known only
/// through a histogram (same conventions as [`ks_distance_binned`]).
///
/// `lower` is [`ks_distance_binned`]. `upper` uses monotonicity of both cdfs inside each
/// bin `[a, b]`: `|F_emp(x) − F(x)| ≤ max(F_emp(b) − F(a), F(b) − F_emp(a))`, and likewise
/// below the first edge (`F(edges[0])`) and above the last (`1 − min(F_emp, F)` there).
///
/// # Panics
///
/// As [`ks_distance_binned`].
pub fn ks_distance_binned_bounds(
    edges: &[f64],
    counts: &[u64],
    total: u64,
    cdf: impl Fn(f64) -> f64,
) -> (f64, f64) {
    if total == 0 {
        return (f64::NAN, f64::NAN);
    }
    let emp = empirical_at_edges(edges, counts, total);
    let model: Vec<f64> = edges.iter().map(|&e| cdf(e)).collect();
    let lower = emp
        .iter()
        .zip(&model)
        .map(|(e, m)| (e - m).abs())
        .fold(0.0, f64::max);
    let mut upper = model[0].max(lower);
    for j in 0..counts.len() {
        upper = upper.max(emp[j + 1] - model[j]).max(model[j + 1] - emp[j]);
    }
    let last = edges.len() - 1;
    upper = upper.max(1.0 - emp[last].min(model[last]));
    (lower, upper)
}

/// Two-sample KS distance between two samples known only through histograms on the same
/// bins (counts per bin, in order; values outside the bins must be included as extra
/// leading/trailing bins by the caller). The empirical CDFs are compared at bin edges, a
/// lower bound of the unbinned statistic with resolution one bin. Returns NaN if either
/// histogram is empty.
///
/// # Panics
/// If the two count vectors differ in length.
pub fn two_sample_ks_binned(counts_a: &[u64], counts_b: &[u64]) -> f64 {
    assert_eq!(
        counts_a.len(),
        counts_b.len(),
        "histograms must share their bins"
    );
    let total_a: u64 = counts_a.iter().sum();
    let total_b: u64 = counts_b.iter().sum();
    if total_a == 0 || total_b == 0 {
        return f64::NAN;
    }
    let (mut cumulative_a, mut cumulative_b) = (0u64, 0u64);
    let mut distance: f64 = 0.0;
    for (a, b) in counts_a.iter().zip(counts_b) {
        cumulative_a += a;
        cumulative_b += b;
        let gap =
            (cumulative_a as f64 / total_a as f64 - cumulative_b as f64 / total_b as f64).abs();
        distance = distance.max(gap);
    }
    distance
}

/// Asymptotic critical value of the one-sample KS statistic for `n` samples at
/// significance `alpha`: `c(α)/√n` with `c(α) = sqrt(−ln(α/2)/2)`.
///
/// This keeps only the leading term of the Kolmogorov series `Q_KS(λ) ≈ 2 e^(−2λ²)` and no
/// finite-n correction (good to ~1 % for n ≳ 35 and α ≤ 0.2). Dimensionless. Returns NaN
/// for `n = 0` or `alpha` outside (0, 1].
pub fn ks_critical_value(n: usize, alpha: f64) -> f64 {
    if n == 0 || alpha.is_nan() || alpha <= 0.0 || alpha > 1.0 {
        return f64::NAN;
    }
    (-(alpha / 2.0).ln() / 2.0).sqrt() / (n as f64).sqrt()
}

/// Two-sample Kolmogorov–Smirnov statistic `sup_x |F_a(x) − F_b(x)|` of two
/// ascending-sorted samples; ties within and between samples are handled. Use
/// [`kolmogorov_p_value`] with `n_eff = n_a n_b / (n_a + n_b)`. Returns NaN if either
/// sample is empty.
pub fn two_sample_ks(a_sorted: &[f64], b_sorted: &[f64]) -> f64 {
    debug_assert!(
        a_sorted.windows(2).all(|w| w[0] <= w[1]),
        "a must be sorted"
    );
    debug_assert!(
        b_sorted.windows(2).all(|w| w[0] <= w[1]),
        "b must be sorted"
    );
    let (na, nb) = (a_sorted.len(), b_sorted.len());
    if na == 0 || nb == 0 {
        return f64::NAN;
    }
    let (naf, nbf) = (na as f64, nb as f64);
    let (mut i, mut j) = (0, 0);
    let mut d: f64 = 0.0;
    while i < na && j < nb {
        let x = a_sorted[i].min(b_sorted[j]);
        while i < na && a_sorted[i] <= x {
            i += 1;
        }
        while j < nb && b_sorted[j] <= x {
            j += 1;
        }
        d = d.max((i as f64 / naf - j as f64 / nbf).abs());
    }
    d
}

/// Survival function of the Kolmogorov distribution,
/// `Q_KS(λ) = 2 Σ_{k≥1} (−1)^(k−1) e^(−2k²λ²)`.
///
/// For λ < 1.18, where that series converges slowly, the equivalent form
/// `1 − (√(2π)/λ) Σ_{j≥1} e^(−(2j−1)²π²/(8λ²))` is used (Jacobi's theta transformation; the
/// same split as *Numerical Recipes*, 3rd ed., §6.14). Absolute error ~1e−16. Returns 1
/// for λ ≤ 0.
pub fn kolmogorov_q(lambda: f64) -> f64 {
    if lambda.is_nan() {
        return f64::NAN;
    }
    if lambda <= 0.0 {
        return 1.0;
    }
    if lambda < 1.18 {
        let y = (-PI * PI / (8.0 * lambda * lambda)).exp();
        if y == 0.0 {
            return 1.0;
        }
        // Σ_j y^((2j−1)²) = y (1 + y⁸ + y²⁴ + y⁴⁸ + …)
        let y8 = y.powi(8);
        let mut sum = 0.0;
        let mut term = 1.0; // y^((2j−1)² − 1)
        let mut ratio = y8; // y^((2j+1)² − (2j−1)²) = y^(8j)
        for _ in 0..50 {
            sum += term;
            term *= ratio;
            ratio *= y8;
            if term < 1e-17 * sum {
                break;
            }
        }
        let p = (2.0 * PI).sqrt() / lambda * y * sum;
        (1.0 - p).clamp(0.0, 1.0)
    } else {
        let x = (-2.0 * lambda * lambda).exp();
        let mut sum = 0.0;
        let mut sign = 1.0;
        for k in 1..=50 {
            let term = x.powi(k * k);
            sum += sign * term;
            if term < 1e-17 * sum {
                break;
            }
            sign = -sign;
        }
        (2.0 * sum).clamp(0.0, 1.0)
    }
}

/// Asymptotic p-value of a KS distance `d` with effective sample size `n_eff` (`n` for one
/// sample, `n m/(n + m)` for two), with the Stephens correction:
/// `Q_KS((√n_eff + 0.12 + 0.11/√n_eff) d)`, `Q_KS(λ) = 2 Σ_{k≥1} (−1)^(k−1) e^(−2k²λ²)`
/// (Press et al., *Numerical Recipes*, 3rd ed., 2007, §14.3.3; see [`kolmogorov_q`]).
///
/// The probability, under the null hypothesis, of a distance at least `d`. Returns NaN for
/// `n_eff ≤ 0` or NaN inputs.
pub fn kolmogorov_p_value(d: f64, n_eff: f64) -> f64 {
    if d.is_nan() || n_eff.is_nan() || n_eff <= 0.0 {
        return f64::NAN;
    }
    let rn = n_eff.sqrt();
    kolmogorov_q((rn + 0.12 + 0.11 / rn) * d)
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use rand::{RngExt, SeedableRng};
    use rand_xoshiro::Xoshiro256PlusPlus;

    fn uniform_cdf(x: f64) -> f64 {
        x.clamp(0.0, 1.0)
    }

    #[test]
    fn binned_two_sample_by_hand() {
        // A = {bin0: 2, bin1: 2}, B = {bin0: 1, bin1: 3}: CDFs after bin 0 are 0.5 and 0.25.
        assert_relative_eq!(two_sample_ks_binned(&[2, 2], &[1, 3]), 0.25);
        assert!(two_sample_ks_binned(&[0, 0], &[1, 3]).is_nan());
    }

    #[test]
    fn hand_example_one_sample() {
        // Samples 0.1, 0.4, 0.7 against U(0,1):
        //   i=1: 1/3 − 0.1 = 0.2333, 0.1 − 0 = 0.1
        //   i=2: 2/3 − 0.4 = 0.2667, 0.4 − 1/3 = 0.0667
        //   i=3: 1 − 0.7 = 0.3,      0.7 − 2/3 = 0.0333   → D = 0.3
        assert_relative_eq!(
            ks_distance_sorted(&[0.1, 0.4, 0.7], uniform_cdf),
            0.3,
            epsilon = 1e-15
        );
        // One sample at 0.25: max(1 − 0.25, 0.25 − 0) = 0.75.
        assert_relative_eq!(ks_distance_sorted(&[0.25], uniform_cdf), 0.75);
        // Ties: two samples at 0.5 → F_n jumps 0 → 1 at 0.5: D = 0.5.
        assert_relative_eq!(ks_distance_sorted(&[0.5, 0.5], uniform_cdf), 0.5);
        assert!(ks_distance_sorted(&[], uniform_cdf).is_nan());
    }

    #[test]
    fn hand_example_two_sample() {
        // a = {1,2,3}, b = {2.5,4}: at 1: 1/3 − 0; at 2: 2/3 − 0; at 2.5: 2/3 − 1/2;
        // at 3: 1 − 1/2; at 4: 1 − 1 → D = 2/3.
        assert_relative_eq!(two_sample_ks(&[1.0, 2.0, 3.0], &[2.5, 4.0]), 2.0 / 3.0);
        // Ties across samples: identical samples give 0.
        assert_eq!(two_sample_ks(&[1.0, 2.0, 2.0], &[1.0, 2.0, 2.0]), 0.0);
        // Symmetric.
        assert_relative_eq!(two_sample_ks(&[2.5, 4.0], &[1.0, 2.0, 3.0]), 2.0 / 3.0);
    }

    #[test]
    fn kolmogorov_distribution_values() {
        // Q_KS(1) = 2(e^−2 − e^−8 + e^−18 − …) = 0.26999967…, computed by hand from the
        // series; and the familiar 5 % point λ = 1.358.
        let q1 = 2.0 * ((-2.0f64).exp() - (-8.0f64).exp() + (-18.0f64).exp() - (-32.0f64).exp());
        assert_relative_eq!(kolmogorov_q(1.0), q1, max_relative = 1e-14);
        assert_relative_eq!(kolmogorov_q(1.358_098_6), 0.05, max_relative = 1e-3);
        // The small-λ form (used below 1.18) agrees with the defining alternating series.
        for lambda in [0.6f64, 0.9, 1.1, 1.1799] {
            let x = (-2.0 * lambda * lambda).exp();
            let series: f64 = (1..=12)
                .map(|k: i32| 2.0 * if k % 2 == 1 { 1.0 } else { -1.0 } * x.powi(k * k))
                .sum();
            assert_relative_eq!(kolmogorov_q(lambda), series, max_relative = 1e-13);
        }
        assert_eq!(kolmogorov_q(0.0), 1.0);
        assert!(kolmogorov_q(0.1) > 1.0 - 1e-15);
        assert!(kolmogorov_q(5.0) < 1e-20);
        // Critical value: c(0.05) = sqrt(−ln 0.025 / 2) = sqrt(3.688879454 / 2) = 1.358101516
        // (the exact 5 % point of Q_KS is 1.358099; the leading term is that close).
        assert_relative_eq!(
            ks_critical_value(1, 0.05),
            1.358_101_516,
            max_relative = 1e-9
        );
        assert_relative_eq!(
            ks_critical_value(100, 0.05),
            0.135_810_151_6,
            max_relative = 1e-9
        );
        assert!(ks_critical_value(0, 0.05).is_nan());
    }

    #[test]
    fn uniform_samples_against_uniform_cdf() {
        let n = 10_000;
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(5);
        let mut v: Vec<f64> = (0..n).map(|_| rng.random::<f64>()).collect();
        v.sort_by(f64::total_cmp);
        let d = ks_distance_sorted(&v, uniform_cdf);
        assert!(d < ks_critical_value(n, 0.001), "D = {d}");
        assert!(kolmogorov_p_value(d, n as f64) > 0.001);
        // A shifted model is rejected.
        let d_bad = ks_distance_sorted(&v, |x| (x - 0.05).clamp(0.0, 1.0));
        assert!(kolmogorov_p_value(d_bad, n as f64) < 1e-10);

        // Histogram: the edge-only distance brackets the exact one.
        let edges: Vec<f64> = (0..=20).map(|i| i as f64 / 20.0).collect();
        let mut counts = vec![0u64; 20];
        for &x in &v {
            counts[((x * 20.0) as usize).min(19)] += 1;
        }
        let (lo, hi) = ks_distance_binned_bounds(&edges, &counts, n as u64, uniform_cdf);
        assert_eq!(
            lo,
            ks_distance_binned(&edges, &counts, n as u64, uniform_cdf)
        );
        assert!(lo <= d + 1e-15 && d <= hi + 1e-15, "{lo} ≤ {d} ≤ {hi}");

        // Two samples from the same distribution.
        let mut w: Vec<f64> = (0..n).map(|_| rng.random::<f64>()).collect();
        w.sort_by(f64::total_cmp);
        let d2 = two_sample_ks(&v, &w);
        assert!(kolmogorov_p_value(d2, (n * n) as f64 / (2 * n) as f64) > 0.001);
    }

    #[test]
    fn binned_hand_example() {
        // Bins [0,0.5), [0.5,1) with 1 and 2 samples, 1 overflow (total 4), uniform model:
        // edges 0, 0.5, 1: F_emp = 0, 1/4, 3/4; F = 0, 0.5, 1 → lower bound 0.25.
        let (lo, hi) = ks_distance_binned_bounds(&[0.0, 0.5, 1.0], &[1, 2], 4, uniform_cdf);
        assert_relative_eq!(lo, 0.25);
        // Upper: bin 1: max(1/4 − 0, 0.5 − 0) = 0.5; bin 2: max(3/4 − 0.5, 1 − 1/4) = 0.75.
        assert_relative_eq!(hi, 0.75);
    }

    #[test]
    #[should_panic(expected = "one more edge")]
    fn binned_rejects_mismatched_lengths() {
        ks_distance_binned(&[0.0, 1.0], &[1, 2], 3, uniform_cdf);
    }
}
