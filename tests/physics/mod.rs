//! Checks of the physics against exact results and published values
//! (../shared/REFERENCES.md).

mod accelerated;
mod exact_stepping;
mod h_function;
mod phase_functions;
mod reproducibility;
mod slab_optics;
mod slab_reflectance;
mod sphere_diffusion;
