//! The time-budget panel of a sphere: where, in radius, diffusion spends its mean exit time.
//!
//! The curve is the cumulative share of the steady-diffusion mean exit time (surface at the
//! boundary) spent inside radius r, from [`DiffusionEstimate::layer_residence_s`]. Each
//! layer is split into thin shells of the same material and the estimate is recomputed on
//! them, which gives the curve inside every layer exactly (the residence times are in closed
//! form); the points at the model's own layer boundaries are the estimate of the model as it
//! is. The share of optical depth inside r is drawn for comparison: where the time curve
//! rises faster, the walk is slowed by more than the optical depth alone says (by the
//! growing volume of outer shells and the source's position).
//!
//! A run adds the Monte Carlo residence of the escaped photons on the same cells
//! ([`crate::analysis::ResidenceBudget`]): the cumulative share with 1σ error bars, and
//! both half-time radii in a note.
//!
//! [`DiffusionEstimate::layer_residence_s`]: crate::diffusion::DiffusionEstimate::layer_residence_s

use super::display_unit::DisplayUnit;
use super::error::PlotError;
use super::run_inputs::RunInputs;
use super::spec::{Axis, ChartSpec, ReferenceLine, Series};
use super::style::{Colour, Dash, LineStyle, MarkerShape, SeriesStyle};
use super::{Figure, Panel};
use crate::diffusion;
use crate::medium::{Geometry, Medium};
use crate::units::format_duration;

/// One layer's place in the budget.
#[derive(Debug, Clone, PartialEq)]
pub struct LayerShare {
    /// Layer name (may be empty).
    pub name: String,
    /// Outer radius, cm.
    pub outer_cm: f64,
    /// Share of the mean exit time spent in this layer.
    pub share: f64,
    /// Share spent inside its outer radius (this layer and all below).
    pub cumulative_share: f64,
}

/// Everything the time-budget figure shows, as plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct TimeBudgetPanel {
    /// File stem of the figure.
    pub name: String,
    /// Title.
    pub title: String,
    /// Subtitle.
    pub subtitle: String,
    /// Unit of the radius axis.
    pub unit: DisplayUnit,
    /// Mean exit time of steady diffusion, surface at the boundary, s.
    pub mean_time_s: f64,
    /// `(radius cm, share of the mean exit time spent inside it)`, from the centre out.
    pub time_share: Vec<(f64, f64)>,
    /// `(radius cm, share of the centre-to-surface optical depth inside it)`.
    pub optical_depth_share: Vec<(f64, f64)>,
    /// The model's layers, innermost first.
    pub layers: Vec<LayerShare>,
    /// Monte Carlo: `(radius cm, share of the escaped photons' mean time spent inside it,
    /// its 1σ error)` at cell edges (empty without a run).
    pub monte_carlo: Vec<(f64, f64, f64)>,
    /// Half-time radii, cm: Monte Carlo `(value, 1σ)` and diffusion, when known.
    pub half_time_cm: (Option<(f64, f64)>, Option<f64>),
}

/// Monte Carlo points drawn at most (cell edges thinned evenly beyond it).
const MAX_MONTE_CARLO_POINTS: usize = 40;

/// Thin shells in all for the fine curve (at least one per layer).
const FINE_SHELLS: usize = 600;
/// Layer-boundary points are drawn up to this many layers.
const MAX_LAYER_POINTS: usize = 40;
/// Interior boundaries are drawn as vertical lines (and shares listed) up to this many layers.
const MAX_NAMED_LAYERS: usize = 6;

