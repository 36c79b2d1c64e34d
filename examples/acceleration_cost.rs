//! Cost of the accelerated walk against optical depth: mean jumps and direct flights per
//! photon in a uniform conservative sphere, source at half the radius, for τ = 10³ … 10¹²,
//! with the Monte Carlo mean escape time against the diffusion mean exit time.
//!
//! The table goes to stdout (the README shows it), the seconds per row to stderr.
//!
//! `cargo run --release --example acceleration_cost [-- PHOTONS]`

use std::time::Instant;

use sojourn::diffusion::estimate;
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::transport::PhaseFunction;

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(10_000);
    eprintln!("uniform sphere, isotropic source at r0 = R/2, {photons} photons, default γ and ε");
    println!(
        "| τ | jumps per photon | direct flights per photon | MC / diffusion mean time | 1σ |"
    );
    println!("|---|---|---|---|---|");
    for exponent in 3..=12 {
        let tau = 10f64.powi(exponent);
        let layer = Layer::new("", tau, 1.0, PhaseFunction::Isotropic, 1.0).expect("valid");
        let medium = Medium::sphere(vec![(1.0, layer)], Source::SpherePoint { radius_cm: 0.5 })
            .expect("valid");
        let config = RunConfig {
            photons,
            seed: 10,
            method: Method::Accelerated,
            ..RunConfig::default()
        };
        let started = Instant::now();
        let result = run(&medium, &config);
        let seconds = started.elapsed().as_secs_f64();
        let reference = estimate(&medium).mean_time_extrapolated_s;
        let escapes = result.tally.escaped();
        let walk = result.tally.walk();
        eprintln!("τ = 1e{exponent}: {seconds:.3} s");
        println!(
            "| 1e{exponent} | {:.2} | {:.2} | {:.4} | {:.4} |",
            walk.jumps.value() / photons as f64,
            walk.direct_steps.value() / photons as f64,
            escapes.time_s().mean().unwrap() / reference,
            escapes.time_s().std_error().unwrap() / reference,
        );
    }
}
