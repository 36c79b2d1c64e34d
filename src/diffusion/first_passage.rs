//! First passage of three-dimensional diffusion out of a sphere, starting at its centre.
//!
//! A particle diffuses with coefficient `D` (cm² s⁻¹) from the centre of a sphere of radius
//! `R` (cm) with an absorbing surface. Everything here is written in the dimensionless time
//!
//! ```text
//! s = D t / R²
//! ```
//!
//! so one set of functions serves every sphere; [`time_from_dimensionless`] and
//! [`dimensionless_time`] convert. For photons, `D = c l / 3` with `l` the mean free path.
//!
//! The survival probability (Krapivsky, Redner & Ben-Naim 2010, *A Kinetic View of
//! Statistical Physics*, problem 2.21; Redner 2001, *A Guide to First-Passage Processes*) is
//!
//! ```text
//! P(T > t) = S(s) = 2 Σ_{n≥1} (−1)^(n+1) exp(−n² π² s)                       (s ≥ 0.1)
//!               = 1 − (2/√(π s)) Σ_{k≥0} exp(−(k + ½)² / s)                  (s < 0.1)
//! ```
//!
//! The two forms are the same function (Jacobi's imaginary transformation of θ₄); each is
//! used where it converges fast (at most 7 and 3 terms), and each series is summed until
//! its terms fall below 1e−17 of the sum. The small-time form gives the cdf directly, so the
//! cdf keeps full *relative* precision deep in the lower tail, and the series gives the
//! survival directly, so the survival keeps full relative precision deep in the upper tail.
//!
//! Moments: ⟨s⟩ = 1/6 (the mean exit time R²/(6D)), Var s = 1/90, so Var T / ⟨T⟩² = 0.4.
//! Exit time is distributed as a sum of independent exponential times with rates n²π²
//! (the Laplace transform is √λ / sinh √λ = Π (1 + λ/(n²π²))⁻¹), so its density is
//! log-concave, which the quantile solver relies on for robust Newton steps.
//!
//! ```
//! use rand::SeedableRng;
//! use sojourn::diffusion::first_passage::{cdf, mean_exit_time_s, quantile, sample};
//!
//! let median = quantile(0.5);
//! assert!((cdf(median) - 0.5).abs() < 1e-14);
//! // A sphere of 1 cm with D = 3 cm² s⁻¹ empties on average in 1/18 s.
//! assert!((mean_exit_time_s(1.0, 3.0) - 1.0 / 18.0).abs() < 1e-15);
//! let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(1);
//! let s = sample(&mut rng);
//! assert!(s > 0.0);
//! ```

use std::f64::consts::PI;
use std::sync::OnceLock;

use rand::Rng;
use rand::distr::{Distribution, Open01};

/// π².
const PI2: f64 = PI * PI;

/// Dimensionless time below which the small-time (image) form is used and above which the
/// exponential series is used.
pub const SERIES_SWITCH_S: f64 = 0.1;

/// Series are summed until a term is below this fraction of the running sum.
const REL_STOP: f64 = 1e-17;

/// Mean of the dimensionless exit time s = D t / R² from the centre: exactly 1/6.
pub const MEAN_S: f64 = 1.0 / 6.0;

/// Variance of the dimensionless exit time from the centre: exactly 1/90, so that
/// Var / mean² = 0.4 (docs/references.md, Diffusion theory 1).
pub const VARIANCE_S: f64 = 1.0 / 90.0;

/// Mean time (s) to diffuse from the centre of a sphere of radius `radius_cm` (cm) to its
/// surface with diffusion coefficient `diffusion_cm2_s` (cm² s⁻¹): `R² / (6 D)`.
///
/// For photons `D = c l / 3`, which gives `R² / (2 l c)`, i.e. τ²/2 scatterings
/// (docs/references.md, Diffusion theory 1). No validation: a zero coefficient gives `inf`.
pub fn mean_exit_time_s(radius_cm: f64, diffusion_cm2_s: f64) -> f64 {
    radius_cm * radius_cm / (6.0 * diffusion_cm2_s)
}

/// Dimensionless time `s = D t / R²` for a time `t_s` (s), sphere radius `radius_cm` (cm)
/// and diffusion coefficient `diffusion_cm2_s` (cm² s⁻¹).
pub fn dimensionless_time(t_s: f64, radius_cm: f64, diffusion_cm2_s: f64) -> f64 {
    diffusion_cm2_s * t_s / (radius_cm * radius_cm)
}

