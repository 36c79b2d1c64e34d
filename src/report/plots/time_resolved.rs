//! The time-resolved panel of a slab run with `--resolve`: Monte Carlo reflectance and
//! transmittance per launched photon per unit time on the tally's linear time bins, with the
//! time-resolved diffusion curves averaged over the same bins (extrapolated boundary for
//! both faces, zero boundary for the reflectance), on a logarithmic axis.
//!
//! Diffusion curves start at zero and rise over hundreds of decades at the earliest times;
//! points below a floor (a third of the smallest non-zero Monte Carlo value, one photon in a
//! bin) are left out so that the axis shows what the sample can test.

use super::display_unit::DisplayUnit;
use super::error::PlotError;
use super::run_inputs::RunInputs;
use super::spec::{Axis, ChartSpec, Series};
use super::style::{Colour, Dash, MarkerShape, SeriesStyle};
use super::{Figure, Panel};
use crate::analysis::DecayFit;
use crate::units::format_significant;

/// Everything the time-resolved figure shows, as plain data (rates per launched photon
/// per second, times in seconds).
#[derive(Debug, Clone)]
pub struct TimeResolvedPanel {
    /// File stem of the figure.
    pub name: String,
    /// Title.
    pub title: String,
    /// Subtitle.
    pub subtitle: String,
    /// Unit of the time axis (rates are shown per this unit).
    pub unit: DisplayUnit,
    /// Bin centres, s.
    pub time_s: Vec<f64>,
    /// Monte Carlo diffuse reflectance, 1/s.
    pub reflectance: Vec<f64>,
    /// Monte Carlo transmittance, 1/s.
    pub transmittance: Vec<f64>,
    /// Diffusion reflectance, extrapolated boundary, 1/s (empty without theory).
    pub diffusion_reflectance: Vec<f64>,
    /// Diffusion transmittance, extrapolated boundary, 1/s.
    pub diffusion_transmittance: Vec<f64>,
    /// Diffusion reflectance, zero boundary, 1/s.
    pub diffusion_reflectance_zero: Vec<f64>,
    /// Fractions reflected and transmitted after the last bin.
    pub later_fraction: [f64; 2],
    /// Late-time decay fits of the reflectance and transmittance.
    pub decay: [Option<DecayFit>; 2],
}

impl TimeResolvedPanel {
    /// The panel of a run with resolved slab tallies (`None` without them or if no photon
    /// left within the bins).
    pub fn for_run(inputs: &RunInputs) -> Option<Self> {
        let resolved = inputs.report.analysis.resolved.as_ref()?;
        let any = |v: &[f64]| v.iter().any(|&x| x > 0.0);
        if !any(&resolved.reflectance_per_s) && !any(&resolved.transmittance_per_s) {
            return None;
        }
        let span = resolved.time_bin_s * resolved.time_s.len() as f64;
        Some(Self {
            name: "time-resolved".into(),
            title: inputs.title("Time of flight"),
            subtitle: inputs.subtitle(),
            unit: DisplayUnit::time_for(span / 4.0),
            time_s: resolved.time_s.clone(),
            reflectance: resolved.reflectance_per_s.clone(),
            transmittance: resolved.transmittance_per_s.clone(),
            diffusion_reflectance: resolved.diffusion_reflectance_per_s.clone(),
            diffusion_transmittance: resolved.diffusion_transmittance_per_s.clone(),
            diffusion_reflectance_zero: resolved.diffusion_reflectance_zero_boundary_per_s.clone(),
            later_fraction: resolved.later_fraction,
            decay: [resolved.reflectance_decay, resolved.transmittance_decay],
        })
    }

