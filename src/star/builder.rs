//! Building a stellar model file from a polytrope: a [`Polytrope`] sampled on its
//! surface-refined grid becomes a tabulated profile (radius, density, temperature, X, Z and an
//! opacity law), written as a model file with one profile layer.
//!
//! ```
//! use sojourn::opacity::OpacitySpec;
//! use sojourn::star::builder::PolytropeStar;
//!
//! let star = PolytropeStar {
//!     index: 1.5,
//!     mass_solar: 0.3,
//!     radius_solar: 0.3,
//!     rows: 200,
//!     opacity: OpacitySpec::ElectronScattering {},
//!     ..PolytropeStar::default()
//! }
//! .build()
//! .unwrap();
//! assert_eq!(star.table.rows(), 200);
//! // The model file it writes loads back into a medium.
//! let medium = sojourn::medium::model_file::model_from_value(&star.model_json, "star").unwrap();
//! assert!(medium.layers().len() >= 199);
//! ```

use std::sync::Arc;

use thiserror::Error;

use super::energy::EnergyLaws;
use super::{
    Composition, LaneEmdenError, LaneEmdenSolution, Polytrope, PolytropeError, PressureModel,
    eddington_beta,
};
use crate::medium::MediumError;
use crate::medium::model_file::profile_model_json;
use crate::medium::profile::{ColumnValues, ProfileColumns, ProfileOpacity, ProfileTable};
use crate::opacity::{GasState, OpacitySpec, OpacityTable, OutsidePolicy};
use crate::units::{LengthUnit, SOLAR_MASS_G, SOLAR_RADIUS_CM};

/// Default number of table rows written for a polytrope.
pub const DEFAULT_ROWS: usize = 400;

/// Radiation-pressure fraction 1 − β (from Eddington's quartic) from which
/// [`PressureChoice::Auto`] includes radiation pressure: 1 %. Below it ideal gas is a good
/// approximation (T ∝ β changes by less than 1 %, the Kramers opacity ∝ T^−3.5 by less than
/// 3.5 %); above it the change is comparable with, and soon larger than, the other
/// approximations of a polytrope. For X = 0.70, Z = 0.02 (μ = 0.617) this is M ≳ 4.8 M☉.
pub const RADIATION_PRESSURE_THRESHOLD: f64 = 0.01;

/// How the builder treats radiation pressure.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum PressureChoice {
    /// Eddington's standard model where Eddington's quartic gives 1 − β ≥
    /// [`RADIATION_PRESSURE_THRESHOLD`] and n = 3; ideal gas otherwise, with a warning when
    /// the star is massive enough but n ≠ 3.
    #[default]
    Auto,
    /// All the pressure is ideal gas (a warning when 1 − β would exceed the threshold).
    IdealGas,
    /// Eddington's standard model (n = 3 only).
    Eddington,
}

/// An opacity table for the star's profile, and the path to write into the model file.
#[derive(Debug, Clone, PartialEq)]
pub struct TableChoice {
    /// The table's path as the model file will give it (relative to the model file).
    pub file: String,
    /// The table.
    pub table: Arc<OpacityTable>,
    /// What to do with points outside it.
    pub outside: OutsidePolicy,
}

