//! Optical properties from measurements: the absorption and scattering coefficients of one
//! slab layer found so that the Monte Carlo reflectance and transmittance match measured
//! values (the inverse problem of an integrating-sphere measurement).
//!
//! The layer's anisotropy g, refractive index and thickness, the other layers and the
//! ambient indices stay as the model gives them. The unknowns are ln μa and ln μs′ (so both
//! stay positive and steps are relative); [`fit`]:
//!
//! 1. checks the measurements ([`Measurement::check`]: fractions in [0, 1], R + T ≤ 1)
//!    and what the model can produce at all ([`feasibility`]: the clear sample's
//!    transmittance, the specular reflection, a non-scattering sample's reflectance);
//! 2. starts from steady diffusion theory inverted for the layer, or from the best point
//!    of a coarse grid of short Monte Carlo runs where diffusion does not apply
//!    ([`start`]);
//! 3. solves with Levenberg–Marquardt ([`levenberg`]) on the Monte Carlo forward model
//!    with common random numbers ([`forward`]): every evaluation runs the same photons
//!    (seed, stream, indices) with the same walker, so the objective changes smoothly
//!    at the scale of the finite-difference steps;
//! 4. propagates the measurement uncertainties and the Monte Carlo standard errors of the
//!    predictions through a central-difference Jacobian at the solution ([`uncertainty`]),
//!    and says whether the solution is unique.
//!
//! A collimated transmittance, when measured, is predicted in closed form
//! ([`ballistic`]: Beer–Lambert along the refracted ray with the Fresnel reflections of
//! every interface), the transmittance is then the diffuse part (light scattered at least
//! once, from the tally).
//!
//! ```no_run
//! use sojourn::fit::{FitOptions, Measured, Measurement, fit};
//! use sojourn::medium::model_file::load_model;
//!
//! let medium = load_model("sample.json".as_ref()).unwrap();
//! let measurement = Measurement {
//!     reflectance: Measured::new(0.275, 0.003),
//!     transmittance: Measured::new(0.259, 0.003),
//!     collimated_transmittance: None,
//!     specular_included: true,
//! };
//! let result = fit(&medium, &measurement, &FitOptions::default()).unwrap();
//! println!("μa = {} /cm ± {}", result.absorption_per_cm, result.stderr.absorption_per_cm);
//! ```

pub mod ballistic;
mod error;
pub mod feasibility;
pub mod forward;
pub mod levenberg;
mod measurement;
mod result;
mod sample;
pub mod start;
pub mod uncertainty;

pub use error::FitError;
pub use measurement::{Measured, Measurement};
pub use result::{CoefficientErrors, FitResult, Matched};
pub use sample::Sample;

use nalgebra::{DMatrix, Matrix2};

use crate::simulation::{Method, RunConfig, plan};
use crate::transport::WalkLimits;

use forward::MonteCarloModel;
use levenberg::{Settings, solve};
use uncertainty::{Propagated, propagate};

/// Forward-difference step of the solver's Jacobian, in ln μa and ln μs′ (3 %): large
/// enough that the photons whose fate changes outnumber the noise of common random
/// numbers, small enough for the curvature of R and T.
pub const DIFFERENCE_STEP: f64 = 0.03;

/// Central-difference half step of the final Jacobian the uncertainties use (5 %).
pub const FINAL_DIFFERENCE_STEP: f64 = 0.05;

/// Bounds of μa·d (d the layer's thickness): the fit reports a solution at a bound as not
/// converged.
pub const ABSORPTION_THICKNESS_BOUNDS: (f64, f64) = (1e-6, 1e2);

/// Bounds of μs′·d.
pub const REDUCED_SCATTERING_THICKNESS_BOUNDS: (f64, f64) = (1e-4, 1e3);

/// Settings of a fit.
#[derive(Debug, Clone, PartialEq)]
pub struct FitOptions {
    /// Index of the layer to fit (top first).
    pub layer: usize,
    /// Photons per Monte Carlo evaluation.
    pub photons: u64,
    /// Seed of every evaluation.
    pub seed: u64,
    /// Iteration cap of the solver.
    pub max_iterations: usize,
    /// Convergence tolerance: the solver stops when a step changes μa and μs′ by less than
    /// this fraction.
    pub tolerance: f64,
    /// Per-photon limits of the walk.
    pub limits: WalkLimits,
}

