//! Speed of the time-dependent diffusion solver (`diffusion::transient`) on one core:
//! layered slabs of 100, 1 000 and 10 000 layers lit by a beam, and the Sun-like demo
//! star (its tabulated profile divided into ~2 500 sub-shells). Prints the grid size, the
//! number of time steps and the best and median wall-clock time of several solves, and
//! the time of the closed-form estimates (`diffusion::estimate`) on the same media.
//!
//! Run with `cargo run --release --example diffusion_solver_speed [-- REPEATS]`.

use std::path::Path;
use std::time::Instant;

use sojourn::diffusion::estimate;
use sojourn::diffusion::transient::{EscapeSolution, solve};
use sojourn::medium::model_file::load_model;
use sojourn::medium::{Layer, Medium, Source};
use sojourn::transport::PhaseFunction;

/// A laminated diffuser of `layers` sheets 10 µm thick (invented): scattering, absorption,
/// anisotropy and refractive index vary from sheet to sheet.
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

/// Best and median of `repeats` timings of `f`, s, and its last result.
fn time<T>(repeats: usize, mut f: impl FnMut() -> T) -> (f64, f64, T) {
    let mut times = Vec::with_capacity(repeats);
    let mut last = None;
    for _ in 0..repeats {
        let start = Instant::now();
        last = Some(f());
        times.push(start.elapsed().as_secs_f64());
    }
    times.sort_by(f64::total_cmp);
    (
        times[0],
        times[times.len() / 2],
        last.expect("at least one repeat"),
    )
}

fn main() {
    let repeats: usize = std::env::args()
        .nth(1)
        .and_then(|a| a.parse().ok())
        .unwrap_or(5)
        .max(1);
    let star_path = Path::new(env!("CARGO_MANIFEST_DIR")).join("models/veyra-n3-sun-like.json");
    let star = load_model(&star_path).expect("the demo star loads");
    let media = [
        ("slab, 100 layers, beam".to_string(), laminate(100)),
        ("slab, 1 000 layers, beam".to_string(), laminate(1000)),
        ("slab, 10 000 layers, beam".to_string(), laminate(10_000)),
        (
            format!("Sun-like star, {} sub-shells", star.layers().len()),
            star,
        ),
    ];
    println!("diffusion solver, one core, best and median of {repeats} solves");
    println!(
        "{:<32} {:>7} {:>7} {:>10} {:>10} {:>12}",
        "medium", "nodes", "steps", "best s", "median s", "estimate s"
    );
    for (name, medium) in &media {
        let (best, median, solution): (f64, f64, EscapeSolution) =
            time(repeats, || solve(medium).expect("the medium solves"));
        let (estimate_best, _, _) = time(repeats, || estimate(medium));
        println!(
            "{:<32} {:>7} {:>7} {:>10.4} {:>10.4} {:>12.4}",
            name,
            solution.grid_nodes(),
            solution.time_steps(),
            best,
            median,
            estimate_best
        );
    }
}
