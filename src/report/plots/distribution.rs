//! The distribution panel: a Monte Carlo histogram with a theory density on the same axes
//! and marked values (means, medians, estimates). Escape times and scattering counts use it
//! (see [`super::escape_time`] and [`super::scatterings`]); so can any later quantity tallied
//! in a [`LogHistogram`] (e.g. time-resolved reflectance).
//!
//! Where the sample spans more than a decade the value axis is logarithmic and the density
//! is per unit natural log of the value (dP/d ln t = t · dP/dt), so equal areas mean equal
//! probability on the page; otherwise the axis is linear and the density is per unit of
//! the displayed value (dP/dt in 1/ns, say). The y-axis label says which.

use super::display_unit::DisplayUnit;
use super::error::PlotError;
use super::rebin::{bar_count, readable_bins, readable_count_bins};
use super::spec::{Axis, Bars, ChartSpec, HistogramSpec, ReferenceLine, Series};
use super::style::{LineStyle, SeriesStyle};
use super::{Figure, Panel};
use crate::tally::LogHistogram;

/// A theory density to draw over the histogram.
#[derive(Debug, Clone, PartialEq)]
pub struct TheoryCurve {
    /// Legend text.
    pub label: String,
    /// `(value, density)` in base units: value in s (or a count), density per base unit
    /// (1/s), over the range where the density matters.
    pub points: Vec<(f64, f64)>,
    /// Stroke.
    pub style: LineStyle,
}

/// A value marked by a vertical line (a mean, a median, an estimate).
#[derive(Debug, Clone, PartialEq)]
pub struct Mark {
    /// Legend text (should include the value).
    pub label: String,
    /// The value, base units.
    pub value: f64,
    /// Stroke.
    pub style: LineStyle,
}

/// Everything a distribution figure shows, as plain data.
#[derive(Debug, Clone, PartialEq)]
pub struct DistributionPanel {
    /// File stem of the figure (`escape-time` → `escape-time.svg`).
    pub name: String,
    /// Title (what, and of which model).
    pub title: String,
    /// Subtitle (photons, seed, method…).
    pub subtitle: String,
    /// The quantity, for the x-axis label, e.g. `time in the medium`.
    pub quantity: String,
    /// Its symbol, for the density label, e.g. `t`.
    pub symbol: String,
    /// Unit of the x axis.
    pub unit: DisplayUnit,
    /// The Monte Carlo sample, base units.
    pub histogram: LogHistogram,
    /// Whether the values are whole numbers (counts): bars then sit on half-integers
    /// ([`super::rebin::readable_count_bins`]).
    pub whole_numbers: bool,
    /// Legend text of the histogram.
    pub sample_label: String,
    /// Theory density, if one applies.
    pub theory: Option<TheoryCurve>,
    /// Marked values.
    pub marks: Vec<Mark>,
    /// Extra legend lines.
    pub notes: Vec<String>,
    /// What the figure shows, for captions.
    pub caption: String,
}

/// Quantiles (p, 1 − p) at which the axis choice looks at the sample's spread.
const SPREAD_QUANTILE: f64 = 0.01;
/// Above this ratio of the 99 % to the 1 % quantile the value axis is logarithmic.
const LOG_AXIS_RATIO: f64 = 10.0;
/// A mark further than this factor outside the plotted data (log axis), or than this many
/// data spans (linear axis), is listed as off scale instead of drawn.
const OFF_SCALE_FACTOR: f64 = 30.0;

impl DistributionPanel {
    /// Whether the value axis is logarithmic for this sample.
    pub fn log_axis(&self) -> bool {
        match (
            self.histogram.quantile(SPREAD_QUANTILE),
            self.histogram.quantile(1.0 - SPREAD_QUANTILE),
        ) {
            (Some(low), Some(high)) if low > 0.0 => high / low > LOG_AXIS_RATIO,
            _ => true,
        }
    }