/// Physical time (s) for a dimensionless time `s`: `t = s R² / D`, with `radius_cm` (cm) and
/// `diffusion_cm2_s` (cm² s⁻¹). Inverse of [`dimensionless_time`].
pub fn time_from_dimensionless(s: f64, radius_cm: f64, diffusion_cm2_s: f64) -> f64 {
    s * radius_cm * radius_cm / diffusion_cm2_s
}

/// Exponential series for s > 0: returns (survival, pdf).
///
/// `S = 2 Σ (−1)^(n+1) qⁿ²`, `f = 2π² Σ (−1)^(n+1) n² qⁿ²` with `q = exp(−π² s)`; the powers
/// are built by multiplication (`q^((n+1)²) = q^(n²) q^(2n+1)`), one exponential in all.
fn series_large(s: f64) -> (f64, f64) {
    let q = (-PI2 * s).exp();
    let q2 = q * q;
    let mut qn2 = q; // q^(n²)
    let mut step = q * q2; // q^(2n+1)
    let mut sf = 0.0;
    let mut dens = 0.0;
    let mut n = 1.0_f64;
    let mut sign = 1.0;
    loop {
        sf += sign * qn2;
        dens += sign * n * n * qn2;
        qn2 *= step;
        step *= q2;
        n += 1.0;
        sign = -sign;
        if qn2 == 0.0 || (qn2 < REL_STOP * sf.abs() && n * n * qn2 < REL_STOP * dens.abs()) {
            break;
        }
    }
    (2.0 * sf, 2.0 * PI2 * dens)
}

/// Small-time (image) form for s > 0: returns (cdf, pdf).
///
/// `F = (2/√(π s)) Σ_k e^(−(k+½)²/s)`,
/// `f = dF/ds = (2/√π) s^(−5/2) Σ_k e^(−(k+½)²/s) ((k+½)² − s/2)`.
/// The common factor `e^(−1/(4s))` is folded into one exponential with the prefactors, so
/// no intermediate goes subnormal before the result does; `e^(−(k+½)²/s) = e^(−1/(4s))
/// r^(k(k+1))` with `r = e^(−1/s)`.
fn series_small(s: f64) -> (f64, f64) {
    let r = (-1.0 / s).exp();
    let mut rk = 1.0; // r^(k(k+1))
    let mut k = 0.0_f64;
    let mut sum_c = 0.0;
    let mut sum_p = 0.0;
    loop {
        let a = (k + 0.5) * (k + 0.5);
        sum_c += rk;
        sum_p += rk * (a - 0.5 * s);
        // r^((k+1)(k+2)) = r^(k(k+1)) · r^(2(k+1))
        rk *= r.powi(2 * (k as i32 + 1));
        k += 1.0;
        if rk < REL_STOP * sum_c {
            break;
        }
    }
    let ln_s = s.ln();
    // ln(2/√π) = ln 2 − ½ ln π
    let ln_pref = std::f64::consts::LN_2 - 0.5 * PI.ln();
    let c = (ln_pref - 0.5 * ln_s - 0.25 / s).exp() * sum_c;
    let f = (ln_pref - 2.5 * ln_s - 0.25 / s).exp() * sum_p;
    (c, f)
}

/// (cdf, survival, pdf) at s, each from the form that keeps it accurate.
fn eval_all(s: f64) -> (f64, f64, f64) {
    if s.is_nan() {
        return (f64::NAN, f64::NAN, f64::NAN);
    }
    if s <= 0.0 {
        return (0.0, 1.0, 0.0);
    }
    if s < SERIES_SWITCH_S {
        let (c, f) = series_small(s);
        (c, 1.0 - c, f)
    } else {
        let (sf, f) = series_large(s);
        (1.0 - sf, sf, f)
    }
}

/// Survival probability `P(T > t)` at dimensionless time `s = D t / R²` for diffusion from
/// the centre of a sphere (docs/references.md, Diffusion theory 1: Krapivsky, Redner & Ben-Naim
/// 2010, problem 2.21; Redner 2001).
///
/// `2 Σ_{n≥1} (−1)^(n+1) exp(−n²π² s)` for `s ≥ 0.1`, `1 − (2/√(π s)) Σ_{k≥0}
/// exp(−(k+½)²/s)` below. Returns 1 for `s ≤ 0` and NaN for NaN. Absolute error below
/// 1e−15; relative error ~1e−15 in the upper tail too.
pub fn survival(s: f64) -> f64 {
    eval_all(s).1
}

