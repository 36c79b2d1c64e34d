//! `sojourn fit`: the absorption and scattering coefficients of one slab layer from
//! measured reflectance and transmittance.

use std::path::PathBuf;
use std::time::Instant;

use anyhow::{Context, Result, bail};
use clap::Args;

use sojourn::fit::feasibility::check_reachable;
use sojourn::fit::{FitError, FitOptions, Measured, Measurement, Sample, fit};
use sojourn::medium::model_file::model_from_value;
use sojourn::report::plots::Panel;
use sojourn::report::plots::fit_plane::FitPlanePanel;
use sojourn::report::{FitReport, render_fit_report};
use sojourn::transport::WalkLimits;

use super::output::{Output, check_outputs, write_atomically, write_text};

/// Arguments of `sojourn fit`.
#[derive(Debug, Args)]
pub struct FitArgs {
    /// Model file (JSON) of the sample as a slab lit by a beam, or `-` for standard input.
    /// The fitted layer's g, refractive index and thickness are used; its absorption and
    /// scattering coefficients are what the fit finds (any values will do as placeholders).
    model: PathBuf,
    /// Measured reflectance, a fraction of the incident light: the total reflectance,
    /// specular reflection of the front face included (integrating-sphere convention),
    /// unless --exclude-specular.
    #[arg(long, value_name = "R", allow_negative_numbers = true)]
    reflectance: f64,
    /// Measured transmittance: the total transmittance, unscattered light included; with
    /// --collimated-transmittance, the diffuse transmittance only (light scattered at least
    /// once).
    #[arg(long, value_name = "T", allow_negative_numbers = true)]
    transmittance: f64,
    /// Measured collimated (unscattered) transmittance; T is then the diffuse part only.
    #[arg(long, value_name = "TC", allow_negative_numbers = true)]
    collimated_transmittance: Option<f64>,
    /// Standard uncertainties (1σ, absolute): one value for every measurement, or one
    /// each for R, T (and Tc). Without it the standard errors are the Monte Carlo noise
    /// alone.
    #[arg(long, value_name = "SIGMA", num_args = 1..=3, allow_negative_numbers = true)]
    uncertainty: Vec<f64>,
    /// The layer to fit (0 is the top layer).
    #[arg(long, default_value_t = 0)]
    layer: usize,
    /// The reflectance excludes the specular reflection of the front face.
    #[arg(long)]
    exclude_specular: bool,
    /// Photons per Monte Carlo evaluation (every evaluation runs the same photons).
    #[arg(long, default_value_t = 100_000, value_parser = super::args::count)]
    photons: u64,
    /// Seed of every evaluation.
    #[arg(long, default_value_t = 1)]
    seed: u64,
    /// Worker threads (default: all cores). The result does not depend on it.
    #[arg(long, value_parser = clap::value_parser!(u64).range(1..=1024))]
    threads: Option<u64>,
    /// Iteration cap of the solver.
    #[arg(long, default_value_t = FitOptions::default().max_iterations)]
    max_iterations: usize,
    /// Convergence tolerance: stop when a step changes μa and μs′ by less than this
    /// fraction.
    #[arg(long, default_value_t = FitOptions::default().tolerance, value_parser = super::args::tolerance)]
    tolerance: f64,
    /// Write the JSON report to PATH (`-` for stdout, which then carries only JSON).
    #[arg(long, value_name = "PATH")]
    json: Option<PathBuf>,
    /// Write the text report to PATH (`-`: standard output, the default when no other
    /// output takes it).
    #[arg(long, value_name = "PATH")]
    report: Option<PathBuf>,
    /// Write the figure of the (μa, μs′) plane (solution, 1σ and 2σ ellipses, solver path)
    /// as fit-plane.svg into DIR (created if missing).
    #[arg(long, value_name = "DIR")]
    plot: Option<PathBuf>,
}

