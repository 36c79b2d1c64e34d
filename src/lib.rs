//! # sojourn
//!
//! How long does radiation take to random-walk out of a scattering medium? `sojourn` answers
//! with a Monte Carlo walker that moves photon packets through layered spheres and slabs with
//! exact optical-depth stepping, and puts the resulting escape-time distribution next to
//! diffusion theory: the random-walk rule of thumb N ≈ τ², the mean exit time of the steady
//! diffusion equation on the model's own mean-free-path profile, and the exact first-passage
//! distribution of diffusion out of a sphere.
//!
//! All quantities inside the library are in cgs units (cm, g, s).
//!
//! Stellar models: [`star`] solves the Lane–Emden equation and builds polytropic stars,
//! [`opacity`] holds the opacity laws, [`import`] reads profile tables, and
//! [`medium::profile`] turns a tabulated radial profile into shells of constant extinction
//! that the walker steps through with the profile's exact optical depth;
//! [`report::ProfileReport`] gives a sphere's optical structure and where its diffusion time
//! accrues, without Monte Carlo.
//!
//! ```
//! use sojourn::medium::{Layer, Medium, Source};
//! use sojourn::transport::PhaseFunction;
//! use sojourn::simulation::{RunConfig, run};
//!
//! // A uniform, purely scattering sphere of radius 1 cm and optical radius 5.
//! let layer = Layer::new("core", 5.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
//! let medium = Medium::sphere(vec![(1.0, layer)], Source::centre()).unwrap();
//! let result = run(&medium, &RunConfig { photons: 2_000, seed: 7, ..RunConfig::default() });
//! assert_eq!(result.tally.launched(), 2_000);
//! // Every photon escapes a conservative sphere.
//! assert_eq!(result.tally.escaped().count(), 2_000);
//! ```
#![deny(missing_docs)]

pub mod analysis;
pub mod atomic_write;
pub mod checkpoint;
pub mod diffusion;
pub mod fingerprint;
pub mod import;
pub mod medium;
pub mod opacity;
pub mod report;
pub mod shard;
pub mod simulation;
pub mod star;
pub mod sweep;
pub mod tally;
pub mod transport;
pub mod units;
