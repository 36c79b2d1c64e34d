//! Command-line parsing and the glue from arguments to library calls, one file per
//! subcommand.

mod args;
mod figures;
mod fit_command;
mod import_command;
mod merge_command;
mod model_input;
mod output;
mod profile_command;
mod progress;
mod run_command;
mod run_scale;
mod star_command;
mod stellar_args;
mod sweep_command;

use anyhow::Result;
use clap::{Parser, Subcommand};

/// How long radiation takes to random-walk out of a scattering medium: Monte Carlo against
/// diffusion theory.
#[derive(Debug, Parser)]
#[command(name = "sojourn", version, about, long_about = None)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Run photons through a model and compare with diffusion theory.
    Run(run_command::RunArgs),
    /// Run a parameter study: one model varied over lists, ranges or grids of values.
    Sweep(sweep_command::SweepArgs),
    /// Join the shard files of a run (or of a sweep) into the unsplit result.
    Merge(merge_command::MergeArgs),
    /// Build a polytropic star (Lane-Emden) and write it as a model file.
    Star(star_command::StarArgs),
    /// Read a stellar profile table (columns) and write it as a model file.
    Import(import_command::ImportArgs),
    /// Optical structure and diffusion-time budget of a sphere, no Monte Carlo.
    Profile(profile_command::ProfileArgs),
    /// Find a slab layer's absorption and scattering coefficients from measured reflectance
    /// and transmittance (Monte Carlo fit).
    Fit(fit_command::FitArgs),
}

/// Parses the command line and runs the chosen subcommand.
pub fn run() -> Result<()> {
    let cli = Cli::parse();
    match cli.command {
        Command::Run(args) => run_command::execute(args),
        Command::Sweep(args) => sweep_command::execute(args),
        Command::Merge(args) => merge_command::execute(args),
        Command::Star(args) => star_command::execute(args),
        Command::Import(args) => import_command::execute(args),
        Command::Profile(args) => profile_command::execute(args),
        Command::Fit(args) => fit_command::execute(args),
    }
}

/// Whether an error is a closed stdout (e.g. piped into `head`), which is not a failure.
pub fn is_broken_pipe(error: &anyhow::Error) -> bool {
    error.chain().any(|cause| {
        cause
            .downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}
