//! Wall time of `fit` on the round-trip case of the acceptance tests: a slab 2 mm thick,
//! μa = 0.1 /mm, μs′ = 1 /mm, g = 0.8, n = 1.4 in air, normal beam. A forward run of 10⁶
//! photons (seed 2) gives the "measured" R and T with their standard errors; the fit runs
//! 10⁵ photons per evaluation (seed 1) and prints what it found and how long it took.
//!
//! ```sh
//! cargo run --release --example fit_speed            # all cores
//! cargo run --release --example fit_speed -- 2       # two threads
//! ```

use std::time::Instant;

use sojourn::fit::{FitOptions, Measured, Measurement, fit};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{RunConfig, run};
use sojourn::transport::PhaseFunction;

fn main() {
    let threads: Option<usize> = std::env::args().nth(1).and_then(|t| t.parse().ok());
    let mut pool = rayon::ThreadPoolBuilder::new();
    if let Some(threads) = threads {
        pool = pool.num_threads(threads);
    }
    let pool = pool.build().expect("worker threads");
    // Per cm: μa = 1, μs′ = 10, μs = 50 (g = 0.8), 0.2 cm thick.
    let (mua, musp, g) = (1.0, 10.0, 0.8);
    let mus = musp / (1.0 - g);
    let layer = Layer::new(
        "sample",
        mua + mus,
        mus / (mua + mus),
        PhaseFunction::henyey_greenstein(g).expect("g"),
        1.4,
    )
    .expect("layer");
    let medium = Medium::slab(vec![(0.2, layer)], 1.0, Source::normal_beam()).expect("slab");
    let forward = RunConfig {
        photons: 1_000_000,
        seed: 2,
        ..RunConfig::default()
    };
    let tally = pool.install(|| run(&medium, &forward)).tally;
    let r = tally.fraction(tally.reflected()).unwrap();
    let s = tally.fraction(tally.specular()).unwrap();
    let t = tally.fraction(tally.transmitted()).unwrap();
    let n = tally.launched() as f64;
    let total_r = r.value + s.value;
    let measurement = Measurement {
        reflectance: Measured::new(total_r, (total_r * (1.0 - total_r) / n).sqrt()),
        transmittance: Measured::new(t.value, t.stderr),
        collimated_transmittance: None,
        specular_included: true,
    };
    let options = FitOptions {
        photons: 100_000,
        ..FitOptions::default()
    };
    let started = Instant::now();
    let result = pool
        .install(|| fit(&medium, &measurement, &options))
        .expect("fit");
    let seconds = started.elapsed().as_secs_f64();
    println!(
        "measured R = {total_r:.5}, T = {:.5} (10^6 photons, seed 2)",
        t.value
    );
    println!(
        "fit: μa = {:.5} ± {:.5} /cm (true {mua}), μs′ = {:.4} ± {:.4} /cm (true {musp}), \
         correlation {:.2}",
        result.absorption_per_cm,
        result.stderr.absorption_per_cm,
        result.reduced_scattering_per_cm,
        result.stderr.reduced_scattering_per_cm,
        result.stderr.correlation
    );
    println!(
        "start {:?} μa = {:.4}, μs′ = {:.3}; {} iterations, {} evaluations of {} photons, \
         converged {} ({})",
        result.start.method,
        result.start.absorption_per_cm,
        result.start.reduced_scattering_per_cm,
        result.iterations,
        result.evaluations,
        result.photons_per_evaluation,
        result.converged,
        result.reason
    );
    println!(
        "wall time {seconds:.2} s on {} thread(s)",
        pool.current_num_threads()
    );
}