    /// The chart this panel draws.
    pub fn spec(&self) -> ChartSpec {
        let unit = &self.unit;
        let floor = self
            .reflectance
            .iter()
            .chain(&self.transmittance)
            .copied()
            .filter(|&v| v > 0.0)
            .fold(f64::INFINITY, f64::min)
            / 3.0;
        // Rates per second shown per display unit.
        let points = |values: &[f64], keep_above: f64| -> Vec<(f64, f64)> {
            self.time_s
                .iter()
                .zip(values)
                .filter(|(_, v)| **v > keep_above)
                .map(|(&t, &v)| (unit.show(t), v * unit.size))
                .collect()
        };
        let mut series = Vec::new();
        let mut add_curve = |label: &str, values: &[f64], style: SeriesStyle| {
            let shown = points(values, floor);
            if !shown.is_empty() {
                series.push(Series::new(label, shown, style));
            }
        };
        add_curve(
            "diffusion reflectance, extrapolated boundary",
            &self.diffusion_reflectance,
            SeriesStyle::line(Colour::Indigo, 3.0, Dash::Solid),
        );
        add_curve(
            "diffusion reflectance, zero boundary",
            &self.diffusion_reflectance_zero,
            SeriesStyle::line(Colour::Plum, 3.0, Dash::Dotted),
        );
        add_curve(
            "diffusion transmittance, extrapolated boundary",
            &self.diffusion_transmittance,
            SeriesStyle::line(Colour::Indigo, 3.0, Dash::Dashed),
        );
        let mc = [
            (
                "Monte Carlo reflectance",
                &self.reflectance,
                SeriesStyle::points(Colour::Vermilion, MarkerShape::Circle),
            ),
            (
                "Monte Carlo transmittance",
                &self.transmittance,
                SeriesStyle::points(Colour::Teal, MarkerShape::OpenSquare),
            ),
        ];
        for (label, values, style) in mc {
            let shown = points(values, 0.0);
            if !shown.is_empty() {
                series.push(Series::new(label, shown, style));
            }
        }
        let mut notes = vec![format!(
            "after the last bin: reflected {}, transmitted {} of the photons launched",
            format_significant(self.later_fraction[0], 3),
            format_significant(self.later_fraction[1], 3)
        )];
        if self.diffusion_reflectance.is_empty() {
            notes.push(
                "no diffusion curves: they are for a slab lit from above (beam or diffuse)".into(),
            );
        }
        let labels = ["R", "T"];
        for (what, fit) in labels.iter().zip(&self.decay) {
            if let Some(fit) = fit {
                let rate = rate_unit(fit.rate_per_s);
                let diffusion = fit
                    .diffusion_rate_per_s
                    .map(|k| format!(", diffusion over the same window {}", rate.format(k)))
                    .unwrap_or_default();
                notes.push(format!(
                    "late decay of {what}: Monte Carlo {} ± {}{diffusion}",
                    rate.format(fit.rate_per_s),
                    format_significant(rate.show(fit.stderr_per_s), 2)
                ));
            }
        }
        ChartSpec {
            title: self.title.clone(),
            subtitle: self.subtitle.clone(),
            x_axis: Axis::linear_from_zero(unit.axis_label("time of flight t")),
            y_axis: Axis::log(format!(
                "fraction of photons launched per {}",
                if unit.symbol.is_empty() {
                    "s"
                } else {
                    &unit.symbol
                }
            )),
            series,
            reference_lines: Vec::new(),
            notes,
        }
    }
}

impl Panel for TimeResolvedPanel {
    fn name(&self) -> &str {
        &self.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        Ok(Figure {
            name: self.name.clone(),
            title: self.title.clone(),
            caption: "Time-resolved diffuse reflectance and transmittance per launched photon \
                      (Monte Carlo, on the tally's time bins) with the time-resolved diffusion \
                      curves averaged over the same bins."
                .into(),
            svg: super::line_chart(&self.spec())?,
        })
    }
}

/// The unit (per ps, ns, µs, ms or s) that shows a rate of `per_s` (1/s) as a number ≥ 1.
fn rate_unit(per_s: f64) -> DisplayUnit {
    let units = [
        ("ps", 1e-12),
        ("ns", 1e-9),
        ("µs", 1e-6),
        ("ms", 1e-3),
        ("s", 1.0),
    ];
    let (symbol, size) = units
        .iter()
        .find(|(_, size)| per_s * size >= 1.0)
        .copied()
        .unwrap_or(("s", 1.0));
    // A rate per `size` seconds: shown as per_s · size.
    DisplayUnit::new(format!("/{symbol}"), 1.0 / size)
}
