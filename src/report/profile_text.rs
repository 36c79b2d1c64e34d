//! Text and CSV renderings of a [`ProfileReport`].

use std::fmt::Write;

use super::profile_document::ProfileReport;
use crate::analysis::profile::ShellRow;
use crate::units::{format_duration, format_significant};

fn number(value: Option<f64>, digits: usize) -> String {
    value.map_or_else(|| "-".to_string(), |v| format_significant(v, digits))
}

fn percent(fraction: f64) -> String {
    format!("{:.1} %", 100.0 * fraction)
}

/// The shell containing radius `r` (the last one for r at the surface).
fn shell_at(shells: &[ShellRow], r: f64) -> &ShellRow {
    let index = shells.partition_point(|s| s.radius_cm < r);
    &shells[index.min(shells.len() - 1)]
}

/// One row of the binned time budget.
struct Bin {
    inner_cm: f64,
    outer_cm: f64,
    share: f64,
    cumulative: f64,
}

/// Splits (0, R] into `rows` equal radius bins and sums the time accrued in each (within a
/// shell of constant σ the accrual grows as r², so partial shells are exact).
fn bins(report: &ProfileReport, rows: usize) -> Vec<Bin> {
    let radius = report.analysis.radius_cm;
    let mut out = Vec::with_capacity(rows);
    let mut cumulative = 0.0;
    for k in 0..rows {
        let r0 = radius * k as f64 / rows as f64;
        let r1 = if k + 1 == rows {
            radius
        } else {
            radius * (k + 1) as f64 / rows as f64
        };
        let mut time = 0.0;
        let first = report
            .analysis
            .shells
            .partition_point(|s| s.radius_cm <= r0);
        for shell in &report.analysis.shells[first..] {
            if shell.inner_radius_cm >= r1 {
                break;
            }
            let a = shell.inner_radius_cm.max(r0);
            let b = shell.radius_cm.min(r1);
            if b > a {
                // The shell's residence share, split by volume (as the run's budget).
                let full = shell.radius_cm.powi(3) - shell.inner_radius_cm.powi(3);
                time += shell.residence_share * (b.powi(3) - a.powi(3)) / full;
            }
        }
        let share = time;
        cumulative += share;
        out.push(Bin {
            inner_cm: r0,
            outer_cm: r1,
            share,
            cumulative,
        });
    }
    out
}

