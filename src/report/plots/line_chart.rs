//! Line charts: series on linear or logarithmic axes, with optional error bars, reference
//! lines and a legend.

use super::canvas;
use super::error::PlotError;
use super::spec::ChartSpec;

/// Draws a line chart and returns the SVG document.
///
/// # Errors
/// [`PlotError::NoData`] if nothing in `spec` can be shown on its axes,
/// [`PlotError::LengthMismatch`] if a series' errors and points differ in length,
/// [`PlotError::Drawing`] if the SVG backend fails.
///
/// # Examples
/// ```
/// use sojourn::report::plots::{Axis, ChartSpec, Series, SeriesStyle, line_chart};
///
/// let spec = ChartSpec {
///     title: "Mean escape time against optical depth".into(),
///     subtitle: "uniform spheres, 1000 photons each".into(),
///     x_axis: Axis::log("optical radius τ"),
///     y_axis: Axis::log("mean escape time (s)"),
///     series: vec![Series::new(
///         "Monte Carlo",
///         vec![(5.0, 2e-10), (10.0, 8e-10), (20.0, 3e-9)],
///         SeriesStyle::cycle(0),
///     )
///     .with_y_errors(vec![1e-11, 3e-11, 9e-11])],
///     reference_lines: vec![],
///     notes: vec![],
/// };
/// let svg = line_chart(&spec).unwrap();
/// assert!(svg.starts_with("<svg"));
/// ```
pub fn line_chart(spec: &ChartSpec) -> Result<String, PlotError> {
    canvas::render(spec, None)
}
