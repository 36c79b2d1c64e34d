//! The evidence behind the verdict's tolerances (`sojourn::analysis::verdict`): the Monte
//! Carlo against the diffusion solver, through the analysis every run gets, on media from
//! the edge of the diffusion regime to deep inside it: uniform spheres of optical radius 5,
//! 10 and 20, a dense core under a thin envelope (like the demo star *Ember*), a
//! conservative slab 10 mean free paths thick with a plane source in the middle, and the
//! two media where diffusion fails (a slab one mean free path thick lit by a beam, a
//! sphere of albedo 0.3).
//!
//! Run with `cargo run --release --example verdict_thresholds [-- PHOTONS]` (default
//! 20 000, direct walk, seed 3).

use sojourn::analysis::RunAnalysis;
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::transport::PhaseFunction;

fn layer(sigma: f64, albedo: f64) -> Layer {
    Layer::new("", sigma, albedo, PhaseFunction::Isotropic, 1.0).expect("valid layer")
}

fn sphere(shells: Vec<(f64, Layer)>) -> Medium {
    Medium::sphere(shells, Source::centre()).expect("valid sphere")
}

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .map_or(20_000, |s| s.parse().expect("PHOTONS is a whole number"));
    let cases = vec![
        ("sphere τ = 5", sphere(vec![(1.0, layer(5.0, 1.0))])),
        ("sphere τ = 10", sphere(vec![(1.0, layer(10.0, 1.0))])),
        ("sphere τ = 20", sphere(vec![(1.0, layer(20.0, 1.0))])),
        (
            "core τ 90 under envelope τ 2.1",
            sphere(vec![(0.3, layer(300.0, 1.0)), (1.0, layer(3.0, 1.0))]),
        ),
        (
            "slab τ = 10, plane source",
            Medium::slab(
                vec![(1.0, layer(10.0, 1.0))],
                1.0,
                Source::SlabPlane { depth_cm: 0.5 },
            )
            .expect("valid slab"),
        ),
        (
            "slab τ = 1, beam",
            Medium::slab(vec![(1.0, layer(1.0, 1.0))], 1.0, Source::normal_beam())
                .expect("valid slab"),
        ),
        (
            "sphere τ = 3, albedo 0.3",
            sphere(vec![(1.0, layer(3.0, 0.3))]),
        ),
    ];
    println!("{photons} photons per medium, direct walk, seed 3");
    for (name, medium) in cases {
        let config = RunConfig {
            photons,
            seed: 3,
            method: Method::Direct,
            ..RunConfig::default()
        };
        let tally = run(&medium, &config).tally;
        let analysis = RunAnalysis::new(&medium, &config, &tally);
        let c = &analysis.comparison;
        let show = |v: Option<f64>| v.map_or_else(|| "-".to_string(), |v| format!("{v:.4}"));
        println!(
            "{name}: MC/solver mean {} ± {}, KS D {} (p {})",
            show(c.escape_time_ratio),
            show(c.escape_time_ratio_stderr),
            show(c.ks_distance),
            show(c.ks_p_value)
        );
        println!("  verdict: {}", c.verdict.reason);
    }
}