impl TimeBudgetPanel {
    /// The panel for a sphere, `None` for a slab or a medium with no diffusion time.
    pub fn for_sphere(medium: &Medium, title: String, subtitle: String) -> Option<Self> {
        if medium.geometry() != Geometry::Sphere {
            return None;
        }
        let estimate = diffusion::estimate(medium);
        let total = estimate.mean_time_s;
        if total.is_nan() || total <= 0.0 {
            return None;
        }
        let mut cumulative = 0.0;
        let layers = medium
            .layers()
            .iter()
            .zip(&estimate.layer_residence_s)
            .enumerate()
            .map(|(index, (layer, residence))| {
                cumulative += residence / total;
                LayerShare {
                    name: layer.name().to_string(),
                    outer_cm: medium.layer_bounds_cm(index).1,
                    share: residence / total,
                    cumulative_share: cumulative,
                }
            })
            .collect();
        let time_share = fine_time_share(medium, total).unwrap_or_else(|| {
            let mut points = vec![(0.0, 0.0)];
            let mut sum = 0.0;
            for (index, residence) in estimate.layer_residence_s.iter().enumerate() {
                sum += residence / total;
                points.push((medium.layer_bounds_cm(index).1, sum));
            }
            points
        });
        Some(Self {
            name: "time-budget".into(),
            title,
            subtitle,
            unit: DisplayUnit::length(medium.display_unit()),
            mean_time_s: total,
            time_share,
            optical_depth_share: optical_depth_share(medium),
            layers,
            monte_carlo: Vec::new(),
            half_time_cm: (None, None),
        })
    }

    /// The time-budget panel of a run (spheres only): diffusion with the Monte Carlo
    /// residence of the run beside it.
    pub fn for_run(inputs: &RunInputs) -> Option<Self> {
        let mut panel = Self::for_sphere(
            inputs.medium,
            inputs.title("Where the time is spent"),
            inputs.subtitle(),
        )?;
        if let Some(budget) = &inputs.report.analysis.residence_budget {
            // Cell edges spread evenly in radius: the first edge at or beyond each of
            // MAX_MONTE_CARLO_POINTS equally spaced radii.
            let shares = budget.monte_carlo_shares();
            let outer = shares.last().map_or(0.0, |(r, _)| *r);
            let mut picked: Vec<usize> = (1..=MAX_MONTE_CARLO_POINTS)
                .filter_map(|j| {
                    let radius = outer * j as f64 / MAX_MONTE_CARLO_POINTS as f64;
                    shares
                        .iter()
                        .position(|(r, _)| *r >= radius * (1.0 - 1e-12))
                })
                .collect();
            picked.dedup();
            panel.monte_carlo = std::iter::once((0.0, 0.0, 0.0))
                .chain(picked.iter().map(|&k| {
                    let (r, e) = shares[k];
                    (r, e.value, e.stderr)
                }))
                .collect();
            panel.half_time_cm = (
                budget.half_time_cm.map(|e| (e.value, e.stderr)),
                budget.diffusion_half_time_cm,
            );
        }
        Some(panel)
    }