/// Cumulative distribution `P(T ≤ t)` of the dimensionless exit time `s` (see [`survival`]).
///
/// Returns 0 for `s ≤ 0`. Computed directly from the small-time form for `s < 0.1`, so it
/// keeps relative precision ~1e−13 even where it is as small as 1e−300.
pub fn cdf(s: f64) -> f64 {
    eval_all(s).0
}

/// Probability density of the dimensionless exit time `s` (per unit s; divide by `R²/D`
/// for a density per second).
///
/// `2π² Σ_{n≥1} (−1)^(n+1) n² exp(−n²π² s)` for `s ≥ 0.1`, the derivative of the
/// small-time form `(2/√π) s^(−5/2) Σ_{k≥0} exp(−(k+½)²/s) ((k+½)² − s/2)` below
/// (docs/references.md, Diffusion theory 1). Returns 0 for `s ≤ 0`. Absolute error ~1e−15 (the
/// density peaks at 5.922 at s = 0.09175).
pub fn pdf(s: f64) -> f64 {
    eval_all(s).2
}

/// Upper bound of the bracket for a survival target `q`: `S(s) ≤ 2 exp(−π² s)` for all s
/// (alternating series with decreasing terms), so `S ≤ q` at `s = ln(2/q)/π²`.
fn upper_bracket(q: f64) -> f64 {
    (2.0 / q).ln() / PI2
}

/// Starting point: the leading small-time term `(2/√(π s)) e^(−1/(4s)) = p` solved by
/// fixed-point iteration for the lower half, the leading series term `2 e^(−π² s) = q`
/// for the upper half.
fn initial_guess(p: f64, q: f64) -> f64 {
    if p <= 0.5 {
        let ln_pref = std::f64::consts::LN_2 - 0.5 * PI.ln();
        let ln_p = p.ln();
        let mut s: f64 = 0.1;
        for _ in 0..4 {
            s = 0.25 / (ln_pref - 0.5 * s.ln() - ln_p);
        }
        s
    } else {
        upper_bracket(q)
    }
}

/// Safeguarded Newton solve of `F(s) = p` (equivalently `S(s) = q`), with `p + q = 1`
/// given separately so that neither tail loses precision.
///
/// Lower half (`p ≤ ½`): root of `ln F(s) − ln p` (concave, slope f/F). Upper half: root of
/// `ln q − ln S(s)` (convex, slope f/S). Log-concavity of F and S makes both nearly linear;
/// a step leaving the bracket is replaced by a (geometric) bisection.
fn solve(p: f64, q: f64) -> f64 {
    let lower = p <= 0.5;
    let target = if lower { p.ln() } else { q.ln() };
    let mut lo = 0.0_f64;
    let mut hi = upper_bracket(q).max(f64::MIN_POSITIVE);
    let mut s = initial_guess(p, q);
    if s.is_nan() || s <= lo || s >= hi {
        s = 0.5 * hi;
    }
    for _ in 0..200 {
        let (c, sf, f) = eval_all(s);
        let (r, dr) = if lower {
            (c.ln() - target, f / c)
        } else {
            (target - sf.ln(), f / sf)
        };
        if r == 0.0 {
            return s;
        }
        if r < 0.0 {
            lo = s;
        } else {
            hi = s;
        }
        let mut next = s - r / dr;
        if next.is_nan() || next <= lo || next >= hi {
            next = if lo > 0.0 { (lo * hi).sqrt() } else { 0.5 * hi };
        }
        if (next - s).abs() <= 4.0 * f64::EPSILON * s || hi - lo <= 4.0 * f64::EPSILON * hi {
            return next;
        }
        s = next;
    }
    s
}

/// Quantile (inverse cdf) of the dimensionless exit time: the `s` with `cdf(s) = p`.
///
/// Safeguarded Newton iteration with a bisection fallback, from the leading asymptotic term
/// of whichever tail `p` is in (`2 e^(−π² s) = 1 − p` as p → 1, `(2/√(π s)) e^(−1/(4s)) = p`
/// as p → 0). Converges to a few ulp (well inside the 1e−10 relative required) for every
/// `p` in (0, 1), down to `p = 1e−300`. Returns 0 for `p = 0`, `+∞` for `p = 1` and NaN
/// outside [0, 1]. For upper-tail probabilities closer to 1 than f64 resolves, use
/// [`inverse_survival`].
pub fn quantile(p: f64) -> f64 {
    if p.is_nan() || !(0.0..=1.0).contains(&p) {
        return f64::NAN;
    }
    if p == 0.0 {
        return 0.0;
    }
    if p == 1.0 {
        return f64::INFINITY;
    }
    solve(p, 1.0 - p)
}

