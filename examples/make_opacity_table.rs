//! Writes the invented demo opacity table `models/tables/demo-opacity-bump.csv`: a
//! rectilinear grid in log T × log ρ of an analytic law with a made-up bump. Not real
//! opacities; it exists to show the table format and to exercise the interpolation.
//!
//! ```sh
//! cargo run --release --example make_opacity_table            # rewrites the demo table
//! cargo run --release --example make_opacity_table -- out.csv # or writes elsewhere
//! ```
//!
//! The law: the smooth blend 1/(1/κ_H⁻ + 1/(κ_es + κ_ff + κ_bf)) of sojourn's opacity laws
//! (Carroll & Ostlie ch. 9; Kramers bound–free with guillotine factor t = 10), for X = 0.70,
//! Z = 0.02, multiplied by a made-up Gaussian bump in log T,
//! 1 + 10 exp(−(log₁₀ T − 5.3)² / (2 · 0.3²)), standing in for the opacity bumps of real
//! tables. Grid: log₁₀ T = 3.5 … 8.0 in steps of 0.1, log₁₀ ρ = −12 … 3 in steps of 0.5.

use sojourn::opacity::{
    GasState, KramersBoundFree, KramersFreeFree, OpacityLaw, OpacityTable, SmoothHMinusBlend,
};

/// Height, centre (log₁₀ K) and width (dex) of the made-up bump.
const BUMP: (f64, f64, f64) = (10.0, 5.3, 0.3);
/// Guillotine factor of the bound–free part.
const GUILLOTINE: f64 = 10.0;
/// Composition the table is made for.
const HYDROGEN_X: f64 = 0.70;
const METALS_Z: f64 = 0.02;

fn main() {
    let out = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "models/tables/demo-opacity-bump.csv".to_string());
    let law = SmoothHMinusBlend::new(
        KramersFreeFree::default(),
        KramersBoundFree::new(1.0, GUILLOTINE).expect("a valid guillotine factor"),
    );
    let grid = |from: f64, step: f64, count: usize| -> Vec<f64> {
        (0..count)
            .map(|k| 10f64.powf(from + step * k as f64))
            .collect()
    };
    let temperatures = grid(3.5, 0.1, 46);
    let densities = grid(-12.0, 0.5, 31);
    let (height, centre, width) = BUMP;
    let table = OpacityTable::from_grid(&out, &temperatures, &densities, |t, rho| {
        let state = GasState {
            density_g_cm3: rho,
            temperature_k: t,
            hydrogen_x: HYDROGEN_X,
            metals_z: METALS_Z,
        };
        let bump = 1.0 + height * (-(t.log10() - centre).powi(2) / (2.0 * width * width)).exp();
        law.opacity_cm2_g(&state) * bump
    })
    .expect("the law gives finite positive opacities on the grid");
    let comments = vec![
        "INVENTED DEMO TABLE, not real opacities: written by examples/make_opacity_table.rs."
            .to_string(),
        format!(
            "Law: smooth blend 1/(1/kappa_Hminus + 1/(kappa_es + kappa_ff + kappa_bf)), \
             guillotine factor {GUILLOTINE}, X = {HYDROGEN_X}, Z = {METALS_Z},"
        ),
        format!(
            "times a made-up bump 1 + {height} exp(-(log10 T - {centre})^2 / (2 * {width}^2))."
        ),
        format!(
            "Grid: {} temperatures (log10 T = 3.5 ... 8.0) x {} densities (log10 rho = -12 ... 3).",
            temperatures.len(),
            densities.len()
        ),
    ];
    let text = table.to_csv(&comments);
    std::fs::write(&out, text).unwrap_or_else(|error| panic!("cannot write {out}: {error}"));
    println!(
        "wrote {out}: {} x {} grid points, {}",
        temperatures.len(),
        densities.len(),
        table.range().describe()
    );
}
