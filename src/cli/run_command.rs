//! `sojourn run`: photons through one model, report against diffusion theory.

use std::path::PathBuf;

use anyhow::{Context, Result};
use clap::Args;

use serde_json::Value;
use sojourn::analysis::stellar::StellarAnalysis;
use sojourn::analysis::{RadialRange, resolved_layout_with};
use sojourn::medium::model_file::{
    DEMO_MODEL_JSON, DEMO_MODEL_LABEL, LoadOptions, model_from_value_with, parse_model_value,
};
use sojourn::medium::{Geometry, Medium};
use sojourn::report::{RunReport, render_run_report};
use sojourn::simulation::{Absorption, Method, PlanError, RunConfig};
use sojourn::transport::{Acceleration, WalkLimits};

use super::figures::write_run_figures;
use super::output::{Output, check_outputs, write_text};
use super::run_scale::{ScaleArgs, ScaledRun};

/// Arguments of `sojourn run`.
#[derive(Debug, Args)]
pub struct RunArgs {
    /// Model file (JSON), or `-` to read it from standard input. Without it, the embedded
    /// demo model runs.
    model: Option<PathBuf>,
    /// Number of photons to launch.
    #[arg(long, default_value_t = 10_000, value_parser = super::args::count)]
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
    #[arg(long, default_value_t = WalkLimits::default().max_steps, value_parser = super::args::count)]
    max_steps: u64,
    /// Walk method: `direct` (every scattering), `accelerated` (diffusion jumps deep inside),
    /// `auto` (whichever a cost estimate finds cheaper; the report says which and why).
    #[arg(long, value_enum, default_value_t = MethodArg::Auto)]
    method: MethodArg,
    /// Absorption: `analog` (an absorbed photon ends its walk) or `weighted` (implicit
    /// capture: every interaction scatters and multiplies the photon's weight by the
    /// albedo, Russian roulette below weight 1e-3; less noise on reflectance and
    /// transmittance of absorbing media).
    #[arg(long, value_enum, default_value_t = AbsorptionArg::Analog)]
    absorption: AbsorptionArg,
    /// Accelerated walk: smallest jump, in transport mean free paths (a jump starts at least
    /// GAMMA from where it can end, and never within GAMMA of a surface or interface).
    #[arg(long, default_value_t = Acceleration::default().gamma(), value_parser = positive_number)]
    gamma: f64,
    /// Accelerated walk: gradient tolerance; jumps only where the transport mean free path
    /// changes by at most EPSILON (relative) over GAMMA mean free paths.
    #[arg(long, default_value_t = Acceleration::default().epsilon(), value_parser = positive_number)]
    epsilon: f64,
    /// Accelerated walk: do not tilt jump exits along the gradient of the diffusion
    /// coefficient (for measuring the drift bias only).
    #[arg(long)]
    no_drift_correction: bool,
    /// Slabs: keep resolved tallies (time of flight of reflected and transmitted light,
    /// absorption by layer and depth, exit angles, radial reflectance) and put them, with
    /// the diffusion curves on the same bins, in the JSON report.
    #[arg(long)]
    resolve: bool,
    /// With --resolve: width of a time-of-flight bin in picoseconds (default: 200 bins over
    /// the longer of 4 diffusion mean times and 8 diffusion decay times).
    #[arg(long, value_parser = positive_number, requires = "resolve")]
    tof_bin_ps: Option<f64>,
    /// With --resolve: number of time-of-flight bins.
    #[arg(long, default_value_t = 200, value_parser = clap::value_parser!(u64).range(1..=100_000), requires = "resolve")]
    tof_bins: u64,
    /// With --resolve: number of exit-cosine bins.
    #[arg(long, default_value_t = 20, value_parser = clap::value_parser!(u64).range(1..=10_000), requires = "resolve")]
    cosine_bins: u64,
    /// With --resolve: range of the logarithmic bins of R(ρ) and T(ρ) in transport mean
    /// free paths, MIN:MAX (10 bins per decade; default from 0.01 to where the light is
    /// expected to reach).
    #[arg(long, value_name = "MIN:MAX", value_parser = radial_range, requires = "resolve")]
    radial_range: Option<RadialRange>,
    #[command(flatten)]
    scale: ScaleArgs,
    /// Write the run's figures as SVG files into DIR (created if missing).
    #[arg(long, value_name = "DIR")]
    plot: Option<PathBuf>,
    /// Write a single-file HTML report (summary and figures, no external assets) to PATH.
    #[arg(long, value_name = "PATH")]
    report: Option<PathBuf>,
    /// Override the sub-shell tolerance of every tabulated profile layer (relative, e.g.
    /// 0.01 for neighbouring extinctions within 1 %). Not with --shard or --checkpoint,
    /// whose files rebuild the model with its own tolerance.
    #[arg(long, value_parser = super::args::tolerance, conflicts_with_all = ["shard", "checkpoint"])]
    profile_tolerance: Option<f64>,
    /// Stop the walk at a radius below the surface: `convective-base`, the base of the outer
    /// convective zone (Schwarzschild criterion; the model needs energy generation), where
    /// convection takes over. Photons reaching it count as escaped; diffusion times are to
    /// it. Not with --shard or --checkpoint.
    #[arg(long, value_enum, value_name = "WHERE", conflicts_with_all = ["shard", "checkpoint"])]
    stop_at: Option<StopAtArg>,
    /// Run even when the estimated cost exceeds the limit for one run (10^11 steps, about
    /// an hour of one core); the estimate is printed when a run is refused.
    #[arg(long)]
    allow_long_run: bool,
}