impl Default for FitOptions {
    fn default() -> Self {
        Self {
            layer: 0,
            photons: 100_000,
            seed: 1,
            max_iterations: 30,
            tolerance: 1e-3,
            limits: WalkLimits::default(),
        }
    }
}

/// Scale floor of a residual: 10⁻³ of the measured value + 10⁻⁶.
fn floor(value: f64) -> f64 {
    1e-3 * value.abs() + 1e-6
}

/// Finds μa and μs of layer `options.layer` of `medium` from `measurement` (see the
/// module docs). Runs on the current rayon thread pool.
///
/// # Errors
/// [`FitError::Model`] for a model that is not a slab lit by a beam,
/// [`FitError::NoSuchLayer`], [`FitError::Measurement`] for a value out of range,
/// [`FitError::NoSolution`] when no coefficients can produce the measurements, and
/// [`FitError::TooCostly`] when the solver reaches coefficients too costly to simulate.
pub fn fit(
    medium: &crate::medium::Medium,
    measurement: &Measurement,
    options: &FitOptions,
) -> Result<FitResult, FitError> {
    let sample = Sample::new(medium, options.layer)?;
    measurement.check()?;
    feasibility::check_reachable(&sample, measurement)?;
    let measured: Vec<f64> = measurement.values().iter().map(|m| m.value).collect();
    let sigma: Vec<f64> = measurement.values().iter().map(|m| m.uncertainty).collect();
    let d = sample.thickness_cm();
    let settings = Settings {
        max_iterations: options.max_iterations,
        tolerance: options.tolerance,
        difference_step: DIFFERENCE_STEP,
        lower: [
            (ABSORPTION_THICKNESS_BOUNDS.0 / d).ln(),
            (REDUCED_SCATTERING_THICKNESS_BOUNDS.0 / d).ln(),
        ],
        upper: [
            (ABSORPTION_THICKNESS_BOUNDS.1 / d).ln(),
            (REDUCED_SCATTERING_THICKNESS_BOUNDS.1 / d).ln(),
        ],
    };
    let mut config = RunConfig {
        photons: options.photons,
        seed: options.seed,
        limits: options.limits,
        method: Method::Auto,
        ..RunConfig::default()
    };
    let first_scale: Vec<f64> = measured
        .iter()
        .zip(&sigma)
        .map(|(m, s)| s.max(floor(*m)))
        .collect();
    let (start, start_runs, start_photons) =
        start::starting_point(&sample, measurement, &config, &first_scale, &settings)?;
    let start_medium =
        sample.with_coefficients(start.absorption_per_cm, start.reduced_scattering_per_cm)?;
    config.method = plan(&start_medium, &config).method;
    let mut model = MonteCarloModel::new(&sample, measurement, config.clone());
    let start_p = [
        start.absorption_per_cm.ln(),
        start.reduced_scattering_per_cm.ln(),
    ];
    let at_start = model.evaluate(start_p)?;
    let scale: Vec<f64> = (0..measured.len())
        .map(|k| {
            (sigma[k].powi(2) + at_start.covariance[(k, k)])
                .sqrt()
                .max(floor(measured[k]))
        })
        .collect();
    let solution = solve(&mut model, start_p, &measured, &scale, &settings)?;
    let p = solution.parameters;
    let at_solution = model.evaluate(p)?;
    let mut jacobian = DMatrix::zeros(measured.len(), 2);
    for j in 0..2 {
        let mut plus = p;
        let mut minus = p;
        plus[j] += FINAL_DIFFERENCE_STEP;
        minus[j] -= FINAL_DIFFERENCE_STEP;
        let up = model.evaluate(plus)?.values;
        let down = model.evaluate(minus)?.values;
        for k in 0..measured.len() {
            jacobian[(k, j)] = (up[k] - down[k]) / (2.0 * FINAL_DIFFERENCE_STEP);
        }
    }
    let variance: Vec<f64> = sigma.iter().map(|s| s * s).collect();
    let propagated = propagate(&jacobian, &scale, &variance, &at_solution.covariance);
    let [absorption, reduced] = p.map(f64::exp);
    let scattering = sample.scattering_per_cm(reduced);
    let errors = |c: Option<Matrix2<f64>>| coefficient_errors(c, absorption, reduced, scattering);
    let (stderr, stderr_measurement, stderr_monte_carlo, covariance, conditioning) =
        match &propagated {
            Some(Propagated {
                total,
                measurement,
                monte_carlo,
                conditioning,
                ..
            }) => (
                errors(Some(*total)),
                errors(Some(*measurement)),
                errors(Some(*monte_carlo)),
                [
                    [total[(0, 0)], total[(0, 1)]],
                    [total[(1, 0)], total[(1, 1)]],
                ],
                *conditioning,
            ),
            None => (
                errors(None),
                errors(None),
                errors(None),
                [[f64::INFINITY; 2]; 2],
                0.0,
            ),
        };
    let at_bound: Vec<&str> = [
        (p[0] <= settings.lower[0], "μa at its lower bound"),
        (p[0] >= settings.upper[0], "μa at its upper bound"),
        (p[1] <= settings.lower[1], "μs′ at its lower bound"),
        (p[1] >= settings.upper[1], "μs′ at its upper bound"),
    ]
    .into_iter()
    .filter_map(|(hit, text)| hit.then_some(text))
    .collect();
    let (converged, reason) = if at_bound.is_empty() {
        (solution.converged, solution.reason.clone())
    } else {
        (
            false,
            format!(
                "{} (μa·d in [{:e}, {:e}], μs′·d in [{:e}, {:e}]): the measurements point \
                 outside what the bounds allow; {}",
                at_bound.join(", "),
                ABSORPTION_THICKNESS_BOUNDS.0,
                ABSORPTION_THICKNESS_BOUNDS.1,
                REDUCED_SCATTERING_THICKNESS_BOUNDS.0,
                REDUCED_SCATTERING_THICKNESS_BOUNDS.1,
                solution.reason
            ),
        )
    };
    let (unique, uniqueness) =
        uniqueness(propagated.as_ref(), &stderr, absorption, reduced, &at_bound);
    let names = measurement.names();
    let matched = (0..measured.len())
        .map(|k| Matched {
            name: names[k],
            measured: measured[k],
            uncertainty: sigma[k],
            model: at_solution.values[k],
            model_stderr: at_solution.covariance[(k, k)].sqrt(),
        })
        .collect();
    let limits = accuracy_limits(&propagated, &sigma, &sample, at_solution.censored);
    Ok(FitResult {
        layer: sample.layer(),
        layer_name: sample.layer_as_given().name().to_string(),
        anisotropy: sample.anisotropy(),
        absorption_per_cm: absorption,
        scattering_per_cm: scattering,
        reduced_scattering_per_cm: reduced,
        stderr,
        stderr_measurement,
        stderr_monte_carlo,
        covariance_log: covariance,
        matched,
        unscattered_transmittance_counted: at_solution.unscattered_transmittance,
        misfit: solution.misfit,
        scales: scale,
        iterations: solution.iterations,
        evaluations: model.evaluations() + start_runs,
        photons_per_evaluation: config.photons,
        photons_total: model.photons_run() + start_photons,
        seed: config.seed,
        method: config.method.name(),
        converged,
        reason,
        unique,
        uniqueness,
        conditioning,
        start,
        path: solution
            .path
            .iter()
            .map(|q| (q[0].exp(), q[1].exp()))
            .collect(),
        limits,
    })
}

