//! The residence tally and partial path lengths against exact results, and the run's time
//! budget against the profile's (docs/references.md, Residence).

use std::path::Path;

use sojourn::analysis::{ProfileAnalysis, RunAnalysis};
use sojourn::medium::model_file::load_model;
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::Outcome;
use sojourn::transport::PhaseFunction;
use sojourn::units::SPEED_OF_LIGHT_CM_S;

fn config(photons: u64, seed: u64, method: Method) -> RunConfig {
    RunConfig {
        photons,
        seed,
        method,
        ..RunConfig::default()
    }
}

/// Half-time radius of one run of `photons` photons on `medium`, cm.
fn half_time_radius(medium: &Medium, config: &RunConfig) -> (f64, f64) {
    let tally = run(medium, config).tally;
    let analysis = RunAnalysis::new(medium, config, &tally);
    let budget = analysis.residence_budget.expect("a run keeps residence");
    let half = budget.half_time_cm.expect("photons escaped");
    (half.value, half.stderr)
}

#[test]
fn sun_like_profile_and_run_half_time_radii_agree() {
    // The profile's time budget (steady diffusion from the centre) and the run's Monte
    // Carlo residence on the same 2472 shells: 8 independent batches of 400 photons give
    // the half-time radius and its standard error from their spread; the profile's value
    // must lie within 4σ of their mean (docs/references.md, Residence 3), and so must each
    // batch's own error estimate be within a factor 3 of the spread.
    let medium = load_model(Path::new("models/veyra-n3-sun-like.json")).unwrap();
    let profile = ProfileAnalysis::new(&medium).unwrap();
    let expected = profile.time_budget.radius_50_percent_cm;
    let batches: Vec<(f64, f64)> = (0..8)
        .map(|stream| {
            let mut c = config(400, 11, Method::Auto);
            c.stream = stream;
            half_time_radius(&medium, &c)
        })
        .collect();
    let n = batches.len() as f64;
    let mean = batches.iter().map(|b| b.0).sum::<f64>() / n;
    let spread = (batches.iter().map(|b| (b.0 - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt();
    let stderr = spread / n.sqrt();
    let radius = medium.size_cm();
    assert!(
        (mean - expected).abs() < 4.0 * stderr,
        "Monte Carlo {:.4} R ± {:.4}, profile {:.4} R",
        mean / radius,
        stderr / radius,
        expected / radius
    );
    let reported = batches.iter().map(|b| b.1).sum::<f64>() / n;
    assert!(
        reported < 3.0 * spread && reported > spread / 3.0,
        "reported error {reported:e} cm against the batch spread {spread:e} cm"
    );
    // The profile's half-time radius is where the radiation spends half its time, not
    // where half of (1/c)∫ r/l dr accrues (issue: one budget, not two).
    assert!(expected < profile.time_budget.accrual_radius_50_percent_cm);
}

fn absorbing_slab(layers: Vec<(f64, f64, f64)>, source: Source) -> Medium {
    // (thickness cm, extinction /cm, refractive index); albedo 0 everywhere.
    let layers = layers
        .into_iter()
        .map(|(d, sigma, n)| {
            (
                d,
                Layer::new("", sigma, 0.0, PhaseFunction::Isotropic, n).unwrap(),
            )
        })
        .collect();
    Medium::slab(layers, 1.0, source).unwrap()
}

#[test]
fn transmitted_path_through_a_purely_absorbing_slab_is_the_thickness() {
    // Albedo 0, τ = 2, normal beam, matched index: a transmitted photon crossed straight
    // through, so its path is the thickness exactly, and T = e^−2 (Beer–Lambert;
    // docs/references.md, Residence 4). Absorbed photons travelled the exponential law
    // truncated at d: mean ℓ − d e^−τ/(1 − e^−τ), ℓ = d/τ.
    let d = 0.5;
    let medium = absorbing_slab(vec![(d, 4.0, 1.0)], Source::normal_beam());
    let c = config(20_000, 3, Method::Direct);
    let tally = run(&medium, &c).tally;
    let analysis = RunAnalysis::new(&medium, &c, &tally);
    let path = &analysis.path_by_layer[0];
    let transmitted = path.transmitted.unwrap();
    assert!(
        (transmitted.mean_cm - d).abs() < 1e-12 * d,
        "{transmitted:?}"
    );
    assert!(transmitted.stderr_cm < 1e-6 * d, "{transmitted:?}");
    assert!((transmitted.pathlength_factor.unwrap() - 1.0).abs() < 1e-12);
    assert!(path.escaped.is_none() && path.reflected.is_none());
    let t = tally.fraction(tally.transmitted()).unwrap();
    assert!((t.value - (-2.0f64).exp()).abs() < 4.0 * t.stderr, "{t:?}");
    let absorbed = path.absorbed.unwrap();
    let tau: f64 = 2.0;
    let expected = d / tau - d * (-tau).exp() / (1.0 - (-tau).exp());
    assert!(
        (absorbed.mean_cm - expected).abs() < 4.0 * absorbed.stderr_cm,
        "{absorbed:?} against {expected}"
    );
}

/// E_n(x) = ∫₀¹ μ^(n−2) e^(−x/μ) dμ by the midpoint rule (Chandrasekhar 1950, *Radiative
/// Transfer*, §I.11).
fn exponential_integral(n: i32, x: f64) -> f64 {
    let steps = 200_000;
    let h = 1.0 / steps as f64;
    (0..steps)
        .map(|k| {
            let mu = (k as f64 + 0.5) * h;
            mu.powi(n - 2) * (-x / mu).exp() * h
        })
        .sum()
}

#[test]
fn diffuse_light_through_an_absorbing_slab_travels_the_mean_oblique_path() {
    // Lambertian illumination (cosines 2μ dμ) of a purely absorbing slab: a photon entering
    // at μ is transmitted with probability e^(−τ/μ) after a path d/μ, so transmitted light
    // travelled d E₂(τ)/E₃(τ) on average (docs/references.md, Residence 4).
    let (d, tau) = (0.2, 0.5);
    let medium = absorbing_slab(vec![(d, tau / d, 1.0)], Source::Diffuse);
    let c = config(40_000, 5, Method::Direct);
    let tally = run(&medium, &c).tally;
    let path = tally.mean_path_in_layer(Outcome::Transmitted, 0).unwrap();
    let expected = d * exponential_integral(2, tau) / exponential_integral(3, tau);
    assert!(
        (path.value - expected).abs() < 4.0 * path.stderr,
        "{path:?} against {expected}"
    );
}

#[test]
fn partial_paths_add_up_to_the_time_of_each_outcome() {
    // Two scattering layers of different index: Σ_i path_i n_i / c equals the mean time of
    // each outcome, both from the same flights (exact up to rounding).
    let layer = |sigma, albedo, n| {
        Layer::new(
            "",
            sigma,
            albedo,
            PhaseFunction::henyey_greenstein(0.7).unwrap(),
            n,
        )
        .unwrap()
    };
    let medium = Medium::slab(
        vec![
            (0.1, layer(30.0, 0.95, 1.4)),
            (0.4, layer(15.0, 0.99, 1.33)),
        ],
        1.0,
        Source::normal_beam(),
    )
    .unwrap();
    let c = config(5_000, 7, Method::Direct);
    let tally = run(&medium, &c).tally;
    let n = [1.4, 1.33];
    for (outcome, stats) in [
        (Outcome::Reflected, tally.reflected()),
        (Outcome::Transmitted, tally.transmitted()),
        (Outcome::Absorbed, tally.absorbed()),
    ] {
        let time = stats.time_s().mean().unwrap();
        let from_paths: f64 = (0..2)
            .map(|i| {
                tally.mean_path_in_layer(outcome, i).unwrap().value * n[i] / SPEED_OF_LIGHT_CM_S
            })
            .sum();
        assert!(
            (from_paths / time - 1.0).abs() < 1e-9,
            "{outcome:?}: {from_paths:e} s from paths, {time:e} s"
        );
        let through = tally.mean_time_through_cell(outcome, 1).unwrap().value;
        assert!((through / time - 1.0).abs() < 1e-9, "{outcome:?}");
    }
}

#[test]
fn accelerated_residence_agrees_with_the_direct_walk() {
    // A sphere of τ = 60 in three shells: the radial passages book expected residence by
    // shell; the mean time per shell agrees with the direct walk's within 4σ (both
    // errors combined; docs/references.md, Residence 3).
    let shell = |sigma| Layer::new("", sigma, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
    let medium = Medium::sphere(
        vec![(0.3, shell(80.0)), (0.7, shell(60.0)), (1.0, shell(40.0))],
        Source::centre(),
    )
    .unwrap();
    let direct = run(&medium, &config(2_000, 13, Method::Direct)).tally;
    let accelerated = run(&medium, &config(2_000, 17, Method::Accelerated)).tally;
    assert!(accelerated.walk().jumps.value() > 0.0);
    for cell in 0..3 {
        let a = direct.mean_time_in_cell(Outcome::Escaped, cell).unwrap();
        let b = accelerated
            .mean_time_in_cell(Outcome::Escaped, cell)
            .unwrap();
        let sigma = (a.stderr.powi(2) + b.stderr.powi(2)).sqrt();
        assert!(
            (a.value - b.value).abs() < 4.0 * sigma,
            "shell {cell}: direct {a:?}, accelerated {b:?}"
        );
    }
}
