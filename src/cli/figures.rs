//! `--plot DIR` and `--report PATH`: a run's (a profile's, a sweep's) figures as SVG files,
//! and the single-file HTML report, both written atomically.

use std::path::Path;

use anyhow::{Context, Result};

use sojourn::medium::Medium;
use sojourn::report::ProfileReport;
use sojourn::report::RunReport;
use sojourn::report::html::render_html_report;
use sojourn::report::plots::sweep_escape_time::StudyPoint;
use sojourn::report::plots::{
    Figure, RunInputs, group_digits, profile_panels, render_all, run_figures, sweep_panels,
};
use sojourn::sweep::{PointResult, Sweep};
use sojourn::tally::Tally;
use sojourn::units::LengthUnit;

use super::output::{write_atomically, write_text};

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
            group_digits(report.analysis.photons),
            report.analysis.seed,
            report.analysis.method,
            report.model.file,
            report.sojourn_version
        );
        let html = render_html_report(&title, &subtitle, text, &figures);
        write_text(path, &html)
            .with_context(|| format!("cannot write the HTML report to {}", path.display()))?;
    }
    Ok(())
}

/// Draws the figures of `sojourn profile` and writes them to `plot_dir` and/or into the HTML
/// report at `report_path` (with `text`, the printed report). Does nothing if neither is
/// asked for.
pub fn write_profile_figures(
    plot_dir: Option<&Path>,
    report_path: Option<&Path>,
    medium: &Medium,
    report: &ProfileReport,
    text: &str,
) -> Result<()> {
    if plot_dir.is_none() && report_path.is_none() {
        return Ok(());
    }
    let figures = render_all(&profile_panels(medium, report)).context("cannot draw the figures")?;
    if let Some(directory) = plot_dir {
        write_svgs(directory, &figures)?;
    }
    if let Some(path) = report_path {
        let title = format!("sojourn profile · {}", report.model.name);
        let subtitle = format!(
            "model {} · {} shells · sojourn {}",
            report.model.file, report.model.shells, report.sojourn_version
        );
        let html = render_html_report(&title, &subtitle, text, &figures);
        write_text(path, &html)
            .with_context(|| format!("cannot write the HTML report to {}", path.display()))?;
    }
    Ok(())
}

/// Draws the figures of a finished `sweep` (`label` names the spec) and writes them to
/// `plot_dir` and/or, with `text` (the printed table), into the HTML report at
/// `report_path`. Does nothing if neither is asked for.
pub fn write_sweep_figures(
    plot_dir: Option<&Path>,
    report_path: Option<&Path>,
    sweep: &Sweep,
    results: &[PointResult],
    label: &str,
    text: &str,
) -> Result<()> {
    if plot_dir.is_none() && report_path.is_none() {
        return Ok(());
    }
    let points: Vec<StudyPoint> = results
        .iter()
        .map(|result| StudyPoint {
            index: result.index,
            parameters: &result.parameters,
            analysis: &result.analysis,
        })
        .collect();
    let first = sweep.points().first().map(|p| p.medium());
    let model = first.map_or("", |m| m.name());
    let unit = first.map_or(LengthUnit::Cm, |m| m.display_unit());
    let figures = render_all(&sweep_panels(&points, model, label, unit))
        .context("cannot draw the figures")?;
    if let Some(directory) = plot_dir {
        write_svgs(directory, &figures)?;
    }
    if let Some(path) = report_path {
        let title = format!("sojourn · sweep {label}");
        let subtitle = format!(
            "{} points × {} photons · seed {} · sojourn {}",
            results.len(),
            group_digits(sweep.photons()),
            sweep.seed(),
            env!("CARGO_PKG_VERSION")
        );
        let html = render_html_report(&title, &subtitle, text, &figures);
        write_text(path, &html)
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
