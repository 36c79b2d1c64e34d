//! The optical structure of a sphere (`sojourn profile --plot`), as two figures with one
//! quantity each:
//!
//! * **mean free path** of every shell against radius (logarithmic l axis), drawn as steps,
//!   since the mean free path is constant inside a shell (the walker's shells);
//! * **optical depth from the surface** against the depth below the surface, R − r, with
//!   both axes logarithmic, so that the surface region, where τ passes 2/3 within a tiny
//!   fraction of the radius, spreads over decades instead of a few pixels; τ = 2/3 and the
//!   photosphere are marked. τ is linear in r inside a shell and is drawn through points
//!   spaced inside each shell when the shells are few, so that it bends as it should on the
//!   log axes.
//!
//! Lengths are shown in the model's own length unit.

use super::display_unit::DisplayUnit;
use super::error::PlotError;
use super::spec::{Axis, ChartSpec, ReferenceLine, Series};
use super::style::{Colour, Dash, LineStyle, SeriesStyle};
use super::{Figure, Panel};
use crate::analysis::profile::PHOTOSPHERE_OPTICAL_DEPTH;
use crate::medium::Medium;
use crate::report::ProfileReport;
use crate::units::format_significant;

/// Everything the two optical-structure figures show, as plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct OpticalStructurePanel {
    /// Name of the model, for the titles.
    pub model: String,
    /// Subtitle.
    pub subtitle: String,
    /// The model's length unit, for both axes.
    pub unit: DisplayUnit,
    /// `(radius cm, mean free path cm)`: two points per shell (its inner and outer radius),
    /// innermost first; transparent shells are left out.
    pub mean_free_path: Vec<(f64, f64)>,
    /// `(radius cm, optical depth from the surface)`, from the centre out, ending at the
    /// surface (τ = 0, which a log axis leaves out).
    pub optical_depth: Vec<(f64, f64)>,
    /// Outer radius of the sphere, cm.
    pub radius_cm: f64,
    /// Photosphere radius (τ = 2/3 from the surface), cm, if the sphere is that thick.
    pub photosphere_cm: Option<f64>,
    /// Optical depth from the centre to the surface.
    pub total_optical_depth: f64,
}

/// Points at most this many per curve (every k-th shell boundary beyond it).
const MAX_POINTS: usize = 3000;
/// Points inside each shell for the optical depth when the shells are few.
const POINTS_PER_SHELL: usize = 24;

impl OpticalStructurePanel {
    /// The data of the profile report of `medium` (`None` if no shell interacts).
    pub fn from_profile(medium: &Medium, report: &ProfileReport) -> Option<Self> {
        let shells = &report.analysis.shells;
        if shells.is_empty() || report.analysis.optical_depth <= 0.0 {
            return None;
        }
        let stride = shells.len().div_ceil(MAX_POINTS / 2).max(1);
        let mut mean_free_path = Vec::new();
        for (k, shell) in shells.iter().enumerate() {
            if k % stride != 0 && k + 1 != shells.len() {
                continue;
            }
            if let Some(l) = shell.mean_free_path_cm {
                mean_free_path.push((shell.inner_radius_cm, l));
                mean_free_path.push((shell.radius_cm, l));
            }
        }
        let per_shell = if shells.len() * POINTS_PER_SHELL <= MAX_POINTS {
            POINTS_PER_SHELL
        } else {
            1
        };
        let mut optical_depth = Vec::new();
        for (k, shell) in shells.iter().enumerate() {
            if per_shell == 1 && k % stride != 0 {
                continue;
            }
            let below = shell.tau_from_surface + shell.tau_shell;
            for j in 0..per_shell {
                let f = j as f64 / per_shell as f64;
                let r = shell.inner_radius_cm + f * (shell.radius_cm - shell.inner_radius_cm);
                optical_depth.push((r, below - f * shell.tau_shell));
            }
        }
        let last = shells.last().expect("not empty");
        optical_depth.push((last.radius_cm, last.tau_from_surface));
        let model = if report.model.name.is_empty() {
            "(unnamed model)".to_string()
        } else {
            report.model.name.clone()
        };
        Some(Self {
            model,
            subtitle: format!(
                "{} shells · no Monte Carlo · {}",
                shells.len(),
                report.model.file
            ),
            unit: DisplayUnit::length(medium.display_unit()),
            mean_free_path,
            optical_depth,
            radius_cm: last.radius_cm,
            photosphere_cm: report.analysis.photosphere_radius_cm,
            total_optical_depth: report.analysis.optical_depth,
        })
    }