/// Where `--stop-at` stops the walk.
#[derive(Debug, Clone, Copy, clap::ValueEnum)]
enum StopAtArg {
    /// The base of the outer convective zone.
    ConvectiveBase,
}

/// Absorption treatments on the command line.
#[derive(Debug, Clone, Copy, clap::ValueEnum)]
enum AbsorptionArg {
    Analog,
    Weighted,
}

impl From<AbsorptionArg> for Absorption {
    fn from(absorption: AbsorptionArg) -> Self {
        match absorption {
            AbsorptionArg::Analog => Absorption::Analog,
            AbsorptionArg::Weighted => Absorption::Weighted,
        }
    }
}

/// Walk methods on the command line.
#[derive(Debug, Clone, Copy, clap::ValueEnum)]
enum MethodArg {
    Direct,
    Accelerated,
    Auto,
}

impl From<MethodArg> for Method {
    fn from(method: MethodArg) -> Self {
        match method {
            MethodArg::Direct => Method::Direct,
            MethodArg::Accelerated => Method::Accelerated,
            MethodArg::Auto => Method::Auto,
        }
    }
}

/// Parses a finite number > 0.
fn positive_number(text: &str) -> Result<f64, String> {
    let value: f64 = text
        .parse()
        .map_err(|_| format!("{text:?} is not a number"))?;
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(format!("{value} is not a finite number > 0"))
    }
}

/// The medium, its label and its model-file JSON (kept for shard files).
fn load(args: &RunArgs) -> Result<(Medium, String, Value)> {
    let (value, file) = match &args.model {
        Some(path) => super::model_input::model_value(path)?,
        None => (
            parse_model_value(DEMO_MODEL_JSON, DEMO_MODEL_LABEL)?,
            DEMO_MODEL_LABEL.to_string(),
        ),
    };
    let options = LoadOptions {
        profile_tolerance: args.profile_tolerance,
    };
    let medium = model_from_value_with(&value, &file, &options)?;
    let medium = match args.stop_at {
        None => medium,
        Some(StopAtArg::ConvectiveBase) => stop_at_convective_base(medium, &file)?,
    };
    Ok((medium, file, value))
}

/// The medium cut at the base of its outer convective zone.
fn stop_at_convective_base(medium: Medium, file: &str) -> Result<Medium> {
    let analysis = StellarAnalysis::of(&medium).with_context(|| {
        format!(
            "{file}: --stop-at convective-base needs a stellar model (a sphere of profile layers)"
        )
    })?;
    let Some(base) = analysis.convective_base_radius_cm else {
        anyhow::bail!(
            "{file}: --stop-at convective-base: the model has no outer convective zone{}",
            if analysis.zones.is_empty() {
                " (zones need energy generation: a profile \"energy_generation\" column)"
            } else {
                ""
            }
        );
    };
    if base <= 0.0 {
        anyhow::bail!(
            "{file}: --stop-at convective-base: the whole model is convective (Schwarzschild), so \
             radiation carries none of its luminosity; there is no radiative interior to walk"
        );
    }
    medium
        .truncated_at(base)
        .with_context(|| format!("{file}: cannot stop the walk at r = {base} cm"))
}