/// The measurement the arguments describe.
fn measurement(args: &FitArgs) -> Result<Measurement> {
    let wanted = 2 + usize::from(args.collimated_transmittance.is_some());
    let sigma: Vec<f64> = match args.uncertainty.len() {
        0 => vec![0.0; wanted],
        1 => vec![args.uncertainty[0]; wanted],
        n if n == wanted => args.uncertainty.clone(),
        n => bail!(
            "--uncertainty: {n} values given for {wanted} measurements: give one value for \
             all, or one each for R, T{}",
            if wanted == 3 { " and Tc" } else { "" }
        ),
    };
    Ok(Measurement {
        reflectance: Measured::new(args.reflectance, sigma[0]),
        transmittance: Measured::new(args.transmittance, sigma[1]),
        collimated_transmittance: args
            .collimated_transmittance
            .map(|value| Measured::new(value, sigma[2])),
        specular_included: !args.exclude_specular,
    })
}

/// The library's error with the command-line spelling of the value it names.
fn explain(error: FitError, file: &str) -> anyhow::Error {
    match error {
        FitError::Measurement {
            field,
            value,
            expected,
        } => {
            let option = match field {
                "reflectance" => "--reflectance".to_string(),
                "transmittance" => "--transmittance".to_string(),
                "collimated_transmittance" => "--collimated-transmittance".to_string(),
                other => format!("--uncertainty ({other})"),
            };
            anyhow::anyhow!("{option} {value}: expected {expected}")
        }
        FitError::NoSuchLayer { layer, layers } => anyhow::anyhow!(
            "{file}: --layer {layer}: the model has {layers} layer(s), numbered from 0"
        ),
        FitError::Model(problem) => anyhow::anyhow!("{file}: {problem}"),
        other => anyhow::anyhow!("{file}: {other}"),
    }
}

/// Runs the subcommand.
pub fn execute(args: FitArgs) -> Result<()> {
    let (value, file) = super::model_input::model_value(&args.model)?;
    let medium = model_from_value(&value, &file)?;
    let measurement = measurement(&args)?;
    // Every check that needs no photons comes before any output is touched.
    measurement.check().map_err(|e| explain(e, &file))?;
    let sample = Sample::new(&medium, args.layer).map_err(|e| explain(e, &file))?;
    check_reachable(&sample, &measurement).map_err(|e| explain(e, &file))?;
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
    if let Some(path) = &args.plot {
        outputs.push(Output::Folder {
            flag: "--plot",
            path,
        });
    }
    let stdout_taken = check_outputs(&outputs)?;
    let options = FitOptions {
        layer: args.layer,
        photons: args.photons,
        seed: args.seed,
        max_iterations: args.max_iterations,
        tolerance: args.tolerance,
        limits: WalkLimits::default(),
    };
    let mut pool = rayon::ThreadPoolBuilder::new();
    if let Some(threads) = args.threads {
        pool = pool.num_threads(threads as usize);
    }
    let pool = pool.build().context("cannot start the worker threads")?;
    let started = Instant::now();
    let result = pool
        .install(|| fit(&medium, &measurement, &options))
        .map_err(|e| explain(e, &file))?;
    let report = FitReport::new(
        &medium,
        &file,
        &measurement,
        &result,
        started.elapsed().as_secs_f64(),
    );
    let text = render_fit_report(&report);
    if let Some(path) = &args.json {
        let json = serde_json::to_string_pretty(&report).context("cannot serialise the report")?;
        write_text(path, &(json + "\n"))
            .with_context(|| format!("cannot write the JSON report to {}", path.display()))?;
    }
    if let Some(directory) = &args.plot {
        let figure = FitPlanePanel::from_report(&report)
            .render()
            .context("cannot draw the figure")?;
        let path = directory.join(format!("{}.svg", figure.name));
        write_atomically(&path, figure.svg.as_bytes())
            .with_context(|| format!("cannot write the figure {}", path.display()))?;
    }
    match &args.report {
        Some(path) => write_text(path, &text)
            .with_context(|| format!("cannot write the text report to {}", path.display()))?,
        None if !stdout_taken => write_text(std::path::Path::new("-"), &text)?,
        None => {}
    }
    Ok(())
}
