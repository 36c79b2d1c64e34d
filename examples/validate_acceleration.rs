//! Validation of the accelerated walker against the direct walker on the same models, the
//! same photon counts and fixed (different) seeds: mean escape time and mean scatterings
//! (ratios with their 1σ), and the two-sample Kolmogorov–Smirnov distance between the two
//! escape-time histograms with its asymptotic p-value. Prints the README's table and the
//! sentence that reads it (stdout is exactly that markdown; the settings and the wall-clock
//! times go to stderr). `scripts/readme-sync` runs it.
//!
//! `cargo run --release --example validate_acceleration [-- PHOTONS [CASES [GAMMA [EPSILON [ACCELERATED_PHOTONS]]]]]`
//! or `-- --labels` (the first cell of every row, one per line; runs nothing).
//!
//! CASES is a comma-separated list of row indices, 0-based (default: all); GAMMA and EPSILON
//! override the acceleration defaults; ACCELERATED_PHOTONS (default PHOTONS) sets the
//! accelerated walker's photons apart. With `SOJOURN_VALIDATION_CACHE=DIR` the direct
//! walks' tallies are kept in DIR and reused by later runs with the same case and photons.

#[allow(dead_code)]
#[path = "../tests/support/profiles.rs"]
mod profiles;

use std::time::Instant;

use sojourn::diffusion::ks::{kolmogorov_p_value, two_sample_ks_binned};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::{PathStats, Tally};
use sojourn::transport::{Acceleration, PhaseFunction};

fn phase(g: f64) -> PhaseFunction {
    if g == 0.0 {
        PhaseFunction::Isotropic
    } else {
        PhaseFunction::henyey_greenstein(g).expect("valid g")
    }
}

fn two_zone() -> Medium {
    // Core 100× more opaque than the envelope: τ = 60 + 6.
    let core = Layer::new("core", 200.0, 1.0, PhaseFunction::Isotropic, 1.0).expect("valid");
    let envelope = Layer::new("envelope", 2.0, 1.0, PhaseFunction::Isotropic, 1.0).expect("valid");
    Medium::sphere(vec![(0.3, core), (3.3, envelope)], Source::centre()).expect("valid")
}

/// Escapes of one run and (steps per photon, seconds). Direct runs are cached in
/// `SOJOURN_VALIDATION_CACHE` if set (`case` names the file).
fn escapes(
    medium: &Medium,
    method: Method,
    photons: u64,
    seed: u64,
    acceleration: Acceleration,
    case: usize,
) -> (PathStats, f64, f64) {
    let config = RunConfig {
        photons,
        seed,
        method,
        acceleration,
        ..RunConfig::default()
    };
    let cache = std::env::var_os("SOJOURN_VALIDATION_CACHE")
        .filter(|_| method == Method::Direct)
        .map(|dir| {
            std::path::PathBuf::from(dir).join(format!("case{case}-{photons}-seed{seed}.json"))
        });
    let cached: Option<(Tally, f64)> = cache
        .as_ref()
        .and_then(|path| std::fs::read_to_string(path).ok())
        .and_then(|text| serde_json::from_str::<(serde_json::Value, f64)>(&text).ok())
        .and_then(|(value, seconds)| Some((Tally::from_json(value).ok()?, seconds)));
    let started = Instant::now();
    let (tally, seconds) = match cached {
        Some(found) => found,
        None => {
            let tally = run(medium, &config).tally;
            let seconds = started.elapsed().as_secs_f64();
            if let Some(path) = &cache {
                let text = serde_json::to_string(&(&tally, seconds)).expect("tally serialises");
                std::fs::write(path, text).expect("cache directory writable");
            }
            (tally, seconds)
        }
    };
    let result = sojourn::simulation::RunResult {
        tally,
        elapsed_s: seconds,
    };
    let walk = result.tally.walk();
    let steps = walk.direct_steps.value() + walk.jumps.value();
    (result.tally.all_escapes(), steps / photons as f64, seconds)
}

/// Ratio of two means with its 1σ.
fn ratio(a: &sojourn::tally::Moments, b: &sojourn::tally::Moments) -> (f64, f64) {
    let (ma, ea) = (a.mean().unwrap(), a.std_error().unwrap());
    let (mb, eb) = (b.mean().unwrap(), b.std_error().unwrap());
    let r = ma / mb;
    (r, r * ((ea / ma).powi(2) + (eb / mb).powi(2)).sqrt())
}

/// Builds one validation medium on demand (cases are built only when selected).
type MediumBuilder = Box<dyn Fn() -> Medium>;