/// Renders the report as text for a terminal, with the time budget in `rows` radius bins.
pub fn render_profile_report(report: &ProfileReport, rows: usize) -> String {
    let rows = rows.max(1);
    let mut out = String::new();
    let unit_cm = report.model.length_unit_cm;
    let unit = &report.model.length_unit;
    let length = |cm: f64| {
        if unit_cm == 1.0 {
            format!("{} cm", format_significant(cm, 5))
        } else {
            format!(
                "{} {unit} ({} cm)",
                format_significant(cm / unit_cm, 5),
                format_significant(cm, 4)
            )
        }
    };
    let title = if report.model.name.is_empty() {
        "(unnamed model)"
    } else {
        &report.model.name
    };
    let _ = writeln!(
        out,
        "sojourn {} · profile of {title}",
        report.sojourn_version
    );
    let _ = writeln!(
        out,
        "  model {} · sphere of {} · no Monte Carlo",
        report.model.file,
        match report.model.shells {
            1 => "1 shell".to_string(),
            n => format!("{n} shells"),
        }
    );
    let _ = writeln!(out);
    let _ = writeln!(out, "Structure");
    let _ = writeln!(
        out,
        "  radius                            {}",
        length(report.analysis.radius_cm)
    );
    if let (Some(mass), Some(mean)) = (report.analysis.mass_g, report.analysis.mean_density_g_cm3) {
        let _ = writeln!(
            out,
            "  mass · mean density               {} g · {} g/cm³",
            format_significant(mass, 4),
            format_significant(mean, 4)
        );
    }
    if report.analysis.central_density_g_cm3.is_some()
        || report.analysis.central_temperature_k.is_some()
    {
        let _ = writeln!(
            out,
            "  central density · temperature     {} g/cm³ · {} K",
            number(report.analysis.central_density_g_cm3, 4),
            number(report.analysis.central_temperature_k, 4)
        );
    }
    let _ = writeln!(
        out,
        "  optical depth, centre → surface   {}",
        format_significant(report.analysis.optical_depth, 5)
    );
    if let Some(luminosity) = report.analysis.luminosity_erg_s {
        let _ = writeln!(
            out,
            "  luminosity L = ∫ ε dm             {} erg/s ({} L_sun)",
            format_significant(luminosity, 4),
            format_significant(luminosity / crate::units::SOLAR_LUMINOSITY_ERG_S, 3)
        );
    }
    let cut = report
        .analysis
        .profile
        .as_ref()
        .and_then(|p| p.layers.iter().find_map(|l| l.surface_cut.as_ref()));
    match (&report.analysis.photosphere, cut) {
        (Some(p), _) => {
            let _ = writeln!(
                out,
                "  photosphere (τ = 2/3)             {}{}{}",
                length(p.radius_cm),
                p.temperature_k.map_or_else(String::new, |t| format!(
                    ", T = {} K",
                    format_significant(t, 4)
                )),
                if p.above_surface_cut {
                    ", above the surface cut (H⁻ blend there)"
                } else if cut.is_some() {
                    ", τ from the table's top (H⁻ blend above the cut)"
                } else {
                    ""
                }
            );
        }
        (None, Some(cut)) => {
            let _ = writeln!(
                out,
                "  surface cut (τ = 2/3 not computed) {}",
                length(cut.radius_cm)
            );
        }
        (None, None) => {
            let _ = writeln!(
                out,
                "  photosphere (τ = 2/3)             {}",
                report
                    .analysis
                    .photosphere_radius_cm
                    .map_or_else(|| "none (optically thin)".to_string(), length)
            );
        }
    }
    if let Some(cut) = cut {
        let _ = writeln!(
            out,
            "  surface cut (walk ends)           {} where T = {} K",
            length(cut.radius_cm),
            format_significant(cut.temperature_k, 4)
        );
    }
    let _ = writeln!(
        out,
        "  mean free path                    {} – {} cm",
        format_significant(report.analysis.mean_free_path_min_cm, 4),
        format_significant(report.analysis.mean_free_path_max_cm, 4)
    );
    let _ = writeln!(out);
    let d = &report.analysis.diffusion;
    let _ = writeln!(out, "Diffusion time from the centre");
    let diffusion_rows = [
        (
            "rule of thumb N ≈ τ², t ≈ τ R/c",
            d.naive_scatterings,
            d.naive_time_s,
        ),
        (
            "steady diffusion (1/c)∫ r/l dr",
            d.mean_scatterings,
            d.mean_time_s,
        ),
        (
            "same, Milne extrapolated boundary",
            d.mean_scatterings_extrapolated,
            d.mean_time_extrapolated_s,
        ),
    ];
    super::text::scattering_time_rows(&mut out, &diffusion_rows, 33);
    let _ = writeln!(
        out,
        "  rule of thumb / diffusion          {}",
        format_significant(d.naive_over_diffusion, 4)
    );
    let e = &d.escape_time;
    if let (Some(escape), Some(median), Some(p05), Some(p95)) =
        (d.escape_probability, e.median_s, e.p05_s, e.p95_s)
    {
        let _ = writeln!(
            out,
            "  diffusion solver (time-dependent): escape probability {escape:.5}, median {}, \
             5–95 % {} – {}",
            format_duration(median),
            format_duration(p05),
            format_duration(p95)
        );
    }
    let _ = writeln!(out);
    write_stellar_times(&mut out, report, &length);
    let b = &report.analysis.time_budget;
    let radius = report.analysis.radius_cm;
    let _ = writeln!(
        out,
        "Time budget: where the radiation spends its time (steady diffusion from the centre; \
         `sojourn run --plot` adds the Monte Carlo on the same shells)"
    );
    let _ = writeln!(
        out,
        "  10 % inside r = {:.3} R, half inside {:.3} R, 90 % inside {:.3} R",
        b.radius_10_percent_cm / radius,
        b.radius_50_percent_cm / radius,
        b.radius_90_percent_cm / radius
    );
    let _ = writeln!(
        out,
        "  (the opacity that sets the time, (1/c)∫ r/l dr, accrues 10 % inside {:.3} R, half \
         inside {:.3} R, 90 % inside {:.3} R)",
        b.accrual_radius_10_percent_cm / radius,
        b.accrual_radius_50_percent_cm / radius,
        b.accrual_radius_90_percent_cm / radius
    );
    let _ = writeln!(
        out,
        "  {:<13} {:>7} {:>8} {:>10} {:>10} {:>10} {:>10} {:>11}",
        "r/R", "share", "cumul.", "T (K)", "ρ (g/cm³)", "κ (cm²/g)", "l (cm)", "τ(surface)"
    );
    for bin in bins(report, rows) {
        let mid = shell_at(&report.analysis.shells, 0.5 * (bin.inner_cm + bin.outer_cm));
        let edge = shell_at(&report.analysis.shells, bin.outer_cm);
        let tau_top = edge.tau_from_surface
            + edge.extinction_per_cm * (edge.radius_cm - bin.outer_cm).max(0.0);
        let _ = writeln!(
            out,
            "  {:<13} {:>7} {:>8} {:>10} {:>10} {:>10} {:>10} {:>11}",
            format!("{:.3}–{:.3}", bin.inner_cm / radius, bin.outer_cm / radius),
            percent(bin.share),
            percent(bin.cumulative.min(1.0)),
            number(mid.temperature_k, 3),
            number(mid.density_g_cm3, 3),
            number(mid.opacity_cm2_g, 3),
            number(mid.mean_free_path_cm, 3),
            format_significant(tau_top, 3)
        );
    }
    if let Some(p) = &report.analysis.profile {
        let _ = writeln!(out);
        let _ = writeln!(
            out,
            "Representation: {} → {} sub-shells of constant extinction; τ error {:.1e}, diffusion-time integral error {:.1e} (relative, against a fine quadrature)",
            match p.layers.len() {
                1 => "1 profile layer".to_string(),
                n => format!("{n} profile layers"),
            },
            p.sub_shells,
            p.tau_error_relative,
            p.time_error_relative
        );
    }
    let _ = writeln!(out);
    for note in &report.analysis.notes {
        let _ = writeln!(out, "note: {note}");
    }
    out
}

