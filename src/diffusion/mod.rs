//! Diffusion theory: the rule of thumb, mean exit times on the model's own layers, the exact
//! first-passage distribution of diffusion out of a sphere, time-resolved slab diffusion,
//! and the time-dependent diffusion solver on the model's own layers and profiles
//! ([`transient`]).

pub mod boundary;
pub mod dipole;
mod estimates;
mod extrapolation;
pub mod first_passage;
pub mod ks;
mod quadrature;
mod sphere_check;
pub mod stellar_times;
pub mod time_resolved;
pub mod transient;

pub use boundary::MILNE_EXTRAPOLATION_LENGTH;
pub use estimates::{DiffusionEstimate, estimate};
pub use sphere_check::{equivalent_sphere, first_passage_ks_distance};
