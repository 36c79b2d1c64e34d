//! Errors of the plotting layer.

use thiserror::Error;

/// Why a figure could not be drawn.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum PlotError {
    /// Nothing drawable: every series, bar and reference line was empty, non-finite, or (on
    /// a logarithmic axis) not positive.
    #[error("{figure}: nothing to plot ({reason})")]
    NoData {
        /// Title of the figure.
        figure: String,
        /// What was missing.
        reason: String,
    },
    /// Two inputs that must have matching lengths do not (e.g. bar edges and heights).
    #[error("{figure}: {what}: expected {expected} values, found {found}")]
    LengthMismatch {
        /// Title of the figure.
        figure: String,
        /// Which input.
        what: String,
        /// Expected length.
        expected: usize,
        /// Actual length.
        found: usize,
    },
    /// Bar edges that do not increase strictly.
    #[error("{figure}: histogram edges must increase strictly (edge {index} = {value})")]
    EdgesNotIncreasing {
        /// Title of the figure.
        figure: String,
        /// Index of the first offending edge.
        index: usize,
        /// Its value.
        value: f64,
    },
    /// The drawing backend failed (plotters' error, as text).
    #[error("{figure}: drawing failed: {message}")]
    Drawing {
        /// Title of the figure.
        figure: String,
        /// The backend's message.
        message: String,
    },
}