/// Errors from building a polytropic star.
#[derive(Debug, Error)]
#[non_exhaustive]
pub enum StarError {
    /// The Lane–Emden equation could not be solved for this index.
    #[error(transparent)]
    LaneEmden(#[from] LaneEmdenError),
    /// The polytrope could not be scaled (mass, radius, composition, pressure model).
    #[error(transparent)]
    Polytrope(#[from] PolytropeError),
    /// The profile table was rejected.
    #[error("profile: {0}")]
    Profile(#[from] MediumError),
    /// Too few table rows.
    #[error("rows = {0}: expected at least 3 table rows")]
    TooFewRows(usize),
    /// An energy-generation source without energy generation.
    #[error("an energy-generation source needs energy-generation laws")]
    SourceWithoutEnergy,
}

/// What to build: a polytrope of index `index`, mass and radius in solar units (IAU 2015
/// nominal values, [`crate::units`]), composition X, Z, pressure model and opacity law,
/// sampled on `rows` table rows.
#[derive(Debug, Clone, PartialEq)]
pub struct PolytropeStar {
    /// Polytropic index n, 0 ≤ n < 5.
    pub index: f64,
    /// Mass, M☉.
    pub mass_solar: f64,
    /// Radius, R☉.
    pub radius_solar: f64,
    /// Hydrogen mass fraction X.
    pub hydrogen_x: f64,
    /// Metal mass fraction Z.
    pub metals_z: f64,
    /// Ideal gas, Eddington's standard model (n = 3 only), or chosen by mass.
    pub pressure: PressureChoice,
    /// The opacity law written into the model (unless `opacity_table` is given).
    pub opacity: OpacitySpec,
    /// An opacity table instead of the law.
    pub opacity_table: Option<TableChoice>,
    /// Energy-generation laws: ε is evaluated at every row and written into the model (None:
    /// no energy generation).
    pub energy: Option<EnergyLaws>,
    /// Write `"source": {"kind": "energy_generation"}` into the model (photons start where
    /// the energy is released); needs `energy`.
    pub energy_source: bool,
    /// Table rows from the centre to the surface (≥ 3).
    pub rows: usize,
    /// Sub-shell tolerance written into the model (None: the loader's default, 1 %).
    pub tolerance: Option<f64>,
    /// Model name (None: a description of the polytrope).
    pub name: Option<String>,
}

impl Default for PolytropeStar {
    /// A Sun-like n = 3 polytrope: 1 M☉, 1 R☉, X = 0.70, Z = 0.02, pressure chosen by mass
    /// (ideal gas at 1 M☉), electron scattering plus Kramers free–free and bound–free opacity
    /// (Gaunt and guillotine factors 1), pp-chain + CNO energy generation, a centred source,
    /// [`DEFAULT_ROWS`] rows.
    fn default() -> Self {
        Self {
            index: 3.0,
            mass_solar: 1.0,
            radius_solar: 1.0,
            hydrogen_x: 0.70,
            metals_z: 0.02,
            pressure: PressureChoice::Auto,
            opacity: interior_opacity(),
            opacity_table: None,
            energy: Some(EnergyLaws::default()),
            energy_source: false,
            rows: DEFAULT_ROWS,
            tolerance: None,
            name: None,
        }
    }
}

/// Electron scattering + Kramers free–free + Kramers bound–free (Gaunt and guillotine factors
/// 1), the usual opacity of an ionised stellar interior (Carroll & Ostlie, *An Introduction to
/// Modern Astrophysics*, ch. 9).
pub fn interior_opacity() -> OpacitySpec {
    OpacitySpec::Sum {
        laws: vec![
            OpacitySpec::ElectronScattering {},
            OpacitySpec::KramersFreeFree { gaunt: 1.0 },
            OpacitySpec::KramersBoundFree {
                gaunt: 1.0,
                guillotine: 1.0,
            },
        ],
    }
}

/// A built star: the polytrope, its table and the model file (JSON) describing it.
#[derive(Debug, Clone)]
pub struct BuiltStar {
    /// The scaled polytrope.
    pub polytrope: Polytrope,
    /// The table written into the model, cgs.
    pub table: ProfileTable,
    /// The model file: one sphere with one profile layer, radii in solar radii.
    pub model_json: serde_json::Value,
    /// 1 − β from Eddington's quartic for this mass and composition (the radiation-pressure
    /// fraction an n = 3 star would have), whatever pressure model was used.
    pub eddington_radiation_fraction: f64,
    /// What was decided about radiation pressure and why, and warnings (one line each).
    pub notes: Vec<String>,
}

/// The pressure model for `choice`, and a note: Eddington's quartic (with the n = 3 mass
/// parameter, whatever `index`) gives the radiation fraction 1 − β of a star of this mass
/// and composition; [`PressureChoice::Auto`] includes radiation pressure from
/// [`RADIATION_PRESSURE_THRESHOLD`] on (n = 3) or warns (other n).
///
/// # Errors
/// [`StarError`] if the n = 3 Lane–Emden solution or the quartic fails (invalid mass).
pub fn resolve_pressure(
    choice: PressureChoice,
    index: f64,
    mass_g: f64,
    composition: Composition,
) -> Result<(PressureModel, f64, Option<String>), StarError> {
    let omega_3 = LaneEmdenSolution::solve(3.0)?.mass_parameter();
    let radiation = 1.0 - eddington_beta(mass_g, composition.mean_molecular_weight(), omega_3)?;
    let significant = radiation >= RADIATION_PRESSURE_THRESHOLD;
    let percent = 100.0 * radiation;
    let is_three = (index - 3.0).abs() < 1e-12;
    Ok(match choice {
        PressureChoice::Eddington => (PressureModel::EddingtonStandardModel, radiation, None),
        PressureChoice::IdealGas => (
            PressureModel::IdealGas,
            radiation,
            significant.then(|| {
                format!(
                    "warning: radiation pressure left out as asked, though Eddington's quartic                      gives 1 - beta = {percent:.2} % for this mass (the temperature is then                      overestimated by about that fraction)"
                )
            }),
        ),
        PressureChoice::Auto if significant && is_three => (
            PressureModel::EddingtonStandardModel,
            radiation,
            Some(format!(
                "radiation pressure included (Eddington's standard model): 1 - beta =                  {percent:.2} % >= {} % for this mass",
                100.0 * RADIATION_PRESSURE_THRESHOLD
            )),
        ),
        PressureChoice::Auto if significant => (
            PressureModel::IdealGas,
            radiation,
            Some(format!(
                "warning: radiation pressure is not included: Eddington's quartic gives                  1 - beta = {percent:.2} % for an n = 3 star of this mass, but the standard                  model needs n = 3; the temperature is overestimated by about that fraction"
            )),
        ),
        PressureChoice::Auto => (PressureModel::IdealGas, radiation, None),
    })
}

impl PolytropeStar {
    /// Solves, scales and samples the polytrope and writes its model file (as JSON).
    ///
    /// # Errors
    /// [`StarError`]: an index outside 0 ≤ n < 5, a non-positive mass or radius, an invalid
    /// composition, the Eddington model with n ≠ 3, fewer than 3 rows, or an invalid opacity
    /// law.
    pub fn build(&self) -> Result<BuiltStar, StarError> {
        if self.rows < 3 {
            return Err(StarError::TooFewRows(self.rows));
        }
        if self.energy_source && self.energy.is_none() {
            return Err(StarError::SourceWithoutEnergy);
        }
        let composition = Composition::new(self.hydrogen_x, self.metals_z)?;
        let mass_g = self.mass_solar * SOLAR_MASS_G;
        let (pressure, eddington_radiation_fraction, note) =
            resolve_pressure(self.pressure, self.index, mass_g, composition)?;
        let polytrope = Polytrope::new(
            LaneEmdenSolution::solve(self.index)?,
            mass_g,
            self.radius_solar * SOLAR_RADIUS_CM,
            composition,
            pressure,
        )?;
        let opacity = match &self.opacity_table {
            Some(choice) => ProfileOpacity::Table {
                file: choice.file.clone(),
                table: choice.table.clone(),
                outside: choice.outside,
            },
            None => ProfileOpacity::Law(self.opacity.clone()),
        };
        let table = polytrope_profile(&polytrope, self.rows, opacity, self.energy)?;
        let name = self.name.clone().unwrap_or_else(|| {
            format!(
                "n = {} polytrope, {} M_sun, {} R_sun, X = {}, Z = {}{}",
                self.index,
                self.mass_solar,
                self.radius_solar,
                self.hydrogen_x,
                self.metals_z,
                match pressure {
                    PressureModel::IdealGas => "",
                    PressureModel::EddingtonStandardModel => ", Eddington standard model",
                }
            )
        });
        let layer_name = format!("polytrope n = {}", self.index);
        let mut model_json = profile_model_json(
            &name,
            LengthUnit::SolarRadius,
            &layer_name,
            &table,
            self.tolerance,
        );
        if self.energy_source {
            model_json["source"] = serde_json::json!({ "kind": "energy_generation" });
        }
        Ok(BuiltStar {
            polytrope,
            table,
            model_json,
            eddington_radiation_fraction,
            notes: note.into_iter().collect(),
        })
    }
}

/// The profile table of `polytrope`: `rows` rows from the centre to the surface on the
/// polytrope's surface-refined grid ([`Polytrope::profile`]), with its uniform composition
/// and the opacity law `opacity`.
///
/// # Errors
/// [`MediumError`] if the opacity law is invalid.
pub fn polytrope_table(
    polytrope: &Polytrope,
    rows: usize,
    opacity: OpacitySpec,
) -> Result<ProfileTable, MediumError> {
    polytrope_profile(polytrope, rows, ProfileOpacity::Law(opacity), None)
}

/// The profile table of `polytrope` as [`polytrope_table`], with any opacity and, with
/// `energy`, the energy generation ε(ρ, T, X, Z) of each row.
///
/// # Errors
/// [`MediumError`] if the opacity is invalid.
pub fn polytrope_profile(
    polytrope: &Polytrope,
    rows: usize,
    opacity: ProfileOpacity,
    energy: Option<EnergyLaws>,
) -> Result<ProfileTable, MediumError> {
    let points = polytrope.profile(rows);
    let composition = polytrope.composition();
    let energy_generation_erg_g_s = energy.map(|laws| {
        ColumnValues::PerRow(
            points
                .iter()
                .map(|p| {
                    laws.erg_g_s(&GasState {
                        density_g_cm3: p.density_g_cm3,
                        temperature_k: p.temperature_k,
                        hydrogen_x: composition.hydrogen_x(),
                        metals_z: composition.metals_z(),
                    })
                })
                .collect(),
        )
    });
    ProfileTable::new(ProfileColumns {
        radius_cm: points.iter().map(|p| p.radius_cm).collect(),
        density_g_cm3: points.iter().map(|p| p.density_g_cm3).collect(),
        temperature_k: Some(points.iter().map(|p| p.temperature_k).collect()),
        hydrogen_x: Some(ColumnValues::Constant(composition.hydrogen_x())),
        metals_z: Some(ColumnValues::Constant(composition.metals_z())),
        opacity,
        energy_generation_erg_g_s,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::model_file::model_from_value;

    #[test]
    fn sun_like_star_loads_with_a_surface_cut() {
        let star = PolytropeStar::default().build().unwrap();
        let medium = model_from_value(&star.model_json, "sun").unwrap();
        let profile = &medium.profiles()[0];
        // Kramers holds down to 1e4 K: the surface is cut just below R.
        let cut = profile.surface_cut.as_ref().unwrap();
        assert!(cut.radius_cm < SOLAR_RADIUS_CM && cut.radius_cm > 0.99 * SOLAR_RADIUS_CM);
        assert!(
            profile.tau_error_relative < 1e-6,
            "{}",
            profile.tau_error_relative
        );
        // ρc of the n = 3 Sun: 54.18 ρ̄ (Chandrasekhar 1939).
        assert!(
            (profile.inner_density_g_cm3 / star.polytrope.central_density_g_cm3() - 1.0).abs()
                < 1e-12
        );
    }

    #[test]
    fn radiation_pressure_is_chosen_by_mass() {
        let star = |mass: f64, index: f64| {
            PolytropeStar {
                index,
                mass_solar: mass,
                radius_solar: mass.powf(0.8),
                rows: 50,
                ..PolytropeStar::default()
            }
            .build()
            .unwrap()
        };
        // 1 M☉: 1 − β ≈ 4e−4 (Eddington's quartic), ideal gas, nothing to say.
        let sun = star(1.0, 3.0);
        assert_eq!(sun.polytrope.beta(), 1.0);
        assert!(sun.notes.is_empty());
        assert!((sun.eddington_radiation_fraction - 4.3e-4).abs() < 0.3e-4);
        // 20 M☉, n = 3: the standard model, with a note.
        let heavy = star(20.0, 3.0);
        assert!(heavy.polytrope.beta() < 0.95);
        assert!(heavy.notes[0].contains("radiation pressure included"));
        // 20 M☉, n = 1.5: ideal gas and a warning.
        let convective = star(20.0, 1.5);
        assert_eq!(convective.polytrope.beta(), 1.0);
        assert!(convective.notes[0].starts_with("warning"));
        // The threshold: 1 − β = 1 % near 4.8 M☉ at X = 0.70, Z = 0.02.
        assert!(star(4.6, 3.0).polytrope.beta() == 1.0);
        assert!(star(5.0, 3.0).polytrope.beta() < 1.0);
    }

    #[test]
    fn invalid_requests_are_errors() {
        let bad = |star: PolytropeStar| star.build().is_err();
        assert!(bad(PolytropeStar {
            index: 5.0,
            ..PolytropeStar::default()
        }));
        assert!(bad(PolytropeStar {
            mass_solar: -1.0,
            ..PolytropeStar::default()
        }));
        assert!(bad(PolytropeStar {
            hydrogen_x: 0.9,
            metals_z: 0.2,
            ..PolytropeStar::default()
        }));
        assert!(bad(PolytropeStar {
            index: 1.5,
            pressure: PressureChoice::Eddington,
            ..PolytropeStar::default()
        }));
        assert!(bad(PolytropeStar {
            energy: None,
            energy_source: true,
            ..PolytropeStar::default()
        }));
        assert!(bad(PolytropeStar {
            rows: 2,
            ..PolytropeStar::default()
        }));
    }
}
