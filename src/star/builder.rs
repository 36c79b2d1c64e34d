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

use thiserror::Error;

use super::{
    Composition, LaneEmdenError, LaneEmdenSolution, Polytrope, PolytropeError, PressureModel,
};
use crate::medium::MediumError;
use crate::medium::model_file::profile_model_json;
use crate::medium::profile::{ColumnValues, ProfileColumns, ProfileOpacity, ProfileTable};
use crate::opacity::OpacitySpec;
use crate::units::{LengthUnit, SOLAR_MASS_G, SOLAR_RADIUS_CM};

/// Default number of table rows written for a polytrope.
pub const DEFAULT_ROWS: usize = 400;

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
    /// Ideal gas, or Eddington's standard model (n = 3 only).
    pub pressure: PressureModel,
    /// The opacity law written into the model.
    pub opacity: OpacitySpec,
    /// Table rows from the centre to the surface (≥ 3).
    pub rows: usize,
    /// Sub-shell tolerance written into the model (None: the loader's default, 1 %).
    pub tolerance: Option<f64>,
    /// Model name (None: a description of the polytrope).
    pub name: Option<String>,
}

impl Default for PolytropeStar {
    /// A Sun-like n = 3 polytrope: 1 M☉, 1 R☉, X = 0.70, Z = 0.02, ideal gas, electron
    /// scattering plus Kramers free–free and bound–free opacity (Gaunt and guillotine
    /// factors 1), [`DEFAULT_ROWS`] rows.
    fn default() -> Self {
        Self {
            index: 3.0,
            mass_solar: 1.0,
            radius_solar: 1.0,
            hydrogen_x: 0.70,
            metals_z: 0.02,
            pressure: PressureModel::IdealGas,
            opacity: interior_opacity(),
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
        let polytrope = Polytrope::new(
            LaneEmdenSolution::solve(self.index)?,
            self.mass_solar * SOLAR_MASS_G,
            self.radius_solar * SOLAR_RADIUS_CM,
            Composition::new(self.hydrogen_x, self.metals_z)?,
            self.pressure,
        )?;
        let table = polytrope_table(&polytrope, self.rows, self.opacity.clone())?;
        let name = self.name.clone().unwrap_or_else(|| {
            format!(
                "n = {} polytrope, {} M_sun, {} R_sun, X = {}, Z = {}{}",
                self.index,
                self.mass_solar,
                self.radius_solar,
                self.hydrogen_x,
                self.metals_z,
                match self.pressure {
                    PressureModel::IdealGas => "",
                    PressureModel::EddingtonStandardModel => ", Eddington standard model",
                }
            )
        });
        let layer_name = format!("polytrope n = {}", self.index);
        let model_json = profile_model_json(
            &name,
            LengthUnit::SolarRadius,
            &layer_name,
            &table,
            self.tolerance,
        );
        Ok(BuiltStar {
            polytrope,
            table,
            model_json,
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
    let points = polytrope.profile(rows);
    let composition = polytrope.composition();
    ProfileTable::new(ProfileColumns {
        radius_cm: points.iter().map(|p| p.radius_cm).collect(),
        density_g_cm3: points.iter().map(|p| p.density_g_cm3).collect(),
        temperature_k: Some(points.iter().map(|p| p.temperature_k).collect()),
        hydrogen_x: Some(ColumnValues::Constant(composition.hydrogen_x())),
        metals_z: Some(ColumnValues::Constant(composition.metals_z())),
        opacity: ProfileOpacity::Law(opacity),
        energy_generation_erg_g_s: None,
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
            pressure: PressureModel::EddingtonStandardModel,
            ..PolytropeStar::default()
        }));
        assert!(bad(PolytropeStar {
            rows: 2,
            ..PolytropeStar::default()
        }));
    }
}
