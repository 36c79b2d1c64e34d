//! `sojourn star`: build a polytropic star and write it as a model file.

use std::path::PathBuf;

use anyhow::{Context, Result};
use clap::Args;

use sojourn::medium::model_file::model_from_value;
use sojourn::opacity::OpacitySpec;
use sojourn::star::builder::{DEFAULT_ROWS, PolytropeStar, PressureChoice, interior_opacity};
use sojourn::units::{SOLAR_LUMINOSITY_ERG_S, format_significant};

use super::args;
use super::output::{Output, check_outputs, write_atomically};
use super::stellar_args::{EnergyChoice, energy, table_for_model};

/// Arguments of `sojourn star`.
#[derive(Debug, Args)]
pub struct StarArgs {
    /// Polytropic index n (0 <= n < 5): 3 for a Sun-like radiative star, 1.5 for a fully
    /// convective one.
    #[arg(long, value_name = "N")]
    polytrope: f64,
    /// Mass in solar masses (IAU 2015 nominal).
    #[arg(long, value_name = "M_SUN", value_parser = args::positive)]
    mass: f64,
    /// Radius in solar radii (IAU 2015 nominal, 6.957e10 cm).
    #[arg(long, value_name = "R_SUN", value_parser = args::positive)]
    radius: f64,
    /// Hydrogen mass fraction X.
    #[arg(long, default_value_t = 0.70, value_parser = args::fraction)]
    hydrogen: f64,
    /// Metal mass fraction Z.
    #[arg(long, default_value_t = 0.02, value_parser = args::fraction)]
    metals: f64,
    /// Model file to write (JSON; written atomically).
    #[arg(long, value_name = "FILE")]
    out: PathBuf,
    /// Opacity law: es, ff, bf, kramers, h_minus, smooth, constant:VALUE, sums such as
    /// es+kramers, or a JSON law. Default: es+kramers.
    #[arg(long, value_name = "LAW", value_parser = args::opacity, conflicts_with = "opacity_table")]
    opacity: Option<OpacitySpec>,
    /// Opacity table (CSV: temperature_k,density_g_cm3,opacity_cm2_g on a rectilinear grid)
    /// instead of a law; the model file refers to it by a path relative to itself.
    #[arg(long, value_name = "CSV")]
    opacity_table: Option<PathBuf>,
    /// With --opacity-table: clamp points outside the table to its edges (the reports flag
    /// them) instead of refusing the model.
    #[arg(long, requires = "opacity_table")]
    clamp_opacity_table: bool,
    /// Energy-generation laws written into the model as ε per row (erg/g/s): pp, cno,
    /// pp+cno or none.
    #[arg(long, value_name = "LAWS", default_value = "pp+cno", value_parser = energy)]
    energy: EnergyChoice,
    /// Photons start where the energy is released (source "energy_generation") instead of
    /// at the centre.
    #[arg(long)]
    energy_source: bool,
    /// Eddington's standard model (n = 3 only): a constant fraction of the pressure is
    /// radiation pressure, which lowers the temperature. Default: included when Eddington's
    /// quartic gives 1 - beta >= 1 % (n = 3; M >~ 4.8 M_sun at X = 0.70, Z = 0.02).
    #[arg(long, conflicts_with = "ideal_gas")]
    eddington: bool,
    /// All the pressure is ideal gas, whatever the mass.
    #[arg(long)]
    ideal_gas: bool,
    /// Table rows from the centre to the surface.
    #[arg(long, default_value_t = DEFAULT_ROWS, value_parser = clap::builder::RangedU64ValueParser::<usize>::new().range(3..=1_000_000))]
    rows: usize,
    /// Relative tolerance between neighbouring sub-shell extinctions written into the model
    /// (default: the loader's 0.01).
    #[arg(long, value_parser = args::tolerance)]
    tolerance: Option<f64>,
    /// Model name (default: a description of the polytrope).
    #[arg(long)]
    name: Option<String>,
    /// Also write the profile as a CSV table (radius_cm, density_g_cm3, temperature_k,
    /// hydrogen, metals) that `sojourn import` reads.
    #[arg(long, value_name = "CSV")]
    table: Option<PathBuf>,
}

