//! Histograms with curves: bars (e.g. a Monte Carlo distribution) under line series (e.g.
//! theory) and reference lines (means, medians, estimates), with a legend.

use super::canvas;
use super::error::PlotError;
use super::spec::HistogramSpec;

/// Draws a histogram with curves and returns the SVG document. Bars of height 0 are not
/// drawn; on a logarithmic y axis bars rise from the bottom of the plot.
///
/// # Errors
/// [`PlotError::LengthMismatch`] if there is not one more edge than heights,
/// [`PlotError::EdgesNotIncreasing`] for unordered edges, [`PlotError::NoData`] if nothing
/// can be shown, [`PlotError::Drawing`] if the SVG backend fails.
///
/// # Examples
/// ```
/// use sojourn::report::plots::{Axis, Bars, ChartSpec, HistogramSpec, histogram_chart};
///
/// let spec = HistogramSpec {
///     chart: ChartSpec {
///         title: "Escape time".into(),
///         subtitle: "1000 photons".into(),
///         x_axis: Axis::linear("time (ns)"),
///         y_axis: Axis::linear_from_zero("probability density (1/ns)"),
///         series: vec![],
///         reference_lines: vec![],
///         notes: vec![],
///     },
///     bars: Bars {
///         label: "Monte Carlo".into(),
///         edges: vec![0.0, 1.0, 2.0, 3.0],
///         heights: vec![0.2, 0.5, 0.3],
///     },
/// };
/// let svg = histogram_chart(&spec).unwrap();
/// assert!(svg.contains("Monte Carlo"));
/// ```
pub fn histogram_chart(spec: &HistogramSpec) -> Result<String, PlotError> {
    canvas::render(&spec.chart, Some(&spec.bars))
}
