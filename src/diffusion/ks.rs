//! Kolmogorov–Smirnov statistics for comparing Monte Carlo escape times with theory.
//!
//! One-sample distance from sorted samples or from a histogram, the two-sample distance,
//! and the asymptotic Kolmogorov distribution for critical values and p-values (Press,
//! Teukolsky, Vetterling & Flannery, *Numerical Recipes*, 3rd ed., 2007, §14.3.3, including
//! the Stephens correction for finite samples).
//!
//! [`binned_ks_test`] compares a Monte Carlo histogram (bin edges, possibly weighted
//! counts, an effective sample size) with a theory cdf evaluated at the same edges, with a
//! p-value that accounts for the binning: the distance is taken at the edges only, where
//! both cdfs are known, and its null distribution is calibrated by drawing multinomial
//! histograms from the theory's own bin probabilities (see [`binned_ks_test`]);
//! [`binned_ks_test_sequential`] stops drawing once the p-value is clearly large (Besag &
//! Clifford's sequential Monte Carlo p-value), which makes the test cheap enough for every
//! run report.
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

use rand::SeedableRng;
use rand_distr::{Binomial, Distribution};
use rand_xoshiro::Xoshiro256PlusPlus;

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

/// A histogram of Monte Carlo samples for [`binned_ks_test`]: `counts[i]` (weights allowed)
/// in `[edges[i], edges[i+1])`, `below` and `above` the range, and the effective number of
/// independent samples (the count for unweighted samples; Kish's `(Σw)²/Σw²` for weighted
/// ones).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BinnedSample<'a> {
    /// Bin edges, strictly increasing (`counts.len() + 1` of them).
    pub edges: &'a [f64],
    /// Count or total weight in each bin (≥ 0).
    pub counts: &'a [f64],
    /// Count or weight below the first edge (≥ 0).
    pub below: f64,
    /// Count or weight at or above the last edge (≥ 0).
    pub above: f64,
    /// Effective sample size (> 0).
    pub effective_size: f64,
}

/// How the null distribution of the binned distance is calibrated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct KsCalibration {
    /// Multinomial histograms drawn (≥ 1). The p-value's resolution is 1/(replicates + 1).
    pub replicates: usize,
    /// Seed of the draws, so that the p-value is a fixed function of its inputs.
    pub seed: u64,
}

impl Default for KsCalibration {
    /// 1 000 replicates with a fixed seed.
    fn default() -> Self {
        Self {
            replicates: 1000,
            seed: 0x6b73_2d62_696e_6e65,
        }
    }
}

/// The result of [`binned_ks_test`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BinnedKsTest {
    /// `max_j |F_emp(edges[j]) − F(edges[j])|`, dimensionless.
    pub distance: f64,
    /// Calibrated p-value: `(1 + k)/(1 + R)` with k of R multinomial replicates at least as
    /// far from the theory (a valid Monte Carlo p-value; Davison & Hinkley 1997, *Bootstrap
    /// Methods and their Application*, §4.2; Phipson & Smyth 2010, Stat. Appl. Genet. Mol.
    /// Biol. 9:39).
    pub p_value: f64,
    /// Binomial standard error of `p_value` from the finite number of replicates.
    pub p_value_stderr: f64,
    /// Asymptotic Kolmogorov p-value of `distance` for `effective_size` samples, ignoring
    /// the binning ([`kolmogorov_p_value`]). The binned distance never exceeds the unbinned
    /// one, so this over-states the p-value: an upper bound, for comparison.
    pub unbinned_p_value: f64,
    /// Replicates drawn.
    pub replicates: usize,
}

/// Why a binned KS test could not be made.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum KsError {
    /// The edges, counts and cdf values do not fit together.
    #[error("binned KS test: {0}")]
    Shape(String),
    /// A value is out of its range.
    #[error("binned KS test: {what} = {value}; expected {expected}")]
    Value {
        /// Which value.
        what: &'static str,
        /// The value given.
        value: f64,
        /// What it must satisfy.
        expected: &'static str,
    },
}