    /// The two figures: mean free path, then optical depth.
    pub fn panels(self) -> [Box<dyn Panel>; 2] {
        [
            Box::new(MeanFreePathFigure(self.clone())),
            Box::new(OpticalDepthFigure(self)),
        ]
    }

    /// The chart of the mean free path against radius.
    pub fn mean_free_path_spec(&self) -> ChartSpec {
        let unit = &self.unit;
        let points = self
            .mean_free_path
            .iter()
            .map(|&(r, l)| (unit.show(r), unit.show(l)))
            .collect();
        let label = unit.axis_label("mean free path l");
        let mut reference_lines = Vec::new();
        if let Some(r) = self.photosphere_cm {
            reference_lines.push(ReferenceLine::vertical(
                format!("photosphere (τ = 2/3) at r = {}", unit.format(r)),
                unit.show(r),
                LineStyle::new(Colour::Ochre, 3.0, Dash::DashDot),
            ));
        }
        ChartSpec {
            title: format!("Mean free path · {}", self.model),
            subtitle: self.subtitle.clone(),
            x_axis: Axis::linear_from_zero(unit.axis_label("radius r")),
            y_axis: Axis::log(label.clone()),
            series: vec![Series::new(
                label,
                points,
                SeriesStyle::line(Colour::Vermilion, 3.0, Dash::Solid),
            )],
            reference_lines,
            notes: vec![],
        }
    }

    /// The chart of the optical depth from the surface against the depth below it.
    pub fn optical_depth_spec(&self) -> ChartSpec {
        let unit = &self.unit;
        let points = self
            .optical_depth
            .iter()
            .map(|&(r, tau)| (unit.show(self.radius_cm - r), tau))
            .filter(|&(depth, tau)| depth > 0.0 && tau > 0.0)
            .collect();
        let mut reference_lines = vec![ReferenceLine::horizontal(
            "τ = 2/3",
            PHOTOSPHERE_OPTICAL_DEPTH,
            LineStyle::new(Colour::Slate, 2.0, Dash::Dotted),
        )];
        let mut notes = vec![format!(
            "optical depth centre → surface {}",
            format_significant(self.total_optical_depth, 5)
        )];
        match self.photosphere_cm {
            Some(r) if r < self.radius_cm => reference_lines.push(ReferenceLine::vertical(
                format!(
                    "photosphere (τ = 2/3) at r = {}, {} below the surface",
                    unit.format(r),
                    unit.format(self.radius_cm - r)
                ),
                unit.show(self.radius_cm - r),
                LineStyle::new(Colour::Ochre, 3.0, Dash::DashDot),
            )),
            Some(r) => notes.push(format!(
                "the photosphere (τ = 2/3), at r = {}, lies above the model's outer shell",
                unit.format(r)
            )),
            None => notes.push("no photosphere: the whole sphere is thinner than τ = 2/3".into()),
        }
        ChartSpec {
            title: format!("Optical depth · {}", self.model),
            subtitle: self.subtitle.clone(),
            x_axis: Axis::log(unit.axis_label("depth below the surface R − r")),
            y_axis: Axis::log("optical depth τ from the surface"),
            series: vec![Series::new(
                "optical depth τ from the surface",
                points,
                SeriesStyle::line(Colour::Indigo, 3.5, Dash::Solid),
            )],
            reference_lines,
            notes,
        }
    }
}

/// The mean-free-path figure (`mean-free-path.svg`).
struct MeanFreePathFigure(OpticalStructurePanel);

impl Panel for MeanFreePathFigure {
    fn name(&self) -> &str {
        "mean-free-path"
    }

    fn render(&self) -> Result<Figure, PlotError> {
        let spec = self.0.mean_free_path_spec();
        Ok(Figure {
            name: self.name().into(),
            title: spec.title.clone(),
            caption: "Mean free path of each shell (steps) against radius, on a logarithmic \
                      axis; the photosphere (τ = 2/3 from the surface) is marked."
                .into(),
            svg: super::line_chart(&spec)?,
        })
    }
}

/// The optical-depth figure (`optical-depth.svg`).
struct OpticalDepthFigure(OpticalStructurePanel);

impl Panel for OpticalDepthFigure {
    fn name(&self) -> &str {
        "optical-depth"
    }

    fn render(&self) -> Result<Figure, PlotError> {
        let spec = self.0.optical_depth_spec();
        Ok(Figure {
            name: self.name().into(),
            title: spec.title.clone(),
            caption: "Optical depth from the surface against the depth below it, both axes \
                      logarithmic so that the surface region is readable; τ = 2/3 and the \
                      photosphere are marked."
                .into(),
            svg: super::line_chart(&spec)?,
        })
    }
}
