//! Quantiles that are true: inside the observed range (so never faster than light), equal
//! to the value for one photon, whole numbers for scattering counts of direct walks, at any
//! scale, and within 2⁻¹⁰ (0.098 %) of the exact quantiles of the sorted sample.

use rand::{RngExt, SeedableRng};
use sojourn::medium::{Medium, Source};
use sojourn::report::RunReport;
use sojourn::simulation::{Method, RunConfig, RunResult, run};
use sojourn::tally::{Outcome, RELATIVE_BIN_WIDTH, Tally};
use sojourn::transport::rng::photon_rng;
use sojourn::transport::{DirectWalker, PhaseFunction, WalkLimits};
use sojourn::units::SPEED_OF_LIGHT_CM_S;

use crate::support::layer;

fn direct(photons: u64, seed: u64) -> RunConfig {
    RunConfig {
        photons,
        seed,
        method: Method::Direct,
        ..RunConfig::default()
    }
}

fn sphere(radius_cm: f64, sigma_per_cm: f64) -> Medium {
    Medium::sphere(
        vec![(
            radius_cm,
            layer(sigma_per_cm, 1.0, PhaseFunction::Isotropic),
        )],
        Source::centre(),
    )
    .unwrap()
}

fn slab(thickness_cm: f64, sigma_per_cm: f64) -> Medium {
    Medium::slab(
        vec![(
            thickness_cm,
            layer(sigma_per_cm, 1.0, PhaseFunction::Isotropic),
        )],
        1.0,
        Source::normal_beam(),
    )
    .unwrap()
}

fn report(medium: &Medium, config: &RunConfig) -> (RunReport, RunResult) {
    let result = run(medium, config);
    (RunReport::new(medium, "test", config, &result), result)
}

/// Every quantile of a time summary, lowest first.
fn time_quantiles(summary: &serde_json::Value) -> Vec<f64> {
    ["p05_s", "p25_s", "median_s", "p75_s", "p95_s"]
        .iter()
        .map(|key| summary[key].as_f64().unwrap_or_else(|| panic!("{key}")))
        .collect()
}

#[test]
fn no_quantile_of_a_sphere_is_faster_than_light() {
    // R = 2 cm, σ = 0.5/cm: τ = 1, so e⁻¹ ≈ 37 % of the photons fly out unscattered at the
    // straight-line time R/c, the earliest possible.
    let radius = 2.0;
    let (report, _) = report(&sphere(radius, 0.5), &direct(20_000, 3));
    let straight = radius / SPEED_OF_LIGHT_CM_S;
    let summary = serde_json::to_value(&report.analysis.escape_time).unwrap();
    let min = summary["min_s"].as_f64().unwrap();
    assert!(
        (min / straight - 1.0).abs() < 1e-12,
        "min {min} against R/c {straight}"
    );
    let quantiles = time_quantiles(&summary);
    for (k, q) in quantiles.iter().enumerate() {
        assert!(
            *q >= min && *q >= straight * (1.0 - 1e-15),
            "quantile {k}: {q}"
        );
        assert!(*q <= summary["max_s"].as_f64().unwrap());
    }
    assert!(quantiles.windows(2).all(|w| w[0] <= w[1]));
    // Below the unscattered fraction every quantile sits on the straight-line time (within
    // the bin that holds it).
    assert!((quantiles[0] / straight - 1.0) < RELATIVE_BIN_WIDTH);
    assert!((quantiles[1] / straight - 1.0) < RELATIVE_BIN_WIDTH);
}

#[test]
fn one_photon_is_every_quantile() {
    for medium in [sphere(2.0, 0.5), slab(1.0, 3.0)] {
        let (report, result) = report(&medium, &direct(1, 11));
        let escapes = result.tally.all_escapes();
        assert_eq!(escapes.count(), 1);
        let value = escapes.time_s().min().unwrap();
        let summary = serde_json::to_value(&report.analysis.escape_time).unwrap();
        for q in time_quantiles(&summary) {
            assert_eq!(q, value);
        }
        assert_eq!(summary["max_s"].as_f64(), Some(value));
        assert_eq!(summary["mean_s"].as_f64(), Some(value));
        let n = escapes.scatterings().min().unwrap();
        let counts = &report.analysis.scatterings;
        for q in [
            counts.p05,
            counts.p25,
            counts.median,
            counts.p75,
            counts.p95,
        ] {
            assert_eq!(q, Some(n));
        }
    }
}