/// Kolmogorov–Smirnov comparison of a histogram with a theory cdf given at the same edges,
/// with the default [`KsCalibration`]. See [`binned_ks_test_with`].
///
/// # Errors
/// As [`binned_ks_test_with`].
pub fn binned_ks_test(
    sample: &BinnedSample,
    theory_cdf_at_edges: &[f64],
) -> Result<BinnedKsTest, KsError> {
    binned_ks_test_with(sample, theory_cdf_at_edges, &KsCalibration::default())
}

/// Kolmogorov–Smirnov comparison of a histogram with a theory cdf `F` given at the
/// histogram's edges (`theory_cdf_at_edges[j] = F(edges[j])`, non-decreasing in [0, 1]).
///
/// The distance is `D = max_j |F_emp(e_j) − F(e_j)|` over the edges, the only points where
/// the histogram knows its empirical cdf (`F_emp(e_j)` = weight below `e_j` over the total).
/// Binning makes D smaller than the unbinned statistic, so the Kolmogorov distribution
/// over-states its p-value, by much when the bins are wide compared with the spread of the
/// distribution. The p-value is calibrated instead: under the hypothesis that the samples
/// come from F, the histogram of n = round(`effective_size`) samples is multinomial with
/// the theory's probabilities `F(e_0)`, `F(e_{j+1}) − F(e_j)`, `1 − F(e_last)`. `replicates`
/// such histograms are drawn (sequential conditional binomials, a fixed seed, so the
/// p-value is deterministic), the same distance is computed for each, and the p-value is
/// `(1 + #{D_r ≥ D})/(1 + replicates)`. For weighted tallies the effective size stands in
/// for n (the multinomial with Kish's effective size matches the variance of the weighted
/// empirical cdf; common practice). Cost: replicates × the bins where F changes.
///
/// # Errors
/// [`KsError::Shape`] if `edges.len() != counts.len() + 1` or the cdf has a different
/// length; [`KsError::Value`] for non-increasing or non-finite edges, negative or
/// non-finite counts, a zero total, an effective size that is not positive, no replicates,
/// or cdf values outside [0, 1] or decreasing (by more than 1e−9, which is rounded away).
pub fn binned_ks_test_with(
    sample: &BinnedSample,
    theory_cdf_at_edges: &[f64],
    calibration: &KsCalibration,
) -> Result<BinnedKsTest, KsError> {
    check_replicates(calibration.replicates)?;
    let null = NullDistribution::new(sample, theory_cdf_at_edges)?;
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(calibration.seed);
    let at_least = (0..calibration.replicates)
        .filter(|_| null.reaches(null.draw(&mut rng)))
        .count();
    let replicates = calibration.replicates;
    let p_value = (1 + at_least) as f64 / (1 + replicates) as f64;
    Ok(BinnedKsTest {
        distance: null.distance,
        p_value,
        p_value_stderr: (p_value * (1.0 - p_value) / replicates as f64).sqrt(),
        unbinned_p_value: kolmogorov_p_value(null.distance, sample.effective_size),
        replicates,
    })
}

/// How [`binned_ks_test_sequential`] calibrates: replicates are drawn until `exceedances`
/// of them reach the observed distance, or `max_replicates` have been drawn (Besag &
/// Clifford 1991, Biometrika 78:301, "Sequential Monte Carlo p-values").
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SequentialCalibration {
    /// Most replicates drawn (≥ 1); the smallest p-value is 1/(max_replicates + 1).
    pub max_replicates: usize,
    /// Replicates at least as far from the theory after which drawing stops (≥ 1).
    pub exceedances: usize,
    /// Seed of the draws, so that the p-value is a fixed function of its inputs.
    pub seed: u64,
}

impl Default for SequentialCalibration {
    /// At most 1 000 replicates, stopping at 20 exceedances, with the fixed seed of
    /// [`KsCalibration::default`].
    fn default() -> Self {
        Self {
            max_replicates: 1000,
            exceedances: 20,
            seed: KsCalibration::default().seed,
        }
    }
}

/// Kolmogorov tail probability below which no replicate is drawn (see
/// [`binned_ks_test_sequential`]).
pub const CLEAR_REJECTION_BOUND: f64 = 1e-6;

