//! The panel of a parameter study (`sojourn sweep --plot`): the Monte Carlo mean escape
//! time of every point with its 1σ error bar against the first swept parameter, with the
//! steady-diffusion mean exit time (Milne extrapolated boundary) and the rule of thumb
//! t ≈ τL/c of each point as lines. Points where the medium absorbs get neither: their
//! diffusion times are conservative, not comparable with the Monte Carlo time.
//!
//! The x axis is logarithmic when the parameter's values are positive and span more than a
//! decade, the y axis likewise for the times. With more than one parameter the points are
//! grouped by the values of the others, one set of series per group (up to
//! [`MAX_GROUPS`]). A parameter that is not a number is replaced by the point index.

use serde_json::Value;

use super::display_unit::DisplayUnit;
use super::error::PlotError;
use super::run_inputs::group_digits;
use super::spec::{Axis, ChartSpec, Series};
use super::style::{Colour, Dash, LineStyle, MarkerShape, SeriesStyle};
use super::{Figure, Panel};
use crate::analysis::RunAnalysis;
use crate::units::LengthUnit;

/// One point of a parameter study as the figure takes it (a `sweep::PointResult` lends
/// its fields).
#[derive(Debug, Clone, Copy)]
pub struct StudyPoint<'a> {
    /// Point index.
    pub index: u64,
    /// Parameter values `(name, value)`, in column order.
    pub parameters: &'a [(String, Value)],
    /// The analysis of the point's run.
    pub analysis: &'a RunAnalysis,
}

/// Groups (combinations of the other parameters) drawn at most.
pub const MAX_GROUPS: usize = 4;

/// One point of the study, as the figure needs it.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepPoint {
    /// Value of the first parameter (or the point index, if it is not a number).
    pub x: f64,
    /// Monte Carlo mean escape time, s (`None` if no photon left).
    pub mean_s: Option<f64>,
    /// Its standard error, s.
    pub stderr_s: Option<f64>,
    /// Steady-diffusion mean exit time, extrapolated boundary, s (`None` where it is not
    /// comparable with the Monte Carlo time: an absorbing medium, a slab thinner than
    /// 1/μs′).
    pub diffusion_s: Option<f64>,
    /// Rule of thumb t ≈ τL/c, s (`None` where the medium absorbs).
    pub naive_s: Option<f64>,
}

/// The points that share the values of every parameter but the first.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepGroup {
    /// The other parameters' values, e.g. `layers[0].albedo = 0.9` (empty with one
    /// parameter).
    pub label: String,
    /// Its points, in increasing x.
    pub points: Vec<SweepPoint>,
}

/// Everything the sweep figure shows, as plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct SweepPanel {
    /// File stem of the figure.
    pub name: String,
    /// Title.
    pub title: String,
    /// Subtitle.
    pub subtitle: String,
    /// Label of the x axis: the parameter's path or name with its unit (e.g.
    /// `layers[0].extinction_coefficient (1/mm)`), or `point`.
    pub parameter: String,
    /// The groups of points, in order of first appearance.
    pub groups: Vec<SweepGroup>,
}

fn value_text(value: &Value) -> String {
    match value {
        Value::String(s) => s.clone(),
        Value::Number(n) => n
            .as_f64()
            .map(|v| crate::units::format_significant(v, 4))
            .unwrap_or_else(|| n.to_string()),
        other => other.to_string(),
    }
}

/// The unit of a model-file field reached by a sweep's JSON path, judged by the path's last
/// field name (`layers[2].thickness` → the model's length unit, `…_coefficient` → its
/// inverse, `opacity` → cm²/g, …); `None` for dimensionless fields (albedo, g, indices)
/// and for names that are not model-file fields.
pub fn parameter_unit(path: &str, unit: LengthUnit) -> Option<String> {
    let last = path.rsplit('.').next().unwrap_or(path);
    let field = last.split('[').next().unwrap_or(last);
    match field {
        "outer_radius" | "thickness" | "radius" | "depth" => Some(unit.symbol().to_string()),
        "extinction_coefficient" | "scattering_coefficient" | "absorption_coefficient" => {
            Some(format!("1/{}", unit.symbol()))
        }
        "opacity" => Some("cm²/g".into()),
        "density" => Some("g/cm³".into()),
        "temperature" => Some("K".into()),
        "polar_angle_deg" => Some("degrees".into()),
        _ => None,
    }
}

