//! What the comparison with diffusion adds to every run: the time-dependent diffusion
//! solve, the solver's escape-time quantiles, the binned KS test and the late-decay
//! comparison, timed apart and together (`RunAnalysis::new`, the whole analysis), beside
//! the Monte Carlo run itself, on a laminated slab of 100 sheets lit by a beam and on the
//! Sun-like demo star (its tabulated profile in ~2 500 sub-shells).
//!
//! Run with `cargo run --release --example comparison_cost [-- PHOTONS [REPEATS]]`
//! (defaults 10 000 photons, 5 repeats; best and median wall-clock times, one core for
//! everything but the run).

use std::path::Path;
use std::time::Instant;

use sojourn::analysis::{EscapeTimeTheory, RunAnalysis, escape_time_ks, late_decay};
use sojourn::diffusion::transient::solve;
use sojourn::medium::model_file::load_model;
use sojourn::medium::{Layer, Medium, Source};
use sojourn::simulation::{RunConfig, run};
use sojourn::transport::PhaseFunction;

/// A laminated diffuser of `layers` sheets 10 µm thick (invented), as in the example
/// `diffusion_solver_speed`.
fn laminate(layers: usize) -> Medium {
    let sheets = (0..layers)
        .map(|i| {
            let x = i as f64;
            let extinction = 400.0 + 250.0 * (0.7 * x).sin();
            let albedo = 0.999 - 0.0005 * (0.3 * x).cos().abs();
            let g = 0.3 + 0.2 * (1.1 * x).sin();
            let index = 1.33 + 0.15 * (0.5 * x).cos().abs();
            let phase = PhaseFunction::henyey_greenstein(g).expect("valid g");
            let layer = Layer::new(format!("sheet {i}"), extinction, albedo, phase, index)
                .expect("valid sheet");
            (1e-3, layer)
        })
        .collect();
    Medium::slab(sheets, 1.0, Source::normal_beam()).expect("valid laminate")
}

/// Best and median of `repeats` timings of `f`, s.
fn time<T>(repeats: usize, mut f: impl FnMut() -> T) -> (f64, f64) {
    let mut times: Vec<f64> = (0..repeats)
        .map(|_| {
            let start = Instant::now();
            std::hint::black_box(f());
            start.elapsed().as_secs_f64()
        })
        .collect();
    times.sort_by(f64::total_cmp);
    (times[0], times[times.len() / 2])
}

fn main() {
    let mut args = std::env::args().skip(1);
    let photons: u64 = args.next().and_then(|a| a.parse().ok()).unwrap_or(10_000);
    let repeats: usize = args.next().and_then(|a| a.parse().ok()).unwrap_or(5).max(1);
    let star_path = Path::new(env!("CARGO_MANIFEST_DIR")).join("models/veyra-n3-sun-like.json");
    let star = load_model(&star_path).expect("the demo star loads");
    let media = [
        ("slab, 100 layers, beam".to_string(), laminate(100)),
        (
            format!("Sun-like star, {} sub-shells", star.layers().len()),
            star,
        ),
    ];
    println!("{photons} photons per run; best / median of {repeats} repeats, s");
    for (name, medium) in &media {
        let config = RunConfig {
            photons,
            seed: 1,
            ..RunConfig::default()
        };
        let start = Instant::now();
        let tally = run(medium, &config).tally;
        let run_s = start.elapsed().as_secs_f64();
        let escapes = tally.all_escapes();
        let solution = solve(medium).expect("the medium solves");
        let solve_s = time(repeats, || solve(medium));
        let quantiles_s = time(repeats, || EscapeTimeTheory::of(&solution));
        let ks_s = time(repeats, || escape_time_ks(&escapes, &solution));
        let decay_s = time(repeats, || late_decay(&escapes, &solution));
        let analysis_s = time(repeats, || RunAnalysis::new(medium, &config, &tally));
        let added = [solve_s, quantiles_s, ks_s, decay_s];
        let sum = |pick: fn(&(f64, f64)) -> f64| added.iter().map(pick).sum::<f64>();
        let ks = escape_time_ks(&escapes, &solution);
        println!("{name}: run {run_s:.3} ({} escapes)", escapes.count());
        for (what, (best, median)) in [
            ("diffusion solve", solve_s),
            ("solver quantiles", quantiles_s),
            ("binned KS test", ks_s),
            ("late decay", decay_s),
        ] {
            println!("  {what:<34} {best:.4} / {median:.4}");
        }
        println!(
            "  {:<34} {:.4} / {:.4}",
            "added by the comparison",
            sum(|t| t.0),
            sum(|t| t.1)
        );
        println!(
            "  {:<34} {:.4} / {:.4}",
            "whole analysis (RunAnalysis::new)", analysis_s.0, analysis_s.1
        );
        match ks {
            Ok(test) => println!(
                "  KS D {:.4}, p {:.3}, {} bins",
                test.distance, test.p_value, test.bins
            ),
            Err(note) => println!("  {note}"),
        }
    }
}
