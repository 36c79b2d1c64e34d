//! The emergent intensity of the Milne problem (a conservative half-space with a source at
//! infinite depth) for any phase function, from the half-space reflection operator.
//!
//! For conservative scattering with mean cosine g, I = (1 − g)τ + μ is an exact solution
//! of the transport equation μ dI/dτ = I − ∫ p I dΩ′/4π (τ increasing inward, μ the cosine
//! to the outward normal): the source term of a field linear in μ is g μ. At the surface it
//! has the unphysical incoming intensity μ < 0; adding the half-space's response to the
//! incident intensity |μ| removes it, so the Milne problem's emergent intensity is
//!
//! u(μ) ∝ μ + 2 ∫₀¹ R(μ, μ′) μ′² dμ′,
//!
//! with R the azimuth-averaged reflection function of the conservative half-space (van de
//! Hulst 1980, *Multiple Light Scattering*, vol. 1, ch. 5, the escape function). For
//! isotropic scattering R = H(μ)H(μ′)/(4(μ + μ′)) and this reduces to (α₁/2) H(μ), which the
//! tests check against the closed-form H.
//!
//! R is computed by doubling (van de Hulst 1980, ch. 4; Hansen & Travis 1974, Space Sci.
//! Rev. 16:527, §3): a layer of optical thickness 2⁻²⁵ in single scattering, doubled 45
//! times to 2²⁰ with R₂ = R + T(1 − RR)⁻¹RT and T₂ = T(1 − RR)⁻¹T (T including the direct
//! beam), on 64 Gauss–Legendre nodes in μ ∈ (0, 1). The azimuth average of the phase
//! function is a 256-point trapezoid sum over the azimuth (spectrally accurate for a
//! periodic integrand), each row renormalised so that scattering conserves energy on the
//! nodes. The thickness error of R is O(1/τ); the last two doublings are extrapolated
//! (Richardson) to remove it.

use std::f64::consts::PI;

use nalgebra::{DMatrix, DVector};

use super::phase::PhaseFunction;

/// Gauss–Legendre nodes per hemisphere.
const NODES: usize = 64;
/// Azimuth points of the phase-function average.
const AZIMUTHS: usize = 256;
/// Thickness of the starting layer, 2^-25.
const START_THICKNESS: f64 = 2.980_232_238_769_531_2e-8;
/// Doublings: 2^-25 · 2^45 = 2^20.
const DOUBLINGS: usize = 45;

/// The Milne emergent intensity u(μ) of a conservative half-space with phase function
/// `phase`, at the Gauss nodes: (μ nodes ascending in (0, 1), u at them), normalised to
/// u(μ_max) = 1.
pub(super) fn emergent_intensity(phase: &PhaseFunction) -> (Vec<f64>, Vec<f64>) {
    let (mu, weight) = gauss_legendre_unit(NODES);
    let (same, opposite) = azimuth_averaged(phase, &mu, &weight);
    let n = NODES;
    let mut reflection = DMatrix::zeros(n, n);
    let mut transmission = DMatrix::zeros(n, n);
    let tau = START_THICKNESS;
    for i in 0..n {
        for j in 0..n {
            let (a, b) = (mu[i], mu[j]);
            // Single scattering (van de Hulst normalisation), as operators on intensity
            // vectors: I_out(μ_i) = Σ_j 2 R(μ_i, μ_j) μ_j c_j I_in(μ_j).
            let r = 0.25 * opposite[(i, j)] * (-(-tau * (1.0 / a + 1.0 / b)).exp_m1()) / (a + b);
            let t = if i == j {
                0.25 * same[(i, j)] * tau * (-tau / a).exp() / (a * a)
            } else {
                0.25 * same[(i, j)] * ((-tau / a).exp() - (-tau / b).exp()) / (a - b)
            };
            reflection[(i, j)] = 2.0 * r * b * weight[j];
            transmission[(i, j)] = 2.0 * t * b * weight[j];
        }
        transmission[(i, i)] += (-tau / mu[i]).exp();
    }
    let identity = DMatrix::<f64>::identity(n, n);
    let incident = DVector::from_iterator(n, mu.iter().copied());
    let escape = |r: &DMatrix<f64>| -> DVector<f64> { &incident + r * &incident };
    let mut previous = escape(&reflection);
    for _ in 0..DOUBLINGS {
        previous = escape(&reflection);
        let resolvent = (&identity - &reflection * &reflection)
            .try_inverse()
            .expect("1 − RR is invertible for a finite layer");
        let through = &transmission * &resolvent;
        let new_reflection = &reflection + &through * &reflection * &transmission;
        let new_transmission = &through * &transmission;
        reflection = new_reflection;
        transmission = new_transmission;
    }
    // R(τ) − R(∞) ∝ 1/τ: u(∞) ≈ 2 u(2τ) − u(τ).
    let last = escape(&reflection);
    let limit: Vec<f64> = (0..n).map(|i| 2.0 * last[i] - previous[i]).collect();
    let top = limit[n - 1];
    (mu, limit.iter().map(|u| u / top).collect())
}

