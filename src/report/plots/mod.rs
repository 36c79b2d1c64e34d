//! Figures as SVG documents, drawn with plotters' SVG backend: no fonts, no native
//! libraries, text written as `<text>` for the viewer to set.
//!
//! Two layers:
//!
//! * **Chart kinds** take plain data ([`ChartSpec`], [`HistogramSpec`]) and return an SVG
//!   string: [`line_chart`] (linear or logarithmic axes, error bars, reference lines, legend)
//!   and [`histogram_chart`] (bars under curves and reference lines). Colours, dashes and
//!   markers come from [`style`], chosen to stay distinct in greyscale and for colour-blind
//!   readers.
//! * **Panels** turn results into one chart each and implement [`Panel`]. A run has
//!   [`escape_time::escape_time_panel`], [`scatterings::scatterings_panel`] and, for spheres,
//!   [`time_budget::TimeBudgetPanel`]; a slab run with resolved tallies adds
//!   [`time_resolved::TimeResolvedPanel`], [`absorption_depth::AbsorptionDepthPanel`] and
//!   [`limb_darkening::LimbDarkeningPanel`] and
//!   [`radial_reflectance::RadialReflectancePanel`]; [`run_panels`] lists them. `sojourn profile`
//!   has [`optical_structure::OpticalStructurePanel`] (two figures: mean free path and
//!   optical depth) and
//!   [`profile_budget::ProfileTimeBudgetPanel`] ([`profile_panels`]), a sweep
//!   [`sweep_escape_time::SweepPanel`] ([`sweep_panels`]). A new panel is a new file
//!   with a plain-data struct that implements [`Panel`] (usually by filling a
//!   [`ChartSpec`]), and the command that has its data lists it — no other panel changes.
//!
//! ```
//! use sojourn::medium::{Layer, Medium, Source};
//! use sojourn::report::RunReport;
//! use sojourn::report::plots::{RunInputs, run_figures};
//! use sojourn::simulation::{RunConfig, run};
//! use sojourn::transport::PhaseFunction;
//!
//! let layer = Layer::new("core", 5.0, 1.0, PhaseFunction::Isotropic, 1.0).unwrap();
//! let medium = Medium::sphere(vec![(1.0, layer)], Source::centre()).unwrap();
//! let config = RunConfig { photons: 500, ..RunConfig::default() };
//! let result = run(&medium, &config);
//! let report = RunReport::new(&medium, "example", &config, &result);
//! let inputs = RunInputs { medium: &medium, tally: &result.tally, report: &report };
//! let figures = run_figures(&inputs).unwrap();
//! let names: Vec<&str> = figures.iter().map(|f| f.name.as_str()).collect();
//! assert_eq!(names, ["escape-time", "scatterings", "time-budget"]);
//! ```

pub mod absorption_depth;
mod canvas;
pub mod display_unit;
pub mod distribution;
mod error;
pub mod escape_time;
pub mod fit_plane;
mod histogram_chart;
pub mod limb_darkening;
mod line_chart;
pub mod optical_structure;
pub mod profile_budget;
pub mod radial_reflectance;
pub mod rebin;
mod run_inputs;
pub mod scatterings;
mod spec;
pub mod style;
pub mod sweep_escape_time;
pub mod ticks;
pub mod time_budget;
pub mod time_resolved;

pub use canvas::{Frame, fit};

use crate::medium::Medium;
use crate::report::ProfileReport;
pub use display_unit::DisplayUnit;
pub use error::PlotError;
pub use histogram_chart::histogram_chart;
pub use line_chart::line_chart;
pub use run_inputs::{RunInputs, group_digits};
pub use spec::{Axis, Bars, ChartSpec, HistogramSpec, Orientation, ReferenceLine, Scale, Series};
pub use style::{Colour, Dash, LineStyle, MarkerShape, SeriesStyle};

