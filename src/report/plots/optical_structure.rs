//! The optical-structure panel of a sphere (`sojourn profile --plot`): the mean free path of
//! every shell and the optical depth from the surface, against radius, on one logarithmic
//! axis, with the photosphere (τ = 2/3 from the surface) marked.
//!
//! The mean free path is constant inside a shell (the walker's shells), so it is drawn as
//! steps; the optical depth is linear in r inside a shell and is drawn through points spaced
//! inside each shell when the shells are few, so that it bends as it should on the log axis.

use super::display_unit::DisplayUnit;
use super::error::PlotError;
use super::spec::{Axis, ChartSpec, ReferenceLine, Series};
use super::style::{Colour, Dash, LineStyle, SeriesStyle};
use super::{Figure, Panel};
use crate::analysis::profile::PHOTOSPHERE_OPTICAL_DEPTH;
use crate::medium::Medium;
use crate::report::ProfileReport;
use crate::units::format_significant;

/// Everything the optical-structure figure shows, as plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct OpticalStructurePanel {
    /// File stem of the figure.
    pub name: String,
    /// Title.
    pub title: String,
    /// Subtitle.
    pub subtitle: String,
    /// Unit of the radius axis.
    pub unit: DisplayUnit,
    /// `(radius cm, mean free path cm)`: two points per shell (its inner and outer radius),
    /// innermost first; transparent shells are left out.
    pub mean_free_path: Vec<(f64, f64)>,
    /// `(radius cm, optical depth from the surface)`, from the centre out, ending at the
    /// surface (τ = 0, which a log axis leaves out).
    pub optical_depth: Vec<(f64, f64)>,
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
    /// The panel of the profile report of `medium` (`None` if no shell interacts).
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
        let name = if report.model.name.is_empty() {
            "(unnamed model)"
        } else {
            report.model.name.as_str()
        };
        let unit = DisplayUnit::length(medium.display_unit());
        Some(Self {
            name: "optical-structure".into(),
            title: format!("Optical structure · {name}"),
            subtitle: format!(
                "{} shells · no Monte Carlo · {}",
                shells.len(),
                report.model.file
            ),
            unit,
            mean_free_path,
            optical_depth,
            photosphere_cm: report.analysis.photosphere_radius_cm,
            total_optical_depth: report.analysis.optical_depth,
        })
    }

    /// The chart this panel draws.
    pub fn spec(&self) -> ChartSpec {
        let unit = &self.unit;
        let show = |points: &[(f64, f64)]| -> Vec<(f64, f64)> {
            points.iter().map(|&(r, v)| (unit.show(r), v)).collect()
        };
        let series = vec![
            Series::new(
                "mean free path l (cm)",
                show(&self.mean_free_path),
                SeriesStyle::line(Colour::Vermilion, 3.0, Dash::Solid),
            ),
            Series::new(
                "optical depth τ from the surface",
                show(&self.optical_depth),
                SeriesStyle::line(Colour::Indigo, 3.5, Dash::Dashed),
            ),
        ];
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
            Some(r) => reference_lines.push(ReferenceLine::vertical(
                format!("photosphere (τ = 2/3) at r = {}", unit.format(r)),
                unit.show(r),
                LineStyle::new(Colour::Ochre, 3.0, Dash::DashDot),
            )),
            None => notes.push("no photosphere: the whole sphere is thinner than τ = 2/3".into()),
        }
        ChartSpec {
            title: self.title.clone(),
            subtitle: self.subtitle.clone(),
            x_axis: Axis::linear_from_zero(unit.axis_label("radius r")),
            y_axis: Axis::log("mean free path l (cm) · optical depth τ"),
            series,
            reference_lines,
            notes,
        }
    }
}

impl Panel for OpticalStructurePanel {
    fn name(&self) -> &str {
        &self.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.name.clone(),
            title: self.title.clone(),
            caption: "Mean free path of each shell (steps) and optical depth from the surface \
                      against radius, on one logarithmic axis; the photosphere (τ = 2/3 from \
                      the surface) is marked."
                .into(),
            svg: super::line_chart(&self.spec())?,
        })
    }
}