impl SweepPanel {
    /// The panel of a finished sweep (`None` without points or parameters). `model` is the
    /// model's name (shown in the title), `label` names the spec (shown in the subtitle),
    /// `unit` is the model's length unit (for the x axis's unit, [`parameter_unit`]).
    pub fn from_points(
        results: &[StudyPoint],
        model: &str,
        label: &str,
        unit: LengthUnit,
    ) -> Option<Self> {
        let first = results.first()?;
        let (parameter, _) = first.parameters.first()?;
        let numeric = results
            .iter()
            .all(|r| r.parameters.first().and_then(|(_, v)| v.as_f64()).is_some());
        let mut groups: Vec<SweepGroup> = Vec::new();
        for result in results {
            let others: Vec<String> = result.parameters[1..]
                .iter()
                .map(|(name, value)| format!("{name} = {}", value_text(value)))
                .collect();
            let key = others.join(", ");
            let r = result.analysis;
            let point = SweepPoint {
                x: if numeric {
                    result.parameters[0].1.as_f64().expect("checked numeric")
                } else {
                    result.index as f64
                },
                mean_s: r.escape_time.mean_s,
                stderr_s: r.escape_time.stderr_s,
                diffusion_s: r
                    .diffusion
                    .mean_time_extrapolated_s
                    .filter(|_| r.comparison.times_comparable),
                naive_s: Some(r.diffusion.naive_time_s).filter(|_| r.comparison.times_comparable),
            };
            match groups.iter_mut().find(|g| g.label == key) {
                Some(group) => group.points.push(point),
                None => groups.push(SweepGroup {
                    label: key,
                    points: vec![point],
                }),
            }
        }
        // Parameters varied together (a zip sweep) give every point its own combination
        // of the other parameters: those points are one series, not one series each.
        let together = results.len() > 1 && groups.len() == results.len();
        if together {
            let points = groups.drain(..).flat_map(|g| g.points).collect();
            groups.push(SweepGroup {
                label: String::new(),
                points,
            });
        }
        for group in &mut groups {
            group.points.sort_by(|a, b| a.x.total_cmp(&b.x));
        }
        let model = if model.is_empty() {
            "(unnamed model)"
        } else {
            model
        };
        let parameter = if numeric {
            match parameter_unit(parameter, unit) {
                Some(symbol) => format!("{parameter} ({symbol})"),
                None => parameter.clone(),
            }
        } else {
            format!("point ({parameter} is not a number)")
        };
        let varied: Vec<&str> = first.parameters.iter().map(|(n, _)| n.as_str()).collect();
        let varied = if together {
            format!("{} (varied together)", varied.join(", "))
        } else {
            varied.join(" and ")
        };
        Some(Self {
            name: "sweep-escape-time".into(),
            title: format!("Mean escape time against {varied} · {model}"),
            subtitle: format!(
                "{} points × {} photons · seed {} · {label}",
                results.len(),
                group_digits(first.analysis.photons),
                first.analysis.seed
            ),
            parameter,
            groups,
        })
    }

