//! Checks of the physics against exact results and published values
//! (docs/references.md).

mod absorption_rescaling;
mod accelerated;
mod beams_detectors;
mod comparison;
mod convective_zones;
mod diffusion_solver;
mod energy_generation;
mod exact_stepping;
mod fit_round_trip;
mod h_function;
mod opacity_tables;
mod phase_functions;
mod profile_media;
mod profile_monte_carlo;
mod quantiles;
mod radial_reflectance;
mod reproducibility;
mod residence;
mod slab_optics;
mod slab_reflectance;
mod sphere_diffusion;
mod stellar_structure;
mod weighted_absorption;
