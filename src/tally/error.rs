//! Why a tally read from a file (a shard, a checkpoint, a sweep point) was refused.

use thiserror::Error;

/// A tally whose content contradicts itself. `field` is the path of the offending part
/// inside the tally, e.g. `escaped.time_histogram.bins[3]`.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum TallyError {
    /// Two counts (or weight sums) that must agree do not.
    #[error("{field}: {what}: found {found}, expected {expected}")]
    CountMismatch {
        /// Where.
        field: String,
        /// What is being compared.
        what: String,
        /// The value in the data.
        found: String,
        /// The value implied by the rest of the tally.
        expected: String,
    },
    /// A value outside its possible range (a bin index, a count, a limb).
    #[error("{field}: {value} is outside {allowed}")]
    OutOfRange {
        /// Where.
        field: String,
        /// The value found.
        value: String,
        /// What is allowed.
        allowed: String,
    },
    /// Smallest value above the largest.
    #[error("{field}: min {min:e} is above max {max:e}")]
    MinAboveMax {
        /// Where.
        field: String,
        /// The recorded minimum.
        min: f64,
        /// The recorded maximum.
        max: f64,
    },
    /// The mean implied by the exact sums lies outside [min, max].
    #[error(
        "{field}: the mean {mean:e} implied by the sums lies outside [min {min:e}, max {max:e}]"
    )]
    MeanOutsideRange {
        /// Where.
        field: String,
        /// The mean of the exact sums.
        mean: f64,
        /// The recorded minimum.
        min: f64,
        /// The recorded maximum.
        max: f64,
    },
    /// A minimum or maximum that no set of values with these sums and bins can have.
    #[error("{field}: {which} {value:e} is impossible: {reason}")]
    ImpossibleExtreme {
        /// Where.
        field: String,
        /// `min` or `max`.
        which: &'static str,
        /// The recorded value.
        value: f64,
        /// Why it cannot be.
        reason: String,
    },
    /// Weight sums that photons of weight 0 ≤ w ≤ 1 cannot produce, or weights where the
    /// tally's mode has none.
    #[error("{field}: {problem}")]
    Weights {
        /// Where.
        field: String,
        /// What is wrong.
        problem: String,
    },
    /// Data that are not in the canonical form the tally writes (unsorted or repeated bins,
    /// empty bins listed, non-normalised exact sums).
    #[error("{field}: {problem}")]
    Malformed {
        /// Where.
        field: String,
        /// What is wrong.
        problem: String,
    },
}

impl TallyError {
    /// The path of the offending field inside the tally.
    pub fn field(&self) -> &str {
        match self {
            TallyError::CountMismatch { field, .. }
            | TallyError::OutOfRange { field, .. }
            | TallyError::MinAboveMax { field, .. }
            | TallyError::MeanOutsideRange { field, .. }
            | TallyError::ImpossibleExtreme { field, .. }
            | TallyError::Weights { field, .. }
            | TallyError::Malformed { field, .. } => field,
        }
    }

    /// The same error with `prefix.` put before its field path.
    pub(crate) fn within(mut self, prefix: &str) -> Self {
        let field = match &mut self {
            TallyError::CountMismatch { field, .. }
            | TallyError::OutOfRange { field, .. }
            | TallyError::MinAboveMax { field, .. }
            | TallyError::MeanOutsideRange { field, .. }
            | TallyError::ImpossibleExtreme { field, .. }
            | TallyError::Weights { field, .. }
            | TallyError::Malformed { field, .. } => field,
        };
        *field = if field.is_empty() {
            prefix.to_string()
        } else if field.starts_with('[') {
            format!("{prefix}{field}")
        } else {
            format!("{prefix}.{field}")
        };
        self
    }

    pub(crate) fn malformed(field: impl Into<String>, problem: impl Into<String>) -> Self {
        TallyError::Malformed {
            field: field.into(),
            problem: problem.into(),
        }
    }

    pub(crate) fn mismatch(
        field: impl Into<String>,
        what: impl Into<String>,
        found: impl ToString,
        expected: impl ToString,
    ) -> Self {
        TallyError::CountMismatch {
            field: field.into(),
            what: what.into(),
            found: found.to_string(),
            expected: expected.to_string(),
        }
    }

    pub(crate) fn weights(field: impl Into<String>, problem: impl Into<String>) -> Self {
        TallyError::Weights {
            field: field.into(),
            problem: problem.into(),
        }
    }
}