/// Inverse survival function: the `s` with `survival(s) = q`, accurate for `q` as small as
/// 1e−300 (where `quantile(1 − q)` cannot even be expressed). Returns `+∞` for `q = 0`, 0
/// for `q = 1`, NaN outside [0, 1].
pub fn inverse_survival(q: f64) -> f64 {
    if q.is_nan() || !(0.0..=1.0).contains(&q) {
        return f64::NAN;
    }
    if q == 0.0 {
        return f64::INFINITY;
    }
    if q == 1.0 {
        return 0.0;
    }
    solve(1.0 - q, q)
}

/// Lookup table for [`sample`]: s and ds/dx on a uniform grid in x = logit(p).
struct SampleTable {
    x0: f64,
    inv_h: f64,
    h: f64,
    s: Vec<f64>,
    ds_dx: Vec<f64>,
}

/// Grid of the sampling table in x = ln(p/(1−p)). `Open01` draws u in [2⁻⁵³, 1 − 2⁻⁵³],
/// i.e. |x| ≤ 36.74, so [−37, 37] covers every uniform the generator can produce.
const TABLE_X_MIN: f64 = -37.0;
const TABLE_X_MAX: f64 = 37.0;
const TABLE_LEN: usize = 16_385;

fn sample_table() -> &'static SampleTable {
    static TABLE: OnceLock<SampleTable> = OnceLock::new();
    TABLE.get_or_init(|| {
        let h = (TABLE_X_MAX - TABLE_X_MIN) / (TABLE_LEN - 1) as f64;
        let mut s = Vec::with_capacity(TABLE_LEN);
        let mut ds_dx = Vec::with_capacity(TABLE_LEN);
        for i in 0..TABLE_LEN {
            let x = TABLE_X_MIN + h * i as f64;
            let p = 1.0 / (1.0 + (-x).exp());
            let q = 1.0 / (1.0 + x.exp());
            let si = solve(p, q);
            // dp/dx = p q and ds/dp = 1/f(s).
            s.push(si);
            ds_dx.push(p * q / pdf(si));
        }
        SampleTable {
            x0: TABLE_X_MIN,
            inv_h: 1.0 / h,
            h,
            s,
            ds_dx,
        }
    })
}

/// Inverse cdf at `u ∈ (0, 1)` by table interpolation: the
/// deterministic core of [`sample`], interchangeable with [`quantile`].
///
/// Cubic Hermite interpolation in x = logit(u) on a 16 385-point table over |x| ≤ 37 (with
/// exact slopes ds/dx = u(1 − u)/f(s)). The interpolation error falls as h⁴: 5e−9 relative
/// with 1025 points (measured), so below 1e−13 with 16 385, far inside the 1e−10 that
/// [`quantile`] guarantees, with no Newton step (which cost half of each draw).
/// Uniforms beyond the table (|x| > 37, i.e. u < 8.5e−17 or 1 − u < 8.5e−17, which
/// `Open01` never yields) and 0, 1, NaN go to [`quantile`].
pub fn quantile_fast(u: f64) -> f64 {
    if u.is_nan() || u <= 0.0 || u >= 1.0 {
        return quantile(u);
    }
    let x = (u / (1.0 - u)).ln();
    if !(TABLE_X_MIN..=TABLE_X_MAX).contains(&x) {
        return quantile(u);
    }
    let t = sample_table();
    let pos = (x - t.x0) * t.inv_h;
    let i = (pos as usize).min(TABLE_LEN - 2);
    let w = pos - i as f64;
    let (s0, s1) = (t.s[i], t.s[i + 1]);
    let (d0, d1) = (t.ds_dx[i] * t.h, t.ds_dx[i + 1] * t.h);
    let w2 = w * w;
    let w3 = w2 * w;
    let s = (2.0 * w3 - 3.0 * w2 + 1.0) * s0
        + (w3 - 2.0 * w2 + w) * d0
        + (-2.0 * w3 + 3.0 * w2) * s1
        + (w3 - w2) * d1;
    if s.is_nan() || s <= 0.0 {
        // Not reached for any u in the table range; kept as a safeguard.
        return quantile(u);
    }
    s
}

