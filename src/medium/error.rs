//! The error a medium reports when built from invalid values.

use thiserror::Error;

/// What kind of quantity a rejected value is, so that callers can show it in their own units.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// A length, cm.
    Length,
    /// An inverse length (extinction, scattering or absorption coefficient), 1/cm.
    InverseLength,
    /// A pure number (albedo, anisotropy, refractive index, count).
    Dimensionless,
    /// An angle, degrees.
    AngleDeg,
}

/// A medium that cannot be built: which field, its value, and what was expected.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum MediumError {
    /// A number outside its allowed range.
    #[error("{field} = {value}: expected {expected}")]
    InvalidValue {
        /// JSON-style path of the field, e.g. `layers[1].albedo`.
        field: String,
        /// The rejected value, in cgs units (see `quantity`).
        value: f64,
        /// What kind of quantity the value is.
        quantity: Quantity,
        /// What would have been accepted.
        expected: String,
    },
    /// A structural problem that is not about one number.
    #[error("{field}: {problem}")]
    Invalid {
        /// JSON-style path of the field.
        field: String,
        /// What is wrong.
        problem: String,
    },
}

impl MediumError {
    pub(crate) fn value(
        field: impl Into<String>,
        value: f64,
        quantity: Quantity,
        expected: impl Into<String>,
    ) -> Self {
        MediumError::InvalidValue {
            field: field.into(),
            value,
            quantity,
            expected: expected.into(),
        }
    }

    /// The same error with `prefix` put in front of its field path (`layers[2]` + `albedo`).
    pub fn within(self, prefix: &str) -> Self {
        let join = |field: String| {
            if field.is_empty() {
                prefix.to_string()
            } else {
                format!("{prefix}.{field}")
            }
        };
        match self {
            MediumError::InvalidValue {
                field,
                value,
                quantity,
                expected,
            } => MediumError::InvalidValue {
                field: join(field),
                value,
                quantity,
                expected,
            },
            MediumError::Invalid { field, problem } => MediumError::Invalid {
                field: join(field),
                problem,
            },
        }
    }
}