fn main() {
    let labels_only = std::env::args().nth(1).as_deref() == Some("--labels");
    let mut args = std::env::args().skip(1);
    let photons: u64 = args.next().and_then(|a| a.parse().ok()).unwrap_or(20_000);
    let only: Option<Vec<usize>> = args
        .next()
        .map(|a| a.split(',').filter_map(|c| c.parse().ok()).collect());
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
    let accelerated_photons: u64 = args.next().and_then(|a| a.parse().ok()).unwrap_or(photons);
    let cases: Vec<(&str, MediumBuilder)> = vec![
        (
            "uniform sphere τ = 30",
            Box::new(|| profiles::uniform_sphere_from(30.0, phase(0.0), 0.0)),
        ),
        (
            "uniform sphere τ = 100",
            Box::new(|| profiles::uniform_sphere_from(100.0, phase(0.0), 0.0)),
        ),
        (
            "uniform sphere τ = 300",
            Box::new(|| profiles::uniform_sphere_from(300.0, phase(0.0), 0.0)),
        ),
        (
            "two-zone sphere, 100× contrast (τ 60 + 6)",
            Box::new(two_zone),
        ),
        (
            "smooth profile σ ∝ e^(−3r/R), τ = 190",
            Box::new(|| profiles::exponential_sphere(600.0, 3.0, 1.0, 300)),
        ),
        (
            "uniform sphere τ = 300, HG g = 0.8",
            Box::new(|| profiles::uniform_sphere_from(300.0, phase(0.8), 0.0)),
        ),
        (
            "steep profile σ ∝ e^(−8r/R), τ = 150",
            Box::new(profiles::steep_profile_sphere),
        ),
        (
            "uniform sphere τ = 20, source at R/2",
            Box::new(|| profiles::uniform_sphere_from(20.0, phase(0.0), 0.5)),
        ),
        (
            "uniform sphere τ = 100, HG g = 0.5, source at R/2",
            Box::new(|| profiles::uniform_sphere_from(100.0, phase(0.5), 0.5)),
        ),
    ];
    if labels_only {
        for (name, _) in &cases {
            println!("{name}");
        }
        return;
    }
    eprintln!(
        "{photons} direct and {accelerated_photons} accelerated photons, seeds 1 and 2; γ = {}, ε = {}",
        acceleration.gamma(),
        acceleration.epsilon()
    );
    println!(
        "| model | time accelerated / direct | scatterings accelerated / direct | KS distance | KS p-value | steps per photon direct → accelerated |"
    );
    println!("|---|---|---|---|---|---|");
    // (model, time ratio, its 1σ, KS p-value) of every row run.
    let mut rows: Vec<(&str, f64, f64, f64)> = Vec::new();
    for (index, (name, build)) in cases.iter().enumerate() {
        if only.as_ref().is_some_and(|wanted| !wanted.contains(&index)) {
            continue;
        }
        let medium = build();
        let (direct, direct_steps, direct_s) =
            escapes(&medium, Method::Direct, photons, 1, acceleration, index);
        let (fast, fast_steps, fast_s) = escapes(
            &medium,
            Method::Accelerated,
            accelerated_photons,
            2,
            acceleration,
            index,
        );
        let (time, time_sigma) = ratio(fast.time_s(), direct.time_s());
        let (scatterings, scatterings_sigma) = ratio(fast.scatterings(), direct.scatterings());
        let d = {
            let (left, right) = direct
                .time_histogram()
                .aligned_counts(fast.time_histogram());
            two_sample_ks_binned(&left, &right)
        };
        let (n1, n2) = (direct.count() as f64, fast.count() as f64);
        let p = kolmogorov_p_value(d, n1 * n2 / (n1 + n2));
        println!(
            "| {name} | {time:.4} ± {time_sigma:.4} | {scatterings:.4} ± {scatterings_sigma:.4} | {d:.4} | {p:.3} | {direct_steps:.0} → {fast_steps:.1} |"
        );
        eprintln!("{name}: {direct_s:.1} s direct, {fast_s:.1} s accelerated");
        rows.push((name, time, time_sigma, p));
    }
    if only.is_none() {
        // The sentence the README puts under the table: the largest deviation and the
        // smallest p-value.
        let (worst, ratio, sigma, _) = rows
            .iter()
            .max_by(|a, b| (a.1 - 1.0).abs().total_cmp(&(b.1 - 1.0).abs()))
            .expect("rows ran");
        let most_sigmas = rows
            .iter()
            .map(|(_, r, s, _)| (r - 1.0).abs() / s)
            .fold(0.0, f64::max);
        let lowest_p = rows.iter().map(|row| row.3).fold(1.0, f64::min);
        println!();
        println!(
            "The accelerated mean escape times differ from the direct ones by at most {:.2} % \
             (the {worst}: {:+.2} % ± {:.2} %) and by at most {most_sigmas:.1}σ; the smallest KS \
             p-value is {lowest_p:.3}.",
            100.0 * (ratio - 1.0).abs(),
            100.0 * (ratio - 1.0),
            100.0 * sigma
        );
    }
}
