//! Tabulated radial profiles (a stellar model, say) and their conversion into shells the
//! walker can step through exactly ([`shells`]).
//!
//! A [`ProfileTable`] holds, per row, a radius with density, temperature and composition
//! (X, Z) and an opacity law κ(ρ, T, X, Z) ([`crate::opacity`]), an opacity table κ(T, ρ)
//! ([`crate::opacity::table`]), or a tabulated opacity κ directly; optionally the energy
//! generation ε per row. Between rows every column is interpolated linearly in radius; the
//! extinction is σ(r) = κ(ρ(r), T(r), X(r), Z(r)) · ρ(r) per cm. If the first row lies above
//! the layer's inner boundary, the first row's values hold from the boundary up to it.
//!
//! [`ProfileTable::to_shells`] divides a profile into sub-shells of constant extinction; see
//! [`shells`] for the method, the treatment of the stellar surface and the accuracy report.
//! [`structure`] keeps the rows as point values with m(r) and L(r).

pub mod shells;
pub mod structure;

pub use shells::{
    DEFAULT_TOLERANCE, MAX_SUB_SHELLS, OpacityTableUse, ProfileShells, ProfileSummary, SurfaceCut,
    THIN_PAIR_OPTICAL_DEPTH,
};
pub use structure::{AtmosphereRow, RadialStructure, StructureRow};

use std::sync::Arc;

use serde::de::{self, Deserializer, SeqAccess, Visitor};
use serde::{Deserialize, Serialize, Serializer};

use super::error::{MediumError, Quantity};
use crate::input::MAX_PROFILE_ROWS;
use crate::opacity::{OpacityLaw, OpacitySpec, OpacityTable, OutsidePolicy, TableOpacity};

/// One column of values: the same for every row, or one per row.
#[derive(Debug, Clone, PartialEq)]
pub enum ColumnValues {
    /// One value for all rows.
    Constant(f64),
    /// One value per row.
    PerRow(Vec<f64>),
}

impl ColumnValues {
    /// The value at row `row` (no bounds check beyond the vector's own).
    pub fn at(&self, row: usize) -> f64 {
        match self {
            ColumnValues::Constant(value) => *value,
            ColumnValues::PerRow(values) => values[row],
        }
    }

    fn len(&self) -> Option<usize> {
        match self {
            ColumnValues::Constant(_) => None,
            ColumnValues::PerRow(values) => Some(values.len()),
        }
    }
}

impl Serialize for ColumnValues {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        match self {
            ColumnValues::Constant(value) => serializer.serialize_f64(*value),
            ColumnValues::PerRow(values) => values.serialize(serializer),
        }
    }
}

impl<'de> Deserialize<'de> for ColumnValues {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        struct ColumnVisitor;
        impl<'de> Visitor<'de> for ColumnVisitor {
            type Value = ColumnValues;

            fn expecting(&self, formatter: &mut std::fmt::Formatter) -> std::fmt::Result {
                formatter.write_str("a number or an array of numbers (one per radius)")
            }

            fn visit_f64<E: de::Error>(self, value: f64) -> Result<ColumnValues, E> {
                Ok(ColumnValues::Constant(value))
            }

            fn visit_i64<E: de::Error>(self, value: i64) -> Result<ColumnValues, E> {
                Ok(ColumnValues::Constant(value as f64))
            }

            fn visit_u64<E: de::Error>(self, value: u64) -> Result<ColumnValues, E> {
                Ok(ColumnValues::Constant(value as f64))
            }

            fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> Result<ColumnValues, A::Error> {
                let mut values = Vec::with_capacity(seq.size_hint().unwrap_or(0));
                while let Some(value) = seq.next_element::<f64>()? {
                    values.push(value);
                }
                Ok(ColumnValues::PerRow(values))
            }
        }
        deserializer.deserialize_any(ColumnVisitor)
    }
}

