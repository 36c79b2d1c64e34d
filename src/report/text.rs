//! The readable text rendering of a [`RunReport`] (stdout by default).

use std::fmt::Write;

use super::run_document::RunReport;
use crate::analysis::{DecayFit, MIN_TAIL_PHOTONS, ResolvedSummary, TimeSummary};
use crate::medium::Geometry;
use crate::units::{format_duration, format_significant};

fn time(value: Option<f64>) -> String {
    value.map_or_else(|| "-".to_string(), format_duration)
}

fn number(value: Option<f64>) -> String {
    value.map_or_else(|| "-".to_string(), |v| format_significant(v, 4))
}

fn fraction(value: f64, stderr: f64) -> String {
    format!("{value:.5} ± {stderr:.5}")
}

fn time_rows(out: &mut String, label: &str, summary: &TimeSummary) {
    let _ = writeln!(
        out,
        "  {label:<12} n = {:<9} mean {} ± {}   median {}   5–95 % {} – {}",
        summary.count,
        time(summary.mean_s),
        time(summary.stderr_s),
        time(summary.median_s),
        time(summary.p05_s),
        time(summary.p95_s),
    );
}

/// Writes rows "label  N = …   t = …" with the labels padded to `width` characters; shared
/// by the run and profile reports.
pub(super) fn scattering_time_rows(out: &mut String, rows: &[(&str, f64, f64)], width: usize) {
    for (label, scatterings, time_s) in rows {
        let padding = width.saturating_sub(label.chars().count());
        let _ = writeln!(
            out,
            "  {label}{}  N = {}   t = {}",
            " ".repeat(padding),
            format_significant(*scatterings, 4),
            format_duration(*time_s)
        );
    }
}

/// The radial bins of R(ρ) and T(ρ), and for a narrow beam the Monte Carlo against the
/// dipole in the bins nearest 2, 5 and 10 transport mean free paths.
fn write_radial_rows(out: &mut String, report: &RunReport, resolved: &ResolvedSummary) {
    let edges = &resolved.radial_edges_cm;
    let (Some(&first), Some(&last)) = (edges.first(), edges.last()) else {
        return;
    };
    let l = resolved.transport_mean_free_path_cm;
    let _ = writeln!(
        out,
        "  R(ρ), T(ρ)                     {} bins from {} to {} ({}–{} l′, l′ = {}); in the JSON report",
        edges.len() - 1,
        report.model.length(first),
        report.model.length(last),
        format_significant(first / l, 3),
        format_significant(last / l, 3),
        report.model.length(l),
    );
    if resolved.dipole_reflectance_per_cm2.is_empty() {
        return;
    }
    let nearest = |target: f64| {
        edges
            .windows(2)
            .enumerate()
            .filter(|(_, w)| w[0] <= target * l && target * l < w[1])
            .map(|(i, _)| i)
            .next()
    };
    let ratios: Vec<String> = [2.0, 5.0, 10.0]
        .into_iter()
        .filter_map(|target| {
            let i = nearest(target)?;
            let (mc, err, dipole) = (
                resolved.reflectance_per_cm2[i],
                resolved.reflectance_per_cm2_stderr[i],
                resolved.dipole_reflectance_per_cm2[i],
            );
            (mc > 0.0 && dipole > 0.0)
                .then(|| format!("{:.3} ± {:.3} at {target} l′", mc / dipole, err / dipole))
        })
        .collect();
    if !ratios.is_empty() {
        let _ = writeln!(
            out,
            "  R(ρ) Monte Carlo / dipole      {}   (semi-infinite diffusion, narrow beam)",
            ratios.join(", ")
        );
    }
}

