//! Weighted absorption (implicit capture with Russian roulette) against analog absorption
//! and against the exact plane albedo of a semi-infinite medium (docs/references.md,
//! "Weighted photons"). Every comparison is a 4σ test with the two runs' standard errors
//! combined in quadrature; seeds are fixed.

use std::path::Path;

use sojourn::medium::model_file::load_model;
use sojourn::medium::{Medium, Source};
use sojourn::simulation::{Absorption, Method, RunConfig, run};
use sojourn::tally::{PathStats, Tally};
use sojourn::transport::PhaseFunction;

use crate::support::chandrasekhar::HFunction;
use crate::support::{assert_within, layer};

const SIGMAS: f64 = 4.0;

fn walk(medium: &Medium, photons: u64, seed: u64, method: Method, absorption: Absorption) -> Tally {
    run(
        medium,
        &RunConfig {
            photons,
            seed,
            method,
            absorption,
            ..RunConfig::default()
        },
    )
    .tally
}

/// Fractions of `stats` in both tallies agree within 4σ.
fn same_fraction(what: &str, analog: &Tally, a: &PathStats, weighted: &Tally, w: &PathStats) {
    let (a, w) = (analog.fraction(a).unwrap(), weighted.fraction(w).unwrap());
    assert_within(
        what,
        w.value,
        a.value,
        a.stderr.hypot(w.stderr),
        SIGMAS,
        0.0,
    );
}

/// Standard error of a median from the quantiles around it: √(p(1 − p)/n) / f(m), with the
/// density f(m) ≈ 0.1 / (q(0.55) − q(0.45)) and n Kish's effective count (the asymptotic
/// normal law of a sample quantile; common practice).
fn median_stderr(stats: &PathStats) -> f64 {
    let histogram = stats.time_histogram();
    let spread = histogram.quantile(0.55).unwrap() - histogram.quantile(0.45).unwrap();
    (0.25 / stats.effective_count()).sqrt() * spread / 0.1
}

/// Mean and median time of `a` and `w` agree within 4σ.
fn same_times(what: &str, a: &PathStats, w: &PathStats) {
    let (ma, mw) = (a.time_s(), w.time_s());
    assert_within(
        &format!("{what}: mean time"),
        mw.mean().unwrap(),
        ma.mean().unwrap(),
        ma.std_error().unwrap().hypot(mw.std_error().unwrap()),
        SIGMAS,
        0.0,
    );
    let median = |s: &PathStats| s.time_histogram().quantile(0.5).unwrap();
    assert_within(
        &format!("{what}: median time"),
        median(w),
        median(a),
        median_stderr(a).hypot(median_stderr(w)),
        SIGMAS,
        0.0,
    );
}

fn phantom() -> Medium {
    load_model(Path::new("models/tissue-phantom-two-layer.json")).unwrap()
}

#[test]
fn phantom_weighted_agrees_with_analog() {
    let medium = phantom();
    let analog = walk(&medium, 20_000, 71, Method::Direct, Absorption::Analog);
    let weighted = walk(&medium, 6_000, 72, Method::Direct, Absorption::Weighted);
    assert!(weighted.is_weighted() && !analog.is_weighted());
    same_fraction(
        "R",
        &analog,
        analog.reflected(),
        &weighted,
        weighted.reflected(),
    );
    same_fraction(
        "T",
        &analog,
        analog.transmitted(),
        &weighted,
        weighted.transmitted(),
    );
    same_fraction(
        "A",
        &analog,
        analog.absorbed(),
        &weighted,
        weighted.absorbed(),
    );
    same_times(
        "phantom, every escape",
        &analog.all_escapes(),
        &weighted.all_escapes(),
    );
    same_times(
        "phantom, transmitted",
        analog.transmitted(),
        weighted.transmitted(),
    );
}

#[test]
fn phantom_weighted_with_local_jumps_agrees_with_analog() {
    // The accelerated walker's local jumps apply the survival e^(−h) to the weight.
    let medium = phantom();
    let analog = walk(&medium, 20_000, 73, Method::Direct, Absorption::Analog);
    let weighted = walk(
        &medium,
        6_000,
        74,
        Method::Accelerated,
        Absorption::Weighted,
    );
    assert!(weighted.walk().jumps.value() > 0.0, "no jumps taken");
    same_fraction(
        "R",
        &analog,
        analog.reflected(),
        &weighted,
        weighted.reflected(),
    );
    same_fraction(
        "T",
        &analog,
        analog.transmitted(),
        &weighted,
        weighted.transmitted(),
    );
    same_times(
        "phantom (jumps), every escape",
        &analog.all_escapes(),
        &weighted.all_escapes(),
    );
}

#[test]
fn weighted_transmittance_of_the_phantom_is_far_less_noisy() {
    // Same photon count; the analog error is the binomial one at the weighted estimate
    // (the analog run's own error estimate rests on a few dozen photons). Asserted: at
    // least 2.5× (the transmitted weights spread over a decade, which bounds the gain).
    let medium = phantom();
    let photons = 6_000;
    let weighted = walk(&medium, photons, 75, Method::Direct, Absorption::Weighted);
    let t = weighted.fraction(weighted.transmitted()).unwrap();
    let analog_stderr = (t.value * (1.0 - t.value) / photons as f64).sqrt();
    let gain = analog_stderr / t.stderr;
    assert!(
        gain >= 2.5,
        "stderr of T only {gain:.2}× smaller than analog"
    );
}