/// The test of [`binned_ks_test_with`], with a p-value that costs only as many replicates
/// as it needs: the sequential Monte Carlo p-value of Besag & Clifford (1991, Biometrika
/// 78:301). Replicates are drawn until `h = exceedances` of them reach the observed
/// distance, after `l` draws, and then `p = h/l`; if that does not happen within
/// `max_replicates = R` draws (k exceedances), `p = (k + 1)/(R + 1)` as in the fixed test.
/// Either way `P(p ≤ α) ≤ α` under the hypothesis: a valid p-value, with the fixed test's
/// resolution where it matters (small p) and about `h/p` draws where it does not (an
/// agreement with p ≈ 0.5 costs some 40 replicates instead of 1 000).
///
/// Where the asymptotic Kolmogorov tail probability of the distance ([`kolmogorov_p_value`],
/// an upper bound for the binned distance, which never exceeds the unbinned one) is below
/// [`CLEAR_REJECTION_BOUND`], the R replicates would all fall short of the distance except
/// with probability below R × 10⁻⁶; none is drawn and `p = 1/(R + 1)`, the value the draws
/// would give (`replicates` is then 0).
///
/// # Errors
/// As [`binned_ks_test_with`]; also [`KsError::Value`] for no exceedances.
pub fn binned_ks_test_sequential(
    sample: &BinnedSample,
    theory_cdf_at_edges: &[f64],
    calibration: &SequentialCalibration,
) -> Result<BinnedKsTest, KsError> {
    check_replicates(calibration.max_replicates)?;
    if calibration.exceedances == 0 {
        return Err(KsError::Value {
            what: "exceedances",
            value: 0.0,
            expected: "at least 1",
        });
    }
    let null = NullDistribution::new(sample, theory_cdf_at_edges)?;
    let unbinned_p_value = kolmogorov_p_value(null.distance, sample.effective_size);
    let most = calibration.max_replicates;
    let floor = 1.0 / (most + 1) as f64;
    if unbinned_p_value < CLEAR_REJECTION_BOUND {
        return Ok(BinnedKsTest {
            distance: null.distance,
            p_value: floor,
            p_value_stderr: 0.0,
            unbinned_p_value,
            replicates: 0,
        });
    }
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(calibration.seed);
    let mut at_least = 0usize;
    let mut drawn = 0usize;
    while drawn < most && at_least < calibration.exceedances {
        drawn += 1;
        if null.reaches(null.draw(&mut rng)) {
            at_least += 1;
        }
    }
    let p_value = if at_least >= calibration.exceedances {
        at_least as f64 / drawn as f64
    } else {
        (1 + at_least) as f64 / (1 + most) as f64
    };
    Ok(BinnedKsTest {
        distance: null.distance,
        p_value,
        p_value_stderr: (p_value * (1.0 - p_value) / drawn as f64).sqrt(),
        unbinned_p_value,
        replicates: drawn,
    })
}

fn check_replicates(replicates: usize) -> Result<(), KsError> {
    if replicates == 0 {
        return Err(KsError::Value {
            what: "replicates",
            value: 0.0,
            expected: "at least 1",
        });
    }
    Ok(())
}

/// The observed binned distance and the multinomial null distribution of the histogram
/// under the theory.
struct NullDistribution {
    /// Observed distance.
    distance: f64,
    /// Theory cdf at the edges (checked, clamped).
    theory: Vec<f64>,
    /// Probabilities of the cells (below, bins, above).
    probabilities: Vec<f64>,
    /// First and last cell with probability.
    first: usize,
    last: usize,
    /// Samples per replicate.
    n: u64,
}

impl NullDistribution {
    fn new(sample: &BinnedSample, theory_cdf_at_edges: &[f64]) -> Result<Self, KsError> {
        let theory = check_binned(sample, theory_cdf_at_edges)?;
        let total = sample.below + sample.counts.iter().sum::<f64>() + sample.above;
        let mut cumulative = sample.below;
        let mut distance = (cumulative / total - theory[0]).abs();
        for (count, f) in sample.counts.iter().zip(&theory[1..]) {
            cumulative += count;
            distance = distance.max((cumulative / total - f).abs());
        }
        // Null distribution: multinomial histograms over the cells (below, bins, above),
        // restricted to the cells where the theory puts probability (elsewhere both cdfs
        // are flat and equal, 0 before and 1 after, for every draw).
        let mut probabilities = Vec::with_capacity(theory.len() + 1);
        probabilities.push(theory[0]);
        for pair in theory.windows(2) {
            probabilities.push(pair[1] - pair[0]);
        }
        probabilities.push(1.0 - theory[theory.len() - 1]);
        let first = probabilities.iter().position(|&p| p > 0.0).unwrap_or(0);
        let last = probabilities.iter().rposition(|&p| p > 0.0).unwrap_or(0);
        let n = sample.effective_size.round().max(1.0) as u64;
        Ok(Self {
            distance,
            theory,
            probabilities,
            first,
            last,
            n,
        })
    }

