//! `sojourn import`: read a stellar profile table and write a model file.

use std::path::PathBuf;

use anyhow::{Context, Result};
use clap::{Args, ValueEnum};

use sojourn::import::{ColumnMapping, Delimiter, ImportOptions, TableQuantity, import_table_file};
use sojourn::medium::model_file::{model_from_value, profile_model_json};
use sojourn::opacity::OpacitySpec;
use sojourn::star::builder::interior_opacity;
use sojourn::units::{LengthUnit, format_significant};

use super::args;
use super::output::{Output, check_outputs, write_atomically};
use super::stellar_args::{EnergyChoice, energy, table_for_model};

/// Field separators.
#[derive(Debug, Clone, Copy, ValueEnum)]
enum DelimiterArg {
    /// Comma if the header line has one, else whitespace.
    Auto,
    /// Commas.
    Comma,
    /// Spaces or tabs.
    Whitespace,
}

/// Default composition assumed when a law needs X, Z and the table gives neither.
const DEFAULT_HYDROGEN: f64 = 0.70;
const DEFAULT_METALS: f64 = 0.02;

/// Arguments of `sojourn import`.
#[derive(Debug, Args)]
pub struct ImportArgs {
    /// The table: a header line naming the columns, then one row per line, separated by
    /// commas or whitespace; '#' starts a comment line.
    table: PathBuf,
    /// Column mapping, QUANTITY=COLUMN[:SCALE],... with quantities radius, density,
    /// temperature, opacity, hydrogen, metals, scattering_fraction, energy_generation (erg/g/s)
    /// (log_ prefix for log10 columns); COLUMN is a header name or a 1-based number; SCALE a factor to cgs or, for
    /// radius, a length unit (um, mm, cm, m, km, R_sun, or an alias such as solar_radius).
    /// Radius is in cm by default.
    #[arg(long, value_name = "MAPPING")]
    columns: String,
    /// Model file to write (JSON; written atomically).
    #[arg(long, value_name = "FILE")]
    out: PathBuf,
    /// Hydrogen mass fraction X for every row (when no column is mapped).
    #[arg(long, value_parser = args::fraction)]
    hydrogen: Option<f64>,
    /// Metal mass fraction Z for every row (when no column is mapped).
    #[arg(long, value_parser = args::fraction)]
    metals: Option<f64>,
    /// Opacity law when no opacity column is mapped (as for `sojourn star`; default
    /// es+kramers).
    #[arg(long, value_name = "LAW", value_parser = args::opacity, conflicts_with = "opacity_table")]
    opacity: Option<OpacitySpec>,
    /// Opacity table (CSV: temperature_k,density_g_cm3,opacity_cm2_g) evaluated at every row
    /// instead of a law (needs a temperature column); the model refers to it by a path
    /// relative to itself.
    #[arg(long, value_name = "CSV")]
    opacity_table: Option<PathBuf>,
    /// With --opacity-table: clamp rows outside the table to its edges (the reports flag
    /// them) instead of refusing the model.
    #[arg(long, requires = "opacity_table")]
    clamp_opacity_table: bool,
    /// Energy-generation laws evaluated at every row when no energy_generation column is
    /// mapped: pp, cno, pp+cno or none (default none).
    #[arg(long, value_name = "LAWS", default_value = "none", value_parser = energy)]
    energy: EnergyChoice,
    /// The radius column is a fraction r/R of this total radius: a length such as
    /// 6.957e10 (cm), 0.8R_sun or 5e5km.
    #[arg(long, value_name = "LENGTH", value_parser = sojourn::import::parse_length_cm)]
    total_radius: Option<f64>,
    /// Lines to skip before the header (e.g. a preamble that is not '#' comments).
    #[arg(long, default_value_t = 0)]
    skip_rows: usize,
    /// Field separator.
    #[arg(long, value_enum, default_value_t = DelimiterArg::Auto)]
    delimiter: DelimiterArg,
    /// Length unit of the radii written into the model file (um, mm, cm, m, km, R_sun, or
    /// an alias such as solar_radius).
    #[arg(long, default_value = "cm", value_parser = args::length_unit)]
    length_unit: LengthUnit,
    /// Relative tolerance between neighbouring sub-shell extinctions written into the model
    /// (default: the loader's 0.01).
    #[arg(long, value_parser = args::tolerance)]
    tolerance: Option<f64>,
    /// Model name (default: "imported table FILE", FILE the table's file name).
    #[arg(long)]
    name: Option<String>,
}

