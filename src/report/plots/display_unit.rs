//! Units shown on figure axes: the unit a reader expects at the data's scale (picoseconds
//! for a slab, years for a star), and the model's own length unit.

use crate::units::{JULIAN_YEAR_S, LengthUnit};

/// A unit for an axis: its symbol and its size in the base unit (s, cm, or 1 for counts).
/// A base value `v` is shown as `v / size`.
#[derive(Debug, Clone, PartialEq)]
pub struct DisplayUnit {
    /// Symbol written on the axis, e.g. `ns` (empty for a pure number).
    pub symbol: String,
    /// Size of the unit in base units (e.g. 1e-9 for ns when the base is seconds).
    pub size: f64,
}

impl DisplayUnit {
    /// A unit named `symbol` of `size` base units.
    pub fn new(symbol: impl Into<String>, size: f64) -> Self {
        Self {
            symbol: symbol.into(),
            size,
        }
    }

    /// No unit (counts, fractions).
    pub fn number() -> Self {
        Self::new("", 1.0)
    }

    /// The time unit that shows `typical_s` (seconds) as a number between about 1 and 1000:
    /// ps, ns, µs, ms, s, h, d or yr.
    pub fn time_for(typical_s: f64) -> Self {
        let t = typical_s.abs();
        let (symbol, size) = if !t.is_finite() || t == 0.0 {
            ("s", 1.0)
        } else if t < 1e-9 {
            ("ps", 1e-12)
        } else if t < 1e-6 {
            ("ns", 1e-9)
        } else if t < 1e-3 {
            ("µs", 1e-6)
        } else if t < 1.0 {
            ("ms", 1e-3)
        } else if t < 3600.0 {
            ("s", 1.0)
        } else if t < 86_400.0 {
            ("h", 3600.0)
        } else if t < JULIAN_YEAR_S {
            ("d", 86_400.0)
        } else {
            ("yr", JULIAN_YEAR_S)
        };
        Self::new(symbol, size)
    }

    /// The model file's length unit (base: cm).
    pub fn length(unit: LengthUnit) -> Self {
        let symbol = match unit {
            LengthUnit::Um => "µm",
            LengthUnit::SolarRadius => "R☉",
            other => other.symbol(),
        };
        Self::new(symbol, unit.to_cm())
    }

    /// `base` expressed in this unit.
    pub fn show(&self, base: f64) -> f64 {
        base / self.size
    }

    /// `label (symbol)`, or just `label` for a pure number.
    pub fn axis_label(&self, label: &str) -> String {
        if self.symbol.is_empty() {
            label.to_string()
        } else {
            format!("{label} ({})", self.symbol)
        }
    }

    /// A value in base units written with this unit, 4 significant digits.
    pub fn format(&self, base: f64) -> String {
        let number = crate::units::format_significant(self.show(base), 4);
        if self.symbol.is_empty() {
            number
        } else {
            format!("{number} {}", self.symbol)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn time_units_follow_the_scale() {
        assert_eq!(DisplayUnit::time_for(3e-11).symbol, "ps");
        assert_eq!(DisplayUnit::time_for(36.0).symbol, "s");
        assert_eq!(DisplayUnit::time_for(2e5 * JULIAN_YEAR_S).symbol, "yr");
        assert_eq!(DisplayUnit::time_for(2.5e-9).format(2.5e-9), "2.500 ns");
        assert_eq!(
            DisplayUnit::length(LengthUnit::SolarRadius).axis_label("radius"),
            "radius (R☉)"
        );
    }
}
