//! Slab reflectance and transmittance against the H-function and published tables.

use sojourn::medium::{Medium, Source};
use sojourn::transport::PhaseFunction;

use crate::support::chandrasekhar::HFunction;
use crate::support::{assert_within, binomial_stderr, layer, run_photons};

/// Diffuse reflectance of a slab thick enough to be semi-infinite for albedo `omega`.
fn semi_infinite_reflectance(omega: f64, photons: u64, seed: u64) -> (f64, u64) {
    // τ = 40: the diffusion penetration depth is 1/sqrt(3(1−ω)) ≤ 1.83 mean free paths
    // for ω ≤ 0.9, so the transmission is below e^−20.
    let medium = Medium::slab(
        vec![(1.0, layer(40.0, omega, PhaseFunction::Isotropic))],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let tally = run_photons(&medium, photons, seed).tally;
    assert_eq!(tally.transmitted().count(), 0);
    (tally.fraction(tally.reflected()).unwrap().value, photons)
}

#[test]
fn semi_infinite_plane_albedo_matches_the_h_function() {
    // Plane albedo A(μ0) = 1 − H(μ0) sqrt(1 − ω), isotropic scattering, normal incidence
    // (Chandrasekhar 1950, Radiative Transfer, ch. V; REFERENCES item 2). H is solved here
    // from its integral equation, independently of the code under test.
    for (omega, seed) in [(0.9, 51), (0.5, 52)] {
        let expected = 1.0 - HFunction::new(omega).eval(1.0) * (1.0 - omega).sqrt();
        let (measured, photons) = semi_infinite_reflectance(omega, 200_000, seed);
        // 4σ binomial tolerance.
        assert_within(
            &format!("A(1), omega = {omega}"),
            measured,
            expected,
            binomial_stderr(expected, photons),
            4.0,
            0.0,
        );
    }
    // The solver itself against the published value (REFERENCES item 2: 0.41495).
    assert!((1.0 - HFunction::new(0.9).eval(1.0) * 0.1f64.sqrt() - 0.41495).abs() < 1e-5);
}

#[test]
fn van_de_hulst_slab_tau_2_g_075() {
    // van de Hulst 1980, Multiple Light Scattering, vol. 2 (memory; REFERENCES item 5):
    // τ = 2, ω = 0.9, HG g = 0.75, matched boundaries, normal incidence:
    // diffuse reflectance 0.09739, total transmittance 0.66096 (unscattered e^−2 included).
    // Tolerance: 4σ binomial plus 1e-4 for a possible error in the recalled last digits.
    let medium = Medium::slab(
        vec![(
            2.0,
            layer(1.0, 0.9, PhaseFunction::henyey_greenstein(0.75).unwrap()),
        )],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let photons = 400_000;
    let tally = run_photons(&medium, photons, 53).tally;
    let reflected = tally.fraction(tally.reflected()).unwrap().value;
    let transmitted = tally.fraction(tally.transmitted()).unwrap().value;
    assert_within(
        "R",
        reflected,
        0.09739,
        binomial_stderr(0.09739, photons),
        4.0,
        1e-4,
    );
    assert_within(
        "T",
        transmitted,
        0.66096,
        binomial_stderr(0.66096, photons),
        4.0,
        1e-4,
    );
    // Unscattered part of the transmission: e^−2 (Beer–Lambert, REFERENCES item 1).
    let unscattered =
        tally.transmitted().scattering_histogram().zero_count() as f64 / photons as f64;
    let ballistic = (-2.0f64).exp();
    assert_within(
        "T0",
        unscattered,
        ballistic,
        binomial_stderr(ballistic, photons),
        4.0,
        0.0,
    );
}
