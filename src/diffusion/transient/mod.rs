//! Time-dependent diffusion on the model's own layers and profile sub-shells: the whole
//! escape-time distribution of diffusion theory, with absorption, for any sphere or slab
//! the Monte Carlo walks.
//!
//! # What is solved
//!
//! The photon density u obeys `∂u/∂t = ∇·(D ∇u) − v σ_a u` with D = v / (3 σ_tr) per layer
//! (v = c/n, σ_tr = σ_a + σ_s (1 − g)). The medium is one-dimensional:
//!
//! * a sphere: the radial process, with the source at r₀. Exit times of a point source at
//!   r₀ in a spherically symmetric medium depend only on r₀, so this is exact diffusion
//!   theory for an off-centre source too;
//! * a slab: the depth process, with the source distribution the model implies (a point
//!   or plane source at its depth; a beam as a δ-isotropic exponential source behind the
//!   Fresnel-transmitting face; diffuse light as the Lambertian average of beams; see
//!   `source.rs` for the choices).
//!
//! The density is continuous in the form φ/n² across an index step inside a slab (radiance
//! continuity, Aronson 1995; Faris 2002), with the current continuous too; it vanishes on
//! the extrapolated boundary of each free face, q∞ l_tr outside a matched face (Milne,
//! Chandrasekhar 1950) and (2/3) A l_tr outside a refractive one, A from the Fresnel
//! integrals (Haskell et al. 1994), each face with its own indices
//! ([`FaceCondition::Extrapolated`]); or on the faces themselves
//! ([`FaceCondition::ZeroDensity`]). A layer with no transport extinction is a well-mixed
//! node; one at a free face is outside. See `model_1d.rs`.
//!
//! # Method and accuracy
//!
//! Linear finite elements with lumped capacities on a grid adapted to the diffusion
//! coefficient (uniform in ξ = ∫ dx/√D, graded towards the source and the faces; `grid.rs`),
//! one tridiagonal solve per stage; TR-BDF2 in time after one backward-Euler step
//! (`stepping.rs`); λ₁ from the inertia of the tridiagonal pencil; the late tail as the
//! exact single eigenmode. Outcome fractions, the mean escape time and the layer
//! residences come from the steady problem (`K x = y₀`, `K z = C x`), which has no
//! time-stepping error.
//!
//! The scheme is second order: errors fall as `resolution⁻²` (element sizes and time steps
//! both scale as 1/`resolution`), shown in `tests/physics/diffusion_solver.rs`. At the
//! default resolution the first-passage quantiles of a uniform sphere are within 3e−4 of
//! the series solution. The cost is linear in the number of layers: the grid has about
//! 200 + (one per layer) + (a few dozen per refinement) nodes and the history a few hundred
//! steps; `cargo run --release --example diffusion_solver_speed` times it.
//!
//! # Limits
//!
//! Diffusion theory: it fails where the medium is a few transport mean free paths thick,
//! absorbs strongly (albedo well below 1), or where a photon's early history matters (the
//! first transport mean free times of a beam's reflectance). The solver says nothing about
//! that; comparing with the Monte Carlo does.
//!
//! ```
//! use sojourn::diffusion::transient::{Exit, solve};
//! use sojourn::medium::{Layer, Medium, Source};
//! use sojourn::transport::PhaseFunction;
//!
//! // A uniform conservative sphere of optical radius 100 with a centred source.
//! let layer = Layer::new("", 100.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
//! let medium = Medium::sphere(vec![(1.0, layer)], Source::centre()).unwrap();
//! let solution = solve(&medium).unwrap();
//! assert!((solution.escape_probability() - 1.0).abs() < 1e-9);
//! let median = solution.escape_quantile_s(0.5).unwrap();
//! assert!((solution.escape_cdf(median) - 0.5).abs() < 1e-9);
//! // Mean exit time close to (τ + q∞)² l / (2c) with the extrapolated boundary.
//! let expected = (100.0f64 + 0.7104461).powi(2) / 100.0 / (2.0 * 2.99792458e10);
//! assert!((solution.mean_escape_time_s().unwrap() / expected - 1.0).abs() < 1e-3);
//! assert_eq!(solution.exit_probability(Exit::Top), 0.0);
//! ```

mod error;
mod grid;
mod model_1d;
mod solution;
mod source;
mod stepping;
mod system;
mod tridiagonal;

pub use error::SolverError;
pub use model_1d::FaceCondition;
pub use solution::{EscapeSolution, Exit};

use crate::medium::Medium;
use model_1d::Model1d;
use solution::Steady;
use source::SourceTerms;
use system::System;

/// Growth of the time step, Δt = ε t, at resolution 1.
const STEP_GROWTH: f64 = 0.05;
/// First (backward-Euler) step as a fraction of the shortest relaxation time C_i/K_ii of
/// the nodes that hold the source.
const FIRST_STEP_FRACTION: f64 = 0.01;

/// How the solver discretises.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SolverOptions {
    /// Where the density vanishes (default: the extrapolated boundaries).
    pub faces: FaceCondition,
    /// Refinement factor (default 1; 0.1 ..= 1000): element sizes and time steps scale as
    /// 1/`resolution`, errors as `resolution⁻²`, cost as `resolution²`.
    pub resolution: f64,
}

