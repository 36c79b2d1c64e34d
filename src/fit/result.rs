//! What a fit answers, as plain numbers in cgs (coefficients per cm).

use serde::Serialize;

use super::start::Start;

/// Standard errors of the fitted coefficients (1σ, 1/cm) and the correlation of μa with
/// μs′ (the same as with μs, since g is fixed).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CoefficientErrors {
    /// Of the absorption coefficient μa, 1/cm.
    pub absorption_per_cm: f64,
    /// Of the scattering coefficient μs, 1/cm.
    pub scattering_per_cm: f64,
    /// Of the reduced scattering coefficient μs′ = μs (1 − g), 1/cm.
    pub reduced_scattering_per_cm: f64,
    /// Correlation coefficient of μa and μs′ (also of μa and μs), in [−1, 1].
    pub correlation: f64,
}

/// One measured value beside the model at the solution.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Matched {
    /// `reflectance`, `transmittance` or `collimated_transmittance`.
    pub name: &'static str,
    /// What was measured.
    pub measured: f64,
    /// Its stated standard uncertainty.
    pub uncertainty: f64,
    /// The model's value at the solution.
    pub model: f64,
    /// The Monte Carlo standard error of the model's value (0 for the closed-form
    /// collimated transmittance).
    pub model_stderr: f64,
}

/// The result of [`super::fit`].
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FitResult {
    /// Index of the fitted layer.
    pub layer: usize,
    /// Its name in the model.
    pub layer_name: String,
    /// Its anisotropy g (fixed).
    pub anisotropy: f64,
    /// Fitted absorption coefficient μa, 1/cm.
    pub absorption_per_cm: f64,
    /// Fitted scattering coefficient μs = μs′ / (1 − g), 1/cm.
    pub scattering_per_cm: f64,
    /// Fitted reduced scattering coefficient μs′, 1/cm.
    pub reduced_scattering_per_cm: f64,
    /// Standard errors from the measurement uncertainties and the Monte Carlo noise.
    pub stderr: CoefficientErrors,
    /// The part of `stderr` due to the measurement uncertainties alone.
    pub stderr_measurement: CoefficientErrors,
    /// The part of `stderr` due to the Monte Carlo noise alone.
    pub stderr_monte_carlo: CoefficientErrors,
    /// Covariance of (ln μa, ln μs′), row by row.
    pub covariance_log: [[f64; 2]; 2],
    /// The measurements beside the model at the solution.
    pub matched: Vec<Matched>,
    /// Fraction of photons transmitted without scattering at the solution, counted in the
    /// Monte Carlo run (beside the closed form, when a collimated transmittance is fitted).
    pub unscattered_transmittance_counted: f64,
    /// Misfit χ² = Σ ((model − measured) / scale)² at the solution.
    pub misfit: f64,
    /// Scale of each residual: the combined standard uncertainty (measurement and Monte
    /// Carlo at the start), with a floor of 10⁻³ of the value + 10⁻⁶.
    pub scales: Vec<f64>,
    /// Solver iterations (Jacobians).
    pub iterations: usize,
    /// Monte Carlo runs, those of a grid start and of the final Jacobian included.
    pub evaluations: usize,
    /// Photons per Monte Carlo run.
    pub photons_per_evaluation: u64,
    /// Photons run in all.
    pub photons_total: u64,
    /// Seed of every run (the same for all: common random numbers).
    pub seed: u64,
    /// The walker every run used.
    pub method: &'static str,
    /// Whether the stopping criterion was met with the solution inside the bounds.
    pub converged: bool,
    /// Why the solver stopped.
    pub reason: String,
    /// Whether the measurements fix both coefficients (false: a flat direction, a bound
    /// reached, or an uncertainty larger than the value).
    pub unique: bool,
    /// What was found about uniqueness, in words.
    pub uniqueness: String,
    /// Smallest over largest singular value of the weighted Jacobian at the solution.
    pub conditioning: f64,
    /// Where the solver started.
    pub start: Start,
    /// The accepted points (μa, μs′), 1/cm, start first.
    pub path: Vec<(f64, f64)>,
    /// What limits the accuracy, one sentence each.
    pub limits: Vec<String>,
}
