//! Stellar structure: the Lane–Emden equation and polytropic stars.
//!
//! [`LaneEmdenSolution`] solves θ″ + (2/ξ)θ′ + θⁿ = 0 out to the surface ξ₁ for
//! 0 ≤ n < 5; [`Polytrope`] scales it to a mass and radius in cgs units and gives
//! density, temperature, pressure and enclosed mass on a surface-refined grid, for an
//! ideal gas or Eddington's standard model. [`builder`] turns a polytrope and an opacity law
//! into a model file with a tabulated profile layer.

pub mod builder;
pub mod lane_emden;
pub mod polytrope;

pub use lane_emden::{LaneEmdenError, LaneEmdenSolution, LaneEmdenTable};
pub use polytrope::{
    Composition, Polytrope, PolytropeError, PressureModel, ProfilePoint, eddington_beta,
    eddington_coefficient,
};
