//! Validation of the accelerated walker against the direct walker on the same models, the
//! same photon counts and fixed seeds: mean escape time (ratio with its 1σ), and the
//! two-sample Kolmogorov–Smirnov distance between the two escape-time histograms with its
//! p-value. Prints the table of the README (stdout is exactly the markdown table; the settings
//! go to stderr). `scripts/readme-sync` runs it.
//!
//! `cargo run --release --example validate_acceleration [-- PHOTONS [GAMMA [CASES]]]`, CASES a
//! comma-separated list of row indices (0-based; default: every row). `-- --labels` prints
//! the first cell of every row, one per line, and runs nothing.

#[path = "../tests/support/profiles.rs"]
mod profiles;

use sojourn::diffusion::ks::{kolmogorov_p_value, two_sample_ks_binned};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::tally::PathStats;
use sojourn::transport::{Acceleration, PhaseFunction};

fn uniform(tau: f64, g: f64) -> Medium {
    let phase = if g == 0.0 {
        PhaseFunction::Isotropic
    } else {
        PhaseFunction::henyey_greenstein(g).expect("valid g")
    };
    let layer = Layer::new("", tau, 1.0, phase, 1.0).expect("valid layer");
    Medium::sphere(vec![(1.0, layer)], Source::centre()).expect("valid sphere")
}

fn two_zone() -> Medium {
    // Core 100× more opaque than the envelope: τ = 60 + 6.
    let core = Layer::new("core", 200.0, 1.0, PhaseFunction::Isotropic, 1.0).expect("valid");
    let envelope = Layer::new("envelope", 2.0, 1.0, PhaseFunction::Isotropic, 1.0).expect("valid");
    Medium::sphere(vec![(0.3, core), (3.3, envelope)], Source::centre()).expect("valid")
}

fn escapes(
    medium: &Medium,
    method: Method,
    photons: u64,
    seed: u64,
    acceleration: Acceleration,
) -> (PathStats, f64) {
    let config = RunConfig {
        photons,
        seed,
        method,
        acceleration,
        ..RunConfig::default()
    };
    let result = run(medium, &config);
    let steps = result.tally.walk().direct_steps.value() + result.tally.walk().jumps.value();
    (result.tally.all_escapes(), steps / photons as f64)
}

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(20_000);
    let mut acceleration = Acceleration::default();
    if let Some(gamma) = std::env::args().nth(2).and_then(|a| a.parse().ok()) {
        acceleration.gamma = gamma;
    }
    let only: Option<Vec<usize>> = std::env::args().nth(3).map(|list| {
        list.split(',')
            .map(|index| index.trim().parse().expect("CASES: row indices such as 0,1,3"))
            .collect()
    });
    let profile = profiles::exponential_sphere(600.0, 3.0, 1.0, 300);
    let cases: Vec<(String, Medium)> = vec![
        ("uniform sphere τ = 30".into(), uniform(30.0, 0.0)),
        ("uniform sphere τ = 100".into(), uniform(100.0, 0.0)),
        ("uniform sphere τ = 300".into(), uniform(300.0, 0.0)),
        (
            "two-zone sphere, 100× contrast (τ 60 + 6)".into(),
            two_zone(),
        ),
        (
            format!(
                "smooth profile σ ∝ e^(−3r/R), τ = {:.0}",
                profiles::exponential_sphere_depth(600.0, 3.0, 1.0)
            ),
            profile,
        ),
        (
            "uniform sphere τ = 300, HG g = 0.8".into(),
            uniform(300.0, 0.8),
        ),
    ];
    if std::env::args().nth(1).as_deref() == Some("--labels") {
        for (name, _) in &cases {
            println!("{name}");
        }
        return;
    }
    eprintln!(
        "{photons} photons per walker; seeds differ between walkers; γ = {}, ε = {}",
        acceleration.gamma, acceleration.epsilon
    );
    println!(
        "| model | direct mean (l/c units) | accelerated / direct | σ of ratio | KS distance | KS p-value | steps per photon direct → accelerated |"
    );
    println!("|---|---|---|---|---|---|---|");
    // (model, ratio, its 1σ, KS p-value) of every row run.
    let mut rows: Vec<(String, f64, f64, f64)> = Vec::new();
    for (index, (name, medium)) in cases.into_iter().enumerate() {
        if only.as_ref().is_some_and(|wanted| !wanted.contains(&index)) {
            continue;
        }
        let (direct, direct_steps) = escapes(&medium, Method::Direct, photons, 1, acceleration);
        let (fast, fast_steps) = escapes(&medium, Method::Accelerated, photons, 2, acceleration);
        let (m1, e1) = (
            direct.time_s().mean().unwrap(),
            direct.time_s().std_error().unwrap(),
        );
        let (m2, e2) = (
            fast.time_s().mean().unwrap(),
            fast.time_s().std_error().unwrap(),
        );
        let ratio = m2 / m1;
        let ratio_sigma = ratio * ((e1 / m1).powi(2) + (e2 / m2).powi(2)).sqrt();
        let (counts_direct, counts_fast) = direct
            .time_histogram()
            .aligned_counts(fast.time_histogram());
        let d = two_sample_ks_binned(&counts_direct, &counts_fast);
        let (n1, n2) = (direct.count() as f64, fast.count() as f64);
        let p = kolmogorov_p_value(d, n1 * n2 / (n1 + n2));
        let unit = sojourn::units::SPEED_OF_LIGHT_CM_S * medium.layers()[0].extinction_per_cm();
        println!(
            "| {name} | {:.5e} | {ratio:.4} | {ratio_sigma:.4} | {d:.4} | {p:.3} | {direct_steps:.0} → {fast_steps:.1} |",
            m1 * unit
        );
        rows.push((name, ratio, ratio_sigma, p));
    }
    if only.is_none() {
        // The sentence the README puts under the table: the largest deviation and the
        // smallest p-value.
        let (worst, ratio, sigma, _) = rows
            .iter()
            .max_by(|a, b| (a.1 - 1.0).abs().total_cmp(&(b.1 - 1.0).abs()))
            .expect("rows ran");
        let within_sigma = rows
            .iter()
            .map(|(_, r, s, _)| (r - 1.0).abs() / s)
            .fold(0.0, f64::max);
        let lowest_p = rows.iter().map(|row| row.3).fold(1.0, f64::min);
        println!();
        println!(
            "Every accelerated mean agrees with the direct one within {:.1} % and within \
             {within_sigma:.1}σ (the largest deviation: {:+.2} % ± {:.2} % for the {worst}), and \
             the smallest KS p-value is {lowest_p:.3}.",
            100.0 * rows.iter().map(|row| (row.1 - 1.0).abs()).fold(0.0, f64::max),
            100.0 * (ratio - 1.0),
            100.0 * sigma
        );
    }
}