/// Standard errors of μa, μs, μs′ from a covariance of (ln μa, ln μs′) (relative errors
/// times the values; μs has the relative error of μs′ since g is fixed).
fn coefficient_errors(
    covariance: Option<Matrix2<f64>>,
    absorption: f64,
    reduced: f64,
    scattering: f64,
) -> CoefficientErrors {
    let Some(c) = covariance else {
        return CoefficientErrors {
            absorption_per_cm: f64::INFINITY,
            scattering_per_cm: f64::INFINITY,
            reduced_scattering_per_cm: f64::INFINITY,
            correlation: 0.0,
        };
    };
    let (a, s) = (c[(0, 0)].max(0.0).sqrt(), c[(1, 1)].max(0.0).sqrt());
    let finite = a.is_finite() && s.is_finite();
    CoefficientErrors {
        absorption_per_cm: absorption * a,
        scattering_per_cm: scattering * s,
        reduced_scattering_per_cm: reduced * s,
        correlation: if finite && a > 0.0 && s > 0.0 {
            (c[(0, 1)] / (a * s)).clamp(-1.0, 1.0)
        } else {
            0.0
        },
    }
}

/// Smallest conditioning of the weighted Jacobian still taken as two independent
/// constraints.
pub const MIN_CONDITIONING: f64 = 1e-3;

