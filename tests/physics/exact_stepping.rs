//! Exact optical-depth stepping: the fraction of photons that cross a layered medium without
//! interacting is e^(−Σ τ_i) along the ray (Beer–Lambert; docs/references.md, Transport 1).

use sojourn::medium::{Medium, Source};
use sojourn::transport::PhaseFunction;

use crate::support::{assert_within, binomial_stderr, layer, run_photons};

#[test]
fn beer_lambert_absorbing_slab_normal_beam() {
    // Purely absorbing slab, τ = 2, normal beam: T = e^−2 (Beer–Lambert, docs/references.md,
    // Transport 1).
    let medium = Medium::slab(
        vec![(0.5, layer(4.0, 0.0, PhaseFunction::Isotropic))],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let photons = 200_000;
    let tally = run_photons(&medium, photons, 11).tally;
    let transmitted = tally.fraction(tally.transmitted()).unwrap().value;
    let expected = (-2.0f64).exp();
    // 4σ binomial tolerance.
    assert_within(
        "T",
        transmitted,
        expected,
        binomial_stderr(expected, photons),
        4.0,
        0.0,
    );
    assert_eq!(tally.reflected().count(), 0);
    assert_eq!(
        tally.transmitted().count() + tally.absorbed().count(),
        photons
    );
}

#[test]
fn oblique_beam_through_three_absorbing_layers() {
    // Three layers of τ = 0.3, 0.05 and 0.4 at 40° incidence: T = e^(−Σ τ_i / cos 40°)
    // (Beer–Lambert along the slant path, docs/references.md, Transport 1).
    let medium = Medium::slab(
        vec![
            (0.1, layer(3.0, 0.0, PhaseFunction::Isotropic)),
            (1.0, layer(0.05, 0.0, PhaseFunction::Isotropic)),
            (0.02, layer(20.0, 0.0, PhaseFunction::Isotropic)),
        ],
        1.0,
        Source::Beam {
            polar_angle_deg: 40.0,
            profile: sojourn::medium::BeamProfile::Narrow,
        },
    )
    .unwrap();
    let photons = 200_000;
    let tally = run_photons(&medium, photons, 12).tally;
    let transmitted = tally.fraction(tally.transmitted()).unwrap().value;
    let expected = (-(0.3 + 0.05 + 0.4) / 40f64.to_radians().cos()).exp();
    assert_within(
        "T",
        transmitted,
        expected,
        binomial_stderr(expected, photons),
        4.0,
        0.0,
    );
}

#[test]
fn three_shell_sphere_unscattered_escape() {
    // Extinctions differing by 250×: core r < 0.2 σ = 1 (τ 0.2), shell 0.2–0.21 σ = 50
    // (τ 0.5), shell 0.21–3 σ = 0.2 (τ 0.558). From the centre every ray crosses all three radially: the unscattered
    // escape fraction is e^(−Σ τ_i) (docs/references.md, Transport 1).
    let medium = Medium::sphere(
        vec![
            (0.2, layer(1.0, 1.0, PhaseFunction::Isotropic)),
            (0.21, layer(50.0, 1.0, PhaseFunction::Isotropic)),
            (3.0, layer(0.2, 1.0, PhaseFunction::Isotropic)),
        ],
        Source::centre(),
    )
    .unwrap();
    let photons = 200_000;
    let tally = run_photons(&medium, photons, 13).tally;
    let unscattered = tally.escaped().scattering_histogram().zero_count() as f64 / photons as f64;
    let expected = (-(0.2 + 0.5 + 0.2 * 2.79f64)).exp();
    assert_within(
        "P0",
        unscattered,
        expected,
        binomial_stderr(expected, photons),
        4.0,
        0.0,
    );
    assert_eq!(tally.escaped().count(), photons);
}

#[test]
fn off_centre_source_unscattered_escape_along_chords() {
    // Source at r0 = 0.5 in a two-shell sphere (core r < 0.8 σ = 2, shell 0.8–1.0 σ = 10).
    // A ray leaving at cosine μ to the outward radial crosses the core for
    // s_core(μ) = −r0 μ + sqrt(r0² μ² − r0² + a²) and then the shell up to
    // s_out(μ) = −r0 μ + sqrt(r0² μ² − r0² + R²). The unscattered escape fraction is
    // ½ ∫ e^(−σ1 s_core − σ2 (s_out − s_core)) dμ (Beer–Lambert along each chord,
    // docs/references.md, Transport 1), integrated here with a fine midpoint rule.
    let (r0, a, r, s1, s2) = (0.5f64, 0.8f64, 1.0f64, 2.0f64, 10.0f64);
    let medium = Medium::sphere(
        vec![
            (a, layer(s1, 1.0, PhaseFunction::Isotropic)),
            (r, layer(s2, 1.0, PhaseFunction::Isotropic)),
        ],
        Source::SpherePoint { radius_cm: r0 },
    )
    .unwrap();
    let n = 200_000;
    let expected: f64 = (0..n)
        .map(|k| {
            let mu = -1.0 + 2.0 * (k as f64 + 0.5) / n as f64;
            let chord =
                |radius: f64| -r0 * mu + (r0 * r0 * mu * mu - r0 * r0 + radius * radius).sqrt();
            let core = chord(a);
            let total = chord(r);
            (-(s1 * core + s2 * (total - core))).exp() / n as f64
        })
        .sum();
    let photons = 200_000;
    let tally = run_photons(&medium, photons, 14).tally;
    let unscattered = tally.escaped().scattering_histogram().zero_count() as f64 / photons as f64;
    assert_within(
        "P0",
        unscattered,
        expected,
        binomial_stderr(expected, photons),
        4.0,
        0.0,
    );
}
