//! A parameter study through the library API, no files involved: uniform spheres of growing
//! optical radius τ, conservative and slightly absorbing, built in code, run as one sweep,
//! printed as a table of mean escape time against diffusion theory and the N ≈ τ² rule.
//!
//! Run with `cargo run --release --example sweep_in_code [-- PHOTONS]`.

use sojourn::medium::{Layer, Medium, Source};
use sojourn::sweep::Sweep;
use sojourn::sweep::table::csv_text;
use sojourn::transport::PhaseFunction;
use sojourn::units::{format_duration, format_significant};

/// A uniform, isotropically scattering sphere of radius 1 cm, optical radius `tau`,
/// single-scattering albedo `albedo`, with a centred source.
fn sphere(tau: f64, albedo: f64) -> Medium {
    let layer =
        Layer::new("uniform", tau, albedo, PhaseFunction::Isotropic, 1.0).expect("valid layer");
    Medium::sphere(vec![(1.0, layer)], Source::centre()).expect("valid sphere")
}

fn main() {
    let photons: u64 = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(4_000);

    // One point per (τ, albedo); each point gets its own random stream (its index).
    let mut sweep = Sweep::new(photons, 2024);
    for albedo in [1.0, 0.999] {
        for tau in [1.0, 2.0, 4.0, 8.0, 16.0, 32.0] {
            sweep = sweep.point([("tau", tau), ("albedo", albedo)], sphere(tau, albedo));
        }
    }
    let results = sweep.run();

    println!("uniform sphere, radius 1 cm, centred isotropic source, {photons} photons per point");
    println!(
        "{:>6} {:>7} {:>9} {:>12} {:>12} {:>17} {:>9}",
        "tau", "albedo", "escaped", "mean time", "diffusion", "MC/diffusion", "MC/rule"
    );
    for result in &results {
        let report = &result.analysis;
        let ratio = match (
            report.comparison.time_ratio,
            report.comparison.time_ratio_stderr,
        ) {
            (Some(r), Some(e)) => format!("{r:.3} ± {e:.3}"),
            _ => "-".to_string(),
        };
        println!(
            "{:>6} {:>7} {:>9.4} {:>12} {:>12} {:>17} {:>9}",
            result.parameter("tau").unwrap_or(f64::NAN),
            result.parameter("albedo").unwrap_or(f64::NAN),
            report.outcome.escaped.unwrap_or(0.0),
            report
                .escape_time
                .mean_s
                .map_or("-".into(), format_duration),
            report
                .diffusion
                .mean_time_extrapolated_s
                .map_or("-".into(), format_duration),
            ratio,
            report
                .comparison
                .naive_time_ratio
                .map_or("-".into(), |r| format_significant(r, 3)),
        );
    }
    // The same rows as CSV, ready for pandas or gnuplot.
    let rows: Vec<_> = results.iter().map(|r| r.row()).collect();
    let csv = csv_text(&rows);
    println!(
        "\nCSV: {} columns, first lines:\n{}",
        csv.lines().next().map_or(0, |h| h.split(',').count()),
        csv.lines().take(2).collect::<Vec<_>>().join("\n")
    );
}
