//! The zones, the base of the outer convective zone and the diffusion-time definitions of the
//! Sun-like demo stars, as the README shows them:
//!
//! ```sh
//! cargo run --release --example stellar_zones
//! cargo run --release --example stellar_zones -- models/OTHER.json   # any stellar model
//! ```

use std::path::Path;

use sojourn::analysis::stellar::StellarAnalysis;
use sojourn::diffusion::estimate;
use sojourn::medium::model_file::load_model;
use sojourn::units::{SOLAR_LUMINOSITY_ERG_S, format_duration, format_significant};

fn describe(path: &str) {
    let medium = load_model(Path::new(path)).unwrap_or_else(|error| panic!("{error}"));
    let Some(analysis) = StellarAnalysis::of(&medium) else {
        println!("{path}: not a stellar model (a sphere of profile layers)");
        return;
    };
    let structure = medium.structure().expect("a stellar model has a structure");
    // Radii as fractions of the table's outer radius (the polytrope's R).
    let radius = structure
        .atmosphere()
        .last()
        .map_or(structure.outer_radius_cm(), |row| row.radius_cm);
    let time = |t: Option<f64>| t.map_or_else(|| "-".to_string(), format_duration);
    println!("{} ({path})", medium.name());
    println!("  opacity {}", medium.profiles()[0].opacity);
    if let Some(l) = analysis.luminosity_erg_s {
        println!(
            "  luminosity                               {} erg/s = {} L_sun",
            format_significant(l, 4),
            format_significant(l / SOLAR_LUMINOSITY_ERG_S, 3)
        );
    }
    let zones: Vec<String> = analysis
        .zones
        .iter()
        .map(|z| {
            format!(
                "{} {:.3}–{:.3}",
                z.kind.name(),
                z.inner_radius_cm / radius,
                z.outer_radius_cm / radius
            )
        })
        .collect();
    println!(
        "  zones (r/R)                              {}",
        zones.join(", ")
    );
    match analysis.convective_base_radius_cm {
        Some(base) if base > 0.0 => println!(
            "  base of the outer convective zone        {:.3} R",
            base / radius
        ),
        Some(_) => println!(
            "  base of the outer convective zone        the centre (convective throughout)"
        ),
        None => println!("  base of the outer convective zone        none"),
    }
    if let Some(p) = &analysis.photosphere {
        println!(
            "  photosphere (τ = 2/3)                    {:.5} R, T = {} K",
            p.radius_cm / radius,
            p.temperature_k
                .map_or("-".into(), |t| format_significant(t, 4))
        );
    }
    let central = estimate(&medium.with_sphere_source(0.0).expect("a sphere"));
    let t = &analysis.times;
    println!(
        "  diffusion from the centre to the surface {}",
        format_duration(central.mean_time_s)
    );
    println!(
        "  ... from where the energy is released    {}",
        time(t.luminosity_weighted_time_s)
    );
    println!(
        "  flux-weighted residence U_F/L            {}",
        time(t.flux_weighted_time_s)
    );
    println!(
        "  radiant energy / luminosity U_rad/L      {}",
        time(t.energy_content_time_s)
    );
    println!(
        "  to the convective base, from the centre  {}",
        time(t.time_to_convective_base_s)
    );
    println!(
        "  ... from where the energy is released    {}",
        time(t.luminosity_weighted_time_to_convective_base_s)
    );
    println!(
        "  convection across the outer zone         {} (mixing length, alpha = {})",
        time(analysis.convective_crossing_time_s),
        analysis.mixing_length_alpha
    );
    println!();
}

fn main() {
    let paths: Vec<String> = std::env::args().skip(1).collect();
    if paths.is_empty() {
        describe("models/veyra-n3-sun-like.json");
        describe("models/veyra-n3-demo-table.json");
    } else {
        for path in &paths {
            describe(path);
        }
    }
}
