//! Photon transport: phase functions, random streams, direction sampling and the walkers.

mod direct;
pub mod direction;
mod geometry;
mod phase;
pub mod rng;

pub use direct::{DirectWalker, WalkLimits};
pub use phase::PhaseFunction;