    /// The chart this panel draws.
    ///
    /// # Errors
    /// [`PlotError::NoData`] if the histogram has no sample in range.
    pub fn spec(&self) -> Result<HistogramSpec, PlotError> {
        let target = bar_count(self.histogram.total());
        let bins = if self.whole_numbers {
            readable_count_bins(&self.histogram, target)
        } else {
            readable_bins(&self.histogram, target)
        };
        let bins = bins.ok_or_else(|| PlotError::NoData {
            figure: self.title.clone(),
            reason: "the histogram holds no positive value".into(),
        })?;
        let log = self.log_axis();
        let unit = &self.unit;
        let per = if unit.symbol.is_empty() {
            String::new()
        } else {
            format!(" (1/{})", unit.symbol)
        };
        let (x_axis, y_axis, heights) = if log {
            (
                Axis::log(unit.axis_label(&self.quantity)),
                Axis::linear_from_zero(format!("probability density per unit ln {}", self.symbol)),
                bins.density_per_ln(),
            )
        } else {
            (
                Axis::linear(unit.axis_label(&self.quantity)),
                Axis::linear_from_zero(format!("probability density dP/d{}{per}", self.symbol)),
                bins.density_per_unit(unit.size),
            )
        };
        let mut series = Vec::new();
        if let Some(theory) = &self.theory {
            let points = theory
                .points
                .iter()
                .map(|&(x, pdf)| {
                    let density = if log { x * pdf } else { pdf * unit.size };
                    (unit.show(x), density)
                })
                .collect();
            let style =
                SeriesStyle::line(theory.style.colour, theory.style.width, theory.style.dash);
            series.push(Series::new(theory.label.clone(), points, style));
        }
        let (low, high) = (bins.edges[0], *bins.edges.last().expect("edges"));
        let on_scale = |v: f64| {
            if log {
                v > 0.0 && v >= low / OFF_SCALE_FACTOR && v <= high * OFF_SCALE_FACTOR
            } else {
                let span = high - low;
                v >= low - OFF_SCALE_FACTOR * span && v <= high + OFF_SCALE_FACTOR * span
            }
        };
        let mut reference_lines = Vec::new();
        let mut notes = Vec::new();
        for mark in &self.marks {
            if !mark.value.is_finite() {
                continue;
            }
            if on_scale(mark.value) {
                reference_lines.push(ReferenceLine::vertical(
                    mark.label.clone(),
                    unit.show(mark.value),
                    mark.style,
                ));
            } else {
                notes.push(format!("{} (off scale, not drawn)", mark.label));
            }
        }
        let outside = bins.total - bins.in_bars();
        if outside > 0 {
            notes.push(format!(
                "{outside} of {} photons lie outside the bars ({} = 0 or not finite)",
                bins.total, self.symbol
            ));
        }
        notes.extend(self.notes.iter().cloned());
        Ok(HistogramSpec {
            chart: ChartSpec {
                title: self.title.clone(),
                subtitle: self.subtitle.clone(),
                x_axis,
                y_axis,
                series,
                reference_lines,
                notes,
            },
            bars: Bars {
                label: self.sample_label.clone(),
                edges: bins.edges.iter().map(|&e| unit.show(e)).collect(),
                heights,
            },
        })
    }
}

impl Panel for DistributionPanel {
    fn name(&self) -> &str {
        &self.name
    }

    fn render(&self) -> Result<Figure, PlotError> {
        let spec = self.spec()?;
        Ok(Figure {
            name: self.name.clone(),
            title: self.title.clone(),
            caption: self.caption.clone(),
            svg: super::histogram_chart(&spec)?,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::plots::style::{Colour, Dash};

    fn panel(values: impl Iterator<Item = f64>) -> DistributionPanel {
        let mut histogram = LogHistogram::new();
        values.for_each(|v| histogram.add(v));
        DistributionPanel {
            name: "t".into(),
            title: "t".into(),
            subtitle: String::new(),
            quantity: "time".into(),
            symbol: "t".into(),
            unit: DisplayUnit::time_for(1e-9),
            histogram,
            whole_numbers: false,
            sample_label: "sample".into(),
            theory: None,
            marks: vec![
                Mark {
                    label: "near".into(),
                    value: 1.5e-9,
                    style: LineStyle::new(Colour::Indigo, 2.0, Dash::Dashed),
                },
                Mark {
                    label: "far".into(),
                    value: 1.0,
                    style: LineStyle::new(Colour::Ochre, 2.0, Dash::DashDot),
                },
            ],
            notes: Vec::new(),
            caption: String::new(),
        }
    }

    #[test]
    fn narrow_samples_get_a_linear_axis_and_density_per_unit() {
        // Uniform on 1–2 ns: less than a decade, so linear, density per ns.
        let panel = panel((0..4000).map(|k| 1e-9 * (1.0 + (k as f64 + 0.5) / 4000.0)));
        assert!(!panel.log_axis());
        let spec = panel.spec().unwrap();
        assert_eq!(spec.chart.x_axis.label, "time (ns)");
        assert_eq!(spec.chart.y_axis.label, "probability density dP/dt (1/ns)");
        let area: f64 = spec
            .bars
            .heights
            .iter()
            .zip(spec.bars.edges.windows(2))
            .map(|(h, e)| h * (e[1] - e[0]))
            .sum();
        assert!((area - 1.0).abs() < 1e-9, "{area}");
        // The far mark is listed, not drawn.
        assert_eq!(spec.chart.reference_lines.len(), 1);
        assert!(spec.chart.notes[0].starts_with("far (off scale"));
    }

    #[test]
    fn wide_samples_get_a_log_axis() {
        let panel = panel((0..1000).map(|k| 1e-9 * 10f64.powf(k as f64 / 500.0)));
        assert!(panel.log_axis());
        assert!(
            panel
                .spec()
                .unwrap()
                .chart
                .y_axis
                .label
                .contains("per unit ln t")
        );
    }
}