/// Draws a dimensionless exit time `s = D t / R²` for diffusion from the centre of a
/// sphere, by inversion ([`quantile_fast`]) of one `Open01` uniform (52 random bits, one
/// `u64` from `rng`).
///
/// Accuracy: the inverse cdf of the drawn uniform to better than 1e−13 relative (measured
/// over 2·10⁴ draws: 8e−14 at worst against [`quantile`]). The uniform lies in
/// [2⁻⁵³, 1 − 2⁻⁵³], so draws lie in [0.00635, 3.79]: each truncated tail holds
/// 2⁻⁵³ ≈ 1.1e−16 of the probability. The first call in a process spends a few
/// milliseconds building the table (thread-safe, once).
pub fn sample<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    let u: f64 = Open01.sample(rng);
    quantile_fast(u)
}

/// The distribution of the dimensionless exit time `s` as a [`rand::distr::Distribution`],
/// for use with `rng.sample(FirstPassageTime)` or `sample_iter`. Same draws as [`sample`].
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct FirstPassageTime;

impl Distribution<f64> for FirstPassageTime {
    fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        sample(rng)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;
    use rand::{RngExt, SeedableRng};
    use rand_xoshiro::Xoshiro256PlusPlus;

    use crate::diffusion::quadrature::gauss_legendre_5 as integrate;

    #[test]
    fn limits() {
        assert_eq!(survival(0.0), 1.0);
        assert_eq!(cdf(0.0), 0.0);
        assert_eq!(pdf(0.0), 0.0);
        assert_eq!(survival(-1.0), 1.0);
        assert!(survival(f64::NAN).is_nan());
        assert_eq!(survival(f64::INFINITY), 0.0);
        assert_eq!(cdf(f64::INFINITY), 1.0);
        assert!(cdf(1e-3) < 1e-100);
        // Upper tail: the leading term, with full relative precision.
        assert_relative_eq!(
            survival(5.0),
            2.0 * (-PI2 * 5.0).exp(),
            max_relative = 1e-14
        );
    }

    #[test]
    fn forms_agree_at_switch_and_across_overlap() {
        // Both forms are exact everywhere; at the switch they must agree to 1e-12.
        let (sf_l, f_l) = series_large(SERIES_SWITCH_S);
        let (c_s, f_s) = series_small(SERIES_SWITCH_S);
        assert!((1.0 - sf_l - c_s).abs() < 1e-12, "{}", 1.0 - sf_l - c_s);
        assert!((f_l - f_s).abs() < 1e-12, "{}", f_l - f_s);
        // Over a wide overlap the difference stays at the rounding level (1e-14 absolute).
        let mut worst: f64 = 0.0;
        for i in 0..=200 {
            let s = 0.03 + 0.47 * i as f64 / 200.0;
            let (sf_l, f_l) = series_large(s);
            let (c_s, f_s) = series_small(s);
            worst = worst.max((1.0 - sf_l - c_s).abs()).max((f_l - f_s).abs());
        }
        assert!(worst < 1e-14, "worst difference {worst:e}");
        // And continuity of the public functions straddling the switch.
        let below = SERIES_SWITCH_S * (1.0 - f64::EPSILON);
        assert!((cdf(below) - cdf(SERIES_SWITCH_S)).abs() < 1e-14);
        assert!((pdf(below) - pdf(SERIES_SWITCH_S)).abs() < 1e-13);
    }

