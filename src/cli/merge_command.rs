//! `sojourn merge`: joins the shard files of a run (or of a sweep) into the result of the
//! unsplit run, refusing files that do not belong together.

use std::path::{Path, PathBuf};

use anyhow::{Result, bail};
use clap::Args;

use sojourn::report::{RunReport, render_run_report};
use sojourn::shard::{RunShard, merge_run_shards};
use sojourn::sweep::PointResult;
use sojourn::sweep::merge::{ShardFile, SweepShard, merge_sweep_shards, read_shard_file};
use sojourn::sweep::table::{SweepRow, csv_text, jsonl_text, render_text};

use super::figures::{write_run_figures, write_sweep_figures};
use super::output::{Output, check_outputs, write_text};

/// Arguments of `sojourn merge`.
#[derive(Debug, Args)]
pub struct MergeArgs {
    /// Shard files: every `sojourn run --shard K/N --json PATH` output of one run, or every
    /// `OUT/shard-K-of-N.json` of one sweep.
    #[arg(required = true, value_name = "SHARD")]
    files: Vec<PathBuf>,
    /// Write the merged JSON to PATH (`-` for stdout): the run report, or for a sweep its
    /// table as JSON Lines.
    #[arg(long, value_name = "PATH")]
    json: Option<PathBuf>,
    /// Sweeps: write the table as CSV to PATH (`-` for stdout).
    #[arg(long, value_name = "PATH")]
    csv: Option<PathBuf>,
    /// Sweeps: write DIR/sweep.csv and DIR/sweep.jsonl, as an unsplit sweep does.
    #[arg(long, value_name = "DIR")]
    out: Option<PathBuf>,
    /// Write the merged result's figures as SVG files into DIR: a run's figures, or a
    /// sweep's mean escape time against its first parameter, as the unsplit command's
    /// `--plot` does.
    #[arg(long, value_name = "DIR")]
    plot: Option<PathBuf>,
    /// Write a single-file HTML report (the printed report or table and the figures) to
    /// PATH.
    #[arg(long, value_name = "PATH")]
    report: Option<PathBuf>,
}

/// Runs the subcommand.
pub fn execute(args: MergeArgs) -> Result<()> {
    let mut outputs = Vec::new();
    for (flag, path) in [("--json", &args.json), ("--csv", &args.csv)] {
        if let Some(path) = path {
            outputs.push(Output::File {
                flag,
                path,
                stdout: true,
            });
        }
    }
    if let Some(path) = &args.report {
        outputs.push(Output::File {
            flag: "--report",
            path,
            stdout: true,
        });
    }
    for (flag, path) in [("--out", &args.out), ("--plot", &args.plot)] {
        if let Some(path) = path {
            outputs.push(Output::Folder { flag, path });
        }
    }
    check_outputs(&outputs)?;
    let mut runs: Vec<RunShard> = Vec::new();
    let mut sweeps: Vec<SweepShard> = Vec::new();
    for path in &args.files {
        match read_shard_file(path)? {
            ShardFile::Run(shard) => runs.push(*shard),
            ShardFile::Sweep(shard) => sweeps.push(shard),
        }
    }
    if let (Some(run), Some(sweep)) = (runs.first(), sweeps.first()) {
        bail!(
            "{} is a shard of a run but {} is a shard of a sweep: merge the shards of one run or of one sweep",
            run.file,
            sweep.file
        );
    }
    if !runs.is_empty() {
        merge_runs(runs, &args)
    } else {
        merge_sweeps(sweeps, &args)
    }
}

fn merge_runs(shards: Vec<RunShard>, args: &MergeArgs) -> Result<()> {
    if args.csv.is_some() || args.out.is_some() {
        bail!("--csv and --out are for sweep shards; a run's merged report goes to --json PATH");
    }
    let merged = merge_run_shards(shards)?;
    let report = RunReport::new(
        &merged.medium,
        &merged.model_file,
        &merged.config,
        &merged.result,
    );
    let stdout_taken = [&args.json, &args.report]
        .iter()
        .any(|path| path.as_deref() == Some(Path::new("-")));
    if let Some(path) = &args.json {
        let json = serde_json::to_string_pretty(&report)? + "\n";
        write_text(path, &json)?;
    }
    let text = render_run_report(&report);
    if !stdout_taken {
        write_text(Path::new("-"), &text)?;
    }
    write_run_figures(
        args.plot.as_deref(),
        args.report.as_deref(),
        &merged.medium,
        &merged.result.tally,
        &report,
        &text,
    )
}

fn merge_sweeps(shards: Vec<SweepShard>, args: &MergeArgs) -> Result<()> {
    let merged = merge_sweep_shards(shards)?;
    let rows: Vec<SweepRow> = merged.results.iter().map(PointResult::row).collect();
    let mut to_stdout = args.report.as_deref() == Some(Path::new("-"));
    if let Some(path) = &args.json {
        to_stdout |= path == Path::new("-");
        write_text(path, &jsonl_text(&rows))?;
    }
    if let Some(path) = &args.csv {
        to_stdout |= path == Path::new("-");
        write_text(path, &csv_text(&rows))?;
    }
    if let Some(dir) = &args.out {
        write_text(&dir.join("sweep.csv"), &csv_text(&rows))?;
        write_text(&dir.join("sweep.jsonl"), &jsonl_text(&rows))?;
    }
    let text = render_text(&merged.results);
    if !to_stdout {
        write_text(Path::new("-"), &text)?;
    }
    let label = format!("merged from {} shards", args.files.len());
    write_sweep_figures(
        args.plot.as_deref(),
        args.report.as_deref(),
        &merged.sweep,
        &merged.results,
        &label,
        &text,
    )
}
