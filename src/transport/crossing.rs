//! The direction in which a diffusing photon first crosses a large sphere around its
//! starting point.
//!
//! Seen from inside, the first crossing of a sphere of radius R₀ ≫ l is an escape from a
//! half-space with a diffuse interior: the emergent intensity of the Milne problem,
//! I(μ) ∝ H(μ), with H the Chandrasekhar function of conservative isotropic scattering
//! (Chandrasekhar 1950, Radiative Transfer, ch. V). Photons crossing a surface are weighted
//! by μ, so the crossing cosine to the outward normal has density μ H(μ) / ∫ μ H dμ
//! (∫ μ H dμ = 2/√3). H is computed here from Chandrasekhar's closed-form integral
//!
//! ln H(μ) = −(μ/π) ∫₀^{π/2} ln(1 − θ cot θ) / (cos²θ + μ² sin²θ) dθ,
//!
//! (Chandrasekhar 1950, ch. V, the explicit solution for the characteristic function ½),
//! a different route from the iterative solver the test suite uses to check it.

use std::f64::consts::PI;
use std::sync::OnceLock;

use rand::{Rng, RngExt};

/// Number of intervals of the tabulated cumulative distribution.
const TABLE_INTERVALS: usize = 512;

/// H(μ) of conservative isotropic scattering, from the closed-form integral.
pub fn conservative_h(mu: f64) -> f64 {
    if mu <= 0.0 {
        return 1.0;
    }
    // θ = (π/2) u² removes the logarithmic singularity at θ = 0; composite Simpson in u.
    let intervals = 4000;
    let h = 1.0 / intervals as f64;
    let integrand = |u: f64| {
        if u <= 0.0 {
            return 0.0;
        }
        let theta = 0.5 * PI * u * u;
        let (sin, cos) = theta.sin_cos();
        let one_minus = if theta < 1e-4 {
            // 1 − θ cot θ = θ²/3 + θ⁴/45 + … near 0.
            theta * theta / 3.0 * (1.0 + theta * theta / 15.0)
        } else {
            1.0 - theta * cos / sin
        };
        one_minus.ln() / (cos * cos + mu * mu * sin * sin) * PI * u
    };
    let mut sum = integrand(0.0) + integrand(1.0);
    for k in 1..intervals {
        let weight = if k % 2 == 1 { 4.0 } else { 2.0 };
        sum += weight * integrand(k as f64 * h);
    }
    (-(mu / PI) * sum * h / 3.0).exp()
}

/// Tabulated inverse of the crossing-cosine distribution μ H(μ) / ∫ μ H.
struct CrossingTable {
    /// Cumulative probability at `mu[k]`.
    cumulative: Vec<f64>,
    mu: Vec<f64>,
}

fn table() -> &'static CrossingTable {
    static TABLE: OnceLock<CrossingTable> = OnceLock::new();
    TABLE.get_or_init(|| {
        // Nodes uniform in μ; trapezoid in each interval of the density μ H(μ), which is
        // smooth (H is analytic on (0, 1]); 512 intervals give < 1e-6 in the CDF.
        let mu: Vec<f64> = (0..=TABLE_INTERVALS)
            .map(|k| k as f64 / TABLE_INTERVALS as f64)
            .collect();
        let density: Vec<f64> = mu.iter().map(|&m| m * conservative_h(m)).collect();
        let mut cumulative = vec![0.0; mu.len()];
        for k in 1..mu.len() {
            cumulative[k] =
                cumulative[k - 1] + 0.5 * (density[k] + density[k - 1]) * (mu[k] - mu[k - 1]);
        }
        let total = cumulative[TABLE_INTERVALS];
        for value in &mut cumulative {
            *value /= total;
        }
        CrossingTable { cumulative, mu }
    })
}

/// Draws the cosine between the crossing direction and the outward normal of the sphere.
pub fn sample_crossing_cosine<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    let table = table();
    let u: f64 = rng.random();
    let upper = table
        .cumulative
        .partition_point(|&c| c < u)
        .clamp(1, TABLE_INTERVALS);
    let (c0, c1) = (table.cumulative[upper - 1], table.cumulative[upper]);
    let (m0, m1) = (table.mu[upper - 1], table.mu[upper]);
    let fraction = if c1 > c0 { (u - c0) / (c1 - c0) } else { 0.5 };
    (m0 + fraction * (m1 - m0)).clamp(1e-12, 1.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn closed_form_h_matches_published_values() {
        // Conservative isotropic scattering: H(1) = 2.90781; H(0.5)/H(1) = 0.6922 and
        // H(0)/H(1) = 0.3439 (Chandrasekhar 1950; docs/references.md, Transport 2).
        let h1 = conservative_h(1.0);
        assert!((h1 - 2.90781).abs() < 2e-5, "H(1) = {h1}");
        assert!((conservative_h(0.5) / h1 - 0.6922).abs() < 1e-4);
        assert!((1.0 / h1 - 0.3439).abs() < 1e-4);
    }

    #[test]
    fn mean_crossing_cosine_matches_the_moments_of_h() {
        // <μ> = ∫ μ² H / ∫ μ H. ∫ μ H = 2/√3 (docs/references.md, Transport 2); compute ∫ μ² H
        // directly.
        let n = 2000;
        let second: f64 = (0..n)
            .map(|k| {
                let mu = (k as f64 + 0.5) / n as f64;
                mu * mu * conservative_h(mu) / n as f64
            })
            .sum();
        let expected = second / (2.0 / 3f64.sqrt());
        let mut rng = crate::transport::rng::photon_rng(4, 0, 0);
        let samples = 200_000;
        let mean: f64 = (0..samples)
            .map(|_| sample_crossing_cosine(&mut rng))
            .sum::<f64>()
            / samples as f64;
        // Standard deviation of μ is below 0.3: 4σ = 4 · 0.3 / √200000 = 0.0027.
        assert!((mean - expected).abs() < 0.0027, "{mean} vs {expected}");
    }
}