    /// Values computed independently at 40 significant digits (mpmath, both series summed
    /// to convergence): (s, cdf, survival, pdf). Checked to 1e−14 absolute and, in the
    /// tails, 1e−13 relative.
    #[test]
    fn high_precision_values() {
        let table = [
            (
                0.002,
                1.303_556_392_114_918_3e-53,
                1.0,
                8.114_638_540_915_367e-49,
            ),
            (
                0.02,
                2.973_439_029_468_595_4e-5,
                0.999_970_265_609_705_3,
                0.017_840_634_176_811_572,
            ),
            (
                0.07,
                0.119_909_700_496_880_08,
                0.880_090_299_503_119_9,
                5.261_344_001_412_828,
            ),
            (
                0.1,
                0.292_899_651_842_240_9,
                0.707_100_348_157_759_1,
                5.857_993_157_587_054,
            ),
            (
                0.15,
                0.550_282_873_787_763_2,
                0.449_717_126_212_236_8,
                4.280_057_128_121_164,
            ),
            (
                0.5,
                0.985_616_238_638_923_3,
                0.014_383_761_361_076_749,
                0.141_961_876_009_297_37,
            ),
            (
                2.0,
                0.999_999_994_649_424,
                5.350_575_982_148_479e-9,
                5.280_806_826_177_565e-8,
            ),
        ];
        for (s, c, sf, f) in table {
            assert!(
                (cdf(s) - c).abs() < 1e-14 && (cdf(s) - c).abs() <= 1e-13 * c,
                "cdf({s})"
            );
            assert!((survival(s) - sf).abs() <= 1e-13 * sf, "survival({s})");
            assert!(
                (pdf(s) - f).abs() < 1e-14 && (pdf(s) - f).abs() <= 1e-13 * f,
                "pdf({s})"
            );
        }
        // Median and 90 % point, same source.
        assert_relative_eq!(
            quantile(0.5),
            0.138_785_297_042_720_32,
            max_relative = 1e-14
        );
        assert_relative_eq!(quantile(0.9), 0.303_518_469_143_417_4, max_relative = 1e-14);
    }

    #[test]
    fn pdf_is_derivative_of_cdf() {
        for &s in &[0.01, 0.05, 0.0999, 0.1001, 0.2, 0.5, 1.0] {
            let h = 1e-6 * s;
            let fd = (cdf(s + h) - cdf(s - h)) / (2.0 * h);
            assert_relative_eq!(fd, pdf(s), max_relative = 1e-7);
        }
    }

    #[test]
    fn moments_by_integration() {
        // The density is below 1e-300 for s < 1e-3 and below 1e-40 beyond s = 10.
        let norm = integrate(pdf, 0.0, 10.0, 2000);
        let m1 = integrate(|s| s * pdf(s), 0.0, 10.0, 2000);
        let m2 = integrate(|s| s * s * pdf(s), 0.0, 10.0, 2000);
        assert_relative_eq!(norm, 1.0, max_relative = 1e-12);
        // docs/references.md, Diffusion theory 1: mean R²/(6D), Var T / <T>² = 0.4.
        assert_relative_eq!(m1, MEAN_S, max_relative = 1e-12);
        assert_relative_eq!((m2 - m1 * m1) / (m1 * m1), 0.4, max_relative = 1e-11);
        // The mean is also the integral of the survival.
        assert_relative_eq!(
            integrate(survival, 0.0, 10.0, 2000),
            MEAN_S,
            max_relative = 1e-12
        );
    }