/// Whether the measurements fix both coefficients, and why not.
fn uniqueness(
    propagated: Option<&Propagated>,
    stderr: &CoefficientErrors,
    absorption: f64,
    reduced: f64,
    at_bound: &[&str],
) -> (bool, String) {
    let Some(propagated) = propagated else {
        return (
            false,
            "not unique: R and T do not change independently with μa and μs′ here (singular \
             Jacobian); the measurements fix at most one combination of them"
                .into(),
        );
    };
    if let Some(which) = propagated.undetermined {
        let (name, hint) = if which == 0 {
            (
                "μa",
                "the data look non-absorbing (or absorb too little to be resolved)",
            )
        } else {
            (
                "μs′",
                "the data look non-scattering (or scatter too little to be resolved)",
            )
        };
        return (
            false,
            format!(
                "not unique: no photon's fate changes with {name} near the solution, so \
                 {name} is not determined ({hint}); the other coefficient's standard error \
                 is propagated alone"
            ),
        );
    }
    if propagated.conditioning < MIN_CONDITIONING {
        return (
            false,
            format!(
                "not unique: the measurements hardly change along one direction of (μa, μs′) \
                 (conditioning {:.1e}); they fix one combination of the two, not both",
                propagated.conditioning
            ),
        );
    }
    if !at_bound.is_empty() {
        return (
            false,
            format!(
                "not determined: {}; the data are consistent with any value beyond it",
                at_bound.join(", ")
            ),
        );
    }
    let relative_a = stderr.absorption_per_cm / absorption;
    let relative_s = stderr.reduced_scattering_per_cm / reduced;
    if relative_a > 1.0 || relative_s > 1.0 {
        return (
            false,
            format!(
                "poorly determined: a standard error larger than the value (μa {:.0} %, μs′ \
                 {:.0} %); values within a few standard errors fit as well",
                relative_a * 100.0,
                relative_s * 100.0
            ),
        );
    }
    (
        true,
        format!(
            "unique near the solution: the Jacobian has full rank (conditioning {:.2}); no \
             second solution was searched for",
            propagated.conditioning
        ),
    )
}

/// What limits the accuracy, in sentences.
fn accuracy_limits(
    propagated: &Option<Propagated>,
    sigma: &[f64],
    sample: &Sample,
    censored: f64,
) -> Vec<String> {
    let mut limits = Vec::new();
    if let Some(p) = propagated {
        let measurement = p.measurement[(0, 0)] + p.measurement[(1, 1)];
        let monte_carlo = p.monte_carlo[(0, 0)] + p.monte_carlo[(1, 1)];
        if sigma.iter().all(|s| *s == 0.0) {
            limits.push(
                "no measurement uncertainty was given: the standard errors are those of the \
                 Monte Carlo noise alone"
                    .into(),
            );
        } else if monte_carlo > measurement {
            limits.push(format!(
                "Monte Carlo noise dominates ({:.0} % of the variance): more photons per \
                 evaluation shrink it as 1/N",
                100.0 * monte_carlo / (measurement + monte_carlo)
            ));
        } else {
            limits.push(format!(
                "the measurement uncertainties dominate ({:.0} % of the variance): more \
                 photons per evaluation would help little",
                100.0 * measurement / (measurement + monte_carlo)
            ));
        }
    }
    limits.push(format!(
        "g = {:.3}, the refractive indices and the thicknesses are taken as exact: R and T \
         fix μs′ = μs (1 − g), so an error in g moves μs, hardly μs′",
        sample.anisotropy()
    ));
    limits.push(
        "the model assumes a laterally infinite slab and a detector that collects all the \
         light of each face; a sphere's port losses and a finite beam are not modelled"
            .into(),
    );
    if censored > 0.0 {
        limits.push(format!(
            "{:.2e} of the photons reached the step cap (fate unknown)",
            censored
        ));
    }
    limits
}
