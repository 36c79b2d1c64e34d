//! The panel of `sojourn fit --plot`: the (μa, μs′) plane with the
//! solution, its 1σ and 2σ uncertainty ellipses (Δχ² = 1 and 4 of the linearised fit,
//! exact ellipses in ln μa, ln μs′ where the fit's covariance lives), the starting point
//! and the solver's path between them. An axis is logarithmic where its values span more
//! than a decade, linear otherwise.

use super::error::PlotError;
use super::spec::{Axis, ChartSpec, Series};
use super::style::{Colour, Dash, MarkerShape, SeriesStyle};
use super::{Figure, Panel};
use crate::report::FitReport;

/// Points on each ellipse.
const ELLIPSE_POINTS: usize = 121;

/// Everything the figure shows, per the model's length unit.
#[derive(Debug, Clone, PartialEq)]
pub struct FitPlanePanel {
    /// Title.
    pub title: String,
    /// Subtitle.
    pub subtitle: String,
    /// The length unit coefficients are per.
    pub length_unit: String,
    /// The solution (μa, μs′).
    pub solution: (f64, f64),
    /// The start (μa, μs′).
    pub start: (f64, f64),
    /// The accepted points, start first.
    pub path: Vec<(f64, f64)>,
    /// Covariance of (ln μa, ln μs′).
    pub covariance_log: [[f64; 2]; 2],
}

impl FitPlanePanel {
    /// The panel of a fit report.
    pub fn from_report(report: &FitReport) -> Self {
        let f = &report.fit;
        Self {
            title: format!("Fitted μa and μs′ of layer {}", f.layer),
            subtitle: format!(
                "{} · {} photons per evaluation · seed {}",
                if report.model.name.is_empty() {
                    &report.model.file
                } else {
                    &report.model.name
                },
                f.photons_per_evaluation,
                f.seed
            ),
            length_unit: report.length_unit.clone(),
            solution: (f.absorption_coefficient, f.reduced_scattering_coefficient),
            start: (
                f.start.absorption_coefficient,
                f.start.reduced_scattering_coefficient,
            ),
            path: f
                .path
                .iter()
                .map(|p| (p.absorption_coefficient, p.reduced_scattering_coefficient))
                .collect(),
            covariance_log: f.covariance_log,
        }
    }

    /// The ellipse of `k` standard deviations around the solution (empty when the
    /// covariance is not a finite positive-definite matrix).
    pub fn ellipse(&self, k: f64) -> Vec<(f64, f64)> {
        let [[a, b], [_, c]] = self.covariance_log;
        if !(a.is_finite() && b.is_finite() && c.is_finite()) || a <= 0.0 {
            return Vec::new();
        }
        // Cholesky factor of the 2×2 covariance.
        let l11 = a.sqrt();
        let l21 = b / l11;
        let rest = c - l21 * l21;
        if rest <= 0.0 {
            return Vec::new();
        }
        let l22 = rest.sqrt();
        let (x0, y0) = (self.solution.0.ln(), self.solution.1.ln());
        (0..ELLIPSE_POINTS)
            .map(|i| {
                let t = std::f64::consts::TAU * i as f64 / (ELLIPSE_POINTS - 1) as f64;
                let (u, v) = (k * t.cos(), k * t.sin());
                ((x0 + l11 * u).exp(), (y0 + l21 * u + l22 * v).exp())
            })
            .collect()
    }

    /// The chart.
    pub fn spec(&self) -> ChartSpec {
        let unit = &self.length_unit;
        let mut series = vec![
            Series::new(
                "solver path",
                self.path.clone(),
                SeriesStyle {
                    line: Some(super::style::LineStyle::new(
                        Colour::Slate,
                        1.5,
                        Dash::Dotted,
                    )),
                    marker: MarkerShape::OpenSquare,
                    colour: Colour::Slate,
                },
            ),
            Series::new(
                "start",
                vec![self.start],
                SeriesStyle::points(Colour::Ochre, MarkerShape::Triangle),
            ),
        ];
        let one = self.ellipse(1.0);
        let two = self.ellipse(2.0);
        if !one.is_empty() {
            series.push(Series::new(
                "1σ ellipse (Δχ² = 1)",
                one,
                SeriesStyle::line(Colour::Indigo, 2.5, Dash::Solid),
            ));
            series.push(Series::new(
                "2σ ellipse (Δχ² = 4)",
                two,
                SeriesStyle::line(Colour::Vermilion, 2.5, Dash::Dashed),
            ));
        }
        series.push(Series::new(
            "solution",
            vec![self.solution],
            SeriesStyle::points(Colour::Indigo, MarkerShape::Circle),
        ));
        let axis = |label: String, values: Vec<f64>| {
            let (lo, hi) = values.iter().fold((f64::INFINITY, 0.0f64), |(lo, hi), v| {
                (lo.min(*v), hi.max(*v))
            });
            if hi > 10.0 * lo {
                Axis::log(label)
            } else {
                Axis::linear(label)
            }
        };
        let xs = series
            .iter()
            .flat_map(|s| s.points.iter().map(|p| p.0))
            .collect();
        let ys = series
            .iter()
            .flat_map(|s| s.points.iter().map(|p| p.1))
            .collect();
        ChartSpec {
            title: self.title.clone(),
            subtitle: self.subtitle.clone(),
            x_axis: axis(format!("absorption coefficient μa (/{unit})"), xs),
            y_axis: axis(format!("reduced scattering coefficient μs′ (/{unit})"), ys),
            series,
            reference_lines: Vec::new(),
            notes: if self.ellipse(1.0).is_empty() {
                vec!["no uncertainty ellipse: the covariance is singular".into()]
            } else {
                Vec::new()
            },
        }
    }
}

impl Panel for FitPlanePanel {
    fn name(&self) -> &str {
        "fit-plane"
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.name().to_string(),
            title: self.title.clone(),
            caption: "The fitted absorption and reduced scattering coefficients with their 1σ \
                      and 2σ uncertainty ellipses (measurement and Monte Carlo noise), the \
                      starting point and the solver's path."
                .into(),
            svg: super::line_chart(&self.spec())?,
        })
    }
}
