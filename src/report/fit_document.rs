//! The report of `sojourn fit`: the fit's result in the model's length unit (its serde form
//! is the JSON report) and its text rendering.

use serde::Serialize;

use crate::fit::start::StartMethod;
use crate::fit::{CoefficientErrors, FitResult, Matched, Measured, Measurement};
use crate::medium::Medium;
use crate::units::format_significant;

use super::run_document::ModelSummary;

/// Standard errors in the model's unit (per `length_unit`).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct ErrorsInUnit {
    /// Of μa, per length unit.
    pub absorption_coefficient: f64,
    /// Of μs, per length unit.
    pub scattering_coefficient: f64,
    /// Of μs′, per length unit.
    pub reduced_scattering_coefficient: f64,
    /// Correlation of μa and μs′ (and of μa and μs).
    pub correlation: f64,
}

impl ErrorsInUnit {
    fn new(errors: &CoefficientErrors, unit_cm: f64) -> Self {
        Self {
            absorption_coefficient: errors.absorption_per_cm * unit_cm,
            scattering_coefficient: errors.scattering_per_cm * unit_cm,
            reduced_scattering_coefficient: errors.reduced_scattering_per_cm * unit_cm,
            correlation: errors.correlation,
        }
    }
}

/// A point of the (μa, μs′) plane, per length unit.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct PlanePoint {
    /// μa, per length unit.
    pub absorption_coefficient: f64,
    /// μs′, per length unit.
    pub reduced_scattering_coefficient: f64,
}

/// Where the solver started, per length unit.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StartInUnit {
    /// `diffusion` or `grid`.
    pub method: StartMethod,
    /// μa, per length unit.
    pub absorption_coefficient: f64,
    /// μs′, per length unit.
    pub reduced_scattering_coefficient: f64,
}

/// The fit in the model's unit: the `fit` object of the JSON report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FitSummary {
    /// Index of the fitted layer.
    pub layer: usize,
    /// Its name.
    pub layer_name: String,
    /// Its anisotropy g (fixed).
    pub anisotropy: f64,
    /// Absorption coefficient μa, per length unit.
    pub absorption_coefficient: f64,
    /// Scattering coefficient μs, per length unit.
    pub scattering_coefficient: f64,
    /// Reduced scattering coefficient μs′ = μs (1 − g), per length unit.
    pub reduced_scattering_coefficient: f64,
    /// Standard errors (measurement and Monte Carlo together) and the correlation.
    pub stderr: ErrorsInUnit,
    /// The part from the measurement uncertainties.
    pub stderr_measurement: ErrorsInUnit,
    /// The part from the Monte Carlo noise.
    pub stderr_monte_carlo: ErrorsInUnit,
    /// Model reflectance at the solution (as the measurement defines it).
    pub reflectance: f64,
    /// Model transmittance at the solution (total, or diffuse with a collimated one).
    pub transmittance: f64,
    /// Closed-form collimated transmittance at the solution (null if not measured).
    pub collimated_transmittance: Option<f64>,
    /// Each measurement beside the model.
    pub matched: Vec<Matched>,
    /// Unscattered transmittance counted in the Monte Carlo run at the solution.
    pub unscattered_transmittance_counted: f64,
    /// χ² at the solution (residuals in units of `scales`).
    pub misfit: f64,
    /// The residual scales.
    pub scales: Vec<f64>,
    /// Solver iterations.
    pub iterations: usize,
    /// Monte Carlo runs.
    pub evaluations: usize,
    /// Photons per run.
    pub photons_per_evaluation: u64,
    /// Photons in all.
    pub photons_total: u64,
    /// Seed of every run.
    pub seed: u64,
    /// Walker used.
    pub method: &'static str,
    /// Whether the fit converged inside the bounds.
    pub converged: bool,
    /// Why the solver stopped.
    pub reason: String,
    /// Whether both coefficients are determined.
    pub unique: bool,
    /// What was found about uniqueness.
    pub uniqueness: String,
    /// Conditioning of the weighted Jacobian.
    pub conditioning: f64,
    /// Covariance of (ln μa, ln μs′), row by row (the same in any unit).
    pub covariance_log: [[f64; 2]; 2],
    /// Where the solver started.
    pub start: StartInUnit,
    /// Accepted points, start first.
    pub path: Vec<PlanePoint>,
    /// What limits the accuracy.
    pub limits: Vec<String>,
}