impl Default for SolverOptions {
    fn default() -> Self {
        Self {
            faces: FaceCondition::Extrapolated,
            resolution: 1.0,
        }
    }
}

/// Solves the diffusion problem of `medium` and its source with the default options.
///
/// # Errors
/// See [`solve_with`].
pub fn solve(medium: &Medium) -> Result<EscapeSolution, SolverError> {
    solve_with(medium, &SolverOptions::default())
}

/// Solves the diffusion problem of `medium` and its source.
///
/// # Errors
/// [`SolverError::InvalidOption`] for a resolution outside 0.1 ..= 1000,
/// [`SolverError::NoDiffusingLayer`] / [`SolverError::InvalidTransport`] for media
/// diffusion cannot describe, [`SolverError::SourceOutsideDiffusingRegion`] for a source in
/// a transparent surface layer, [`SolverError::OutOfRange`] if the problem's scales leave
/// the floating-point range.
pub fn solve_with(medium: &Medium, options: &SolverOptions) -> Result<EscapeSolution, SolverError> {
    let resolution = options.resolution;
    if !(0.1..=1000.0).contains(&resolution) {
        return Err(SolverError::InvalidOption {
            name: "resolution",
            value: resolution,
            expected: "a number between 0.1 and 1000",
        });
    }
    let model = Model1d::new(medium, options.faces)?;
    let source = SourceTerms::new(medium, &model)?;
    let splits: Vec<f64> = source.points.iter().map(|&(x, _)| x).collect();
    let grid = grid::element_nodes(&model, &source.refine, &splits, resolution);
    let system = System::assemble(&model, &grid, &source);
    check_range(&system)?;

    let (lambda, mode) = tridiagonal::smallest_eigenpair(&system);
    if !(lambda.is_finite() && lambda > 0.0) {
        return Err(SolverError::OutOfRange {
            what: format!("the late decay rate came out as {lambda} /s"),
        });
    }
    let (steady, residence) = steady_state(&system, medium.layers().len());
    let first_step = first_step_s(&system);
    let history =
        stepping::integrate(&system, first_step, STEP_GROWTH / resolution, lambda, &mode)?;
    let mut atoms = source.atoms.clone();
    atoms.extend(system.prompt.iter().copied());
    Ok(EscapeSolution {
        geometry: model.geometry,
        history,
        atoms,
        specular: source.specular,
        prompt_absorbed: source.prompt_absorbed,
        steady,
        decay_rate_per_s: lambda,
        residence_s: residence,
        nodes: system.len(),
        extension_cm: model.extension_cm,
    })
}

/// Checks that the assembled problem is representable: positive finite capacities,
/// finite non-negative conductances and rates.
fn check_range(system: &System) -> Result<(), SolverError> {
    let bad = |what: &str, value: f64| SolverError::OutOfRange {
        what: format!("{what} = {value}"),
    };
    if system.len() == 0 {
        return Err(SolverError::OutOfRange {
            what: "the grid has no interior node".into(),
        });
    }
    for &c in &system.capacity {
        if !(c.is_finite() && c > 0.0) {
            return Err(bad("a node capacity", c));
        }
    }
    for &g in system.link.iter().chain(&system.escape) {
        if !(g.is_finite() && g >= 0.0) {
            return Err(bad("a conductance (s⁻¹)", g));
        }
    }
    if system.escape.iter().all(|&g| g <= 0.0) && system.absorption.iter().all(|&a| a <= 0.0) {
        return Err(bad("the escape conductance (s⁻¹)", 0.0));
    }
    for &a in &system.absorption {
        if !(a.is_finite() && a >= 0.0) {
            return Err(bad("an absorption rate (s⁻¹)", a));
        }
    }
    Ok(())
}

/// The steady values (`K x = y₀`, `K z = C x`) and the residence time of each of `layers`
/// model layers.
fn steady_state(system: &System, layers: usize) -> (Steady, Vec<f64>) {
    let n = system.len();
    let mut x = vec![0.0; n];
    let mut z = vec![0.0; n];
    let mut scratch = vec![0.0; n];
    tridiagonal::solve(system, 0.0, 1.0, &system.initial, &mut x, &mut scratch);
    let cx: Vec<f64> = x.iter().zip(&system.capacity).map(|(a, c)| a * c).collect();
    tridiagonal::solve(system, 0.0, 1.0, &cx, &mut z, &mut scratch);
    let mut residence = vec![0.0; layers];
    for &(node, layer, part) in &system.layer_parts {
        residence[layer] += part * x[node];
    }
    (
        Steady {
            escaped: system.escape_rates(&x),
            escape_time_moment_s: system.escape_rates(&z),
            absorbed: system.absorption_rate(&x),
        },
        residence,
    )
}

/// The backward-Euler first step: a fraction of the shortest relaxation time C_i/K_ii of
/// the nodes holding at least 1e−6 of the source (of all nodes if it places none).
fn first_step_s(system: &System) -> f64 {
    let total: f64 = system.initial.iter().sum();
    let relaxation = |i: usize| system.capacity[i] / system.stiffness_diagonal(i);
    let shortest = (0..system.len())
        .filter(|&i| total <= 0.0 || system.initial[i] >= 1e-6 * total)
        .map(relaxation)
        .fold(f64::INFINITY, f64::min);
    FIRST_STEP_FRACTION * shortest
}
