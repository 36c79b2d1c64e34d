//! Photon transport: phase functions, random streams, direction sampling and the walkers.

mod absorption;
mod accelerated;
mod cost;
pub mod crossing;
mod direct;
pub mod direction;
pub mod fresnel;
mod geometry;
mod jump_spheres;
pub mod ledger;
mod milne;
mod phase;
mod radial_chain;
mod radial_passage;
mod radial_profile;
pub mod rng;
mod tridiagonal;

pub use absorption::{Absorption, ROULETTE_SURVIVAL, ROULETTE_THRESHOLD};
pub use accelerated::{AcceleratedWalker, Acceleration};
pub use cost::{STALL_ULPS, Stall, WalkCost};
pub use direct::{DirectWalker, WalkLimits};
pub use ledger::PathLedger;
pub use phase::{Anisotropy, PhaseFunction};