/// Runs the subcommand.
pub fn execute(args: StarArgs) -> Result<()> {
    let mut outputs = vec![Output::File {
        flag: "--out",
        path: &args.out,
        stdout: false,
    }];
    if let Some(path) = &args.table {
        outputs.push(Output::File {
            flag: "--table",
            path,
            stdout: false,
        });
    }
    check_outputs(&outputs)?;
    let opacity_table = match &args.opacity_table {
        Some(table) => Some(table_for_model(table, &args.out, args.clamp_opacity_table)?),
        None => None,
    };
    let star = PolytropeStar {
        index: args.polytrope,
        mass_solar: args.mass,
        radius_solar: args.radius,
        hydrogen_x: args.hydrogen,
        metals_z: args.metals,
        pressure: if args.eddington {
            PressureChoice::Eddington
        } else if args.ideal_gas {
            PressureChoice::IdealGas
        } else {
            PressureChoice::Auto
        },
        opacity: args.opacity.unwrap_or_else(interior_opacity),
        opacity_table,
        energy: args.energy.0,
        energy_source: args.energy_source,
        rows: args.rows,
        tolerance: args.tolerance,
        name: args.name,
    };
    let built = star.build().context("cannot build the star")?;
    // The file must load: check before writing it.
    let label = args.out.display().to_string();
    let medium = model_from_value(&built.model_json, &label)
        .context("the star does not make a valid model")?;
    let json = serde_json::to_string_pretty(&built.model_json)? + "\n";
    write_atomically(&args.out, json.as_bytes())?;
    if let Some(table) = &args.table {
        write_atomically(table, sojourn::import::table_csv(&built.table).as_bytes())?;
    }
    let p = &built.polytrope;
    let mut out = format!(
        "wrote {label}: {}\n  n = {} polytrope, M = {} M_sun, R = {} R_sun, X = {}, Z = {}, mu = {:.4}, beta = {}\n  \
         central density {} g/cm³ ({} × mean), central temperature {} K\n  \
         {} table rows, opacity: {}\n  {} sub-shells at load",
        medium.name(),
        star.index,
        star.mass_solar,
        star.radius_solar,
        star.hydrogen_x,
        star.metals_z,
        p.mean_molecular_weight(),
        format_significant(p.beta(), 6),
        format_significant(p.central_density_g_cm3(), 4),
        format_significant(p.solution().central_to_mean_density(), 6),
        format_significant(p.central_temperature_k(), 4),
        built.table.rows(),
        match &star.opacity_table {
            Some(table) => format!(
                "table {} ({}; points outside it {})",
                table.file,
                table.table.range().describe(),
                match table.outside {
                    sojourn::opacity::OutsidePolicy::Refuse => "refused",
                    sojourn::opacity::OutsidePolicy::Clamp => "clamped to its edges",
                }
            ),
            None => star.opacity.describe(),
        },
        medium.layers().len(),
    );
    if let (Some(laws), Some(luminosity)) = (
        star.energy,
        medium.structure().and_then(|s| s.luminosity_erg_s()),
    ) {
        out += &format!(
            "\n  energy generation: {}; luminosity {} erg/s ({} L_sun){}",
            laws.describe(),
            format_significant(luminosity, 4),
            format_significant(luminosity / SOLAR_LUMINOSITY_ERG_S, 3),
            if star.energy_source {
                ", photons start where it is released"
            } else {
                ""
            }
        );
    }
    for note in &built.notes {
        match note.strip_prefix("warning: ") {
            Some(warning) => eprintln!("sojourn: warning: {warning}"),
            None => out += &format!("\n  {note}"),
        }
    }
    if let Some(cut) = medium
        .profiles()
        .first()
        .and_then(|s| s.surface_cut.as_ref())
    {
        out += &format!(
            "\n  surface cut at r = {:.6} R where T = {} K (the lower limit of the opacity law or table)",
            cut.radius_cm / p.radius_cm(),
            if cut.temperature_k.fract() == 0.0 {
                format!("{}", cut.temperature_k)
            } else {
                format_significant(cut.temperature_k, 6)
            }
        );
    }
    if let Some(table) = &args.table {
        out += &format!("\n  table written to {}", table.display());
    }
    out += &format!("\n  next: sojourn profile {label}\n");
    super::output::write_text(std::path::Path::new("-"), &out)
}
