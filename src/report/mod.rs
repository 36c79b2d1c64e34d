//! Reports: formatting of the analysis ([`crate::analysis`]) and nothing else. The run
//! report ([`RunReport`], serialised as the JSON report) and its readable text rendering,
//! SVG figures ([`plots`]) and the single-file HTML report ([`html`]); the profile report
//! of a sphere's optical structure (`sojourn profile`), with its text and CSV renderings.
//! The figures and the HTML report need the `plots` feature (on by default).

mod budget_text;
mod fit_document;
#[cfg(feature = "plots")]
pub mod html;
#[cfg(feature = "plots")]
pub mod plots;
mod profile_document;
mod profile_text;
mod run_document;
mod text;

pub use fit_document::{
    ErrorsInUnit, FitReport, FitSummary, PlanePoint, StartInUnit, render_fit_report,
};
pub use profile_document::{ProfileModel, ProfileReport};
pub use profile_text::{render_profile_csv, render_profile_report};
pub use run_document::{ModelSummary, RunReport};
pub use text::render_run_report;
