//! The README's figure of the diffusion solver: the Monte Carlo escape-time histogram of a
//! three-layer absorbing slab (different μs′ and μa in each layer, an isotropic plane
//! source in the middle layer) against the escape-time density the solver computes on the
//! same layers. Writes `target/diffusion-solver.svg` (or the path given) and prints the
//! comparison the README quotes; the README's PNG is that SVG through
//! `rsvg-convert -o examples/figures/diffusion-solver.png target/diffusion-solver.svg`.
//!
//! Run with `cargo run --release --example diffusion_solver_figure [-- PHOTONS [SVG]]`
//! (the README: 100 000 photons).

use std::path::PathBuf;

use sojourn::diffusion::ks::{BinnedSample, binned_ks_test};
use sojourn::diffusion::transient::{Exit, solve};
use sojourn::medium::{Layer, Medium, Source};
use sojourn::report::plots::distribution::{DistributionPanel, Mark, TheoryCurve};
use sojourn::report::plots::{Colour, Dash, DisplayUnit, LineStyle, Panel, group_digits};
use sojourn::simulation::{Method, RunConfig, run};
use sojourn::transport::PhaseFunction;

/// The invented sample: a three-layer turbid laminate, 7 mm thick, lit from inside.
fn laminate() -> Medium {
    let layer = |name: &str, sigma: f64, albedo: f64, g: f64| {
        let phase = if g == 0.0 {
            PhaseFunction::Isotropic
        } else {
            PhaseFunction::henyey_greenstein(g).expect("valid g")
        };
        Layer::new(name, sigma, albedo, phase, 1.0).expect("valid layer")
    };
    Medium::slab(
        vec![
            (0.2, layer("top", 100.0, 0.9995, 0.0)),
            (0.3, layer("middle", 150.0, 0.999, 0.5)),
            (0.2, layer("bottom", 60.0, 0.998, 0.0)),
        ],
        1.0,
        Source::SlabPlane { depth_cm: 0.35 },
    )
    .expect("valid laminate")
    .with_name("three-layer laminate")
}

fn main() {
    let mut args = std::env::args().skip(1);
    let photons: u64 = args.next().and_then(|a| a.parse().ok()).unwrap_or(100_000);
    let path = args.next().map(PathBuf::from).unwrap_or_else(|| {
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("target/diffusion-solver.svg")
    });
    let seed = 5;
    let medium = laminate();
    let config = RunConfig {
        photons,
        seed,
        method: Method::Direct,
        ..RunConfig::default()
    };
    let tally = run(&medium, &config).tally;
    let solution = solve(&medium).expect("the laminate solves");
    let escapes = tally.all_escapes();
    let histogram = escapes.time_histogram();
    let bins = histogram.contiguous().expect("photons escaped");
    let (edges, counts, below, above) = (bins.edges, bins.weights, bins.below, bins.above);
    let ks = binned_ks_test(
        &BinnedSample {
            edges: &edges,
            counts: &counts,
            below: below as f64,
            above: above as f64,
            effective_size: escapes.count() as f64,
        },
        &solution.escape_cdf_at(&edges),
    )
    .expect("a valid histogram");
    let mean_mc = escapes.time_s().mean().expect("photons escaped");
    let sigma_mc = escapes.time_s().std_error().expect("photons escaped");
    let mean_theory = solution.mean_escape_time_s().expect("photons escape");
    let escaped_mc = escapes.count() as f64 / tally.launched() as f64;
    println!(
        "{photons} photons (seed {seed}), {} escaped: fraction {escaped_mc:.4} (solver {:.4}), \
         reflected {:.4} (solver {:.4})",
        escapes.count(),
        solution.escape_probability(),
        tally.reflected().count() as f64 / tally.launched() as f64,
        solution.exit_probability(Exit::Top),
    );
    println!(
        "mean escape time: Monte Carlo {mean_mc:.4e} ± {sigma_mc:.1e} s, solver {mean_theory:.4e} s \
         (ratio {:.4} ± {:.4})",
        mean_mc / mean_theory,
        sigma_mc / mean_theory
    );
    println!(
        "binned KS distance {:.4}, calibrated p-value {:.3}",
        ks.distance, ks.p_value
    );

    let (low, high) = (
        solution.escape_quantile_s(1e-4).expect("quantile"),
        solution.escape_quantile_s(1.0 - 1e-4).expect("quantile"),
    );
    let points = (0..300)
        .map(|k| {
            let t = low * (high / low).powf(k as f64 / 299.0);
            (t, solution.escape_density_per_s(t))
        })
        .collect();
    let median = solution.escape_quantile_s(0.5).expect("median");
    let unit = DisplayUnit::time_for(median);
    let panel = DistributionPanel {
        name: "diffusion-solver".into(),
        title: "Escape time of a three-layer absorbing laminate".into(),
        subtitle: format!(
            "{} photons, seed {seed}, direct walk; plane source in the middle layer",
            group_digits(photons)
        ),
        quantity: "time in the medium".into(),
        symbol: "t".into(),
        unit: unit.clone(),
        histogram: histogram.clone(),
        whole_numbers: false,
        sample_label: format!(
            "Monte Carlo, {} photons that left",
            group_digits(escapes.count())
        ),
        theory: Some(TheoryCurve {
            label: "diffusion solver on the three layers (partial-current faces)".into(),
            points,
            style: LineStyle::new(Colour::Indigo, 3.0, Dash::Solid),
        }),
        marks: vec![
            Mark {
                label: format!("Monte Carlo mean {}", unit.format(mean_mc)),
                value: mean_mc,
                style: LineStyle::new(Colour::Vermilion, 2.5, Dash::Solid),
            },
            Mark {
                label: format!("solver mean {}", unit.format(mean_theory)),
                value: mean_theory,
                style: LineStyle::new(Colour::Indigo, 2.5, Dash::Dashed),
            },
        ],
        notes: vec![format!(
            "binned Kolmogorov–Smirnov distance {:.4}, calibrated p-value {:.2}",
            ks.distance, ks.p_value
        )],
        caption: "Monte Carlo escape-time histogram of a three-layer absorbing slab with the \
                  solver's escape-time density on the same layers."
            .into(),
    };
    let figure = panel.render().expect("the figure draws");
    std::fs::write(&path, figure.svg).expect("the figure is written");
    println!("wrote {}", path.display());
}
