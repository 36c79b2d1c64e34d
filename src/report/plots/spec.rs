//! Plain-data descriptions of charts: axes, series, bars and reference lines. A panel fills
//! these in; the chart functions ([`super::line_chart`], [`super::histogram_chart`]) draw
//! them. Values are in the units the axis label names.

use super::style::{LineStyle, SeriesStyle};

/// Linear or logarithmic (base 10) axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scale {
    /// Evenly spaced values.
    Linear,
    /// Evenly spaced decades; values ≤ 0 cannot be shown and are left out.
    Log,
}

/// One axis: its label (with the unit) and scale. The range is fitted to the data.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    /// Label, with the unit in brackets, e.g. `time in the medium (s)`.
    pub label: String,
    /// Linear or logarithmic.
    pub scale: Scale,
    /// Linear axes only: start at zero when all data are ≥ 0 (densities, shares).
    pub from_zero: bool,
}

impl Axis {
    /// A linear axis fitted to the data.
    pub fn linear(label: impl Into<String>) -> Self {
        Self {
            label: label.into(),
            scale: Scale::Linear,
            from_zero: false,
        }
    }

    /// A linear axis that starts at zero.
    pub fn linear_from_zero(label: impl Into<String>) -> Self {
        Self {
            from_zero: true,
            ..Self::linear(label)
        }
    }

    /// A logarithmic axis fitted to the data.
    pub fn log(label: impl Into<String>) -> Self {
        Self {
            label: label.into(),
            scale: Scale::Log,
            from_zero: false,
        }
    }
}

/// A data series: points joined by a line and/or marked, with optional vertical error bars.
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    /// Legend text (empty: not listed in the legend).
    pub label: String,
    /// `(x, y)` points in axis units, in drawing order.
    pub points: Vec<(f64, f64)>,
    /// Symmetric 1σ (or other, as the label says) errors of each y, same length as
    /// `points`.
    pub y_errors: Option<Vec<f64>>,
    /// Line, marker and colour.
    pub style: SeriesStyle,
}

impl Series {
    /// A series without error bars.
    pub fn new(label: impl Into<String>, points: Vec<(f64, f64)>, style: SeriesStyle) -> Self {
        Self {
            label: label.into(),
            points,
            y_errors: None,
            style,
        }
    }

    /// The same series with symmetric y errors.
    pub fn with_y_errors(mut self, errors: Vec<f64>) -> Self {
        self.y_errors = Some(errors);
        self
    }
}

/// Direction of a [`ReferenceLine`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Orientation {
    /// A vertical line at an x value.
    Vertical,
    /// A horizontal line at a y value.
    Horizontal,
}

/// A straight line across the whole plot marking one value (a mean, a median, an estimate,
/// a boundary). The axis range is widened to include it.
#[derive(Debug, Clone, PartialEq)]
pub struct ReferenceLine {
    /// Legend text (empty: not listed).
    pub label: String,
    /// Vertical (at x) or horizontal (at y).
    pub orientation: Orientation,
    /// Position in axis units.
    pub value: f64,
    /// Stroke.
    pub style: LineStyle,
}

impl ReferenceLine {
    /// A vertical line at `x`.
    pub fn vertical(label: impl Into<String>, x: f64, style: LineStyle) -> Self {
        Self {
            label: label.into(),
            orientation: Orientation::Vertical,
            value: x,
            style,
        }
    }

    /// A horizontal line at `y`.
    pub fn horizontal(label: impl Into<String>, y: f64, style: LineStyle) -> Self {
        Self {
            label: label.into(),
            orientation: Orientation::Horizontal,
            value: y,
            style,
        }
    }
}

/// A line chart: series and reference lines on two axes, a title, a subtitle and a legend
/// below the plot.
#[derive(Debug, Clone, PartialEq)]
pub struct ChartSpec {
    /// Title (first line, large).
    pub title: String,
    /// Subtitle (second line: model, photons, seed…).
    pub subtitle: String,
    /// Horizontal axis.
    pub x_axis: Axis,
    /// Vertical axis.
    pub y_axis: Axis,
    /// Data series, drawn in order (later on top).
    pub series: Vec<Series>,
    /// Reference lines, drawn over the series.
    pub reference_lines: Vec<ReferenceLine>,
    /// Extra legend lines without a symbol (e.g. "42 photons with no scattering not shown").
    pub notes: Vec<String>,
}

/// Histogram bars: `heights[i]` over `[edges[i], edges[i + 1])`. Bars of height 0 are not
/// drawn.
#[derive(Debug, Clone, PartialEq)]
pub struct Bars {
    /// Legend text.
    pub label: String,
    /// Bin edges, strictly increasing, `heights.len() + 1` of them.
    pub edges: Vec<f64>,
    /// Bar heights.
    pub heights: Vec<f64>,
}

impl Bars {
    /// Number of bars that will be drawn (non-zero, finite height).
    pub fn drawn(&self) -> usize {
        self.heights
            .iter()
            .filter(|h| h.is_finite() && **h != 0.0)
            .count()
    }
}

/// A histogram with curves and reference lines on the same axes.
#[derive(Debug, Clone, PartialEq)]
pub struct HistogramSpec {
    /// Axes, title, curves, reference lines and notes.
    pub chart: ChartSpec,
    /// The bars, drawn first (under everything else).
    pub bars: Bars,
}
