//! `sojourn run`: photons through one model, report against diffusion theory.

use std::path::PathBuf;

use anyhow::{Context, Result};
use clap::Args;

use sojourn::medium::Medium;
use sojourn::medium::model_file::{
    DEMO_MODEL_JSON, DEMO_MODEL_LABEL, LoadOptions, load_model_with, parse_model_with,
};
use sojourn::report::{RunReport, render_run_report};
use sojourn::simulation::{RunConfig, run};
use sojourn::transport::WalkLimits;

use super::output::write_text;

/// Arguments of `sojourn run`.
#[derive(Debug, Args)]
pub struct RunArgs {
    /// Model file (JSON). Without it, the embedded demo model runs.
    model: Option<PathBuf>,
    /// Number of photons to launch.
    #[arg(long, default_value_t = 10_000, value_parser = clap::value_parser!(u64).range(1..))]
    photons: u64,
    /// Seed of the random streams: the same seed gives the same result, bit for bit.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// Worker threads (default: all cores). The result does not depend on it.
    #[arg(long, value_parser = clap::value_parser!(u64).range(1..=1024))]
    threads: Option<u64>,
    /// Write the JSON report to PATH (`-` for stdout, which then carries only JSON).
    #[arg(long, value_name = "PATH")]
    json: Option<PathBuf>,
    /// Free flights allowed per photon before it is counted as censored.
    #[arg(long, default_value_t = WalkLimits::default().max_steps, value_parser = clap::value_parser!(u64).range(1..))]
    max_steps: u64,
    /// Override the sub-shell tolerance of every tabulated profile layer (relative, e.g.
    /// 0.01 for neighbouring extinctions within 1 %).
    #[arg(long, value_parser = super::args::tolerance)]
    profile_tolerance: Option<f64>,
}

fn load(args: &RunArgs) -> Result<(Medium, String)> {
    let options = LoadOptions {
        profile_tolerance: args.profile_tolerance,
    };
    match &args.model {
        Some(path) => Ok((load_model_with(path, &options)?, path.display().to_string())),
        None => Ok((
            parse_model_with(DEMO_MODEL_JSON, DEMO_MODEL_LABEL, &options)?,
            DEMO_MODEL_LABEL.to_string(),
        )),
    }
}

/// Runs the subcommand.
pub fn execute(args: RunArgs) -> Result<()> {
    let (medium, file) = load(&args)?;
    let config = RunConfig {
        photons: args.photons,
        seed: args.seed,
        limits: WalkLimits {
            max_steps: args.max_steps,
        },
        ..RunConfig::default()
    };
    let mut pool = rayon::ThreadPoolBuilder::new();
    if let Some(threads) = args.threads {
        pool = pool.num_threads(threads as usize);
    }
    let pool = pool.build().context("cannot start the worker threads")?;
    let result = pool.install(|| run(&medium, &config));
    let report = RunReport::new(&medium, &file, &config, &result);
    let json_to_stdout = args.json.as_deref() == Some(std::path::Path::new("-"));
    if let Some(path) = &args.json {
        let json = serde_json::to_string_pretty(&report)? + "\n";
        write_text(path, &json)
            .with_context(|| format!("cannot write the JSON report to {}", path.display()))?;
    }
    if !json_to_stdout {
        write_text(std::path::Path::new("-"), &render_run_report(&report))?;
    }
    Ok(())
}