/// The detectors' readings: ring, acceptance, detected fraction and time of flight.
fn write_detector_rows(out: &mut String, report: &RunReport) {
    let detectors = &report.analysis.detectors;
    if detectors.is_empty() {
        return;
    }
    let _ = writeln!(
        out,
        "Detectors (fraction of photons launched, ± 1σ; time of flight of what they saw)"
    );
    for (index, d) in detectors.iter().enumerate() {
        let label = if d.name.is_empty() {
            format!("#{index}")
        } else {
            d.name.clone()
        };
        let acceptance = match d.numerical_aperture {
            Some(na) => format!("NA {na} ({:.1}°)", d.acceptance_half_angle_deg),
            None => format!("half-angle {}°", d.acceptance_half_angle_deg),
        };
        let _ = writeln!(
            out,
            "  {label:<10} {:<6} ρ {} – {}, {acceptance}",
            d.face.name(),
            report.model.length(d.inner_radius_cm),
            report.model.length(d.outer_radius_cm),
        );
        let t = &d.time_of_flight;
        let _ = writeln!(
            out,
            "  {:<10} {}   n = {}   mean {} ± {}   median {}   5–95 % {} – {}",
            "",
            match (d.fraction, d.stderr) {
                (Some(v), Some(e)) => format!("{v:.3e} ± {e:.1e}"),
                _ => "-".to_string(),
            },
            t.count,
            time(t.mean_s),
            time(t.stderr_s),
            time(t.median_s),
            time(t.p05_s),
            time(t.p95_s),
        );
    }
    let _ = writeln!(out);
}

/// The stellar diffusion times of a run (energy generation, zones), where the model has them.
fn write_stellar_rows(out: &mut String, report: &RunReport) {
    let d = &report.analysis.diffusion;
    for (label, value) in [
        (
            "from where the energy is released (L-weighted)",
            d.luminosity_weighted_time_s,
        ),
        (
            "same, Milne extrapolated boundary",
            d.luminosity_weighted_time_extrapolated_s,
        ),
        (
            "radiant energy / luminosity U_rad/L",
            d.energy_content_time_s,
        ),
        (
            "from the centre to the convective base",
            d.time_to_convective_base_s,
        ),
    ] {
        if let Some(value) = value {
            let _ = writeln!(out, "  {label:<48} t = {}", format_duration(value));
        }
    }
    if let Some(stop) = &report.analysis.stop_at {
        let _ = writeln!(
            out,
            "  walk stops at r = {:.4} R (convective base); convection onward {}",
            stop.radius_cm / stop.surface_radius_cm,
            time(stop.convective_crossing_time_s)
        );
    }
}

/// The time-dependent diffusion solver's values (with absorption), where it solved.
fn write_solver_rows(out: &mut String, report: &RunReport) {
    let d = &report.analysis.diffusion;
    let Some(escape) = d.escape_probability else {
        return;
    };
    let _ = writeln!(
        out,
        "  diffusion solver (time-dependent, with absorption, the model's own layers and source)"
    );
    let mut fractions = format!("escape probability {escape:.5}");
    if let (Some(r), Some(t)) = (d.reflected, d.transmitted) {
        let _ = write!(fractions, " (R {r:.5}, T {t:.5})");
    }
    if let Some(absorbed) = d.absorbed {
        let _ = write!(fractions, "   absorbed {absorbed:.5}");
    }
    let _ = writeln!(out, "    {fractions}");
    let e = &d.escape_time;
    let _ = writeln!(
        out,
        "    escape time (given escape)  mean {}   median {}   5–95 % {} – {}",
        time(e.mean_s),
        time(e.median_s),
        time(e.p05_s),
        time(e.p95_s)
    );
    if let Some(rate) = d.decay_rate_per_s {
        let _ = writeln!(
            out,
            "    late decay rate λ₁          {} /s (e-folding time {})",
            format_significant(rate, 4),
            format_duration(1.0 / rate)
        );
    }
}

