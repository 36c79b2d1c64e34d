//! Photon transport: phase functions, random streams, direction sampling and the walkers.

mod accelerated;
pub mod crossing;
mod direct;
pub mod direction;
pub mod fresnel;
mod geometry;
mod phase;
pub mod rng;

pub use accelerated::{AcceleratedWalker, Acceleration};
pub use direct::{DirectWalker, WalkLimits};
pub use phase::PhaseFunction;