/// Where a profile's opacity comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum ProfileOpacity {
    /// An opacity law evaluated at each radius; needs temperature, X and Z.
    Law(OpacitySpec),
    /// Mass opacity given per row, cm² g⁻¹ (e.g. a Rosseland mean from an evolution code),
    /// with an optional scattering fraction (0 ..= 1).
    Tabulated {
        /// κ per row, cm² g⁻¹.
        opacity_cm2_g: Vec<f64>,
        /// Fraction of κ that is scattering, per row or constant; None if unknown.
        scattering_fraction: Option<ColumnValues>,
    },
    /// An opacity table κ(T, ρ) evaluated at each radius; needs temperature (not X, Z: a
    /// table is for one composition).
    Table {
        /// The table's path as the model file gives it (relative to the model file).
        file: String,
        /// The table, read and validated.
        table: Arc<OpacityTable>,
        /// What to do with points outside the table.
        outside: OutsidePolicy,
    },
}

impl ProfileOpacity {
    /// The opacity as a law evaluated at each radius (None for a κ column).
    pub fn law(&self) -> Option<Box<dyn OpacityLaw>> {
        match self {
            ProfileOpacity::Law(spec) => spec.build().ok(),
            ProfileOpacity::Table { table, outside, .. } => {
                Some(Box::new(TableOpacity::new(table.clone(), *outside)))
            }
            ProfileOpacity::Tabulated { .. } => None,
        }
    }
}

/// The columns of a profile as given, in cgs, before validation
/// ([`ProfileTable::new`]). Radii must increase strictly.
#[derive(Debug, Clone, PartialEq)]
pub struct ProfileColumns {
    /// Radius of each row, cm (≥ 0, strictly increasing).
    pub radius_cm: Vec<f64>,
    /// Density, g cm⁻³ (≥ 0).
    pub density_g_cm3: Vec<f64>,
    /// Temperature, K (≥ 0); required with an opacity law.
    pub temperature_k: Option<Vec<f64>>,
    /// Hydrogen mass fraction X; required with an opacity law.
    pub hydrogen_x: Option<ColumnValues>,
    /// Metal mass fraction Z; required with an opacity law.
    pub metals_z: Option<ColumnValues>,
    /// The opacity.
    pub opacity: ProfileOpacity,
    /// Nuclear energy generation ε, erg g⁻¹ s⁻¹ (≥ 0), one value or one per row; None if the
    /// profile gives none.
    pub energy_generation_erg_g_s: Option<ColumnValues>,
}

/// A validated radial profile (cgs), ready to be divided into sub-shells.
#[derive(Debug, Clone, PartialEq)]
pub struct ProfileTable {
    columns: ProfileColumns,
}

/// The gas at one radius.
#[derive(Debug, Clone, Copy)]
struct Point {
    density: f64,
    temperature: f64,
    hydrogen: f64,
    metals: f64,
    /// Mass opacity, cm² g⁻¹.
    opacity: f64,
    /// Energy generation, erg g⁻¹ s⁻¹ (NaN without a column).
    energy: f64,
    extinction: f64,
    scattering: f64,
}

fn invalid(field: impl Into<String>, problem: impl Into<String>) -> MediumError {
    MediumError::Invalid {
        field: field.into(),
        problem: problem.into(),
    }
}

fn check_values(
    field: &str,
    values: &[f64],
    quantity: Quantity,
    ok: impl Fn(f64) -> bool,
    expected: &str,
) -> Result<(), MediumError> {
    for (row, &value) in values.iter().enumerate() {
        if !ok(value) {
            return Err(MediumError::value(
                format!("{field}[{row}]"),
                value,
                quantity,
                expected,
            ));
        }
    }
    Ok(())
}

fn check_length(field: &str, len: Option<usize>, rows: usize) -> Result<(), MediumError> {
    match len {
        Some(len) if len != rows => Err(invalid(
            field,
            format!("{len} values, expected {rows} (one per radius)"),
        )),
        _ => Ok(()),
    }
}