    /// The chart this panel draws.
    pub fn spec(&self) -> ChartSpec {
        let drawn = &self.groups[..self.groups.len().min(MAX_GROUPS)];
        let all: Vec<&SweepPoint> = drawn.iter().flat_map(|g| &g.points).collect();
        let mut times: Vec<f64> = all
            .iter()
            .flat_map(|p| [p.mean_s, p.diffusion_s, p.naive_s])
            .flatten()
            .filter(|t| t.is_finite() && *t > 0.0)
            .collect();
        times.sort_by(f64::total_cmp);
        let unit = DisplayUnit::time_for(times.get(times.len() / 2).copied().unwrap_or(1.0));
        let spans_decade = |values: &[f64]| {
            let (low, high) = values
                .iter()
                .fold((f64::INFINITY, 0.0f64), |(a, b), &v| (a.min(v), b.max(v)));
            values.iter().all(|&v| v > 0.0) && high > 10.0 * low
        };
        let xs: Vec<f64> = all.iter().map(|p| p.x).collect();
        let x_axis = if spans_decade(&xs) {
            Axis::log(self.parameter.clone())
        } else {
            Axis::linear(self.parameter.clone())
        };
        let y_label = unit.axis_label("mean escape time");
        let y_axis = if spans_decade(&times) {
            Axis::log(y_label)
        } else {
            Axis::linear_from_zero(y_label)
        };
        const MARKERS: [MarkerShape; MAX_GROUPS] = [
            MarkerShape::Circle,
            MarkerShape::OpenSquare,
            MarkerShape::Triangle,
            MarkerShape::OpenDiamond,
        ];
        const DASHES: [(Dash, Dash); MAX_GROUPS] = [
            (Dash::Solid, Dash::DashDot),
            (Dash::Dashed, Dash::Dotted),
            (Dash::LongDash, Dash::DashDot),
            (Dash::Dotted, Dash::LongDash),
        ];
        let mut series = Vec::new();
        for (k, group) in drawn.iter().enumerate() {
            let suffix = if group.label.is_empty() {
                String::new()
            } else {
                format!(" ({})", group.label)
            };
            let show = |f: &dyn Fn(&SweepPoint) -> Option<f64>| -> Vec<(f64, f64)> {
                group
                    .points
                    .iter()
                    .filter_map(|p| f(p).map(|v| (p.x, unit.show(v))))
                    .collect()
            };
            let diffusion = show(&|p| p.diffusion_s);
            if !diffusion.is_empty() {
                series.push(Series::new(
                    format!("diffusion, extrapolated boundary{suffix}"),
                    diffusion,
                    SeriesStyle {
                        line: Some(LineStyle::new(Colour::Indigo, 3.0, DASHES[k].0)),
                        marker: MarkerShape::None,
                        colour: Colour::Indigo,
                    },
                ));
            }
            let naive = show(&|p| p.naive_s);
            if !naive.is_empty() {
                series.push(Series::new(
                    format!("rule of thumb t ≈ τL/c{suffix}"),
                    naive,
                    SeriesStyle::line(Colour::Ochre, 3.0, DASHES[k].1),
                ));
            }
            let measured: Vec<&SweepPoint> =
                group.points.iter().filter(|p| p.mean_s.is_some()).collect();
            if !measured.is_empty() {
                series.push(
                    Series::new(
                        format!("Monte Carlo mean ± 1σ{suffix}"),
                        measured
                            .iter()
                            .map(|p| (p.x, unit.show(p.mean_s.expect("filtered"))))
                            .collect(),
                        SeriesStyle::points(Colour::Vermilion, MARKERS[k]),
                    )
                    .with_y_errors(
                        measured
                            .iter()
                            .map(|p| unit.show(p.stderr_s.unwrap_or(0.0)))
                            .collect(),
                    ),
                );
            }
        }
        let mut notes = Vec::new();
        if self.groups.len() > drawn.len() {
            notes.push(format!(
                "{} of {} combinations of the other parameters drawn",
                drawn.len(),
                self.groups.len()
            ));
        }
        let without_theory = all.iter().filter(|p| p.diffusion_s.is_none()).count();
        if without_theory > 0 {
            notes.push(format!(
                "{without_theory} point(s) without a diffusion line: the medium absorbs (the \
                 diffusion times are conservative) or the slab is thinner than 1/μs′"
            ));
        }
        let missing = all.iter().filter(|p| p.mean_s.is_none()).count();
        if missing > 0 {
            notes.push(format!(
                "{missing} point(s) with no escaped photon not shown"
            ));
        }
        ChartSpec {
            title: self.title.clone(),
            subtitle: self.subtitle.clone(),
            x_axis,
            y_axis,
            series,
            reference_lines: Vec::new(),
            notes,
        }
    }
}

impl Panel for SweepPanel {
    fn name(&self) -> &str {
        &self.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.name.clone(),
            title: self.title.clone(),
            caption: "Monte Carlo mean escape time of each point with its 1σ error bar against \
                      the swept parameter, with the steady-diffusion mean exit time \
                      (extrapolated boundary) and the rule of thumb as lines."
                .into(),
            svg: super::line_chart(&self.spec())?,
        })
    }
}
