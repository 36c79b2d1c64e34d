//! Diffusion theory: the rule of thumb, mean exit times on the model's own layers, the exact
//! first-passage distribution of diffusion out of a sphere, and time-resolved slab
//! diffusion.

mod estimates;
pub mod first_passage;
pub mod ks;
#[cfg(test)]
mod quadrature;
mod sphere_check;
pub mod stellar_times;
pub mod time_resolved;

pub use estimates::{DiffusionEstimate, MILNE_EXTRAPOLATION_LENGTH, estimate};
pub use sphere_check::{equivalent_sphere, first_passage_ks_distance};