    #[test]
    fn quantile_inverts_cdf() {
        let ps = [
            1e-300,
            1e-100,
            1e-20,
            1e-8,
            1e-3,
            0.05,
            0.29,
            0.3,
            0.5,
            0.7,
            0.9,
            0.999,
            1.0 - 1e-9,
            1.0 - 1e-15,
        ];
        for &p in &ps {
            let s = quantile(p);
            // Residual converted to a relative error in s: dp = f ds.
            let rel = if p <= 0.5 {
                (cdf(s) - p) / (pdf(s) * s)
            } else {
                ((1.0 - p) - survival(s)) / (pdf(s) * s)
            };
            assert!(rel.abs() < 1e-13, "p = {p:e}: relative error {rel:e}");
        }
        // Independent check by plain bisection on the cdf.
        for &p in &[0.01, 0.2, 0.5, 0.8, 0.99] {
            let (mut lo, mut hi) = (0.0, 10.0);
            for _ in 0..200 {
                let mid = 0.5 * (lo + hi);
                if cdf(mid) < p {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            assert_relative_eq!(quantile(p), 0.5 * (lo + hi), max_relative = 1e-10);
        }
        for &q in &[1e-300, 1e-50, 1e-17] {
            let s = inverse_survival(q);
            assert_relative_eq!(survival(s), q, max_relative = 1e-12);
        }
    }

    #[test]
    fn quantile_edges() {
        assert_eq!(quantile(0.0), 0.0);
        assert_eq!(quantile(1.0), f64::INFINITY);
        assert!(quantile(-0.1).is_nan());
        assert!(quantile(1.1).is_nan());
        assert!(quantile(f64::NAN).is_nan());
        assert_eq!(inverse_survival(0.0), f64::INFINITY);
        assert_eq!(inverse_survival(1.0), 0.0);
    }

    #[test]
    fn fast_quantile_matches_quantile() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(11);
        let mut worst: f64 = 0.0;
        for _ in 0..20_000 {
            let u: f64 = rng.sample(Open01);
            let a = quantile_fast(u);
            let b = quantile(u);
            worst = worst.max(((a - b) / b).abs());
        }
        // The extremes of Open01 and the table edges.
        for &u in &[
            2f64.powi(-53),
            1.0 - 2f64.powi(-53),
            0.5,
            0.5 + 1e-12,
            1e-10,
        ] {
            let a = quantile_fast(u);
            let b = quantile(u);
            worst = worst.max(((a - b) / b).abs());
        }
        // The table's documented accuracy (h⁴ interpolation error, no Newton step): 1e−13,
        // a thousand times inside the 1e−10 of `quantile` itself.
        assert!(worst < 1e-13, "worst relative difference {worst:e}");
    }

    /// 10⁵ draws with a fixed seed. Mean and variance ratio are compared with their exact
    /// values using standard errors from the exact moments E[sᵏ] = 2 k! η(2k) / π^(2k)
    /// (η the Dirichlet eta function); tolerance 4 standard errors (a false failure about
    /// once in 16 000 seeds). With this seed the deviations are +0.52 σ (mean) and
    /// −0.39 σ (variance ratio).
    #[test]
    fn sample_moments() {
        let n = 100_000;
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(2024);
        let (mut m1, mut m2) = (0.0, 0.0);
        for _ in 0..n {
            let s = sample(&mut rng);
            m1 += s;
            m2 += s * s;
        }
        let nf = n as f64;
        m1 /= nf;
        m2 /= nf;
        // Exact raw moments: 1/6, 7/180, 31/2520, 127/25200.
        let e1 = 1.0 / 6.0;
        let e2 = 7.0 / 180.0;
        let e3 = 31.0 / 2520.0;
        let e4 = 127.0 / 25200.0;
        let var_s = e2 - e1 * e1;
        let se_mean = (var_s / nf).sqrt();
        assert!(
            (m1 - e1).abs() < 4.0 * se_mean,
            "mean {m1}, {} se",
            (m1 - e1) / se_mean
        );
        // Ratio R = M2/M1² − 1: delta method with Cov(s, s²) and Var(s²).
        let ratio = m2 / (m1 * m1) - 1.0;
        let g1 = -2.0 * e2 / (e1 * e1 * e1);
        let g2 = 1.0 / (e1 * e1);
        let var_r =
            (g1 * g1 * var_s + 2.0 * g1 * g2 * (e3 - e1 * e2) + g2 * g2 * (e4 - e2 * e2)) / nf;
        let se_r = var_r.sqrt();
        assert!(
            (ratio - 0.4).abs() < 4.0 * se_r,
            "ratio {ratio}, {} se",
            (ratio - 0.4) / se_r
        );
    }

    #[test]
    fn samples_pass_ks() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(99);
        let mut v: Vec<f64> = (0..20_000).map(|_| rng.sample(FirstPassageTime)).collect();
        v.sort_by(f64::total_cmp);
        let d = super::super::ks::ks_distance_sorted(&v, cdf);
        let p = super::super::ks::kolmogorov_p_value(d, v.len() as f64);
        assert!(p > 0.001, "D = {d}, p = {p}");
    }

    /// Golden values for a fixed seed: catches accidental changes of the random stream (not
    /// of the physics, which the statistical tests check).
    #[test]
    fn golden_draws() {
        let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
        let got: Vec<f64> = (0..3).map(|_| sample(&mut rng)).collect();
        // Xoshiro256PlusPlus, seed 7, first three draws (recorded from this implementation).
        let want = [
            0.056_119_091_966_119_55,
            0.079_448_490_523_973_56,
            0.198_047_405_052_389_44,
        ];
        for (g, w) in got.iter().zip(want) {
            assert_relative_eq!(*g, w, max_relative = 1e-12);
        }
    }

    #[test]
    fn physical_helpers() {
        assert_relative_eq!(mean_exit_time_s(2.0, 4.0), 4.0 / 24.0);
        let t = time_from_dimensionless(0.3, 2.0, 4.0);
        assert_relative_eq!(dimensionless_time(t, 2.0, 4.0), 0.3);
    }
}
