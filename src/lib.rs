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
//! A run goes medium → [`simulation::run`] (photons, a mergeable [`tally::Tally`]) →
//! [`analysis::RunAnalysis`] (plain numbers: outcomes, distributions, diffusion theory on
//! the model, the comparison of the two and a verdict on whether diffusion describes the
//! medium) → [`report`] (text, JSON, SVG, HTML; formatting only). Sweeps ([`sweep`]),
//! shards ([`shard`]) and checkpoints ([`checkpoint`]) carry tallies and analysis, never
//! reports; dependencies between the modules point one way (DEVELOPERS.md, *Layers*).
//!
//! Stellar models: [`star`] solves the Lane–Emden equation and builds polytropic stars,
//! [`opacity`] holds the opacity laws, [`import`] reads profile tables, and
//! [`medium::profile`] turns a tabulated radial profile into shells of constant extinction
//! that the walker steps through with the profile's exact optical depth;
//! [`analysis::ProfileAnalysis`] gives a sphere's optical structure and where its diffusion
//! time accrues, without Monte Carlo.
//!
//! ```
//! use sojourn::medium::{Layer, Medium, Source};
//! use sojourn::transport::PhaseFunction;
//! use sojourn::simulation::{RunConfig, run};
//!
//! // A uniform, purely scattering sphere of radius 1 cm and optical radius 5.
//! let layer = Layer::new("core", 5.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
//! let medium = Medium::sphere(vec![(1.0, layer)], Source::centre()).unwrap();
//! let config = RunConfig { photons: 2_000, seed: 7, ..RunConfig::default() };
//! let result = run(&medium, &config);
//! assert_eq!(result.tally.launched(), 2_000);
//! // Every photon escapes a conservative sphere.
//! assert_eq!(result.tally.escaped().count(), 2_000);
//!
//! // Monte Carlo beside diffusion theory, as plain numbers.
//! let analysis = sojourn::analysis::RunAnalysis::new(&medium, &config, &result.tally);
//! assert!(analysis.comparison.time_ratio.is_some());
//! println!("{}", analysis.comparison.verdict.reason);
//! ```
#![deny(missing_docs)]

pub mod analysis;
pub mod atomic_write;
pub mod checkpoint;
pub mod diffusion;
pub(crate) mod file_format;
pub mod fingerprint;
pub mod fit;
pub mod import;
pub mod input;
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
