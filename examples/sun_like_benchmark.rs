//! Benchmark of the accelerated walker on a Sun-like star: the demo model Veyra (n = 3
//! polytrope, τ ≈ 2.3 × 10¹³), 10⁴ photons with the full escape-time distribution, on all
//! cores (set RAYON_NUM_THREADS to choose), against diffusion theory on the same shells:
//! the mean exit time (`sojourn::diffusion::estimate`) and the escape-time quantiles of the
//! time-dependent radial diffusion equation (Crank–Nicolson, `tests/support`). The
//! wall-clock time includes building the passage tables.
//!
//! The results go to stdout (the README shows them; they do not depend on the thread count),
//! the wall-clock time and the thread count to stderr.
//!
//! `cargo run --release --example sun_like_benchmark [-- PHOTONS [GAMMA [EPSILON]]]`

#[allow(dead_code)]
#[path = "../tests/support/radial_diffusion.rs"]
mod radial_diffusion;

use std::time::Instant;

use sojourn::diffusion::estimate;
use sojourn::medium::model_file::load_model;
use sojourn::simulation::{RunConfig, run};
use sojourn::transport::Acceleration;
use sojourn::units::JULIAN_YEAR_S;

fn main() {
    let mut args = std::env::args().skip(1);
    let photons: u64 = args.next().and_then(|a| a.parse().ok()).unwrap_or(10_000);
    let mut acceleration = Acceleration::default();
    if let Some(gamma) = args.next().and_then(|a| a.parse().ok()) {
        acceleration = acceleration
            .with_gamma(gamma)
            .expect("GAMMA: a positive number");
    }
    if let Some(epsilon) = args.next().and_then(|a| a.parse().ok()) {
        acceleration = acceleration
            .with_epsilon(epsilon)
            .expect("EPSILON: a positive number");
    }
    let medium = load_model(std::path::Path::new("models/veyra-n3-sun-like.json"))
        .expect("the demo model loads");
    let config = RunConfig {
        photons,
        seed: 1,
        acceleration,
        ..RunConfig::default()
    };
    let started = Instant::now();
    let result = run(&medium, &config);
    let seconds = started.elapsed().as_secs_f64();
    let reference = estimate(&medium);
    let plan = sojourn::simulation::plan(&medium, &config);
    let escapes = result.tally.escaped();
    let mean = escapes.time_s().mean().expect("photons escaped");
    let sigma = escapes.time_s().std_error().expect("photons escaped");
    let walk = result.tally.walk();
    eprintln!(
        "wall-clock {seconds:.2} s on {} threads",
        rayon::current_num_threads()
    );
    println!(
        "Veyra (n = 3, τ = {:.3e}), {photons} photons, walker {}",
        reference.optical_depth,
        plan.method.name()
    );
    println!(
        "jumps per photon      {:.0}",
        walk.jumps.value() / photons as f64
    );
    println!(
        "flights per photon    {:.0}",
        walk.direct_steps.value() / photons as f64
    );
    println!(
        "mean escape time      {:.4e} yr ± {:.2e}",
        mean / JULIAN_YEAR_S,
        sigma / JULIAN_YEAR_S
    );
    println!(
        "diffusion mean time   {:.4e} yr",
        reference.mean_time_s / JULIAN_YEAR_S
    );
    println!(
        "ratio                 {:.4} ± {:.4}",
        mean / reference.mean_time_s,
        sigma / reference.mean_time_s
    );
    // Quantiles with their sampling error √(p(1−p)/n)/f(q), f from the diffusion CDF.
    let probabilities = [0.04, 0.05, 0.06, 0.49, 0.5, 0.51, 0.94, 0.95, 0.96];
    let diffusion = radial_diffusion::centre_escape_quantiles(
        &medium,
        &probabilities,
        1e4 * JULIAN_YEAR_S,
        2e6 * JULIAN_YEAR_S,
        600,
    );
    for k in [1, 4, 7] {
        let p = probabilities[k];
        let q = escapes
            .time_histogram()
            .quantile(p)
            .expect("photons escaped");
        let spread = (diffusion[k + 1] - diffusion[k - 1]) / 0.02;
        let error = (p * (1.0 - p) / escapes.count() as f64).sqrt() * spread;
        println!(
            "quantile {:>3.0} %        {:.4e} yr ± {:.1e}   diffusion {:.4e} yr   ratio {:.4}",
            100.0 * p,
            q / JULIAN_YEAR_S,
            error / JULIAN_YEAR_S,
            diffusion[k] / JULIAN_YEAR_S,
            q / diffusion[k]
        );
    }
}
