//! Benchmark of the accelerated walker on a Sun-like star: the demo model Veyra (n = 3
//! polytrope, τ ≈ 2.3 × 10¹³), 10⁴ photons with the full escape-time distribution, on all
//! cores, against the diffusion mean exit time of the same profile.
//!
//! The results go to stdout (the README shows them; they do not depend on the thread count),
//! the wall-clock time and the thread count to stderr.
//!
//! `cargo run --release --example sun_like_benchmark [-- PHOTONS]`

use std::time::Instant;

use sojourn::diffusion::estimate;
use sojourn::medium::model_file::load_model;
use sojourn::simulation::{RunConfig, run};
use sojourn::units::JULIAN_YEAR_S;

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(10_000);
    let medium = load_model(std::path::Path::new("models/veyra-n3-sun-like.json"))
        .expect("the demo model loads");
    let reference = estimate(&medium);
    let started = Instant::now();
    let result = run(
        &medium,
        &RunConfig {
            photons,
            seed: 1,
            ..RunConfig::default()
        },
    );
    let seconds = started.elapsed().as_secs_f64();
    let escapes = result.tally.escaped();
    let mean = escapes.time_s().mean().expect("photons escaped");
    let sigma = escapes.time_s().std_error().expect("photons escaped");
    let walk = result.tally.walk();
    eprintln!(
        "wall-clock {seconds:.2} s on {} threads",
        rayon::current_num_threads()
    );
    println!(
        "Veyra (n = 3, τ = {:.3e}), {photons} photons",
        reference.optical_depth
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
    for p in [0.05, 0.5, 0.95] {
        let q = escapes
            .time_histogram()
            .quantile(p)
            .expect("photons escaped");
        println!(
            "quantile {:>3.0} %        {:.4e} yr",
            100.0 * p,
            q / JULIAN_YEAR_S
        );
    }
}
