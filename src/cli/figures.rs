//! `--plot DIR` and `--report PATH`: a run's figures as SVG files, and the single-file HTML
//! report, both written atomically.

use std::path::Path;

use anyhow::{Context, Result};

use sojourn::medium::Medium;
use sojourn::report::RunReport;
use sojourn::report::html::render_html_report;
use sojourn::report::plots::{Figure, RunInputs, group_digits, run_figures};
use sojourn::tally::Tally;

use super::output::write_atomically;

/// Draws the run's figures and writes them to `plot_dir` (as NAME.svg) and/or into the HTML
/// report at `report_path`. Does nothing if neither is asked for.
pub fn write_run_figures(
    plot_dir: Option<&Path>,
    report_path: Option<&Path>,
    medium: &Medium,
    tally: &Tally,
    report: &RunReport,
    text: &str,
) -> Result<()> {
    if plot_dir.is_none() && report_path.is_none() {
        return Ok(());
    }
    let inputs = RunInputs {
        medium,
        tally,
        report,
    };
    let figures = run_figures(&inputs).context("cannot draw the figures")?;
    if let Some(directory) = plot_dir {
        write_svgs(directory, &figures)?;
    }
    if let Some(path) = report_path {
        let title = format!("sojourn · {}", inputs.model_name());
        let subtitle = format!(
            "{} photons · seed {} · {} walk · model {} · sojourn {}",
            group_digits(report.photons),
            report.seed,
            report.method,
            report.model.file,
            report.sojourn_version
        );
        let html = render_html_report(&title, &subtitle, text, &figures);
        write_atomically(path, html.as_bytes())
            .with_context(|| format!("cannot write the HTML report to {}", path.display()))?;
    }
    Ok(())
}

fn write_svgs(directory: &Path, figures: &[Figure]) -> Result<()> {
    std::fs::create_dir_all(directory)
        .with_context(|| format!("cannot create the figure directory {}", directory.display()))?;
    for figure in figures {
        let path = directory.join(format!("{}.svg", figure.name));
        write_atomically(&path, figure.svg.as_bytes())
            .with_context(|| format!("cannot write the figure {}", path.display()))?;
    }
    Ok(())
}
