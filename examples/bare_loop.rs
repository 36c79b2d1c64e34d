//! The direct walker against a bare loop of the same physics, in one process on the same
//! case: a uniform, conservative, isotropically scattering sphere of optical radius 100 with
//! a centred source.
//!
//! The bare loop is the least a walker can do for this case: per photon the same random
//! stream (`photon_rng`, xoshiro256++), a ziggurat exponential optical depth per flight,
//! Marsaglia directions, a squared-radius escape test, the exact distance to the surface at
//! the last flight, and the photon's time and scattering count summed over photons. It
//! knows nothing of layers, phase functions, absorption, refraction, step caps or tallies.
//! The walker does all of that and records each photon into the full tally.
//!
//! Each round runs both on 1 and 2 threads, alternating, so both see the same machine load;
//! the printed ratio is walker time / bare-loop time (the goal is ≤ 1.25). On Linux the
//! process's CPU time (user + system, from /proc/self/stat in clock ticks of 10 ms) is
//! printed as well: on a shared machine it is less disturbed by other jobs than the
//! wall-clock time.
//!
//! `cargo run --release --example bare_loop [-- PHOTONS [ROUNDS]]`

use std::time::Instant;

use rand::{Rng, RngExt};
use rand_distr::Exp1;
use rayon::prelude::*;

use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::transport::PhaseFunction;
use sojourn::transport::rng::photon_rng;
use sojourn::units::SPEED_OF_LIGHT_CM_S;

const OPTICAL_RADIUS: f64 = 100.0;
const RADIUS_CM: f64 = 1.0;
const SEED: u64 = 2024;

/// Marsaglia (1972) unit vector.
#[inline(always)]
fn isotropic<R: Rng + ?Sized>(rng: &mut R) -> [f64; 3] {
    loop {
        let a = 2.0 * rng.random::<f64>() - 1.0;
        let b = 2.0 * rng.random::<f64>() - 1.0;
        let s = a * a + b * b;
        if s < 1.0 {
            let f = 2.0 * (1.0 - s).sqrt();
            return [a * f, b * f, 1.0 - 2.0 * s];
        }
    }
}

/// One photon of the bare loop: (time in the sphere s, scatterings).
fn bare_photon(photon: u64) -> (f64, f64) {
    let mut rng = photon_rng(SEED, 0, photon);
    let mean_free_path = RADIUS_CM / OPTICAL_RADIUS;
    let radius_sq = RADIUS_CM * RADIUS_CM;
    let (mut x, mut y, mut z) = (0.0f64, 0.0f64, 0.0f64);
    let mut u = isotropic(&mut rng);
    let mut path = 0.0;
    let mut scatterings = 0u64;
    loop {
        let s = mean_free_path * rng.sample::<f64, _>(Exp1);
        let (nx, ny, nz) = (x + s * u[0], y + s * u[1], z + s * u[2]);
        if nx * nx + ny * ny + nz * nz >= radius_sq {
            // Last flight: the distance to the surface along u.
            let b = x * u[0] + y * u[1] + z * u[2];
            let c = x * x + y * y + z * z - radius_sq;
            path += -b + (b * b - c).max(0.0).sqrt();
            break;
        }
        (x, y, z) = (nx, ny, nz);
        path += s;
        scatterings += 1;
        u = isotropic(&mut rng);
    }
    (path / SPEED_OF_LIGHT_CM_S, scatterings as f64)
}

/// CPU time of this process (all threads) so far, s: utime + stime of /proc/self/stat,
/// in ticks of 1/100 s (Linux; `None` elsewhere).
fn cpu_seconds() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/self/stat").ok()?;
    // Fields after the command name in parentheses: state is field 3, utime 14, stime 15.
    let rest = &text[text.rfind(')')? + 1..];
    let fields: Vec<&str> = rest.split_whitespace().collect();
    let user: f64 = fields.get(11)?.parse().ok()?;
    let system: f64 = fields.get(12)?.parse().ok()?;
    Some((user + system) / 100.0)
}

