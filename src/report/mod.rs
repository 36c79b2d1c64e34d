//! Reports of a run: the summary structure (serialised as the JSON report) and its
//! readable text rendering.

mod run_report;
pub mod slab_optics;
mod text;

pub use run_report::{
    Comparison, DiffusionSummary, DistributionSummary, ModelSummary, OutcomeFractions, RunReport,
    WalkSummary,
};
pub use text::render_run_report;
