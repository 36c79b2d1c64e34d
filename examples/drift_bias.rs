//! Bias of the accelerated walk in a smooth profile against the ε tolerance, with and
//! without the first-order drift correction. The reference is the diffusion mean exit time
//! of the same profile with the extrapolated boundary, exact to O(1/τ) at this depth.
//!
//! `cargo run --release --example drift_bias [-- PHOTONS]`

#[allow(dead_code)]
#[path = "../tests/support/profiles.rs"]
mod profiles;

use sojourn::diffusion::estimate;
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::transport::Acceleration;

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(4_000);
    let (central, falloff) = (3.0e4, 3.0);
    let medium = profiles::exponential_sphere(central, falloff, 1.0, 3000);
    let depth = profiles::exponential_sphere_depth(central, falloff, 1.0);
    let reference = estimate(&medium).mean_time_extrapolated_s;
    println!(
        "profile σ ∝ e^(−3r/R), τ = {depth:.0}, {photons} photons, reference = diffusion mean (extrapolated)"
    );
    println!(
        "| ε | drift correction | MC / diffusion | 1σ | jumps per photon | direct steps per photon |"
    );
    println!("|---|---|---|---|---|---|");
    for epsilon in [0.4, 0.2, 0.15, 0.1] {
        for drift_correction in [false, true] {
            let config = RunConfig {
                photons,
                seed: 3,
                method: Method::Accelerated,
                acceleration: Acceleration {
                    gamma: 10.0,
                    epsilon,
                    drift_correction,
                },
                ..RunConfig::default()
            };
            let result = run(&medium, &config);
            let escapes = result.tally.escaped();
            let mean = escapes.time_s.mean().unwrap();
            let sigma = escapes.time_s.std_error().unwrap();
            let walk = result.tally.walk();
            println!(
                "| {epsilon} | {} | {:.4} | {:.4} | {:.0} | {:.0} |",
                if drift_correction { "yes" } else { "no" },
                mean / reference,
                sigma / reference,
                walk.jumps.value() / photons as f64,
                walk.direct_steps.value() / photons as f64
            );
        }
    }
}