#[test]
fn scattering_quantiles_of_direct_walks_are_whole_numbers() {
    let (report, result) = report(&sphere(1.0, 12.0), &direct(3_000, 8));
    assert!(result.tally.escaped().scattering_histogram().is_integral());
    let counts = &report.analysis.scatterings;
    for q in [
        counts.p05,
        counts.p25,
        counts.median,
        counts.p75,
        counts.p95,
    ] {
        let q = q.unwrap();
        assert_eq!(q.fract(), 0.0, "{q}");
    }
}

#[test]
fn tiny_and_huge_media_keep_their_scale() {
    // τ = 1 in every case: the earliest exit is the unscattered flight, L/c.
    for size in [1e-30, 1e26] {
        for (geometry, medium) in [
            ("slab", slab(size, 1.0 / size)),
            ("sphere", sphere(size, 1.0 / size)),
        ] {
            let (report, _) = report(&medium, &direct(2_000, 5));
            let straight = size / SPEED_OF_LIGHT_CM_S;
            let summary = if geometry == "slab" {
                serde_json::to_value(report.analysis.transmitted_time.as_ref().unwrap()).unwrap()
            } else {
                serde_json::to_value(&report.analysis.escape_time).unwrap()
            };
            let (min, max) = (
                summary["min_s"].as_f64().unwrap(),
                summary["max_s"].as_f64().unwrap(),
            );
            let what = format!("{geometry} of {size} cm");
            assert!(
                (min / straight - 1.0).abs() < 1e-9,
                "{what}: min {min} against {straight}"
            );
            for q in time_quantiles(&summary) {
                assert!(q >= min && q <= max, "{what}: {q} outside [{min}, {max}]");
                // τ = 1: a few flights; no clamp to a fixed histogram range.
                assert!(q < 100.0 * straight, "{what}: {q}");
            }
            assert!(max < 1e3 * straight, "{what}: max {max}");
        }
    }
}

/// The weighted type-1 sample quantile: the smallest x with Σ_{xᵢ ≤ x} wᵢ ≥ p Σw.
fn exact_quantile(sorted: &[(f64, f64)], p: f64) -> f64 {
    let total: f64 = sorted.iter().map(|s| s.1).sum();
    let mut cumulative = 0.0;
    for &(x, w) in sorted {
        cumulative += w;
        if w > 0.0 && cumulative >= p * total * (1.0 - 1e-12) {
            return x;
        }
    }
    sorted.last().unwrap().0
}

#[test]
fn quantiles_match_the_sorted_sample_within_the_bin_width() {
    // A slab walked photon by photon: the tally's quantiles against the exact quantiles of
    // the sorted transmission times, with unit weights and with arbitrary weights.
    let medium = Medium::slab(
        vec![(
            1.0,
            layer(4.0, 0.9, PhaseFunction::henyey_greenstein(0.6).unwrap()),
        )],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let walker = DirectWalker::new(&medium, WalkLimits::default());
    let mut analog = Tally::new();
    let mut weighted = Tally::new();
    let mut times: Vec<(f64, f64)> = Vec::new();
    let mut weights = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(77);
    for photon in 0..20_000 {
        let record = walker.walk(&mut photon_rng(41, 0, photon));
        analog.record(&record);
        let weight = weights.random::<f64>();
        weighted.record(&sojourn::tally::PhotonRecord { weight, ..record });
        if record.outcome == Outcome::Transmitted {
            times.push((record.time_s, weight));
        }
    }
    times.sort_by(|a, b| a.0.total_cmp(&b.0));
    let unit: Vec<(f64, f64)> = times.iter().map(|&(x, _)| (x, 1.0)).collect();
    for p in [0.0, 0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99, 1.0] {
        for (tally, sample) in [(&analog, &unit), (&weighted, &times)] {
            let estimate = tally.transmitted().time_histogram().quantile(p).unwrap();
            let exact = exact_quantile(sample, p);
            assert!(
                (estimate / exact - 1.0).abs() < RELATIVE_BIN_WIDTH,
                "p = {p}: {estimate} against {exact}"
            );
        }
    }
}