/// One finished figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure {
    /// File stem, e.g. `escape-time` (written as `escape-time.svg`).
    pub name: String,
    /// Title (as drawn on the figure).
    pub title: String,
    /// One or two sentences on what the figure shows, for captions.
    pub caption: String,
    /// The SVG document.
    pub svg: String,
}

/// A figure made from plain data. Implement it for a new panel's data struct.
pub trait Panel {
    /// File stem of the figure (lowercase, hyphens), unique among a command's figures.
    fn name(&self) -> &str;

    /// Draws the figure.
    ///
    /// # Errors
    /// Whatever the chart kind reports ([`PlotError`]).
    fn render(&self) -> Result<Figure, PlotError>;
}

/// The panels of a run that have data: escape time and scatterings (if any photon left),
/// the time budget (spheres), and for slabs with resolved tallies the time-resolved
/// reflectance and transmittance, absorption by depth (if any) and the angular distribution
/// of reflected light.
pub fn run_panels(inputs: &RunInputs) -> Vec<Box<dyn Panel>> {
    let mut panels: Vec<Box<dyn Panel>> = Vec::new();
    if let Some(panel) = escape_time::escape_time_panel(inputs) {
        panels.push(Box::new(panel));
    }
    if let Some(panel) = scatterings::scatterings_panel(inputs) {
        panels.push(Box::new(panel));
    }
    if let Some(panel) = time_budget::TimeBudgetPanel::for_run(inputs) {
        panels.push(Box::new(panel));
    }
    if let Some(panel) = time_resolved::TimeResolvedPanel::for_run(inputs) {
        panels.push(Box::new(panel));
    }
    if let Some(panel) = absorption_depth::AbsorptionDepthPanel::for_run(inputs) {
        panels.push(Box::new(panel));
    }
    if let Some(panel) = limb_darkening::LimbDarkeningPanel::for_run(inputs) {
        panels.push(Box::new(panel));
    }
    if let Some(panel) = radial_reflectance::RadialReflectancePanel::for_run(inputs) {
        panels.push(Box::new(panel));
    }
    panels
}

/// The panels of `sojourn profile`: the optical structure (mean free path, optical depth)
/// and the time budget of the profile's shells.
pub fn profile_panels(medium: &Medium, report: &ProfileReport) -> Vec<Box<dyn Panel>> {
    let mut panels: Vec<Box<dyn Panel>> = Vec::new();
    if let Some(structure) = optical_structure::OpticalStructurePanel::from_profile(medium, report)
    {
        panels.extend(structure.panels());
    }
    if let Some(panel) = profile_budget::ProfileTimeBudgetPanel::from_profile(medium, report) {
        panels.push(Box::new(panel));
    }
    panels
}

/// The panels of a finished sweep: the mean escape time against the first parameter.
/// `model` is the model's name, `label` names the spec, `unit` is the model's length unit.
pub fn sweep_panels(
    points: &[sweep_escape_time::StudyPoint],
    model: &str,
    label: &str,
    unit: crate::units::LengthUnit,
) -> Vec<Box<dyn Panel>> {
    let mut panels: Vec<Box<dyn Panel>> = Vec::new();
    if let Some(panel) = sweep_escape_time::SweepPanel::from_points(points, model, label, unit) {
        panels.push(Box::new(panel));
    }
    panels
}

/// Draws every panel in `panels`.
///
/// # Errors
/// The first panel that fails ([`PlotError`]).
pub fn render_all(panels: &[Box<dyn Panel>]) -> Result<Vec<Figure>, PlotError> {
    panels.iter().map(|panel| panel.render()).collect()
}

/// Draws every panel of a run.
///
/// # Errors
/// The first panel that fails ([`PlotError`]).
pub fn run_figures(inputs: &RunInputs) -> Result<Vec<Figure>, PlotError> {
    run_panels(inputs)
        .iter()
        .map(|panel| panel.render())
        .collect()
}
