//! Reports of a run: the summary structure (serialised as the JSON report), its readable
//! text rendering, SVG figures ([`plots`]) and the single-file HTML report ([`html`]).

pub mod html;
pub mod plots;
mod run_report;
pub mod slab_optics;
mod text;

pub use run_report::{
    Comparison, DiffusionSummary, DistributionSummary, ModelSummary, OutcomeFractions, RunReport,
    WalkSummary,
};
pub use text::render_run_report;
