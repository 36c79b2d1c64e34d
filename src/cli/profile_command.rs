//! `sojourn profile`: the optical structure of a sphere and its diffusion-time budget, no
//! Monte Carlo.

use std::path::{Path, PathBuf};

use anyhow::{Context, Result};
use clap::Args;

use sojourn::medium::model_file::{LoadOptions, model_from_value_with};
use sojourn::report::{ProfileReport, render_profile_csv, render_profile_report};

use super::args;
use super::figures::write_profile_figures;
use super::output::{Output, check_outputs, write_text};

/// Arguments of `sojourn profile`.
#[derive(Debug, Args)]
pub struct ProfileArgs {
    /// Model file (JSON) of a sphere, or `-` to read it from standard input.
    model: PathBuf,
    /// Write the JSON report to PATH (`-` for stdout, which then carries only JSON).
    #[arg(long, value_name = "PATH")]
    json: Option<PathBuf>,
    /// Write one CSV line per shell to PATH (`-` for stdout, which then carries only CSV).
    #[arg(long, value_name = "PATH")]
    csv: Option<PathBuf>,
    /// Override the sub-shell tolerance of every profile layer (relative, e.g. 0.01).
    #[arg(long, value_parser = args::tolerance)]
    tolerance: Option<f64>,
    /// Radius bins in the printed time budget.
    #[arg(long, default_value_t = 20, value_parser = clap::builder::RangedU64ValueParser::<usize>::new().range(1..=1000))]
    rows: usize,
    /// Write the figures (optical structure, time budget) as SVG files into DIR.
    #[arg(long, value_name = "DIR")]
    plot: Option<PathBuf>,
    /// Write a single-file HTML report (text report and figures, no external assets) to
    /// PATH.
    #[arg(long, value_name = "PATH")]
    report: Option<PathBuf>,
}

/// Runs the subcommand.
pub fn execute(args: ProfileArgs) -> Result<()> {
    let stdout = Path::new("-");
    let mut outputs = Vec::new();
    for (flag, path) in [
        ("--json", &args.json),
        ("--csv", &args.csv),
        ("--report", &args.report),
    ] {
        if let Some(path) = path {
            outputs.push(Output::File {
                flag,
                path,
                stdout: true,
            });
        }
    }
    if let Some(path) = &args.plot {
        outputs.push(Output::Folder {
            flag: "--plot",
            path,
        });
    }
    let stdout_taken = check_outputs(&outputs)?;
    let options = LoadOptions {
        profile_tolerance: args.tolerance,
    };
    let (value, file) = super::model_input::model_value(&args.model)?;
    let medium = model_from_value_with(&value, &file, &options)?;
    let report = ProfileReport::new(&medium, &file).with_context(|| file.clone())?;
    if let Some(path) = &args.json {
        let json = serde_json::to_string_pretty(&report)? + "\n";
        write_text(path, &json)
            .with_context(|| format!("cannot write the JSON report to {}", path.display()))?;
    }
    if let Some(path) = &args.csv {
        write_text(path, &render_profile_csv(&report))
            .with_context(|| format!("cannot write the CSV table to {}", path.display()))?;
    }
    let text = render_profile_report(&report, args.rows);
    write_profile_figures(
        args.plot.as_deref(),
        args.report.as_deref(),
        &medium,
        &report,
        &text,
    )?;
    if !stdout_taken {
        write_text(stdout, &text)?;
    }
    Ok(())
}