    /// The chart this panel draws.
    pub fn spec(&self) -> ChartSpec {
        let unit = &self.unit;
        let show = |points: &[(f64, f64)]| -> Vec<(f64, f64)> {
            points.iter().map(|&(r, s)| (unit.show(r), s)).collect()
        };
        let mut series = vec![
            Series::new(
                "share of τ (centre to surface) inside r",
                show(&self.optical_depth_share),
                SeriesStyle::line(Colour::Ochre, 3.0, Dash::DashDot),
            ),
            Series::new(
                format!(
                    "share of the diffusion mean exit time ({}) spent inside r",
                    format_duration(self.mean_time_s)
                ),
                show(&self.time_share),
                SeriesStyle::line(Colour::Indigo, 3.5, Dash::Solid),
            ),
        ];
        if self.layers.len() <= MAX_LAYER_POINTS {
            series.push(Series::new(
                "at the model's layer boundaries",
                std::iter::once((0.0, 0.0))
                    .chain(
                        self.layers
                            .iter()
                            .map(|l| (unit.show(l.outer_cm), l.cumulative_share)),
                    )
                    .collect(),
                SeriesStyle::points(Colour::Vermilion, MarkerShape::OpenSquare),
            ));
        }
        let mut reference_lines = vec![ReferenceLine::horizontal(
            "half of the time",
            0.5,
            LineStyle::new(Colour::Slate, 2.0, Dash::Dotted),
        )];
        let mut notes = Vec::new();
        if self.layers.len() <= MAX_NAMED_LAYERS && self.layers.len() > 1 {
            for pair in self.layers.windows(2) {
                reference_lines.push(ReferenceLine::vertical(
                    "",
                    unit.show(pair[0].outer_cm),
                    LineStyle::new(Colour::Slate, 1.5, Dash::Dashed),
                ));
            }
            let shares: Vec<String> = self
                .layers
                .iter()
                .enumerate()
                .map(|(i, l)| {
                    let name = if l.name.is_empty() {
                        format!("layer {i}")
                    } else {
                        l.name.clone()
                    };
                    format!("{name} {:.1} %", 100.0 * l.share)
                })
                .collect();
            notes.push(format!(
                "time per layer (dashed lines: boundaries): {}",
                shares.join(" · ")
            ));
        }
        if self.monte_carlo.len() > 1 {
            series.push(
                Series::new(
                    "Monte Carlo: share of the escaped photons' mean time spent inside r (± 1σ)",
                    self.monte_carlo
                        .iter()
                        .map(|&(r, s, _)| (unit.show(r), s))
                        .collect(),
                    SeriesStyle::points(Colour::Teal, MarkerShape::Circle),
                )
                .with_y_errors(self.monte_carlo.iter().map(|&(_, _, e)| e).collect()),
            );
            if let (Some((mc, error)), Some(theory)) = self.half_time_cm {
                notes.push(format!(
                    "half the time inside r = {} ± {} (Monte Carlo), {} (diffusion)",
                    unit.format(mc),
                    unit.format(error),
                    unit.format(theory)
                ));
            }
        } else {
            notes.push("no Monte Carlo here: `sojourn run --plot` adds its residence".into());
        }
        ChartSpec {
            title: self.title.clone(),
            subtitle: self.subtitle.clone(),
            x_axis: Axis::linear_from_zero(unit.axis_label("radius r")),
            y_axis: Axis::linear_from_zero("cumulative share inside r"),
            series,
            reference_lines,
            notes,
        }
    }
}

impl Panel for TimeBudgetPanel {
    fn name(&self) -> &str {
        &self.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.name.clone(),
            title: self.title.clone(),
            caption: "Cumulative share of the steady-diffusion mean exit time spent inside \
                      radius r (surface at the boundary), against the share of optical depth; \
                      squares are the model's own layer boundaries; circles with 1σ bars the \
                      Monte Carlo residence of the run's escaped photons on the same cells."
                .into(),
            svg: super::line_chart(&self.spec())?,
        })
    }
}

/// The cumulative time share on thin shells of the same materials (`None` if the split
/// medium cannot be built).
fn fine_time_share(medium: &Medium, total: f64) -> Option<Vec<(f64, f64)>> {
    let per_layer = (FINE_SHELLS / medium.layers().len()).max(1);
    let mut shells = Vec::new();
    for (index, layer) in medium.layers().iter().enumerate() {
        let (inner, outer) = medium.layer_bounds_cm(index);
        for k in 1..=per_layer {
            shells.push((
                inner + (outer - inner) * k as f64 / per_layer as f64,
                layer.clone(),
            ));
        }
    }
    let radii: Vec<f64> = shells.iter().map(|(r, _)| *r).collect();
    let fine = Medium::sphere(shells, medium.source()).ok()?;
    let estimate = diffusion::estimate(&fine);
    let mut sum = 0.0;
    let mut points = vec![(0.0, 0.0)];
    for (radius, residence) in radii.iter().zip(&estimate.layer_residence_s) {
        sum += residence / total;
        points.push((*radius, sum));
    }
    Some(points)
}

/// Share of the centre-to-surface optical depth inside r, at every layer boundary (it is
/// linear inside a layer).
fn optical_depth_share(medium: &Medium) -> Vec<(f64, f64)> {
    let total: f64 = (0..medium.layers().len())
        .map(|i| {
            let (a, b) = medium.layer_bounds_cm(i);
            medium.layers()[i].extinction_per_cm() * (b - a)
        })
        .sum();
    let mut points = vec![(0.0, 0.0)];
    let mut tau = 0.0;
    for (index, layer) in medium.layers().iter().enumerate() {
        let (a, b) = medium.layer_bounds_cm(index);
        tau += layer.extinction_per_cm() * (b - a);
        points.push((b, if total > 0.0 { tau / total } else { 0.0 }));
    }
    points
}
