//! `sojourn run`: photons through one model, report against diffusion theory.

use std::path::PathBuf;

use anyhow::{Context, Result};
use clap::Args;

use serde_json::Value;
use sojourn::medium::Medium;
use sojourn::medium::model_file::{
    DEMO_MODEL_JSON, DEMO_MODEL_LABEL, load_model_value, model_from_value, parse_model_value,
};
use sojourn::report::{RunReport, render_run_report};
use sojourn::simulation::RunConfig;
use sojourn::transport::WalkLimits;

use super::output::write_text;
use super::run_scale::{ScaleArgs, ScaledRun};

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
    #[command(flatten)]
    scale: ScaleArgs,
}

/// The medium, its label and its model-file JSON (kept for shard files).
fn load(args: &RunArgs) -> Result<(Medium, String, Value)> {
    let (value, file) = match &args.model {
        Some(path) => (load_model_value(path)?, path.display().to_string()),
        None => (
            parse_model_value(DEMO_MODEL_JSON, DEMO_MODEL_LABEL)?,
            DEMO_MODEL_LABEL.to_string(),
        ),
    };
    Ok((model_from_value(&value, &file)?, file, value))
}

/// Runs the subcommand.
pub fn execute(args: RunArgs) -> Result<()> {
    let (medium, file, model) = load(&args)?;
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
    let scaled = ScaledRun::new(&args.scale, &config, &model, &file);
    let result = pool.install(|| scaled.run(&medium))?;
    let mut report = RunReport::new(&medium, &file, scaled.config(), &result);
    scaled.annotate(&mut report);
    let json_to_stdout = args.json.as_deref() == Some(std::path::Path::new("-"));
    if let Some(path) = &args.json {
        let json = scaled.json(&report, &result)?;
        write_text(path, &json)
            .with_context(|| format!("cannot write the JSON report to {}", path.display()))?;
    }
    if !json_to_stdout {
        write_text(std::path::Path::new("-"), &render_run_report(&report))?;
    }
    Ok(())
}