/// Wall-clock and CPU seconds of `work`, and its result.
fn timed<T>(work: impl FnOnce() -> T) -> (f64, Option<f64>, T) {
    let cpu = cpu_seconds();
    let started = Instant::now();
    let result = work();
    let wall = started.elapsed().as_secs_f64();
    let cpu = cpu.zip(cpu_seconds()).map(|(a, b)| b - a);
    (wall, cpu, result)
}

/// Runs the bare loop for `photons` photons; returns (seconds, total scatterings).
fn bare_loop(photons: u64) -> (f64, f64) {
    let started = Instant::now();
    let (time, scatterings) = (0..photons)
        .into_par_iter()
        .map(bare_photon)
        .reduce(|| (0.0, 0.0), |a, b| (a.0 + b.0, a.1 + b.1));
    std::hint::black_box(time);
    (started.elapsed().as_secs_f64(), scatterings)
}

/// Runs the direct walker for `photons` photons; returns (seconds, total scatterings).
fn walker(medium: &Medium, photons: u64) -> (f64, f64) {
    let config = RunConfig {
        photons,
        seed: SEED,
        method: Method::Direct,
        ..RunConfig::default()
    };
    let started = Instant::now();
    let result = run(medium, &config);
    let seconds = started.elapsed().as_secs_f64();
    (seconds, result.tally.escaped().scatterings().sum())
}

fn main() {
    let mut args = std::env::args().skip(1);
    let photons: u64 = args.next().and_then(|a| a.parse().ok()).unwrap_or(20_000);
    let rounds: usize = args.next().and_then(|a| a.parse().ok()).unwrap_or(3);
    let layer = Layer::new(
        "uniform",
        OPTICAL_RADIUS / RADIUS_CM,
        1.0,
        PhaseFunction::Isotropic,
        1.0,
    )
    .expect("valid layer");
    let medium = Medium::sphere(vec![(RADIUS_CM, layer)], Source::centre()).expect("valid sphere");
    println!(
        "uniform sphere, tau = {OPTICAL_RADIUS}, centred isotropic source, {photons} photons, {rounds} rounds"
    );
    println!(
        "{:>7} {:>5} {:>10} {:>10} {:>14} {:>14} {:>7} {:>10} {:>10} {:>9}",
        "threads",
        "round",
        "walker s",
        "bare s",
        "walker scat/s",
        "bare scat/s",
        "ratio",
        "walker cpu",
        "bare cpu",
        "cpu ratio"
    );
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("thread pool");
        let mut ratios = Vec::with_capacity(rounds);
        let mut cpu_ratios = Vec::with_capacity(rounds);
        for round in 0..rounds {
            let (_, walker_cpu, (walker_s, walker_n)) =
                timed(|| pool.install(|| walker(&medium, photons)));
            let (_, bare_cpu, (bare_s, bare_n)) = timed(|| pool.install(|| bare_loop(photons)));
            let ratio = walker_s / bare_s;
            ratios.push(ratio);
            let cpu = walker_cpu.zip(bare_cpu);
            if let Some((w, b)) = cpu {
                cpu_ratios.push(w / b);
            }
            let show = |x: Option<f64>| x.map_or("-".to_string(), |v| format!("{v:.3}"));
            println!(
                "{threads:>7} {round:>5} {walker_s:>10.3} {bare_s:>10.3} {:>14.4e} {:>14.4e} {ratio:>7.3} {:>10} {:>10} {:>9}",
                walker_n / walker_s,
                bare_n / bare_s,
                show(walker_cpu),
                show(bare_cpu),
                show(cpu.map(|(w, b)| w / b))
            );
        }
        let median = |values: &mut Vec<f64>| {
            values.sort_by(f64::total_cmp);
            values.get(values.len() / 2).copied()
        };
        println!(
            "{threads:>7} threads: median ratio walker / bare loop: wall {:.3}, cpu {}",
            median(&mut ratios).expect("rounds"),
            median(&mut cpu_ratios).map_or("-".to_string(), |r| format!("{r:.3}"))
        );
    }
}
