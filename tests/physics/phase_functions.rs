//! Phase-function sampling against the moments of the distributions.

use sojourn::transport::PhaseFunction;
use sojourn::transport::direction::isotropic;
use sojourn::transport::rng::photon_rng;

use crate::support::assert_within;

const SAMPLES: u64 = 400_000;

/// Mean and standard error of f(μ) over samples of `phase`.
fn sample_mean(phase: PhaseFunction, seed: u64, f: impl Fn(f64) -> f64) -> (f64, f64) {
    let mut rng = photon_rng(seed, 0, 0);
    let (mut sum, mut sum_sq) = (0.0, 0.0);
    for _ in 0..SAMPLES {
        let value = f(phase.sample_cosine(&mut rng));
        sum += value;
        sum_sq += value * value;
    }
    let n = SAMPLES as f64;
    let mean = sum / n;
    (mean, ((sum_sq / n - mean * mean) / n).sqrt())
}

#[test]
fn henyey_greenstein_mean_cosine_is_g() {
    // The mean cosine of the HG phase function is g (Henyey & Greenstein 1941, ApJ 93:70).
    for (index, g) in [-0.7, -0.2, 0.3, 0.75, 0.95].into_iter().enumerate() {
        let phase = PhaseFunction::henyey_greenstein(g).unwrap();
        let (mean, stderr) = sample_mean(phase, 100 + index as u64, |mu| mu);
        assert_within(&format!("<mu> for g = {g}"), mean, g, stderr, 4.0, 0.0);
        assert!(mean.is_finite());
    }
}

#[test]
fn henyey_greenstein_second_moment() {
    // For HG the Legendre moments are g^l, so <P2(μ)> = g²: <μ²> = (1 + 2 g²)/3
    // (Henyey & Greenstein 1941; the expansion p = Σ (2l+1)/2 g^l P_l(μ)).
    let g: f64 = 0.6;
    let phase = PhaseFunction::henyey_greenstein(g).unwrap();
    let (mean, stderr) = sample_mean(phase, 7, |mu| mu * mu);
    assert_within("<mu^2>", mean, (1.0 + 2.0 * g * g) / 3.0, stderr, 4.0, 0.0);
}

#[test]
fn rayleigh_mean_square_cosine_is_two_fifths() {
    // p(μ) = (3/8)(1 + μ²) ⇒ <μ> = 0, <μ²> = 2/5 (Chandrasekhar 1950, Radiative Transfer §17).
    let (mean_sq, stderr_sq) = sample_mean(PhaseFunction::Rayleigh, 8, |mu| mu * mu);
    assert_within("<mu^2>", mean_sq, 0.4, stderr_sq, 4.0, 0.0);
    let (mean, stderr) = sample_mean(PhaseFunction::Rayleigh, 9, |mu| mu);
    assert_within("<mu>", mean, 0.0, stderr, 4.0, 0.0);
}

/// Pearson χ² of `SAMPLES` values in [−1, 1] against a uniform density, 20 bins.
fn chi_square_uniform(mut draw: impl FnMut() -> f64) -> f64 {
    let bins = 20;
    let mut counts = vec![0u64; bins];
    for _ in 0..SAMPLES {
        let mu = draw();
        assert!((-1.0..=1.0).contains(&mu));
        let index = (((mu + 1.0) / 2.0 * bins as f64) as usize).min(bins - 1);
        counts[index] += 1;
    }
    let expected = SAMPLES as f64 / bins as f64;
    counts
        .iter()
        .map(|&c| (c as f64 - expected).powi(2) / expected)
        .sum()
}

#[test]
fn isotropic_cosines_are_uniform() {
    // χ² with 19 degrees of freedom: the 0.1 % critical value is 43.82 (standard χ² tables,
    // e.g. Abramowitz & Stegun 1964, Table 26.8). Both the phase-function sampler and the
    // direction sampler the walker uses must pass.
    let mut rng = photon_rng(21, 0, 0);
    let chi_phase = chi_square_uniform(|| PhaseFunction::Isotropic.sample_cosine(&mut rng));
    assert!(chi_phase < 43.82, "phase sampler χ² = {chi_phase}");
    let mut rng = photon_rng(22, 0, 0);
    let chi_direction = chi_square_uniform(|| isotropic(&mut rng).z);
    assert!(
        chi_direction < 43.82,
        "direction sampler χ² = {chi_direction}"
    );
    // The azimuth too: x/sqrt(x²+y²) = cos φ has the arcsine law; its mean square is 1/2.
    let mut rng = photon_rng(23, 0, 0);
    let (mut sum, mut sum_sq) = (0.0, 0.0);
    for _ in 0..SAMPLES {
        let d = isotropic(&mut rng);
        let c2 = d.x * d.x / (d.x * d.x + d.y * d.y);
        sum += c2;
        sum_sq += c2 * c2;
    }
    let n = SAMPLES as f64;
    let mean = sum / n;
    let stderr = ((sum_sq / n - mean * mean) / n).sqrt();
    assert_within("<cos² φ>", mean, 0.5, stderr, 4.0, 0.0);
}