/// The full report of `sojourn fit`; its serde form is the JSON report.
#[derive(Debug, Clone, Serialize)]
pub struct FitReport {
    /// sojourn version.
    pub sojourn_version: String,
    /// The model.
    pub model: ModelSummary,
    /// Unit of every length; coefficients are per this unit.
    pub length_unit: String,
    /// What was measured.
    pub measurement: Measurement,
    /// The fit.
    pub fit: FitSummary,
    /// Wall-clock time, s (varies run to run).
    pub elapsed_s: f64,
}

impl FitReport {
    /// The report of `result`, a fit of `measurement` on `medium` read from `file`, which
    /// took `elapsed_s` seconds.
    pub fn new(
        medium: &Medium,
        file: &str,
        measurement: &Measurement,
        result: &FitResult,
        elapsed_s: f64,
    ) -> Self {
        let unit = medium.display_unit();
        let u = unit.to_cm();
        let value = |name: &str| {
            result
                .matched
                .iter()
                .find(|m| m.name == name)
                .map(|m| m.model)
        };
        Self {
            sojourn_version: env!("CARGO_PKG_VERSION").to_string(),
            model: ModelSummary::new(medium, file),
            length_unit: unit.symbol().to_string(),
            measurement: *measurement,
            fit: FitSummary {
                layer: result.layer,
                layer_name: result.layer_name.clone(),
                anisotropy: result.anisotropy,
                absorption_coefficient: result.absorption_per_cm * u,
                scattering_coefficient: result.scattering_per_cm * u,
                reduced_scattering_coefficient: result.reduced_scattering_per_cm * u,
                stderr: ErrorsInUnit::new(&result.stderr, u),
                stderr_measurement: ErrorsInUnit::new(&result.stderr_measurement, u),
                stderr_monte_carlo: ErrorsInUnit::new(&result.stderr_monte_carlo, u),
                reflectance: value("reflectance").unwrap_or(f64::NAN),
                transmittance: value("transmittance").unwrap_or(f64::NAN),
                collimated_transmittance: value("collimated_transmittance"),
                matched: result.matched.clone(),
                unscattered_transmittance_counted: result.unscattered_transmittance_counted,
                misfit: result.misfit,
                scales: result.scales.clone(),
                iterations: result.iterations,
                evaluations: result.evaluations,
                photons_per_evaluation: result.photons_per_evaluation,
                photons_total: result.photons_total,
                seed: result.seed,
                method: result.method,
                converged: result.converged,
                reason: result.reason.clone(),
                unique: result.unique,
                uniqueness: result.uniqueness.clone(),
                conditioning: result.conditioning,
                covariance_log: result.covariance_log,
                start: StartInUnit {
                    method: result.start.method,
                    absorption_coefficient: result.start.absorption_per_cm * u,
                    reduced_scattering_coefficient: result.start.reduced_scattering_per_cm * u,
                },
                path: result
                    .path
                    .iter()
                    .map(|(a, s)| PlanePoint {
                        absorption_coefficient: a * u,
                        reduced_scattering_coefficient: s * u,
                    })
                    .collect(),
                limits: result.limits.clone(),
            },
            elapsed_s,
        }
    }
}

/// `value ± error` with 4 significant digits.
fn pm(value: f64, error: f64) -> String {
    format!(
        "{} ± {}",
        format_significant(value, 4),
        format_significant(error, 2)
    )
}

fn measured_line(name: &str, m: &Measured, note: &str) -> String {
    format!(
        "  {name:<26}{:<22}({note})\n",
        if m.uncertainty > 0.0 {
            format!("{:.5} ± {:.5}", m.value, m.uncertainty)
        } else {
            format!("{:.5}", m.value)
        }
    )
}

