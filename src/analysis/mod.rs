//! The analysis layer: from a medium and a tally to plain result structs (Monte Carlo
//! summaries, diffusion theory beside them, the comparison of the two), with no formatting.

pub mod profile;
pub mod run;
pub mod slab_optics;