#[test]
fn absorbing_sphere_weighted_agrees_with_analog() {
    // τ = 20, ω = 0.9, centred source: about 4 photons in 10⁴ escape. Each walker against
    // itself: the accelerated walker's radial passages already differ from the direct walk
    // in this strongly absorbing sphere when analog (escape ≈ 2.5e-4 against 3.9e-4; `auto`
    // runs direct here), so its weighted form is checked against its analog form.
    let medium = Medium::sphere(
        vec![(1.0, layer(20.0, 0.9, PhaseFunction::Isotropic))],
        Source::centre(),
    )
    .unwrap();
    for (method, seed) in [(Method::Direct, 81), (Method::Accelerated, 83)] {
        let analog = walk(&medium, 400_000, seed, method, Absorption::Analog);
        let weighted = walk(&medium, 40_000, seed + 1, method, Absorption::Weighted);
        let what = format!("sphere τ = 20, ω = 0.9, {}", method.name());
        same_fraction(
            &what,
            &analog,
            analog.escaped(),
            &weighted,
            weighted.escaped(),
        );
        same_fraction(
            &what,
            &analog,
            analog.absorbed(),
            &weighted,
            weighted.absorbed(),
        );
        same_times(&what, analog.escaped(), weighted.escaped());
    }
}

#[test]
fn semi_infinite_plane_albedo_weighted_and_analog() {
    // Isotropic scattering, ω = 0.5, normal beam, matched index; τ = 40 is semi-infinite
    // (penetration depth 1/√(3(1 − ω)) ≈ 0.8 mean free paths). Exact: A(1) = 1 − H(1)√(1 − ω)
    // (Chandrasekhar 1950, Radiative Transfer, ch. V), H solved in the test support code:
    // H(1) = 1.2512596, A(1) = 0.1152259 (the value 0.11523 quoted in the issue).
    let omega = 0.5;
    let exact = 1.0 - HFunction::new(omega).eval(1.0) * (1.0 - omega).sqrt();
    assert!((exact - 0.1152259).abs() < 1e-6, "{exact}");
    let medium = Medium::slab(
        vec![(1.0, layer(40.0, omega, PhaseFunction::Isotropic))],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let analog = walk(&medium, 100_000, 91, Method::Direct, Absorption::Analog);
    let weighted = walk(&medium, 100_000, 92, Method::Direct, Absorption::Weighted);
    for (name, tally) in [("analog", &analog), ("weighted", &weighted)] {
        let r = tally.fraction(tally.reflected()).unwrap();
        assert_within(
            &format!("{name} A(1)"),
            r.value,
            exact,
            r.stderr,
            SIGMAS,
            0.0,
        );
    }
    same_fraction(
        "R",
        &analog,
        analog.reflected(),
        &weighted,
        weighted.reflected(),
    );
    same_fraction(
        "A",
        &analog,
        analog.absorbed(),
        &weighted,
        weighted.absorbed(),
    );
    same_times(
        "half-space ω = 0.5",
        analog.reflected(),
        weighted.reflected(),
    );
}

#[test]
fn weighted_with_albedo_one_is_the_analog_run_bit_for_bit() {
    let medium = Medium::slab(
        vec![(
            1.0,
            layer(5.0, 1.0, PhaseFunction::henyey_greenstein(0.5).unwrap()),
        )],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let analog = walk(&medium, 3_000, 5, Method::Auto, Absorption::Analog);
    let weighted = walk(&medium, 3_000, 5, Method::Auto, Absorption::Weighted);
    assert!(!weighted.is_weighted());
    assert_eq!(analog, weighted);
}

#[test]
fn weighted_runs_merge_to_the_same_bits_for_any_split_and_thread_count() {
    let medium = phantom();
    let config = RunConfig {
        photons: 900,
        seed: 11,
        method: Method::Direct,
        absorption: Absorption::Weighted,
        resolved: Some(sojourn::analysis::resolved_layout(&medium, None, 50, 10)),
        ..RunConfig::default()
    };
    let whole = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .unwrap()
        .install(|| run(&medium, &config).tally);
    assert!(whole.is_weighted());
    let mut merged = Tally::with_resolved(config.resolved);
    for (first, photons) in [(0, 250), (250, 1), (251, 649)] {
        let part = rayon::ThreadPoolBuilder::new()
            .num_threads(2)
            .build()
            .unwrap()
            .install(|| {
                run(
                    &medium,
                    &RunConfig {
                        first_photon: first,
                        photons,
                        ..config.clone()
                    },
                )
                .tally
            });
        merged.merge(&part);
    }
    assert_eq!(merged, whole);
    // Through JSON (shards, checkpoints) and back, checked on the way in.
    let text = serde_json::to_value(&whole).unwrap();
    assert_eq!(Tally::from_json(text).unwrap(), whole);
    // Each photon scores exactly 1 over the outcomes (its weight out, the rest absorbed).
    let total: f64 = [
        whole.reflected(),
        whole.specular(),
        whole.transmitted(),
        whole.absorbed(),
        whole.censored(),
    ]
    .iter()
    .map(|s| s.weight())
    .sum();
    assert_eq!(total, 900.0);
}