/// The readable text of a fit report.
pub fn render_fit_report(report: &FitReport) -> String {
    let f = &report.fit;
    let unit = &report.length_unit;
    let m = &report.measurement;
    let mut out = String::new();
    let name = if report.model.name.is_empty() {
        String::new()
    } else {
        format!(" · {}", report.model.name)
    };
    out.push_str(&format!("sojourn {} · fit{name}\n", report.sojourn_version));
    out.push_str(&format!(
        "  model {} · layer {} ({}) · {} photons per evaluation · seed {} · method {} · {:.2} s\n\n",
        report.model.file,
        f.layer,
        if f.layer_name.is_empty() { "unnamed" } else { &f.layer_name },
        f.photons_per_evaluation,
        f.seed,
        f.method,
        report.elapsed_s
    ));
    out.push_str("Measured (± 1σ as given)\n");
    out.push_str(&measured_line(
        "reflectance",
        &m.reflectance,
        if m.specular_included {
            "total: specular reflection included"
        } else {
            "diffuse: specular reflection excluded"
        },
    ));
    out.push_str(&measured_line(
        "transmittance",
        &m.transmittance,
        if m.collimated_transmittance.is_some() {
            "diffuse: scattered light only"
        } else {
            "total: unscattered light included"
        },
    ));
    if let Some(c) = &m.collimated_transmittance {
        out.push_str(&measured_line(
            "collimated transmittance",
            c,
            "unscattered light",
        ));
    }
    out.push_str(&format!(
        "\nFitted layer {} (g = {} fixed; ± 1σ from the measurements and the Monte Carlo)\n",
        f.layer,
        format_significant(f.anisotropy, 3)
    ));
    let line = |label: &str, value: f64, total: f64, meas: f64, mc: f64| {
        format!(
            "  {label:<5}{:<28}(measurement {}, Monte Carlo {})\n",
            format!("{} /{unit}", pm(value, total)),
            format_significant(meas, 2),
            format_significant(mc, 2)
        )
    };
    out.push_str(&line(
        "μa",
        f.absorption_coefficient,
        f.stderr.absorption_coefficient,
        f.stderr_measurement.absorption_coefficient,
        f.stderr_monte_carlo.absorption_coefficient,
    ));
    out.push_str(&line(
        "μs′",
        f.reduced_scattering_coefficient,
        f.stderr.reduced_scattering_coefficient,
        f.stderr_measurement.reduced_scattering_coefficient,
        f.stderr_monte_carlo.reduced_scattering_coefficient,
    ));
    out.push_str(&line(
        "μs",
        f.scattering_coefficient,
        f.stderr.scattering_coefficient,
        f.stderr_measurement.scattering_coefficient,
        f.stderr_monte_carlo.scattering_coefficient,
    ));
    out.push_str(&format!(
        "  correlation of μa and μs′ {:.2}\n\n",
        f.stderr.correlation
    ));
    out.push_str("At the solution              model                 measured\n");
    for matched in &f.matched {
        let model = if matched.model_stderr > 0.0 {
            format!("{:.5} ± {:.5}", matched.model, matched.model_stderr)
        } else {
            format!("{:.5} (closed form)", matched.model)
        };
        out.push_str(&format!(
            "  {:<26}{model:<22}{:.5}\n",
            matched.name.replace('_', " "),
            matched.measured
        ));
    }
    if m.collimated_transmittance.is_some() {
        out.push_str(&format!(
            "  unscattered, counted      {:.5}   (Monte Carlo count, beside the closed form)\n",
            f.unscattered_transmittance_counted
        ));
    }
    let start = match f.start.method {
        StartMethod::Diffusion => "steady diffusion theory inverted",
        StartMethod::Grid => "the best point of a coarse Monte Carlo grid",
    };
    out.push_str(&format!(
        "\nSolver: Levenberg–Marquardt in ln μa, ln μs′, common random numbers\n  start \
         {start}: μa = {} /{unit}, μs′ = {} /{unit}\n  {} iterations, {} Monte Carlo runs \
         ({} photons)\n  {}: {}\n  {}\n",
        format_significant(f.start.absorption_coefficient, 4),
        format_significant(f.start.reduced_scattering_coefficient, 4),
        f.iterations,
        f.evaluations,
        f.photons_total,
        if f.converged {
            "converged"
        } else {
            "NOT converged"
        },
        f.reason,
        f.uniqueness
    ));
    out.push_str("\nWhat limits the accuracy\n");
    for limit in &f.limits {
        out.push_str(&format!("  - {limit}\n"));
    }
    if m.collimated_transmittance.is_some() {
        out.push_str(
            "\nnote: the collimated transmittance is the closed form (Beer–Lambert along the \
             refracted beam, Fresnel reflections at every interface); R and T come from the \
             Monte Carlo tally\n",
        );
    }
    out.push_str(
        "caution: for research and optical design, not for light-exposure, laser-safety or \
         clinical dosimetry decisions (follow the applicable standards)\n",
    );
    out
}