fn check_column(
    field: &str,
    column: &ColumnValues,
    rows: usize,
    ok: impl Fn(f64) -> bool,
    expected: &str,
) -> Result<(), MediumError> {
    check_length(field, column.len(), rows)?;
    match column {
        ColumnValues::Constant(value) if !ok(*value) => Err(MediumError::value(
            field,
            *value,
            Quantity::Dimensionless,
            expected,
        )),
        ColumnValues::Constant(_) => Ok(()),
        ColumnValues::PerRow(values) => {
            check_values(field, values, Quantity::Dimensionless, ok, expected)
        }
    }
}

fn unit_interval(value: f64) -> bool {
    (0.0..=1.0).contains(&value)
}

fn finite_non_negative(value: f64) -> bool {
    value.is_finite() && value >= 0.0
}

impl ProfileTable {
    /// Validates `columns`. Field names in errors are those of the model file's `profile`
    /// object (`radius[3]`, `density[7]`, `hydrogen`, ...).
    ///
    /// # Errors
    /// Fewer than 2 rows; a column whose length differs from the radii; a radius that is
    /// negative, not finite or not above the previous one; a negative or non-finite density,
    /// temperature, opacity or energy generation; X or Z outside 0 ..= 1 or X + Z > 1; a
    /// scattering fraction outside 0 ..= 1; an opacity law without temperature, X or Z, or
    /// with invalid parameters; an opacity table without temperature; a scattering fraction
    /// with an opacity law. (Whether the rows lie inside an opacity table is checked by
    /// [`ProfileTable::to_shells`], once the surface cut is known.)
    pub fn new(columns: ProfileColumns) -> Result<Self, MediumError> {
        let rows = columns.radius_cm.len();
        if rows < 2 {
            return Err(invalid(
                "radius",
                format!("{rows} row(s): a profile needs at least 2 rows"),
            ));
        }
        if rows > MAX_PROFILE_ROWS {
            return Err(invalid(
                "radius",
                format!(
                    "{rows} rows: a profile may have at most {MAX_PROFILE_ROWS} rows (the \
                     README's *Limits*); thin the table out, its sub-shells follow the \
                     extinction to the tolerance anyway"
                ),
            ));
        }
        check_values(
            "radius",
            &columns.radius_cm,
            Quantity::Length,
            finite_non_negative,
            "a finite radius >= 0",
        )?;
        for row in 1..rows {
            let (previous, radius) = (columns.radius_cm[row - 1], columns.radius_cm[row]);
            if radius <= previous {
                return Err(MediumError::value(
                    format!("radius[{row}]"),
                    radius,
                    Quantity::Length,
                    format!(
                        "a radius greater than radius[{}] ({previous} cm): radii increase \
                         strictly from the centre outwards",
                        row - 1
                    ),
                ));
            }
        }
        check_length("density", Some(columns.density_g_cm3.len()), rows)?;
        check_values(
            "density",
            &columns.density_g_cm3,
            Quantity::Dimensionless,
            finite_non_negative,
            "a density in g/cm^3, finite and >= 0",
        )?;
        if let Some(temperature) = &columns.temperature_k {
            check_length("temperature", Some(temperature.len()), rows)?;
            check_values(
                "temperature",
                temperature,
                Quantity::Dimensionless,
                finite_non_negative,
                "a temperature in K, finite and >= 0",
            )?;
        }
        for (field, column) in [
            ("hydrogen", &columns.hydrogen_x),
            ("metals", &columns.metals_z),
        ] {
            if let Some(column) = column {
                check_column(
                    field,
                    column,
                    rows,
                    unit_interval,
                    "a mass fraction in [0, 1]",
                )?;
            }
        }
        if let (Some(x), Some(z)) = (&columns.hydrogen_x, &columns.metals_z) {
            for row in 0..rows {
                if x.at(row) + z.at(row) > 1.0 {
                    let field = match z {
                        ColumnValues::Constant(_) => "metals".to_string(),
                        ColumnValues::PerRow(_) => format!("metals[{row}]"),
                    };
                    return Err(MediumError::value(
                        field,
                        z.at(row),
                        Quantity::Dimensionless,
                        format!(
                            "X + Z <= 1 (hydrogen X = {} there): the helium fraction 1 - X - Z \
                             cannot be negative",
                            x.at(row)
                        ),
                    ));
                }
            }
        }
        if let Some(energy) = &columns.energy_generation_erg_g_s {
            check_column(
                "energy_generation",
                energy,
                rows,
                finite_non_negative,
                "an energy generation in erg/g/s, finite and >= 0",
            )?;
        }
        match &columns.opacity {
            ProfileOpacity::Table { .. } => {
                if columns.temperature_k.is_none() {
                    return Err(invalid(
                        "temperature",
                        "missing: an opacity table needs \"temperature\" (K per row)",
                    ));
                }
            }
            ProfileOpacity::Law(spec) => {
                spec.build()
                    .map_err(|error| invalid("opacity_law", error.to_string()))?;
                for (field, present) in [
                    ("temperature", columns.temperature_k.is_some()),
                    ("hydrogen", columns.hydrogen_x.is_some()),
                    ("metals", columns.metals_z.is_some()),
                ] {
                    if !present {
                        return Err(invalid(
                            field,
                            format!(
                                "missing: an opacity law needs \"{field}\" (temperature in K \
                                 per row; hydrogen X and metals Z as a number or one per row)"
                            ),
                        ));
                    }
                }
            }
            ProfileOpacity::Tabulated {
                opacity_cm2_g,
                scattering_fraction,
            } => {
                check_length("opacity", Some(opacity_cm2_g.len()), rows)?;
                check_values(
                    "opacity",
                    opacity_cm2_g,
                    Quantity::Dimensionless,
                    finite_non_negative,
                    "an opacity in cm^2/g, finite and >= 0",
                )?;
                if let Some(fraction) = scattering_fraction {
                    check_column(
                        "scattering_fraction",
                        fraction,
                        rows,
                        unit_interval,
                        "a fraction in [0, 1]",
                    )?;
                }
            }
        }
        Ok(Self { columns })
    }