/// The other diffusion-time definitions and the zones, where the model has them.
fn write_stellar_times(out: &mut String, report: &ProfileReport, length: &dyn Fn(f64) -> String) {
    let d = &report.analysis.diffusion;
    let time = |t: Option<f64>| t.map_or_else(|| "-".to_string(), format_duration);
    if d.luminosity_weighted_time_s.is_some() || d.energy_content_time_s.is_some() {
        let _ = writeln!(out, "Diffusion time, other definitions");
        let rows = [
            (
                "from where the energy is released (L-weighted)",
                d.luminosity_weighted_time_s,
            ),
            (
                "same, Milne extrapolated boundary",
                d.luminosity_weighted_time_extrapolated_s,
            ),
            ("flux-weighted residence U_F/L", d.flux_weighted_time_s),
            (
                "radiant energy / luminosity U_rad/L",
                d.energy_content_time_s,
            ),
        ];
        for (label, value) in rows {
            let _ = writeln!(out, "  {label:<48} {}", time(value));
        }
        let _ = writeln!(out);
    }
    if report.analysis.zones.is_empty() {
        return;
    }
    let radius = report.analysis.radius_cm;
    let _ = writeln!(
        out,
        "Energy transport (Schwarzschild: convective where ∇_rad > ∇_ad)"
    );
    for zone in &report.analysis.zones {
        let _ = writeln!(
            out,
            "  {:<11} {:.3}–{:.3} R",
            zone.kind.name(),
            zone.inner_radius_cm / radius,
            zone.outer_radius_cm / radius
        );
    }
    match report.analysis.convective_base_radius_cm {
        Some(base) if base <= 0.0 => {
            let _ = writeln!(
                out,
                "  convective from the centre: radiation carries none of the luminosity"
            );
            let _ = writeln!(
                out,
                "  convection across the star          {} (mixing length)",
                time(d.convective_crossing_time_s)
            );
        }
        Some(base) => {
            let _ = writeln!(
                out,
                "  base of the outer convective zone  {} ({:.3} R)",
                length(base),
                base / radius
            );
            let _ = writeln!(
                out,
                "  diffusion to the base: from the centre {}, L-weighted {}",
                time(d.time_to_convective_base_s),
                time(d.luminosity_weighted_time_to_convective_base_s)
            );
            let _ = writeln!(
                out,
                "  convection across the zone          {} (mixing length)",
                time(d.convective_crossing_time_s)
            );
        }
        None => {
            let _ = writeln!(out, "  no outer convective zone");
        }
    }
    let _ = writeln!(out);
}

/// A CSV field: quoted if it holds a comma, a quote or a line break.
fn csv_field(text: &str) -> String {
    if text.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", text.replace('"', "\"\""))
    } else {
        text.to_string()
    }
}

fn csv_number(value: Option<f64>) -> String {
    value.map_or_else(String::new, |v| format!("{v:e}"))
}

/// The shells as CSV: a header line, then one line per shell, innermost first. Numbers are
/// written in full precision (they read back to the same f64); missing values are empty.
pub fn render_profile_csv(report: &ProfileReport) -> String {
    let mut out = String::from(
        "index,layer,inner_radius_cm,radius_cm,density_g_cm3,temperature_k,opacity_cm2_g,\
         scattering_fraction,extinction_per_cm,mean_free_path_cm,tau_shell,tau_from_surface,\
         time_s,cumulative_time_s,time_share,residence_share,luminosity_erg_s\n",
    );
    for s in &report.analysis.shells {
        let fields = [
            s.index.to_string(),
            csv_field(&s.layer),
            csv_number(Some(s.inner_radius_cm)),
            csv_number(Some(s.radius_cm)),
            csv_number(s.density_g_cm3),
            csv_number(s.temperature_k),
            csv_number(s.opacity_cm2_g),
            csv_number(s.scattering_fraction),
            csv_number(Some(s.extinction_per_cm)),
            csv_number(s.mean_free_path_cm),
            csv_number(Some(s.tau_shell)),
            csv_number(Some(s.tau_from_surface)),
            csv_number(Some(s.time_s)),
            csv_number(Some(s.cumulative_time_s)),
            csv_number(Some(s.time_share)),
            csv_number(Some(s.residence_share)),
            csv_number(s.luminosity_erg_s),
        ];
        out.push_str(&fields.join(","));
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn csv_quotes_names_with_commas() {
        assert_eq!(csv_field("core, inner"), "\"core, inner\"");
        assert_eq!(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
        assert_eq!(csv_field("plain"), "plain");
        assert_eq!(csv_number(Some(0.1)), "1e-1");
        assert_eq!(csv_number(None), "");
    }
}
