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
use std::sync::{Arc, Mutex, OnceLock};

use rand::{Rng, RngExt};

use super::phase::PhaseFunction;

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

/// The law of the cosine μ between the direction of a first crossing of a surface and its
/// normal, for a walk that crosses from a diffusing region: density ∝ μ I(μ), with I the
/// emergent intensity of the Milne problem, tabulated on 512 intervals of μ and sampled by
/// inversion (piecewise-constant density within an interval).
///
/// Its mean cosine is also the Milne extrapolation length in transport mean free paths:
/// for conservative scattering with mean cosine g, the K-integral grows as
/// dK/dτ = (1 − g) H with constant flux H, and the asymptotic mean intensity J = 3K
/// vanishes at (K(0)/H) l_tr beyond the surface, where K(0)/H = ∫ μ² I dμ / ∫ μ I dμ over
/// the emergent directions (for isotropic scattering this is q∞ = α₂/α₁ = 0.7104;
/// Chandrasekhar 1950, §§ 36–39). [`CrossingLaw::extrapolation_length`] returns the mean of
/// the tabulated law itself, so a jump's widened radius and its exit direction agree.
#[derive(Debug, Clone)]
pub struct CrossingLaw {
    /// Cumulative probability at `mu[k]`.
    cumulative: Vec<f64>,
    mu: Vec<f64>,
    /// Mean crossing cosine of the tabulated law.
    mean_cosine: f64,
}

impl CrossingLaw {
    /// The law for an emergent intensity `intensity(μ)` (any positive normalisation).
    pub fn from_intensity(intensity: impl Fn(f64) -> f64) -> Self {
        // Nodes uniform in μ; trapezoid in each interval of the density μ I(μ), which is
        // smooth; 512 intervals give < 1e-6 in the CDF.
        let mu: Vec<f64> = (0..=TABLE_INTERVALS)
            .map(|k| k as f64 / TABLE_INTERVALS as f64)
            .collect();
        let density: Vec<f64> = mu.iter().map(|&m| m * intensity(m)).collect();
        let mut cumulative = vec![0.0; mu.len()];
        for k in 1..mu.len() {
            cumulative[k] =
                cumulative[k - 1] + 0.5 * (density[k] + density[k - 1]) * (mu[k] - mu[k - 1]);
        }
        let total = cumulative[TABLE_INTERVALS];
        for value in &mut cumulative {
            *value /= total;
        }
        // The sampler draws μ uniformly within each interval: its mean is the midpoints
        // weighted by the interval probabilities.
        let mean_cosine = (1..mu.len())
            .map(|k| (cumulative[k] - cumulative[k - 1]) * 0.5 * (mu[k] + mu[k - 1]))
            .sum();
        Self {
            cumulative,
            mu,
            mean_cosine,
        }
    }

    /// The law for conservative scattering with phase function `phase`: the Milne emergent
    /// intensity computed by doubling ([`super::milne`]); μ H(μ) in closed form for
    /// isotropic scattering. Henyey–Greenstein with |g| > 0.9 is too peaked for the
    /// 64-node quadrature and gets the isotropic law (its mean, the extrapolation length,
    /// still matches the time law, which is what the walk's consistency needs).
    pub fn for_phase(phase: &PhaseFunction) -> CrossingLaw {
        match *phase {
            PhaseFunction::Isotropic => CrossingLaw::isotropic().clone(),
            PhaseFunction::HenyeyGreenstein(g) if g.value().abs() > 0.9 => {
                CrossingLaw::isotropic().clone()
            }
            _ => {
                let (mu, u) = super::milne::emergent_intensity(phase);
                CrossingLaw::from_intensity(|m| interpolate(&mu, &u, m))
            }
        }
    }

    /// The law for conservative isotropic scattering: μ H(μ).
    pub fn isotropic() -> &'static CrossingLaw {
        static LAW: OnceLock<CrossingLaw> = OnceLock::new();
        LAW.get_or_init(|| CrossingLaw::from_intensity(conservative_h))
    }

    /// The Milne extrapolation length in transport mean free paths: the law's mean cosine.
    pub fn extrapolation_length(&self) -> f64 {
        self.mean_cosine
    }

    /// Draws the cosine between the crossing direction and the normal.
    pub fn sample_cosine<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let u: f64 = rng.random();
        let upper = self
            .cumulative
            .partition_point(|&c| c < u)
            .clamp(1, TABLE_INTERVALS);
        let (c0, c1) = (self.cumulative[upper - 1], self.cumulative[upper]);
        let (m0, m1) = (self.mu[upper - 1], self.mu[upper]);
        let fraction = if c1 > c0 { (u - c0) / (c1 - c0) } else { 0.5 };
        (m0 + fraction * (m1 - m0)).clamp(1e-12, 1.0)
    }
}

/// Crossing laws already computed, by phase function.
type SharedLaws = Vec<(PhaseFunction, Arc<CrossingLaw>)>;

/// The crossing laws of a medium's layers: the distinct laws, and per layer the index of
/// its law. Laws are computed once per phase function and process, and shared.
pub(crate) fn laws_of(
    phases: impl Iterator<Item = PhaseFunction>,
) -> (Vec<Arc<CrossingLaw>>, Vec<usize>) {
    static CACHE: OnceLock<Mutex<SharedLaws>> = OnceLock::new();
    let cache = CACHE.get_or_init(|| Mutex::new(Vec::new()));
    let mut laws: Vec<(PhaseFunction, Arc<CrossingLaw>)> = Vec::new();
    let indices = phases
        .map(|phase| {
            if let Some(k) = laws.iter().position(|(p, _)| *p == phase) {
                return k;
            }
            let known = cache
                .lock()
                .expect("crossing-law cache")
                .iter()
                .find(|(p, _)| *p == phase)
                .map(|(_, law)| Arc::clone(law));
            let law = known.unwrap_or_else(|| {
                let law = Arc::new(CrossingLaw::for_phase(&phase));
                cache
                    .lock()
                    .expect("crossing-law cache")
                    .push((phase, Arc::clone(&law)));
                law
            });
            laws.push((phase, law));
            laws.len() - 1
        })
        .collect();
    (laws.into_iter().map(|(_, law)| law).collect(), indices)
}

/// Linear interpolation of `values` at `nodes` (ascending), extended linearly beyond the
/// first and last node.
fn interpolate(nodes: &[f64], values: &[f64], x: f64) -> f64 {
    let k = nodes.partition_point(|&n| n <= x).clamp(1, nodes.len() - 1);
    let (x0, x1) = (nodes[k - 1], nodes[k]);
    values[k - 1] + (x - x0) / (x1 - x0) * (values[k] - values[k - 1])
}

/// Draws the cosine between the crossing direction and the outward normal of a sphere, for
/// conservative isotropic scattering ([`CrossingLaw::isotropic`]).
pub fn sample_crossing_cosine<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    CrossingLaw::isotropic().sample_cosine(rng)
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

    #[test]
    fn mean_crossing_cosine_is_the_milne_extrapolation_length() {
        // q∞ = α₂/α₁ = 0.7104461 for conservative isotropic scattering (Chandrasekhar 1950,
        // § 39).
        let q = CrossingLaw::isotropic().extrapolation_length();
        assert!((q - 0.7104461).abs() < 2e-6, "{q}");
    }
}
