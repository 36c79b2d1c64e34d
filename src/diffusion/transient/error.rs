//! Why the diffusion solver could not describe a medium.

/// Errors of [`super::solve`]. Every valid [`crate::medium::Medium`] either solves or gets
/// one of these; none of them is a panic.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum SolverError {
    /// The time integration would exceed its work budget (grid nodes × time steps): the
    /// medium spans too many orders of magnitude in its time scales (e.g. a source a
    /// vanishing distance from a face) for the solver to follow in a moment.
    #[error(
        "the time integration would take more than {budget:.0e} node-steps ({nodes} nodes, \
         stopped after {steps} steps): the medium's time scales span too many orders of \
         magnitude"
    )]
    TooMuchWork {
        /// Grid nodes.
        nodes: usize,
        /// Steps taken when the budget ran out.
        steps: usize,
        /// The budget, node-steps.
        budget: f64,
    },
    /// No layer has a positive transport extinction σ_tr = σ_a + σ_s (1 − g): there is
    /// nothing for photons to diffuse in.
    #[error(
        "no layer has a positive transport extinction σ_a + σ_s (1 − g): \
         diffusion theory has nothing to describe"
    )]
    NoDiffusingLayer,
    /// A layer's transport extinction is negative or not finite (validated layers cannot
    /// have one: their extinction is finite and the anisotropy inside (−1, 1); kept so that
    /// the solver never divides by such a value).
    #[error(
        "layers[{layer}]: transport extinction σ_a + σ_s (1 − g) = {value} /cm; \
         expected a finite number >= 0"
    )]
    InvalidTransport {
        /// Index of the layer.
        layer: usize,
        /// Its transport extinction, 1/cm.
        value: f64,
    },
    /// An energy-generation source on a medium that records no energy generation.
    #[error("the source follows the energy generation, but the model records none")]
    NoEnergyGeneration,
    /// The source lies in a transparent layer at the surface, outside the region where
    /// photons diffuse; the solver treats such layers as part of the outside.
    #[error(
        "the source at {position_cm} cm ({coordinate}) lies in a transparent layer at the \
         surface, outside the diffusing medium ({inside_from_cm} to {inside_to_cm} cm)"
    )]
    SourceOutsideDiffusingRegion {
        /// Radius (sphere) or depth (slab) of the source, cm.
        position_cm: f64,
        /// "radius" or "depth".
        coordinate: &'static str,
        /// Start of the diffusing region, cm.
        inside_from_cm: f64,
        /// End of the diffusing region, cm.
        inside_to_cm: f64,
    },
    /// A solver option is out of its range.
    #[error("solver option {name} = {value}; expected {expected}")]
    InvalidOption {
        /// Name of the option.
        name: &'static str,
        /// The value given.
        value: f64,
        /// What it must satisfy.
        expected: &'static str,
    },
    /// The discretised problem is out of floating-point range (a diffusion coefficient
    /// or a time scale beyond about 1e±300 in the medium's own units).
    #[error("the diffusion problem is out of floating-point range: {what}")]
    OutOfRange {
        /// What overflowed or vanished.
        what: String,
    },
}
