//! Stellar structure: the Lane–Emden equation and polytropic stars.
//!
//! [`LaneEmdenSolution`] solves θ″ + (2/ξ)θ′ + θⁿ = 0 out to the surface ξ₁ for
//! 0 ≤ n < 5; [`Polytrope`] scales it to a mass and radius in cgs units and gives
//! density, temperature, pressure and enclosed mass on a surface-refined grid, for an
//! ideal gas or Eddington's standard model. [`builder`] turns a polytrope and an opacity law
//! into a model file with a tabulated profile layer.
//!
//! [`energy`] holds the energy-generation laws (pp chain, CNO cycle); [`zones`] the
//! Schwarzschild criterion and the mixing-length crossing time; [`photosphere`] where τ = 2/3;
//! `analysis::stellar` gathers them, with the diffusion times of
//! `diffusion::stellar_times`, for the reports.

pub mod builder;
pub mod energy;
pub mod lane_emden;
pub mod photosphere;
pub mod polytrope;
pub mod zones;

pub use lane_emden::{LaneEmdenError, LaneEmdenSolution, LaneEmdenTable};
pub use polytrope::{
    Composition, Polytrope, PolytropeError, PressureModel, ProfilePoint, eddington_beta,
    eddington_coefficient,
};