/// Gauss–Legendre nodes and weights on (0, 1) (weights summing to 1), by Newton's method on
/// the Legendre polynomial P_n from Tricomi's initial guesses (Abramowitz & Stegun 1964,
/// 25.4.29 for the rule).
pub(super) fn gauss_legendre_unit(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut nodes = vec![0.0; n];
    let mut weights = vec![0.0; n];
    for k in 0..n {
        let mut x = (PI * (k as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut derivative = 1.0;
        for _ in 0..100 {
            let (mut p0, mut p1) = (1.0, x);
            for m in 2..=n {
                let p2 = ((2 * m - 1) as f64 * x * p1 - (m - 1) as f64 * p0) / m as f64;
                p0 = p1;
                p1 = p2;
            }
            derivative = n as f64 * (x * p1 - p0) / (x * x - 1.0);
            let step = p1 / derivative;
            x -= step;
            if step.abs() < 1e-16 {
                break;
            }
        }
        // Map [−1, 1] → [0, 1].
        nodes[k] = 0.5 * (1.0 - x);
        weights[k] = 1.0 / ((1.0 - x * x) * derivative * derivative);
    }
    let order: Vec<usize> = {
        let mut order: Vec<usize> = (0..n).collect();
        order.sort_by(|&a, &b| nodes[a].total_cmp(&nodes[b]));
        order
    };
    (
        order.iter().map(|&k| nodes[k]).collect(),
        order.iter().map(|&k| weights[k]).collect(),
    )
}

/// The azimuth-averaged phase function p₀ between the nodes, within a hemisphere (`same`:
/// p₀(μ_i, μ_j)) and across (`opposite`: p₀(μ_i, −μ_j)), normalised to ∫ p dΩ/4π = 1 and
/// renormalised row by row so that Σ_j c_j (same + opposite)/2 = 1 on the nodes.
fn azimuth_averaged(
    phase: &PhaseFunction,
    mu: &[f64],
    weight: &[f64],
) -> (DMatrix<f64>, DMatrix<f64>) {
    let n = mu.len();
    let average = |cos_product: f64, sin_product: f64| -> f64 {
        // (1/2π) ∫₀^{2π} p(cos Θ) dφ with p = 2 × density (density integrates to 1 over μ).
        let sum: f64 = (0..AZIMUTHS)
            .map(|k| {
                let phi = 2.0 * PI * (k as f64 + 0.5) / AZIMUTHS as f64;
                let cosine = (cos_product + sin_product * phi.cos()).clamp(-1.0, 1.0);
                2.0 * phase.density(cosine)
            })
            .sum();
        sum / AZIMUTHS as f64
    };
    let mut same = DMatrix::zeros(n, n);
    let mut opposite = DMatrix::zeros(n, n);
    for i in 0..n {
        for j in 0..n {
            let sines = ((1.0 - mu[i] * mu[i]) * (1.0 - mu[j] * mu[j])).sqrt();
            same[(i, j)] = average(mu[i] * mu[j], sines);
            opposite[(i, j)] = average(-mu[i] * mu[j], sines);
        }
        let total: f64 = (0..n)
            .map(|j| weight[j] * 0.5 * (same[(i, j)] + opposite[(i, j)]))
            .sum();
        for j in 0..n {
            same[(i, j)] /= total;
            opposite[(i, j)] /= total;
        }
    }
    (same, opposite)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::transport::crossing::conservative_h;

    #[test]
    fn gauss_legendre_integrates_polynomials_exactly() {
        let (x, w) = gauss_legendre_unit(12);
        for power in 0..24 {
            let sum: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(power)).sum();
            assert!(
                (sum - 1.0 / (power as f64 + 1.0)).abs() < 1e-14,
                "x^{power}: {sum}"
            );
        }
    }

    #[test]
    fn isotropic_escape_function_is_chandrasekhars_h() {
        // For isotropic scattering the Milne emergent intensity is ∝ H(μ) (Chandrasekhar
        // 1950, ch. V); H here from its closed-form integral, a different route.
        let (mu, u) = emergent_intensity(&PhaseFunction::Isotropic);
        let top = conservative_h(mu[mu.len() - 1]);
        for (m, value) in mu.iter().zip(&u) {
            let expected = conservative_h(*m) / top;
            assert!(
                (value - expected).abs() < 2e-5,
                "μ = {m}: {value} vs {expected}"
            );
        }
    }

    #[test]
    fn forward_scattering_sharpens_the_escape_function() {
        // With g > 0 the emergent intensity is more peaked towards the normal than for
        // isotropic scattering: u(0)/u(1) falls.
        let (_, isotropic) = emergent_intensity(&PhaseFunction::Isotropic);
        let (_, forward) = emergent_intensity(&PhaseFunction::henyey_greenstein(0.5).unwrap());
        assert!(
            forward[0] < isotropic[0],
            "{} vs {}",
            forward[0],
            isotropic[0]
        );
    }
}