/// Monte Carlo beside diffusion: outcome fractions, the mean escape time, the KS distance and
/// the late decay against the solver (both with absorption), then the ratios to the closed
/// forms where those are comparable, and the verdict with its notes.
fn write_comparison_rows(out: &mut String, report: &RunReport) {
    let c = &report.analysis.comparison;
    let _ = writeln!(
        out,
        "Monte Carlo against the diffusion solver (both with absorption)"
    );
    if !c.outcomes.is_empty() {
        let _ = writeln!(out, "                      Monte Carlo           diffusion");
    }
    for row in &c.outcomes {
        let monte_carlo = match (row.monte_carlo, row.stderr) {
            (Some(v), Some(e)) => fraction(v, e),
            _ => "-".to_string(),
        };
        let _ = writeln!(
            out,
            "  {:<19} {monte_carlo:<21} {}",
            row.name,
            row.diffusion
                .map_or_else(|| "-".to_string(), |v| format!("{v:.5}"))
        );
    }
    if let (Some(ratio), Some(stderr)) = (c.escape_time_ratio, c.escape_time_ratio_stderr) {
        let _ = writeln!(
            out,
            "  mean escape time    MC / solver {} ± {} (1σ), both given escape",
            format_significant(ratio, 4),
            format_significant(stderr, 2)
        );
    }
    if let (Some(ks), Some(p)) = (c.ks_distance, c.ks_p_value) {
        let bins = c
            .ks_bins
            .map_or_else(String::new, |b| format!(", {b} bins"));
        let _ = writeln!(
            out,
            "  KS distance         {} (p = {}{bins}; largest gap at {})",
            format_significant(ks, 3),
            format_significant(p, 2),
            time(c.ks_at_s)
        );
    }
    if let Some(decay) = &c.late_decay {
        let _ = writeln!(
            out,
            "  late decay          e-folding time {} ± {} after {} (diffusion {})",
            format_duration(1.0 / decay.rate_per_s),
            format_duration(decay.stderr_per_s / (decay.rate_per_s * decay.rate_per_s)),
            format_duration(decay.from_s),
            format_duration(1.0 / decay.diffusion_rate_per_s)
        );
    }
    if c.time_ratio.is_some() || c.time_ratio_plain.is_some() || c.naive_time_ratio.is_some() {
        let _ = writeln!(out, "  closed forms (conservative medium):");
    }
    if let (Some(ratio), Some(stderr)) = (c.time_ratio, c.time_ratio_stderr) {
        let _ = writeln!(
            out,
            "    mean time / extrapolated diffusion       {} ± {} (1σ)",
            format_significant(ratio, 4),
            format_significant(stderr, 4)
        );
    }
    if let Some(ratio) = c.time_ratio_plain {
        let _ = writeln!(
            out,
            "    mean time / diffusion (no extrapolation) {}",
            format_significant(ratio, 4)
        );
    }
    if let Some(ratio) = c.naive_time_ratio {
        let _ = writeln!(
            out,
            "    mean time / rule of thumb                {}",
            format_significant(ratio, 4)
        );
    }
}