/// Parses `--radial-range MIN:MAX` (transport mean free paths, 0 < MIN < MAX, MAX/MIN ≤ 10¹²).
fn radial_range(text: &str) -> Result<RadialRange, String> {
    let expected = "MIN:MAX in transport mean free paths, finite, with 0 < MIN < MAX and \
                    MAX/MIN <= 1e12, e.g. 0.1:50";
    let (min, max) = text
        .split_once(':')
        .ok_or_else(|| format!("{text:?}: expected {expected}"))?;
    let parse = |part: &str| part.trim().parse::<f64>().ok();
    match (parse(min), parse(max)) {
        (Some(min), Some(max))
            if min.is_finite()
                && max.is_finite()
                && min > 0.0
                && max > min
                && max / min <= 1e12 =>
        {
            Ok(RadialRange {
                min_mfp: min,
                max_mfp: max,
            })
        }
        _ => Err(format!("{text:?}: expected {expected}")),
    }
}

/// Runs the subcommand.
pub fn execute(args: RunArgs) -> Result<()> {
    let (medium, file, model) = load(&args)?;
    let stdout_taken = check_run_outputs(&args)?;
    if args.resolve && medium.geometry() != Geometry::Slab {
        anyhow::bail!("{file}: --resolve is for slabs; this model is a sphere");
    }
    let resolved = args.resolve.then(|| {
        resolved_layout_with(
            &medium,
            args.tof_bin_ps.map(|ps| ps * 1e-12),
            args.tof_bins as usize,
            args.cosine_bins as usize,
            args.radial_range,
        )
    });
    let config = RunConfig {
        photons: args.photons,
        seed: args.seed,
        limits: WalkLimits {
            max_steps: args.max_steps,
        },
        method: args.method.into(),
        absorption: args.absorption.into(),
        acceleration: Acceleration::new(args.gamma, args.epsilon, !args.no_drift_correction)
            .context("--gamma and --epsilon")?,
        resolved,
        ..RunConfig::default()
    };
    let mut pool = rayon::ThreadPoolBuilder::new();
    if let Some(threads) = args.threads {
        pool = pool.num_threads(threads as usize);
    }
    let pool = pool.build().context("cannot start the worker threads")?;
    let scaled = ScaledRun::new(&args.scale, &config, &model, &file);
    sojourn::simulation::plan(&medium, scaled.config())
        .check(scaled.config().photons, args.allow_long_run)
        .map_err(|refusal| match refusal {
            PlanError::TooLong { .. } => anyhow::anyhow!(
                "{file}: refused before starting: {refusal}; use fewer photons, \
                 --method auto or accelerated, or pass --allow-long-run"
            ),
            PlanError::Stalled { .. } => anyhow::anyhow!("{file}: cannot run: {refusal}"),
        })?;
    let result = pool.install(|| scaled.run(&medium))?;
    let mut report = RunReport::new(&medium, &file, scaled.config(), &result);
    scaled.annotate(&mut report);
    if let Some(path) = &args.json {
        let json = scaled.json(&report, &result)?;
        write_text(path, &json)
            .with_context(|| format!("cannot write the JSON report to {}", path.display()))?;
    }
    let text = render_run_report(&report);
    write_run_figures(
        args.plot.as_deref(),
        args.report.as_deref(),
        &medium,
        &result.tally,
        &report,
        &text,
    )?;
    if !stdout_taken {
        write_text(std::path::Path::new("-"), &text)?;
    }
    Ok(())
}

/// Checks every output of the run before any photon (see [`check_outputs`]); returns
/// whether one of them is standard output, which then carries only that output.
fn check_run_outputs(args: &RunArgs) -> Result<bool> {
    let mut outputs = Vec::new();
    if let Some(path) = &args.json {
        outputs.push(Output::File {
            flag: "--json",
            path,
            stdout: true,
        });
    }
    if let Some(path) = &args.report {
        outputs.push(Output::File {
            flag: "--report",
            path,
            stdout: true,
        });
    }
    if let Some(path) = args.scale.checkpoint() {
        outputs.push(Output::File {
            flag: "--checkpoint",
            path,
            stdout: false,
        });
    }
    if let Some(path) = &args.plot {
        outputs.push(Output::Folder {
            flag: "--plot",
            path,
        });
    }
    check_outputs(&outputs)
}