    /// The distance of one multinomial histogram drawn from the theory (sequential
    /// conditional binomials).
    fn draw(&self, rng: &mut Xoshiro256PlusPlus) -> f64 {
        let n = self.n;
        let mut remaining = n;
        let mut mass_left = 1.0;
        let mut drawn = 0u64;
        let mut replicate_distance: f64 = 0.0;
        for cell in self.first..=self.last {
            let p = self.probabilities[cell];
            let k = if remaining == 0 || p <= 0.0 {
                0
            } else if cell == self.last || p >= mass_left {
                remaining
            } else {
                let q = (p / mass_left).clamp(0.0, 1.0);
                Binomial::new(remaining, q).map_or(0, |b| b.sample(rng))
            };
            drawn += k;
            remaining -= k;
            mass_left -= p;
            // Edge `cell` closes cell `cell`: F_emp(e_cell) = drawn / n.
            if cell < self.theory.len() {
                let gap = (drawn as f64 / n as f64 - self.theory[cell]).abs();
                replicate_distance = replicate_distance.max(gap);
            }
        }
        replicate_distance
    }

    /// Whether a replicate's distance counts as at least the observed one (to rounding).
    fn reaches(&self, replicate_distance: f64) -> bool {
        replicate_distance >= self.distance * (1.0 - 1e-12)
    }
}