/// Runs the subcommand.
pub fn execute(args: ImportArgs) -> Result<()> {
    check_outputs(&[Output::File {
        flag: "--out",
        path: &args.out,
        stdout: false,
    }])?;
    let mapping = ColumnMapping::parse(&args.columns)?;
    let mapped = |q: TableQuantity| mapping.entries().iter().any(|e| e.quantity == q);
    let opacity_table = match &args.opacity_table {
        Some(table) => Some(table_for_model(table, &args.out, args.clamp_opacity_table)?),
        None => None,
    };
    let uses_law = !mapped(TableQuantity::Opacity) && opacity_table.is_none();
    let needs_composition = uses_law || args.energy.0.is_some();
    let mut assumed = Vec::new();
    let opacity_law = if uses_law {
        Some(args.opacity.clone().unwrap_or_else(|| {
            assumed.push("opacity law es+kramers (give --opacity)".to_string());
            interior_opacity()
        }))
    } else {
        args.opacity.clone()
    };
    let mut single = |value: Option<f64>, quantity: TableQuantity, default: f64, flag: &str| {
        if value.is_some() || mapped(quantity) || !needs_composition {
            return value;
        }
        assumed.push(format!(
            "{} = {default} (give {flag} or map a column)",
            quantity.name()
        ));
        Some(default)
    };
    let hydrogen_x = single(
        args.hydrogen,
        TableQuantity::Hydrogen,
        DEFAULT_HYDROGEN,
        "--hydrogen",
    );
    let metals_z = single(
        args.metals,
        TableQuantity::Metals,
        DEFAULT_METALS,
        "--metals",
    );
    let options = ImportOptions {
        hydrogen_x,
        metals_z,
        opacity_law,
        opacity_table,
        energy: args.energy.0,
        total_radius_cm: args.total_radius,
        skip_rows: args.skip_rows,
        delimiter: match args.delimiter {
            DelimiterArg::Auto => Delimiter::Auto,
            DelimiterArg::Comma => Delimiter::Comma,
            DelimiterArg::Whitespace => Delimiter::Whitespace,
        },
        ..ImportOptions::new(mapping)
    };
    let table = import_table_file(&args.table, &options)?;
    let name = args.name.unwrap_or_else(|| default_name(&args.table));
    let json = profile_model_json(
        &name,
        args.length_unit,
        "imported profile",
        &table,
        args.tolerance,
    );
    let label = args.out.display().to_string();
    let medium =
        model_from_value(&json, &label).context("the imported profile is not a valid model")?;
    let text = serde_json::to_string_pretty(&json)? + "\n";
    write_atomically(&args.out, text.as_bytes())?;
    for assumption in &assumed {
        eprintln!("sojourn: note: assumed {assumption}");
    }
    let summary = &medium.profiles()[0];
    let mut out = format!(
        "wrote {label}: {} rows, radius {} cm, {} sub-shells, optical depth {}",
        table.rows(),
        format_significant(medium.size_cm(), 6),
        medium.layers().len(),
        format_significant(summary.optical_depth, 6),
    );
    if let Some(cut) = &summary.surface_cut {
        out += &format!(
            "\n  surface cut at r = {} cm where T = {} K (the lower limit of the opacity law or table)",
            format_significant(cut.radius_cm, 6),
            cut.temperature_k
        );
    }
    if let Some(luminosity) = medium.structure().and_then(|s| s.luminosity_erg_s()) {
        out += &format!(
            "\n  luminosity {} erg/s from the energy generation",
            format_significant(luminosity, 4)
        );
    }
    out += &format!("\n  next: sojourn profile {label}\n");
    super::output::write_text(std::path::Path::new("-"), &out)
}

/// The model name when `--name` is not given: "imported table FILE" with the table's file
/// name, so that report titles read "profile of imported table star.txt".
fn default_name(table: &std::path::Path) -> String {
    let file = table.file_name().map_or_else(
        || table.display().to_string(),
        |name| name.to_string_lossy().into_owned(),
    );
    format!("imported table {file}")
}
