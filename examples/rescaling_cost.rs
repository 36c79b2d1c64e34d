//! Cost of absorption rescaling: a 20-point study rescaled from one walk, against one
//! plain walk of the same photon count at the least absorbing point, and against walking
//! the 20 points one by one. Goal: the rescaled study costs at most 1.5× the one walk.
//!
//! Two studies: the albedo of a sphere of optical radius 20 (ω from 0.5 to 1), where the
//! weights collapse below ω ≈ 0.97 and those points are walked on their own (the count is
//! printed), the absorption coefficient of a 1 cm slab (μs = 10 /cm, g = 0.7, μa from 0
//! to 1.9 /cm), where every point is rescaled but each walk is short, and the same for a
//! 30 cm slab with weak absorption (μa from 0 to 0.0095 /cm, a tenth of the photons), where
//! walks are long.
//!
//! Run with `cargo run --release --example rescaling_cost [-- PHOTONS]`.

use std::time::Instant;

use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::sweep::rescale::run_rescaled;
use sojourn::transport::PhaseFunction;

fn sphere(albedo: f64) -> Medium {
    let layer = Layer::new("", 20.0, albedo, PhaseFunction::Isotropic, 1.0).expect("valid");
    Medium::sphere(vec![(1.0, layer)], Source::centre()).expect("valid")
}

fn slab(thickness_cm: f64, mu_a: f64) -> Medium {
    let mu_s = 10.0;
    let phase = PhaseFunction::henyey_greenstein(0.7).expect("valid g");
    let layer = Layer::new("", mu_s + mu_a, mu_s / (mu_s + mu_a), phase, 1.0).expect("valid");
    Medium::slab(vec![(thickness_cm, layer)], 1.0, Source::normal_beam()).expect("valid")
}

fn study(title: &str, media: &[Medium], photons: u64) {
    let config = RunConfig {
        photons,
        seed: 5,
        method: Method::Direct,
        ..RunConfig::default()
    };
    let started = Instant::now();
    let rescaled = run_rescaled(media, &config).expect("absorption-only study");
    let rescaled_s = started.elapsed().as_secs_f64();

    let started = Instant::now();
    run(&media[rescaled.walk_point], &config);
    let one_walk_s = started.elapsed().as_secs_f64();

    let started = Instant::now();
    for (point, medium) in media.iter().enumerate() {
        run(
            medium,
            &RunConfig {
                stream: point as u64,
                ..config.clone()
            },
        );
    }
    let separate_s = started.elapsed().as_secs_f64();

    println!(
        "{title}: {photons} photons per point, {} threads",
        rayon::current_num_threads()
    );
    println!("  one walk (least absorbing)   {one_walk_s:8.3} s");
    println!(
        "  rescaled 20-point study      {rescaled_s:8.3} s   {:.2}× one walk; {} of 20 points walked on their own",
        rescaled_s / one_walk_s,
        rescaled.walked_alone.len(),
    );
    println!(
        "  20 points walked one by one  {separate_s:8.3} s   {:.2}× one walk",
        separate_s / one_walk_s
    );
    println!("  point  escaped/transmitted (± 1σ)   Kish photons  reweighted");
    for (point, result) in rescaled.points.iter().enumerate() {
        let tally = &result.tally;
        let stats = if tally.escaped().count() > 0 {
            tally.escaped()
        } else {
            tally.transmitted()
        };
        let estimate = tally.fraction(stats).expect("photons");
        println!(
            "  {point:5}  {:.5} ± {:.5}             {:10.0}  {}",
            estimate.value, estimate.stderr, result.effective_photons, result.reweighted
        );
    }
}

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(20_000);
    let spheres: Vec<Medium> = (0..20)
        .map(|k| sphere(0.5 + 0.5 * k as f64 / 19.0))
        .collect();
    study("sphere τ = 20, albedo 0.5 … 1", &spheres, photons);
    let slabs: Vec<Medium> = (0..20).map(|k| slab(1.0, 0.1 * k as f64)).collect();
    study("slab 1 cm, μs = 10 /cm, μa 0 … 1.9 /cm", &slabs, photons);
    // Long walks, narrow absorption range: where one walk is worth many.
    let thick: Vec<Medium> = (0..20).map(|k| slab(30.0, 0.0005 * k as f64)).collect();
    study(
        "slab 30 cm, μs = 10 /cm, μa 0 … 0.0095 /cm",
        &thick,
        photons / 10,
    );
}
