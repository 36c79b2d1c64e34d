//! A line chart from real runs: mean scatterings before escape against the optical radius
//! of uniform, conservative spheres (centred source), with 1σ error bars, beside diffusion
//! theory and the rule of thumb. It is the shape a sweep figure takes.
//!
//! Run with `cargo run --release --example line_chart [-- OUT.svg]` (default
//! `target/line-chart.svg`).

use sojourn::diffusion::MILNE_EXTRAPOLATION_LENGTH;
use sojourn::medium::{Layer, Medium, Source};
use sojourn::report::plots::{
    Axis, ChartSpec, Colour, Dash, MarkerShape, Series, SeriesStyle, line_chart,
};
use sojourn::simulation::{RunConfig, run};
use sojourn::transport::PhaseFunction;

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let out = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "target/line-chart.svg".into());
    let photons = 2_000;
    let taus = [1.0, 2.0, 5.0, 10.0, 20.0, 50.0];
    let mut points = Vec::new();
    let mut errors = Vec::new();
    for (stream, &tau) in taus.iter().enumerate() {
        let layer = Layer::new("uniform", tau, 1.0, PhaseFunction::Isotropic, 1.0)?;
        let medium = Medium::sphere(vec![(1.0, layer)], Source::centre())?;
        let config = RunConfig {
            photons,
            stream: stream as u64,
            ..RunConfig::default()
        };
        let escapes = run(&medium, &config).tally.all_escapes();
        let mean = escapes.scatterings().mean().unwrap_or(f64::NAN);
        let stderr = escapes.scatterings().std_error().unwrap_or(0.0);
        println!("tau {tau:>5}: mean scatterings {mean:.2} ± {stderr:.2}");
        points.push((tau, mean));
        errors.push(stderr);
    }
    let curve = |f: &dyn Fn(f64) -> f64| -> Vec<(f64, f64)> {
        (0..=80)
            .map(|k| 10f64.powf(k as f64 / 80.0 * 1.7))
            .map(|tau| (tau, f(tau)))
            .collect()
    };
    let q = MILNE_EXTRAPOLATION_LENGTH;
    let spec = ChartSpec {
        title: "Scatterings before escape against optical radius".into(),
        subtitle: format!("uniform conservative spheres, centred source · {photons} photons each"),
        x_axis: Axis::log("optical radius τ"),
        y_axis: Axis::log("mean number of scatterings"),
        series: vec![
            Series::new(
                "rule of thumb τ²",
                curve(&|t| t * t),
                SeriesStyle::line(Colour::Ochre, 3.0, Dash::DashDot),
            ),
            Series::new(
                "diffusion τ²/2",
                curve(&|t| t * t / 2.0),
                SeriesStyle::line(Colour::Teal, 3.0, Dash::Dotted),
            ),
            Series::new(
                "diffusion, extrapolated surface (τ + 0.71)²/2",
                curve(&|t| (t + q) * (t + q) / 2.0),
                SeriesStyle::line(Colour::Indigo, 3.0, Dash::Solid),
            ),
            Series::new(
                "Monte Carlo mean ± 1σ",
                points,
                SeriesStyle::points(Colour::Vermilion, MarkerShape::Circle),
            )
            .with_y_errors(errors),
        ],
        reference_lines: vec![],
        notes: vec![],
    };
    std::fs::write(&out, line_chart(&spec)?)?;
    println!("wrote {out}");
    Ok(())
}
