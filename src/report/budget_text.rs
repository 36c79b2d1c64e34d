//! The run report's time budget (Monte Carlo residence beside steady diffusion, on the
//! model's cells) and its mean path lengths by layer.

use std::fmt::Write;

use super::run_document::RunReport;
use crate::analysis::{LayerPath, PathEstimate, ResidenceBudget};
use crate::medium::Geometry;
use crate::units::format_significant;

/// One column of the path table: its heading and the outcome it shows.
type PathColumn = (&'static str, fn(&LayerPath) -> &Option<PathEstimate>);

/// Cells listed one per row up to this many; more are grouped into radial bins.
const MAX_CELL_ROWS: usize = 12;
/// Bins of a sphere's radius when the cells are many.
const RADIUS_BINS: usize = 10;

fn percent(value: f64) -> String {
    if value.is_finite() {
        format!("{:.1} %", 100.0 * value)
    } else {
        "-".into()
    }
}

/// The time-budget block: where the photons that left spent their time.
pub(super) fn write_residence_budget(out: &mut String, report: &RunReport) {
    let Some(budget) = &report.analysis.residence_budget else {
        return;
    };
    let Some(total) = budget.mean_time_s.filter(|t| t.value > 0.0) else {
        return;
    };
    let sphere = report.analysis.geometry == Geometry::Sphere;
    let size = budget.cells.last().map_or(1.0, |c| c.outer_cm);
    let place = |cm: f64| {
        if sphere {
            format!("{:.3} R", cm / size)
        } else {
            report.model.length(cm)
        }
    };
    let _ = writeln!(
        out,
        "Time budget: where the {} photons spent their time (Monte Carlo ± 1σ beside steady \
         diffusion, same cells)",
        budget.photons
    );
    let what = if sphere { "radius" } else { "depth" };
    // With one cell the half-time point would only be read off a straight line through it.
    let resolved_in_cells = budget.cells.len() > 1;
    if let (Some(mc), Some(theory), true) = (
        budget.half_time_cm,
        budget.diffusion_half_time_cm,
        resolved_in_cells,
    ) {
        let error = if mc.stderr.is_finite() {
            if sphere {
                format!(" ± {:.3} R", mc.stderr / size)
            } else {
                format!(" ± {}", report.model.length(mc.stderr))
            }
        } else {
            String::new()
        };
        let _ = writeln!(
            out,
            "  half the time inside {what} {}{error} (Monte Carlo), {} (diffusion)",
            place(mc.value),
            place(theory)
        );
    }
    let shares = budget.monte_carlo_shares();
    let theory = budget.diffusion_shares();
    let _ = writeln!(
        out,
        "  {:<22} {:>18} {:>18} {:>10} {:>10}",
        if sphere { "shell (r/R)" } else { "layer" },
        "share (MC)",
        "cumul. (MC)",
        "share (D)",
        "cumul. (D)"
    );
    let row = |out: &mut String, label: String, share: String, k: usize, d_share: f64| {
        let cumulative = shares
            .iter()
            .find(|(edge, _)| *edge == budget.cells[k].outer_cm)
            .map_or("-".to_string(), |(_, e)| {
                format!("{} ± {}", percent(e.value), percent(e.stderr))
            });
        let _ = writeln!(
            out,
            "  {:<22} {:>18} {:>18} {:>10} {:>10}",
            label,
            share,
            cumulative,
            percent(d_share),
            percent(theory[k].1)
        );
    };
    if budget.cells.len() <= MAX_CELL_ROWS {
        for (k, cell) in budget.cells.iter().enumerate() {
            let label = if sphere {
                format!("{:.3}–{:.3}", cell.inner_cm / size, cell.outer_cm / size)
            } else {
                format!("{} {}", cell.layer, place(cell.outer_cm - cell.inner_cm))
            };
            let share = cell.time_s.map_or("-".to_string(), |e| {
                format!(
                    "{} ± {}",
                    percent(e.value / total.value),
                    percent(e.stderr / total.value)
                )
            });
            row(
                out,
                label,
                share,
                k,
                cell.diffusion_time_s / budget.diffusion_mean_time_s,
            );
        }
    } else {
        let mut previous: Option<usize> = None;
        for bin in 1..=RADIUS_BINS {
            let edge = size * bin as f64 / RADIUS_BINS as f64;
            let k = budget
                .cells
                .iter()
                .position(|c| c.outer_cm >= edge * (1.0 - 1e-12))
                .unwrap_or(budget.cells.len() - 1);
            if previous.is_some_and(|p| p >= k) {
                continue;
            }
            let inner = previous.map_or(0.0, |p| budget.cells[p].outer_cm);
            let mc_before = previous.map_or(0.0, |p| shares_at(&shares, budget, p));
            let d_before = previous.map_or(0.0, |p| theory[p].1);
            let label = format!("{:.3}–{:.3}", inner / size, budget.cells[k].outer_cm / size);
            let share = percent(shares_at(&shares, budget, k) - mc_before);
            row(out, label, share, k, theory[k].1 - d_before);
            previous = Some(k);
        }
        let _ = writeln!(
            out,
            "  ({} cells grouped by radius; per-cell values with errors in the JSON report)",
            budget.cells.len()
        );
    }
    let _ = writeln!(
        out,
        "  mean time {} s (Monte Carlo), {} s (conservative steady diffusion from {}, surface \
         at the boundary, time inside the medium only: a rough guide; the shares are what \
         compare)",
        format_significant(total.value, 5),
        format_significant(budget.diffusion_mean_time_s, 5),
        budget.diffusion_source
    );
    let _ = writeln!(out);
}

fn shares_at(shares: &[(f64, crate::tally::Estimate)], budget: &ResidenceBudget, k: usize) -> f64 {
    shares
        .iter()
        .find(|(edge, _)| *edge == budget.cells[k].outer_cm)
        .map_or(f64::NAN, |(_, e)| e.value)
}

/// The mean path length in each declared layer, per outcome.
pub(super) fn write_path_by_layer(out: &mut String, report: &RunReport) {
    let paths = &report.analysis.path_by_layer;
    if paths.is_empty() {
        return;
    }
    let slab = report.analysis.geometry == Geometry::Slab;
    let lit = report.analysis.lit_from_outside;
    let _ = writeln!(
        out,
        "Mean path length by layer (per photon of each outcome, ± 1σ{})",
        if slab {
            "; DPF = path / thickness, the differential pathlength factor"
        } else {
            ""
        }
    );
    let cell = |e: &Option<PathEstimate>| -> String {
        match e {
            Some(e) => {
                let mut text = format!(
                    "{} ± {}",
                    report.model.length(e.mean_cm),
                    format_significant(e.stderr_cm / report.model.unit_cm, 2)
                );
                if let Some(dpf) = e.pathlength_factor {
                    let _ = write!(text, " (DPF {})", format_significant(dpf, 4));
                }
                text
            }
            None => "-".into(),
        }
    };
    let columns: Vec<PathColumn> = if slab {
        vec![
            (if lit { "reflected" } else { "top face" }, |p| &p.reflected),
            (if lit { "transmitted" } else { "bottom face" }, |p| {
                &p.transmitted
            }),
            ("absorbed", |p| &p.absorbed),
        ]
    } else {
        vec![("escaped", |p| &p.escaped), ("absorbed", |p| &p.absorbed)]
    };
    let columns: Vec<_> = columns
        .into_iter()
        .filter(|(_, pick)| paths.iter().any(|p| pick(p).is_some()))
        .collect();
    let mut header = format!("  {:<26}", "layer (thickness)");
    for (name, _) in &columns {
        let _ = write!(header, " {name:<34}");
    }
    let _ = writeln!(out, "{}", header.trim_end());
    for path in paths {
        let name = if path.name.is_empty() {
            format!("{}", path.layer)
        } else {
            format!("{} {}", path.layer, path.name)
        };
        let mut line = format!(
            "  {:<26}",
            format!("{name} ({})", report.model.length(path.thickness_cm))
        );
        for (_, pick) in &columns {
            let _ = write!(line, " {:<34}", cell(pick(path)));
        }
        let _ = writeln!(out, "{}", line.trim_end());
    }
    let _ = writeln!(out);
}
