//! Helpers shared by the integration tests.

#![allow(dead_code)]

pub mod adding_doubling;
pub mod chandrasekhar;
pub mod profiles;
pub mod radial_diffusion;

use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, RunResult, run};
use sojourn::transport::PhaseFunction;

/// A layer with extinction `sigma` (1/cm), albedo `omega`, phase `phase`, index 1.
pub fn layer(sigma: f64, omega: f64, phase: PhaseFunction) -> Layer {
    Layer::new("", sigma, omega, phase, 1.0).expect("valid test layer")
}

/// A uniform isotropic conservative sphere of radius 1 cm and optical radius `tau`, centred
/// source.
pub fn uniform_sphere(tau: f64) -> Medium {
    Medium::sphere(
        vec![(1.0, layer(tau, 1.0, PhaseFunction::Isotropic))],
        Source::centre(),
    )
    .expect("valid sphere")
}

/// Runs `photons` photons with `seed` with the direct walker.
pub fn run_photons(medium: &Medium, photons: u64, seed: u64) -> RunResult {
    run_method(medium, photons, seed, Method::Direct)
}

/// Runs `photons` photons with `seed` and `method` (default acceleration settings).
pub fn run_method(medium: &Medium, photons: u64, seed: u64, method: Method) -> RunResult {
    run(
        medium,
        &RunConfig {
            photons,
            seed,
            method,
            ..RunConfig::default()
        },
    )
}

/// Asserts |measured − expected| ≤ sigmas · stderr + allowance, with a readable message.
pub fn assert_within(
    what: &str,
    measured: f64,
    expected: f64,
    stderr: f64,
    sigmas: f64,
    allowance: f64,
) {
    let tolerance = sigmas * stderr + allowance;
    assert!(
        (measured - expected).abs() <= tolerance,
        "{what}: measured {measured}, expected {expected}, |diff| {} > {sigmas}σ ({stderr}) + {allowance}",
        (measured - expected).abs()
    );
}

/// Binomial standard error of a fraction p over n trials.
pub fn binomial_stderr(p: f64, n: u64) -> f64 {
    (p * (1.0 - p) / n as f64).sqrt()
}