/// Renders the report as a table for a terminal.
pub fn render_run_report(report: &RunReport) -> String {
    let mut out = String::new();
    let title = if report.model.name.is_empty() {
        "(unnamed model)".to_string()
    } else {
        report.model.name.clone()
    };
    let geometry = match report.analysis.geometry {
        Geometry::Sphere => "sphere",
        Geometry::Slab => "slab",
    };
    let _ = writeln!(out, "sojourn {} · {title}", report.sojourn_version);
    let layers = match (report.model.declared_layers, report.model.layers) {
        (1, 1) => "1 layer".to_string(),
        (declared, shells) if declared == shells => format!("{declared} layers"),
        (1, shells) => format!("1 layer in {shells} shells"),
        (declared, shells) => format!("{declared} layers in {shells} shells"),
    };
    let _ = writeln!(
        out,
        "  model {} · {geometry}, {layers} · {} photons · seed {} · method {} · {:.2} s",
        report.model.file,
        report.analysis.photons,
        report.analysis.seed,
        report.analysis.method,
        report.elapsed_s
    );
    let _ = writeln!(out);
    let _ = writeln!(out, "Outcome (fraction of photons launched, ± 1σ)");
    let o = &report.analysis.outcome;
    if let (Some(v), Some(e)) = (o.escaped, o.stderr.escaped) {
        let _ = writeln!(out, "  escaped      {}", fraction(v, e));
    }
    // Light from outside is reflected and transmitted; light from a source inside a slab
    // leaves through its top or bottom face, and nothing is reflected before entering.
    let lit = report.analysis.lit_from_outside;
    if let (Some(v), Some(e)) = (o.reflected, o.stderr.reflected) {
        let (name, how) = if lit {
            ("reflected  ", "diffuse")
        } else {
            ("top face   ", "left through the top face")
        };
        let _ = writeln!(out, "  {name}  {}   ({how})", fraction(v, e));
    }
    if let (true, Some(v), Some(e)) = (lit, o.specular, o.stderr.specular) {
        let _ = writeln!(
            out,
            "  specular     {}   (reflected before entering)",
            fraction(v, e)
        );
    }
    if let (Some(v), Some(e)) = (o.transmitted, o.stderr.transmitted) {
        let (name, how) = if lit {
            ("transmitted", "unscattered included")
        } else {
            ("bottom face", "left through the bottom face")
        };
        let _ = writeln!(out, "  {name}  {}   ({how})", fraction(v, e));
    }
    if let (Some(v), Some(e)) = (o.collimated_transmitted, o.stderr.collimated_transmitted) {
        let _ = writeln!(
            out,
            "    collimated   {}   (never scattered; part of the transmitted light)",
            fraction(v, e)
        );
    }
    if let (Some(v), Some(e)) = (o.absorbed, o.stderr.absorbed) {
        let _ = writeln!(out, "  absorbed     {}", fraction(v, e));
    }
    if let (Some(v), Some(e)) = (o.censored, o.stderr.censored) {
        let _ = writeln!(out, "  censored     {}", fraction(v, e));
    }
    if report.analysis.photons == 0 {
        let _ = writeln!(out, "  no photons: fractions are undefined");
    }
    let _ = writeln!(out);
    let _ = writeln!(out, "Time in the medium (photons that left it)");
    time_rows(&mut out, "all escapes", &report.analysis.escape_time);
    if let Some(summary) = &report.analysis.reflected_time {
        time_rows(
            &mut out,
            if lit { "reflected" } else { "top face" },
            summary,
        );
    }
    if let Some(summary) = &report.analysis.transmitted_time {
        time_rows(
            &mut out,
            if lit { "transmitted" } else { "bottom face" },
            summary,
        );
    }
    let s = &report.analysis.scatterings;
    let _ = writeln!(
        out,
        "  scatterings  mean {} ± {}   median {}   5–95 % {} – {}",
        number(s.mean),
        number(s.stderr),
        number(s.median),
        number(s.p05),
        number(s.p95)
    );
    let _ = writeln!(out);
    let d = &report.analysis.diffusion;
    let path = match report.analysis.geometry {
        Geometry::Sphere => "source → surface",
        Geometry::Slab => "total thickness",
    };
    let c = &report.analysis.comparison;
    let _ = writeln!(out, "Diffusion theory on this model");
    let _ = writeln!(
        out,
        "  optical depth ({path})           {}",
        format_significant(d.optical_depth, 5)
    );
    let _ = writeln!(
        out,
        "  mean free path                          {} – {}",
        report.model.length(d.mean_free_path_min_cm),
        report.model.length(d.mean_free_path_max_cm)
    );
    if !c.times_comparable {
        let _ = writeln!(
            out,
            "  closed forms below are conservative: no photon is lost to absorption"
        );
    }
    let mut rows = vec![(
        "rule of thumb N ≈ τ², t ≈ τ·L/c",
        d.naive_scatterings,
        d.naive_time_s,
    )];
    if let (Some(n), Some(t)) = (d.mean_scatterings, d.mean_time_s) {
        rows.push(("steady diffusion, surface at boundary", n, t));
    }
    if let (Some(n), Some(t)) = (d.mean_scatterings_extrapolated, d.mean_time_extrapolated_s) {
        rows.push(("same, Milne extrapolated boundary", n, t));
    }
    scattering_time_rows(&mut out, &rows, 39);
    write_stellar_rows(&mut out, report);
    write_solver_rows(&mut out, report);
    let _ = writeln!(out);
    if let Some(slab) = &report.analysis.slab_diffusion {
        let _ = writeln!(
            out,
            "Slab against diffusion theory (μa = {}, μs′ = {}, z_e = {})",
            report.model.per_length(slab.absorption_per_cm),
            report.model.per_length(slab.reduced_scattering_per_cm),
            report.model.length(slab.extrapolation_length_cm)
        );
        let _ = writeln!(
            out,
            "                      Monte Carlo   diffusion (extrapolated)   diffusion (zero boundary)"
        );
        let _ = writeln!(
            out,
            "  diffuse R           {:<13.5} {:<26.5} {:.5}",
            slab.monte_carlo_reflectance, slab.reflectance, slab.reflectance_zero_boundary
        );
        let _ = writeln!(
            out,
            "  diffuse T           {:<13.5} {:<26.5} {:.5}",
            slab.monte_carlo_diffuse_transmittance,
            slab.transmittance,
            slab.transmittance_zero_boundary
        );
        for warning in &slab.warnings {
            let _ = writeln!(out, "  caution: {warning}");
        }
        let _ = writeln!(out);
    }
    super::budget_text::write_residence_budget(&mut out, report);
    super::budget_text::write_path_by_layer(&mut out, report);
    write_comparison_rows(&mut out, report);
    let _ = writeln!(out, "  verdict: {}", c.verdict.reason);
    for note in &c.notes {
        let _ = writeln!(out, "  note: {note}");
    }
    let _ = writeln!(out);
    if let Some(resolved) = &report.analysis.resolved {
        let _ = writeln!(
            out,
            "Time-resolved ({} bins of {}; curves in the JSON report)",
            resolved.time_s.len(),
            format_duration(resolved.time_bin_s)
        );
        let rate = |fit: &Option<DecayFit>| match fit {
            Some(fit) => format!(
                "{} ± {} /ns after {} ({} photons; {})",
                format_significant(fit.rate_per_s * 1e-9, 4),
                format_significant(fit.stderr_per_s * 1e-9, 2),
                format_duration(fit.from_s),
                fit.photons,
                match (
                    fit.diffusion_rate_per_s,
                    report.analysis.diffusion.decay_rate_per_s
                ) {
                    (Some(r), _) => format!(
                        "diffusion, same window: {} /ns",
                        format_significant(r * 1e-9, 4)
                    ),
                    (None, Some(r)) => format!(
                        "diffusion solver's λ₁: {} /ns",
                        format_significant(r * 1e-9, 4)
                    ),
                    (None, None) => "no diffusion rate".to_string(),
                }
            ),
            None => {
                format!("- (fewer than {MIN_TAIL_PHOTONS} photons after the single-mode start)")
            }
        };
        let _ = writeln!(
            out,
            "  late decay rate, reflectance   {}",
            rate(&resolved.reflectance_decay)
        );
        let _ = writeln!(
            out,
            "  late decay rate, transmittance {}",
            rate(&resolved.transmittance_decay)
        );
        if let Some([extrapolated, zero]) = resolved.diffusion_decay_rate_per_s {
            let _ = writeln!(
                out,
                "  asymptotic diffusion decay     {} /ns (extrapolated), {} /ns (zero boundary)",
                format_significant(extrapolated * 1e-9, 4),
                format_significant(zero * 1e-9, 4)
            );
        }
        let layers: Vec<String> = resolved
            .absorbed_by_layer
            .iter()
            .map(|f| format!("{f:.4}"))
            .collect();
        let limb = &resolved.limb_darkening;
        let row = |values: &[f64]| {
            values
                .iter()
                .map(|v| format!("{v:6.3}"))
                .collect::<Vec<_>>()
                .join(" ")
        };
        // Limb darkening describes light emerging from a source deep inside (an
        // atmosphere); for light from outside the exit-angle tally stays in the JSON.
        if !report.analysis.lit_from_outside {
            let _ = writeln!(
                out,
                "  limb darkening of light leaving the top face (radiance on the H(μ)/H(1) scale)"
            );
            let _ = writeln!(out, "    μ            {}", row(&limb.mu));
            let _ = writeln!(out, "    Monte Carlo  {}", row(&limb.monte_carlo));
            let _ = writeln!(
                out,
                "    H(μ)/H(1)    {}   (deep conservative medium)",
                row(&limb.exact_h_ratio)
            );
            let _ = writeln!(
                out,
                "    0.4 + 0.6μ   {}   (Eddington)",
                row(&limb.eddington)
            );
        }
        let _ = writeln!(
            out,
            "  absorbed by layer              {}",
            layers.join("  ")
        );
        write_radial_rows(&mut out, report, resolved);
        let _ = writeln!(out);
    }
    write_detector_rows(&mut out, report);
    let w = &report.analysis.walk;
    if let (Some(gamma), Some(epsilon)) = (w.gamma, w.epsilon) {
        let _ = writeln!(
            out,
            "Walk: {} jumps + {} direct flights per photon; jumps cover {:.1} % of the time (γ = {}, ε = {})",
            format_significant(w.jumps_per_photon, 4),
            format_significant(w.direct_steps_per_photon, 4),
            100.0 * w.jump_time_fraction,
            gamma,
            epsilon
        );
    } else {
        let _ = writeln!(
            out,
            "Walk: {} direct flights per photon",
            format_significant(w.direct_steps_per_photon, 4)
        );
    }
    let _ = writeln!(out, "  walker: {}, {}", w.method_used, w.method_reason);
    let _ = writeln!(out);
    for note in &report.analysis.notes {
        let _ = writeln!(out, "note: {note}");
    }
    out
}
