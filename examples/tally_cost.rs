//! Cost of the tally in the photon loop: nanoseconds per recorded photon (synthetic records,
//! one thread) and photons per second through a thin slab, where recording is a large part
//! of each photon's cost (τ = 0.1: most photons cross without scattering).
//!
//! Run with `cargo run --release --example tally_cost [-- RECORDS]`.

use std::time::Instant;

use rand::{RngExt, SeedableRng};
use rand_xoshiro::Xoshiro256PlusPlus;
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::{Outcome, PhotonRecord, Tally};
use sojourn::transport::PhaseFunction;

fn main() {
    let records: usize = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(2_000_000);
    let mut rng = Xoshiro256PlusPlus::seed_from_u64(7);
    // Times log-uniform over three decades around 1 ns, integer scattering counts.
    let sample: Vec<PhotonRecord> = (0..records)
        .map(|k| {
            let time_s = 1e-9 * 10f64.powf(3.0 * rng.random::<f64>() - 1.5);
            let scatterings = (time_s / 1e-11).floor();
            PhotonRecord {
                outcome: if k % 3 == 0 {
                    Outcome::Reflected
                } else {
                    Outcome::Transmitted
                },
                time_s,
                scatterings,
                jumps: 0.0,
                direct_steps: scatterings + 1.0,
                jump_time_s: 0.0,
                position_cm: [0.0; 3],
                direction: [0.0, 0.0, 1.0],
                layer: 0,
                weight: 1.0,
            }
        })
        .collect();
    let started = Instant::now();
    let mut tally = Tally::new();
    for record in &sample {
        tally.record(record);
    }
    let seconds = started.elapsed().as_secs_f64();
    println!(
        "record: {records} synthetic photons, {:.1} ns per photon",
        seconds / records as f64 * 1e9
    );
    let started = Instant::now();
    let mut merged = Tally::new();
    for _ in 0..100 {
        merged.merge(&tally);
    }
    println!(
        "merge: {:.1} µs per merge of a filled tally",
        started.elapsed().as_secs_f64() / 100.0 * 1e6
    );
    let json = serde_json::to_string(&tally).expect("serialises");
    println!("serialised tally: {} bytes", json.len());
    let weighted: Vec<PhotonRecord> = sample
        .iter()
        .map(|r| PhotonRecord {
            weight: 0.25 + 0.75 * rng.random::<f64>(),
            ..*r
        })
        .collect();
    let started = Instant::now();
    let mut tally = Tally::new();
    for record in &weighted {
        tally.record(record);
    }
    let seconds = started.elapsed().as_secs_f64();
    println!(
        "record, weighted photons: {:.1} ns per photon",
        seconds / records as f64 * 1e9
    );

    let layer = Layer::new("thin", 1.0, 1.0, PhaseFunction::Isotropic, 1.0).expect("layer");
    let medium = Medium::slab(vec![(0.1, layer)], 1.0, Source::normal_beam()).expect("slab");
    let photons = 2_000_000;
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("thread pool");
        let config = RunConfig {
            photons,
            seed: 11,
            method: Method::Direct,
            ..RunConfig::default()
        };
        let started = Instant::now();
        let result = pool.install(|| run(&medium, &config));
        let seconds = started.elapsed().as_secs_f64();
        assert_eq!(result.tally.launched(), photons);
        println!(
            "thin slab (tau = 0.1), {threads} thread(s): {:.3e} photons/s",
            photons as f64 / seconds
        );
    }
}