    /// The validated columns.
    pub fn columns(&self) -> &ProfileColumns {
        &self.columns
    }

    /// Number of rows.
    pub fn rows(&self) -> usize {
        self.columns.radius_cm.len()
    }

    /// Radius of the last row, cm.
    pub fn outer_radius_cm(&self) -> f64 {
        *self.columns.radius_cm.last().expect("at least 2 rows")
    }

    /// Radius of the first row, cm.
    pub fn first_radius_cm(&self) -> f64 {
        self.columns.radius_cm[0]
    }

    fn law(&self) -> Option<Box<dyn OpacityLaw>> {
        self.columns.opacity.law()
    }

    /// Linear interpolation weight pair for `radius` in piece `row` (None: first row).
    fn weights(&self, row: Option<usize>, radius: f64) -> (usize, f64) {
        match row {
            None => (0, 0.0),
            Some(row) => {
                let r = &self.columns.radius_cm;
                (row, (radius - r[row]) / (r[row + 1] - r[row]))
            }
        }
    }

    fn point(&self, law: Option<&dyn OpacityLaw>, row: Option<usize>, radius: f64) -> Point {
        let (row, w) = self.weights(row, radius);
        self.point_at(law, row, w)
    }

    /// The gas at fraction `w` of the way from row `row` to the next (`w = 0`: the row
    /// itself, which may be the last).
    fn point_at(&self, law: Option<&dyn OpacityLaw>, row: usize, w: f64) -> Point {
        let lerp = |values: &[f64]| {
            if w == 0.0 {
                values[row]
            } else {
                values[row] + w * (values[row + 1] - values[row])
            }
        };
        let column = |column: &Option<ColumnValues>| match column {
            None => f64::NAN,
            Some(ColumnValues::Constant(value)) => *value,
            Some(ColumnValues::PerRow(values)) => lerp(values),
        };
        let c = &self.columns;
        let density = lerp(&c.density_g_cm3).max(0.0);
        let temperature = c.temperature_k.as_deref().map_or(f64::NAN, lerp).max(0.0);
        let hydrogen = column(&c.hydrogen_x);
        let metals = column(&c.metals_z);
        let (opacity, fraction) = match &c.opacity {
            ProfileOpacity::Tabulated {
                opacity_cm2_g,
                scattering_fraction,
            } => {
                let fraction = scattering_fraction.as_ref().map_or(f64::NAN, |f| match f {
                    ColumnValues::Constant(value) => *value,
                    ColumnValues::PerRow(values) => lerp(values),
                });
                (lerp(opacity_cm2_g).max(0.0), fraction)
            }
            ProfileOpacity::Law(_) | ProfileOpacity::Table { .. } => {
                let law = law.expect("a law or table profile always has its law built");
                let state = crate::opacity::GasState {
                    density_g_cm3: density,
                    temperature_k: temperature,
                    hydrogen_x: hydrogen,
                    metals_z: metals,
                };
                (law.opacity_cm2_g(&state), law.scattering_fraction(&state))
            }
        };
        let extinction = opacity * density;
        Point {
            density,
            temperature,
            hydrogen,
            metals,
            opacity,
            energy: column(&c.energy_generation_erg_g_s),
            extinction,
            scattering: extinction * fraction,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn invalid_tables_name_the_row() {
        let base = || ProfileColumns {
            radius_cm: vec![0.0, 1.0, 2.0],
            density_g_cm3: vec![1.0, 1.0, 1.0],
            temperature_k: Some(vec![1e6; 3]),
            hydrogen_x: Some(ColumnValues::Constant(0.7)),
            metals_z: Some(ColumnValues::Constant(0.02)),
            opacity: ProfileOpacity::Law(OpacitySpec::Constant {
                value_cm2_g: 1.0,
                scattering_fraction: 1.0,
            }),
            energy_generation_erg_g_s: None,
        };
        let field = |columns: ProfileColumns| match ProfileTable::new(columns).unwrap_err() {
            MediumError::InvalidValue { field, .. } | MediumError::Invalid { field, .. } => field,
        };
        let mut c = base();
        c.radius_cm[2] = 1.0;
        assert_eq!(field(c), "radius[2]");
        let mut c = base();
        c.density_g_cm3[1] = -1.0;
        assert_eq!(field(c), "density[1]");
        let mut c = base();
        c.density_g_cm3.pop();
        assert_eq!(field(c), "density");
        let mut c = base();
        c.temperature_k = Some(vec![1.0, f64::NAN, 1.0]);
        assert_eq!(field(c), "temperature[1]");
        let mut c = base();
        c.metals_z = Some(ColumnValues::Constant(0.5));
        assert_eq!(field(c), "metals");
        let mut c = base();
        c.temperature_k = None;
        assert_eq!(field(c), "temperature");
        let mut c = base();
        c.energy_generation_erg_g_s = Some(ColumnValues::PerRow(vec![1.0, -1.0, 0.0]));
        assert_eq!(field(c), "energy_generation[1]");
        let mut c = base();
        c.radius_cm = vec![0.0];
        c.density_g_cm3 = vec![1.0];
        assert_eq!(field(c), "radius");
    }

    #[test]
    fn column_values_read_numbers_and_arrays() {
        let c: ColumnValues = serde_json::from_str("0.7").unwrap();
        assert_eq!(c, ColumnValues::Constant(0.7));
        let c: ColumnValues = serde_json::from_str("[0.7, 0.6]").unwrap();
        assert_eq!(c, ColumnValues::PerRow(vec![0.7, 0.6]));
        assert!(serde_json::from_str::<ColumnValues>("\"x\"").is_err());
        assert_eq!(serde_json::to_string(&c).unwrap(), "[0.7,0.6]");
    }
}