/// Validates the inputs of [`binned_ks_test_with`] and returns the theory cdf with
/// rounding-level excursions (≤ 1e−9) clamped into [0, 1] and made non-decreasing.
fn check_binned(sample: &BinnedSample, cdf: &[f64]) -> Result<Vec<f64>, KsError> {
    let value = |what, value, expected| KsError::Value {
        what,
        value,
        expected,
    };
    if sample.edges.len() != sample.counts.len() + 1 {
        return Err(KsError::Shape(format!(
            "{} edges for {} bins; expected one more edge than bins",
            sample.edges.len(),
            sample.counts.len()
        )));
    }
    if cdf.len() != sample.edges.len() {
        return Err(KsError::Shape(format!(
            "{} theory cdf values for {} edges; expected one per edge",
            cdf.len(),
            sample.edges.len()
        )));
    }
    for pair in sample.edges.windows(2) {
        if !(pair[0].is_finite() && pair[1].is_finite() && pair[1] > pair[0]) {
            return Err(value(
                "an edge",
                pair[1],
                "finite and above the previous edge",
            ));
        }
    }
    for &count in sample.counts.iter().chain([&sample.below, &sample.above]) {
        if !(count.is_finite() && count >= 0.0) {
            return Err(value("a count", count, "a finite number >= 0"));
        }
    }
    let total = sample.below + sample.counts.iter().sum::<f64>() + sample.above;
    if total.is_nan() || total <= 0.0 {
        return Err(value("the total count", total, "a number > 0"));
    }
    if !(sample.effective_size.is_finite() && sample.effective_size > 0.0) {
        return Err(value(
            "the effective sample size",
            sample.effective_size,
            "a finite number > 0",
        ));
    }
    let tolerance = 1e-9;
    let mut theory = Vec::with_capacity(cdf.len());
    let mut previous: f64 = 0.0;
    for &f in cdf {
        if !(f.is_finite() && (-tolerance..=1.0 + tolerance).contains(&f)) {
            return Err(value("a theory cdf value", f, "a number in [0, 1]"));
        }
        if f < previous - tolerance {
            return Err(value(
                "a theory cdf value",
                f,
                "at least the value at the edge before (a cdf does not decrease)",
            ));
        }
        let clamped = f.clamp(previous, 1.0);
        theory.push(clamped);
        previous = clamped;
    }
    Ok(theory)
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

    /// Uniform samples in 10 equal bins against the uniform cdf.
    fn uniform_histogram(n: usize, seed: u64, bins: usize) -> (Vec<f64>, Vec<f64>) {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(seed);
        let mut counts = vec![0.0; bins];
        for _ in 0..n {
            let x: f64 = rng.random();
            counts[((x * bins as f64) as usize).min(bins - 1)] += 1.0;
        }
        let edges = (0..=bins).map(|i| i as f64 / bins as f64).collect();
        (edges, counts)
    }

    #[test]
    fn binned_test_by_hand_and_deterministic() {
        // Bins [0, .5), [.5, 1) with 1 and 2 samples, 1 above (total 4), uniform theory:
        // F_emp = 0, 1/4, 3/4 against 0, 1/2, 1 → D = 1/4 (as ks_distance_binned).
        let sample = BinnedSample {
            edges: &[0.0, 0.5, 1.0],
            counts: &[1.0, 2.0],
            below: 0.0,
            above: 1.0,
            effective_size: 4.0,
        };
        let a = binned_ks_test(&sample, &[0.0, 0.5, 1.0]).unwrap();
        assert_relative_eq!(a.distance, 0.25);
        let b = binned_ks_test(&sample, &[0.0, 0.5, 1.0]).unwrap();
        assert_eq!(a, b, "same inputs, same p-value");
        // With 4 samples and theory 1/2, 1/2: D ≥ 1/4 unless the split is exactly 2–2
        // (probability C(4,2)/16 = 3/8), so the exact p-value is 5/8.
        assert!((a.p_value - 0.625).abs() < 4.0 * a.p_value_stderr, "{a:?}");
    }

    #[test]
    fn calibrated_p_values_are_uniform_under_the_null() {
        // 200 histograms of 500 uniform samples in 10 bins: the calibrated p-values are
        // uniform (a few below 0.05, about 10 ± 3σ = 10 ± 9.2), while the unbinned
        // Kolmogorov p-values are biased upwards (the binned D is smaller).
        let calibration = KsCalibration {
            replicates: 400,
            ..KsCalibration::default()
        };
        let cdf: Vec<f64> = (0..=10).map(|i| i as f64 / 10.0).collect();
        let (mut small, mut mean_p, mut mean_unbinned) = (0, 0.0, 0.0);
        for seed in 0..200 {
            let (edges, counts) = uniform_histogram(500, 100 + seed, 10);
            let sample = BinnedSample {
                edges: &edges,
                counts: &counts,
                below: 0.0,
                above: 0.0,
                effective_size: 500.0,
            };
            let test = binned_ks_test_with(&sample, &cdf, &calibration).unwrap();
            if test.p_value < 0.05 {
                small += 1;
            }
            mean_p += test.p_value / 200.0;
            mean_unbinned += test.unbinned_p_value / 200.0;
            assert!(test.unbinned_p_value >= test.p_value - 4.0 * test.p_value_stderr - 0.01);
        }
        assert!((1..=19).contains(&small), "{small} of 200 below 0.05");
        // Mean of a uniform p-value: 0.5 ± 3 × 0.289/√200 = ±0.061.
        assert!((mean_p - 0.5).abs() < 0.061, "{mean_p}");
        assert!(mean_unbinned > mean_p + 0.05, "{mean_unbinned} vs {mean_p}");
    }

    #[test]
    fn a_shifted_theory_is_rejected() {
        let (edges, counts) = uniform_histogram(5000, 9, 20);
        let shifted: Vec<f64> = edges.iter().map(|&x| (x * 1.1).min(1.0)).collect();
        let sample = BinnedSample {
            edges: &edges,
            counts: &counts,
            below: 0.0,
            above: 0.0,
            effective_size: 5000.0,
        };
        let test = binned_ks_test(&sample, &shifted).unwrap();
        assert!(test.distance > 0.07, "{test:?}");
        assert_eq!(test.p_value, 1.0 / 1001.0);
    }

    #[test]
    fn sequential_p_values_are_uniform_under_the_null_and_cheap() {
        // The same 200 null histograms as above: the sequential p-values are uniform too
        // (10 ± 9.2 below 0.05, mean 0.5 ± 0.061), and cost far fewer than 1 000 draws.
        let calibration = SequentialCalibration::default();
        let cdf: Vec<f64> = (0..=10).map(|i| i as f64 / 10.0).collect();
        let (mut small, mut mean_p, mut draws) = (0, 0.0, 0);
        for seed in 0..200 {
            let (edges, counts) = uniform_histogram(500, 100 + seed, 10);
            let sample = BinnedSample {
                edges: &edges,
                counts: &counts,
                below: 0.0,
                above: 0.0,
                effective_size: 500.0,
            };
            let test = binned_ks_test_sequential(&sample, &cdf, &calibration).unwrap();
            if test.p_value < 0.05 {
                small += 1;
            }
            mean_p += test.p_value / 200.0;
            draws += test.replicates;
        }
        assert!((1..=19).contains(&small), "{small} of 200 below 0.05");
        assert!((mean_p - 0.5).abs() < 0.061, "{mean_p}");
        // E[min(20/p, 1000)] for a uniform p is 20 + 20 ln 50 ≈ 98 draws.
        assert!(draws < 200 * 200, "{draws} draws");
    }

    #[test]
    fn sequential_test_resolves_small_p_values_and_skips_clear_rejections() {
        // A clear rejection: no draw, the floor 1/1001.
        let (edges, counts) = uniform_histogram(5000, 9, 20);
        let shifted: Vec<f64> = edges.iter().map(|&x| (x * 1.1).min(1.0)).collect();
        let sample = BinnedSample {
            edges: &edges,
            counts: &counts,
            below: 0.0,
            above: 0.0,
            effective_size: 5000.0,
        };
        let calibration = SequentialCalibration::default();
        let test = binned_ks_test_sequential(&sample, &shifted, &calibration).unwrap();
        assert_eq!((test.p_value, test.replicates), (1.0 / 1001.0, 0));
        // A mild shift (p of a few per cent): the sequential and the fixed test agree within
        // their Monte Carlo errors (4σ), the sequential one drawing all it needs.
        let mild: Vec<f64> = edges.iter().map(|&x| (x * 1.02).min(1.0)).collect();
        let fixed = binned_ks_test(&sample, &mild).unwrap();
        let sequential = binned_ks_test_sequential(&sample, &mild, &calibration).unwrap();
        assert!(fixed.p_value < 0.2, "{fixed:?}");
        let sigma = fixed.p_value_stderr.hypot(sequential.p_value_stderr);
        assert!(
            (fixed.p_value - sequential.p_value).abs() < 4.0 * sigma + 1e-3,
            "{fixed:?} {sequential:?}"
        );
        assert!(sequential.replicates >= 20.min(calibration.max_replicates));
        let none = SequentialCalibration {
            exceedances: 0,
            ..calibration
        };
        assert!(binned_ks_test_sequential(&sample, &mild, &none).is_err());
    }

    #[test]
    fn binned_test_rejects_bad_input() {
        let good = BinnedSample {
            edges: &[0.0, 0.5, 1.0],
            counts: &[1.0, 2.0],
            below: 0.0,
            above: 0.0,
            effective_size: 3.0,
        };
        let cdf = [0.0, 0.5, 1.0];
        assert!(matches!(
            binned_ks_test(&good, &[0.0, 1.0]),
            Err(KsError::Shape(_))
        ));
        for bad in [
            BinnedSample {
                edges: &[0.0, 0.5, 0.5],
                ..good
            },
            BinnedSample {
                counts: &[1.0, -2.0],
                ..good
            },
            BinnedSample {
                counts: &[0.0, 0.0],
                ..good
            },
            BinnedSample {
                effective_size: f64::NAN,
                ..good
            },
        ] {
            assert!(matches!(
                binned_ks_test(&bad, &cdf),
                Err(KsError::Value { .. })
            ));
        }
        assert!(binned_ks_test(&good, &[0.0, 0.6, 0.5]).is_err());
        assert!(binned_ks_test(&good, &[0.0, 0.5, 1.5]).is_err());
        // Rounding-level excursions are accepted.
        assert!(binned_ks_test(&good, &[-1e-12, 0.5, 1.0 + 1e-12]).is_ok());
    }
}
