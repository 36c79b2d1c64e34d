//! Reports of a run: the summary structure (serialised as the JSON report), its readable
//! text rendering, SVG figures ([`plots`]) and the single-file HTML report ([`html`]); and
//! the profile report of a sphere's optical structure (`sojourn profile`), with its text
//! and CSV renderings.

pub mod html;
pub mod plots;
mod profile_text;
mod text;

pub use crate::analysis::profile as profile_report;
pub use crate::analysis::run::{
    Comparison, DiffusionSummary, DistributionSummary, ModelSummary, OutcomeFractions, RunReport,
    WalkSummary,
};
pub use crate::analysis::slab_optics;
pub use profile_report::ProfileReport;
pub use profile_text::{render_profile_csv, render_profile_report};
pub use text::render_run_report;
