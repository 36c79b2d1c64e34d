//! `sojourn sweep SPEC`: a parameter study, one point after another, each finished point
//! saved at once so that a killed sweep resumes where it stopped.

use std::path::{Path, PathBuf};

use anyhow::{Context, Result};
use clap::Args;

use sojourn::shard::Shard;
use sojourn::sweep::runner::Finished;
use sojourn::sweep::table::render_text;
use sojourn::sweep::{ResolvedSpec, SweepRunner};

use super::figures::write_sweep_figures;
use super::output::{Output, check_outputs, write_stdout};
use super::progress::Progress;

/// Arguments of `sojourn sweep`.
#[derive(Debug, Args)]
pub struct SweepArgs {
    /// Sweep specification (JSON): base model, parameters to vary, photons, seed.
    spec: PathBuf,
    /// Output folder [default: SPEC's name without .json, plus .out, beside SPEC].
    #[arg(long, value_name = "DIR")]
    out: Option<PathBuf>,
    /// Run only shard K of N (1 <= K <= N) of every point's photons; writes
    /// DIR/shard-K-of-N.json for `sojourn merge`.
    #[arg(long, value_name = "K/N")]
    shard: Option<Shard>,
    /// Worker threads (default: all cores). The results do not depend on it.
    #[arg(long, value_parser = clap::value_parser!(u64).range(1..=1024))]
    threads: Option<u64>,
    /// Check the spec and list the points without running anything.
    #[arg(long)]
    dry_run: bool,
    /// Write the sweep's figure (mean escape time against the first parameter) as an SVG
    /// file into DIR (not with --shard: `sojourn merge --plot DIR` draws it from the shards).
    #[arg(long, value_name = "DIR", conflicts_with = "shard")]
    plot: Option<PathBuf>,
    /// No progress bar and no status lines on stderr.
    #[arg(long, short)]
    quiet: bool,
}

/// The default output folder: `DIR/NAME.out` for the spec `DIR/NAME.json`.
fn default_out(spec: &Path) -> PathBuf {
    let stem = spec
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_else(|| "sweep".into());
    spec.with_file_name(format!("{stem}.out"))
}

/// Runs the subcommand.
pub fn execute(args: SweepArgs) -> Result<()> {
    let label = args.spec.display().to_string();
    // Everything is checked, every point's medium built, before any file is written.
    let spec = ResolvedSpec::load(&args.spec)?;
    let sweep = spec.build(&label)?;
    if args.dry_run {
        let mut listing = format!(
            "{label}: {} points × {} photons (seed {}, spec hash {})\n",
            sweep.points().len(),
            spec.photons(),
            spec.seed(),
            spec.hash()
        );
        for (index, point) in sweep.points().iter().enumerate() {
            let settings: Vec<String> = point
                .parameters()
                .iter()
                .map(|(path, value)| format!("{path} = {value}"))
                .collect();
            listing += &format!("  point {index:>4}: {}\n", settings.join(", "));
        }
        return write_stdout(&listing);
    }
    let out = args.out.clone().unwrap_or_else(|| default_out(&args.spec));
    let mut outputs = vec![Output::Folder {
        flag: "--out",
        path: &out,
    }];
    if let Some(path) = &args.plot {
        outputs.push(Output::Folder {
            flag: "--plot",
            path,
        });
    }
    check_outputs(&outputs)?;
    let mut pool = rayon::ThreadPoolBuilder::new();
    if let Some(threads) = args.threads {
        pool = pool.num_threads(threads as usize);
    }
    let pool = pool.build().context("cannot start the worker threads")?;
    let mut runner = SweepRunner::open(&sweep, &spec, &out, args.shard)?;
    let rescaled = runner.rescalable();
    if rescaled {
        let (walked, alone) = pool.install(|| runner.run_rescaled())?;
        if !args.quiet {
            eprintln!(
                "sojourn: the points differ only in absorption: walked point {walked} once and \
                 rescaled the others (rows say reweighted: true)"
            );
        }
        if !alone.is_empty() {
            let list: Vec<String> = alone.iter().map(usize::to_string).collect();
            eprintln!(
                "sojourn: warning: rescaled weights collapsed at point(s) {} (Kish effective \
                 photons below {} % of the photons that left the walk); walked those on their own",
                list.join(", "),
                sojourn::sweep::rescale::ESS_FRACTION * 100.0
            );
        }
    }
    let pending = runner.pending();
    let total_points = sweep.points().len();
    if pending.len() < total_points && !args.quiet && !rescaled {
        eprintln!(
            "sojourn: resuming in {}: {} of {total_points} points already done",
            out.display(),
            total_points - pending.len()
        );
    }
    let per_point = runner.photons_per_point();
    let progress = Progress::new(per_point * pending.len() as u64, args.quiet);
    for (done, &index) in pending.iter().enumerate() {
        progress.message(format!("point {}/{total_points} ", index + 1));
        let base = per_point * done as u64;
        pool.install(|| runner.run_point(index, &|n| progress.set(base + n)))?;
    }
    progress.finish();
    match runner.finish()? {
        Finished::Table {
            results,
            csv,
            jsonl,
        } => {
            let text = render_text(&results);
            write_stdout(&text)?;
            write_sweep_figures(args.plot.as_deref(), None, &sweep, &results, &label, &text)?;
            if !args.quiet {
                eprintln!("sojourn: wrote {} and {}", csv.display(), jsonl.display());
            }
        }
        Finished::Shard { bundle } => {
            let shard = args.shard.unwrap_or_else(Shard::whole);
            write_stdout(&format!(
                "shard {shard} of the sweep done: {}\nwhen every shard is done: sojourn merge {}/shard-*-of-{}.json --out {}\n",
                bundle.display(),
                out.display(),
                shard.count(),
                out.display()
            ))?;
        }
    }
    Ok(())
}
