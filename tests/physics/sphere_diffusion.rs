//! Uniform isotropic spheres against diffusion theory (docs/references.md, Diffusion theory 1).

use sojourn::diffusion::{MILNE_EXTRAPOLATION_LENGTH, estimate, first_passage_ks_distance};
use sojourn::units::SPEED_OF_LIGHT_CM_S;

use crate::support::{assert_within, run_photons, uniform_sphere};

/// Mean scatterings from the centre of a uniform isotropic sphere vs (τ + q∞)²/2
/// (docs/references.md, Diffusion theory 1: diffusion with the extrapolated boundary, "follows
/// closely for τ ≳ 5", common practice). Tolerance: 4σ of the Monte Carlo mean plus 0.3 % for the
/// approximation itself (measured here at 0.06 % for τ = 10 with 4·10⁵ photons).
fn check_mean_scatterings(tau: f64, photons: u64, seed: u64) {
    let medium = uniform_sphere(tau);
    let tally = run_photons(&medium, photons, seed).tally;
    let stats = tally.escaped();
    let expected = (tau + MILNE_EXTRAPOLATION_LENGTH).powi(2) / 2.0;
    assert_within(
        &format!("mean scatterings, tau = {tau}"),
        stats.scatterings().mean().unwrap(),
        expected,
        stats.scatterings().std_error().unwrap(),
        4.0,
        0.003 * expected,
    );
    // Mean escape time: the same in units of l/c, R = 1 cm so l = 1/τ cm.
    let expected_time = expected / (tau * SPEED_OF_LIGHT_CM_S);
    assert_within(
        &format!("mean time, tau = {tau}"),
        stats.time_s().mean().unwrap(),
        expected_time,
        stats.time_s().std_error().unwrap(),
        4.0,
        0.003 * expected_time,
    );
    // The library's own diffusion estimate is the same closed form.
    let diffusion = estimate(&medium);
    assert!((diffusion.mean_scatterings_extrapolated / expected - 1.0).abs() < 1e-12);
}

#[test]
fn mean_scatterings_tau_10() {
    check_mean_scatterings(10.0, 100_000, 31);
}

#[test]
fn mean_scatterings_tau_40() {
    check_mean_scatterings(40.0, 30_000, 32);
}

#[test]
fn escape_time_distribution_approaches_the_first_passage_law() {
    // KS distance between Monte Carlo escape times and the exact first-passage CDF of
    // diffusion out of the extrapolated sphere (docs/references.md, Diffusion theory 1). Two
    // effects set it: sampling noise, of order 0.87/√N (the mean of the Kolmogorov distribution),
    // and the discreteness of the walk, which fades as the number of steps grows (∝ 1/τ: the first
    // mean free path and the boundary layer are a fraction 1/τ of the radius). With
    // N = 60 000 the noise is ≈ 0.0036, below the τ = 10 discreteness (≈ 0.007, measured).
    // Asserted: the distance shrinks from τ = 10 to τ = 40, and at τ = 40 it is below the
    // 1 % critical value of the Kolmogorov distribution, 1.63/√N = 0.0067 (asymptotic
    // Kolmogorov law, e.g. Press et al. 2007, Numerical Recipes 3rd ed., §14.3.3), i.e.
    // consistent with sampling noise alone.
    let photons = 60_000;
    let distance = |tau: f64, seed: u64| {
        let medium = uniform_sphere(tau);
        let tally = run_photons(&medium, photons, seed).tally;
        first_passage_ks_distance(&medium, tally.escaped()).expect("uniform sphere")
    };
    let at_10 = distance(10.0, 41);
    let at_40 = distance(40.0, 42);
    assert!(
        at_40 < at_10,
        "KS(τ=40) = {at_40} not below KS(τ=10) = {at_10}"
    );
    let critical = 1.63 / (photons as f64).sqrt();
    assert!(at_40 < critical, "KS(τ=40) = {at_40} ≥ {critical}");
}
