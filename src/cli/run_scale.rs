//! The scale-out options of `sojourn run`: `--shard K/N`, `--checkpoint PATH` with
//! `--checkpoint-every M`, and `--quiet` (no progress bar). Kept apart from
//! `run_command.rs` so that the run itself stays a short read.

use std::path::PathBuf;

use anyhow::{Context, Result};
use clap::Args;
use serde_json::Value;

use sojourn::checkpoint::CheckpointedRun;
use sojourn::fingerprint::fingerprint;
use sojourn::medium::Medium;
use sojourn::report::RunReport;
use sojourn::shard::{RunShardInfo, RunShardReport, Shard};
use sojourn::simulation::{RunConfig, RunResult, run_with_progress};

use super::progress::Progress;

/// Options of `sojourn run` for long and distributed runs.
#[derive(Debug, Args)]
pub struct ScaleArgs {
    /// Run only shard K of N (1 <= K <= N): photons [P(K-1)/N, PK/N) of the run. Needs
    /// --json PATH; `sojourn merge` joins the N shard files into the full report.
    #[arg(long, value_name = "K/N", requires = "json")]
    shard: Option<Shard>,
    /// Save the tally to PATH every --checkpoint-every photons (atomically); running the
    /// same command again resumes from it. The finished checkpoint is kept: remove it to
    /// run afresh.
    #[arg(long, value_name = "PATH")]
    checkpoint: Option<PathBuf>,
    /// Photons between checkpoints.
    #[arg(long, value_name = "M", default_value_t = 10_000, requires = "checkpoint",
          value_parser = super::args::count)]
    checkpoint_every: u64,
    /// No progress bar (it is shown only on a terminal, after about a second).
    #[arg(long, short)]
    quiet: bool,
}

impl ScaleArgs {
    /// The checkpoint file, if one was asked for.
    pub fn checkpoint(&self) -> Option<&std::path::Path> {
        self.checkpoint.as_deref()
    }
}

/// A run with its shard restriction applied.
pub struct ScaledRun<'a> {
    args: &'a ScaleArgs,
    config: RunConfig,
    total_photons: u64,
    model: &'a Value,
    model_file: &'a str,
}

impl<'a> ScaledRun<'a> {
    /// Restricts `config` to the shard, if any.
    pub fn new(
        args: &'a ScaleArgs,
        config: &RunConfig,
        model: &'a Value,
        model_file: &'a str,
    ) -> Self {
        let shard = args.shard.unwrap_or_else(Shard::whole);
        let range = shard.photon_range(config.photons);
        Self {
            args,
            config: RunConfig {
                first_photon: config.first_photon + range.start,
                photons: range.end - range.start,
                ..config.clone()
            },
            total_photons: config.photons,
            model,
            model_file,
        }
    }

    /// The configuration actually run (the shard's photons).
    pub fn config(&self) -> &RunConfig {
        &self.config
    }

    /// Runs the photons, with the progress bar and checkpoints as asked.
    pub fn run(&self, medium: &Medium) -> Result<RunResult> {
        let progress = Progress::new(self.config.photons, self.args.quiet);
        let result = match &self.args.checkpoint {
            Some(path) => {
                let run = CheckpointedRun::open(
                    medium,
                    &self.config,
                    &fingerprint(self.model),
                    &self.config.walk_description(),
                    path,
                    self.args.checkpoint_every,
                )?;
                if run.resumed_from() > 0 && !self.args.quiet {
                    eprintln!(
                        "sojourn: resuming from {}: {} of {} photons already done",
                        path.display(),
                        run.resumed_from(),
                        self.config.photons
                    );
                }
                progress.set(run.resumed_from());
                run.finish(&|done| progress.set(done))?
            }
            None => run_with_progress(medium, &self.config, &|done| progress.set(done)),
        };
        progress.finish();
        Ok(result)
    }

    /// Adds a note about the shard to its report.
    pub fn annotate(&self, report: &mut RunReport) {
        if let Some(shard) = self.args.shard {
            report.analysis.notes.push(format!(
                "shard {shard}: photons {}..{} of {}; this report covers the shard alone: join every shard with `sojourn merge`",
                self.config.first_photon,
                self.config.first_photon + self.config.photons,
                self.total_photons
            ));
        }
    }

    /// The JSON to write: the report, plus `shard` and `tally` for a shard.
    pub fn json(&self, report: &RunReport, result: &RunResult) -> Result<String> {
        let text = match self.args.shard {
            None => serde_json::to_string_pretty(report)?,
            Some(shard) => {
                let info = RunShardInfo::new(
                    shard,
                    self.total_photons,
                    &self.config,
                    &report.analysis.method,
                    self.model.clone(),
                    self.model_file,
                );
                serde_json::to_string_pretty(&RunShardReport {
                    report,
                    shard: &info,
                    tally: &result.tally,
                })
                .context("cannot serialise the shard file")?
            }
        };
        Ok(text + "\n")
    }
}
