//! Throughput benchmark: scatterings per second of the direct walker in a uniform,
//! conservative, isotropically scattering sphere of optical radius 100 with a centred
//! source, on 1 and 2 threads.
//!
//! Run with `cargo run --release --example throughput [-- PHOTONS]`.

use std::time::Instant;

use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::transport::PhaseFunction;

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(4_000);
    let layer =
        Layer::new("uniform", 100.0, 1.0, PhaseFunction::Isotropic, 1.0).expect("valid layer");
    let medium = Medium::sphere(vec![(1.0, layer)], Source::centre()).expect("valid sphere");
    println!("uniform sphere, tau = 100, centred isotropic source, {photons} photons per run");
    println!(
        "{:>8} {:>14} {:>12} {:>22}",
        "threads", "scatterings", "seconds", "scatterings/s"
    );
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("thread pool");
        let config = RunConfig {
            photons,
            seed: 2024,
            method: Method::Direct,
            ..RunConfig::default()
        };
        let started = Instant::now();
        let result = pool.install(|| run(&medium, &config));
        let seconds = started.elapsed().as_secs_f64();
        let scatterings = result.tally.escaped().scatterings().sum();
        println!(
            "{threads:>8} {scatterings:>14.4e} {seconds:>12.3} {:>22.4e}",
            scatterings / seconds
        );
    }
}
