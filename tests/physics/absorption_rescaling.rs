//! Absorption rescaling (one walk, reweighted to many absorptions) against separately
//! walked analog points. Each point: fractions within 4σ (the rescaled standard error and
//! the analog binomial one at the pooled estimate, in quadrature), mean escape times within
//! 4σ where both sides have at least 30 (effective) leaving photons. Fixed seeds.

use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::sweep::rescale::{RescaleError, run_rescaled};
use sojourn::tally::{PathStats, Tally};
use sojourn::transport::PhaseFunction;

use crate::support::{assert_within, layer};

const SIGMAS: f64 = 4.0;

fn fraction_agrees(what: &str, rescaled: &Tally, r: &PathStats, analog: &Tally, a: &PathStats) {
    let (r, a) = (rescaled.fraction(r).unwrap(), analog.fraction(a).unwrap());
    let pooled = 0.5 * (r.value + a.value);
    let binomial = (pooled * (1.0 - pooled) / analog.launched() as f64).sqrt();
    assert_within(
        what,
        r.value,
        a.value,
        r.stderr.hypot(binomial),
        SIGMAS,
        0.0,
    );
}

fn mean_time_agrees(what: &str, r: &PathStats, a: &PathStats) {
    if r.effective_count() < 30.0 || a.effective_count() < 30.0 {
        return;
    }
    let (r, a) = (r.time_s(), a.time_s());
    assert_within(
        what,
        r.mean().unwrap(),
        a.mean().unwrap(),
        r.std_error().unwrap().hypot(a.std_error().unwrap()),
        SIGMAS,
        0.0,
    );
}

fn analog(medium: &Medium, photons: u64, point: usize) -> Tally {
    run(
        medium,
        &RunConfig {
            photons,
            seed: 4242,
            stream: 1000 + point as u64,
            method: Method::Direct,
            ..RunConfig::default()
        },
    )
    .tally
}

#[test]
fn albedo_sweep_of_a_sphere_agrees_with_walked_points() {
    // τ = 20, centred source, 20 albedos from 0.5 to 1.
    let albedos: Vec<f64> = (0..20).map(|k| 0.5 + 0.5 * k as f64 / 19.0).collect();
    let media: Vec<Medium> = albedos
        .iter()
        .map(|&omega| {
            Medium::sphere(
                vec![(1.0, layer(20.0, omega, PhaseFunction::Isotropic))],
                Source::centre(),
            )
            .unwrap()
        })
        .collect();
    let photons = 3_000;
    let config = RunConfig {
        photons,
        seed: 77,
        ..RunConfig::default()
    };
    let rescaled = run_rescaled(&media, &config).unwrap();
    assert_eq!(rescaled.walk_point, 19);
    // The weights collapse far below ω = 1: those points are walked on their own.
    assert!(
        rescaled.walked_alone.contains(&0),
        "{:?}",
        rescaled.walked_alone
    );
    assert!(rescaled.points[18].reweighted);
    for (point, medium) in media.iter().enumerate() {
        let own = analog(medium, photons, point);
        let r = &rescaled.points[point].tally;
        let what = format!("ω = {:.4}", albedos[point]);
        fraction_agrees(
            &format!("{what}: escaped"),
            r,
            r.escaped(),
            &own,
            own.escaped(),
        );
        mean_time_agrees(&format!("{what}: mean time"), r.escaped(), own.escaped());
    }
}

#[test]
fn absorption_coefficient_sweep_of_a_slab_agrees_with_walked_points() {
    // 1 cm, μs = 10 /cm, Henyey–Greenstein g = 0.7, matched index, normal beam; 20 values
    // of μa from 0 to 1.9 /cm.
    let mu_s = 10.0;
    let media: Vec<Medium> = (0..20)
        .map(|k| {
            let mu_a = 0.1 * k as f64;
            let extinction = mu_s + mu_a;
            let phase = PhaseFunction::henyey_greenstein(0.7).unwrap();
            let slab = Layer::new("", extinction, mu_s / extinction, phase, 1.0).unwrap();
            Medium::slab(vec![(1.0, slab)], 1.0, Source::normal_beam()).unwrap()
        })
        .collect();
    let photons = 4_000;
    let config = RunConfig {
        photons,
        seed: 78,
        ..RunConfig::default()
    };
    let rescaled = run_rescaled(&media, &config).unwrap();
    assert_eq!(rescaled.walk_point, 0);
    for (point, medium) in media.iter().enumerate() {
        let own = analog(medium, photons, point);
        let r = &rescaled.points[point].tally;
        let what = format!("μa = {:.1} /cm", 0.1 * point as f64);
        fraction_agrees(
            &format!("{what}: R"),
            r,
            r.reflected(),
            &own,
            own.reflected(),
        );
        fraction_agrees(
            &format!("{what}: T"),
            r,
            r.transmitted(),
            &own,
            own.transmitted(),
        );
        fraction_agrees(&format!("{what}: A"), r, r.absorbed(), &own, own.absorbed());
        mean_time_agrees(&format!("{what}: R time"), r.reflected(), own.reflected());
        mean_time_agrees(
            &format!("{what}: T time"),
            r.transmitted(),
            own.transmitted(),
        );
    }
}

#[test]
fn settings_that_change_more_than_absorption_are_refused_before_any_walk() {
    let sphere = |sigma: f64, omega: f64| {
        Medium::sphere(
            vec![(1.0, layer(sigma, omega, PhaseFunction::Isotropic))],
            Source::centre(),
        )
        .unwrap()
    };
    let config = RunConfig {
        photons: 1_000_000_000,
        ..RunConfig::default()
    };
    // Extinction and scattering coefficient both change: not an absorption change.
    let error = run_rescaled(&[sphere(10.0, 0.9), sphere(20.0, 0.9)], &config).unwrap_err();
    assert!(
        matches!(error, RescaleError::NotAbsorptionOnly { point: 1, .. }),
        "{error}"
    );
    assert!(error.to_string().contains("cell 0 extinction"), "{error}");
    let error = run_rescaled(&[], &config).unwrap_err();
    assert_eq!(error, RescaleError::Empty);
}
