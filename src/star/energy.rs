//! Nuclear energy generation per unit mass, ε(ρ, T, X, Z) in erg g⁻¹ s⁻¹: the power-law fits
//! of hydrogen burning by the pp chain and the CNO cycle.
//!
//! Both are the textbook power laws of Carroll & Ostlie, *An Introduction to Modern
//! Astrophysics* (2nd ed.), ch. 10, fitted near T ≈ 1.5 × 10⁷ K (coefficients as recalled;
//! the tests check them against the full rates of Kippenhahn, Weigert & Weiss computed
//! beside them: docs/references.md, Stellar structure 1 and 2):
//!
//! * pp chain: ε_pp ≈ ε′₀ ρ X² T₆⁴ with ε′₀ = 1.08 × 10⁻¹² W m³ kg⁻²;
//! * CNO cycle: ε_CNO ≈ ε′₀ ρ X X_CNO T₆^19.9 with ε′₀ = 8.24 × 10⁻³¹ W m³ kg⁻²;
//!
//! with T₆ = T / 10⁶ K, ρ in kg m⁻³ and ε in W kg⁻¹ (screening, branching and the
//! temperature-dependent corrections set to 1). In cgs (ρ in g cm⁻³, ε in erg g⁻¹ s⁻¹) the
//! coefficients are 10⁷ times larger: 10³ for the density and 10⁴ for W kg⁻¹ → erg g⁻¹ s⁻¹.
//! The CNO mass fraction is taken as X_CNO = 0.7 Z ([`CNO_FRACTION_OF_METALS`]; carbon,
//! nitrogen and oxygen make up about 70 % of the metals by mass in solar mixtures, common
//! practice).
//!
//! They are checked against the non-resonant reaction rates of Kippenhahn, Weigert & Weiss
//! 2012, *Stellar Structure and Evolution*, eqs. (18.63) and (18.65) in the test suite:
//! value and logarithmic temperature derivative at T = 1.5 × 10⁷ K. Away from that
//! temperature the power laws are order-of-magnitude descriptions (the exponents drift:
//! d ln ε_pp / d ln T of the full rate is ≈ 5.9 at 5 × 10⁶ K and ≈ 3.2 at 2.5 × 10⁷ K).

use serde::{Deserialize, Serialize};

use crate::opacity::GasState;

/// Coefficient of the pp-chain power law, W m³ kg⁻² (Carroll & Ostlie, 2nd ed., ch. 10;
/// docs/references.md, Stellar structure 1).
pub const PP_COEFFICIENT_SI: f64 = 1.08e-12;

/// Temperature exponent of the pp-chain power law (T₆⁴).
pub const PP_TEMPERATURE_EXPONENT: f64 = 4.0;

/// Coefficient of the CNO-cycle power law, W m³ kg⁻² (Carroll & Ostlie, 2nd ed., ch. 10;
/// docs/references.md, Stellar structure 1).
pub const CNO_COEFFICIENT_SI: f64 = 8.24e-31;

/// Temperature exponent of the CNO-cycle power law (T₆^19.9).
pub const CNO_TEMPERATURE_EXPONENT: f64 = 19.9;

/// Fraction of the metals that are carbon, nitrogen and oxygen, X_CNO / Z (common practice
/// for solar-like mixtures).
pub const CNO_FRACTION_OF_METALS: f64 = 0.7;

/// From a coefficient in W m³ kg⁻² (with ρ in kg m⁻³, ε in W kg⁻¹) to cgs (ρ in g cm⁻³,
/// ε in erg g⁻¹ s⁻¹): 10³ kg m⁻³ per g cm⁻³ times 10⁴ erg g⁻¹ s⁻¹ per W kg⁻¹.
const SI_TO_CGS: f64 = 1e7;

/// The pp-chain power law, erg g⁻¹ s⁻¹: 1.08 × 10⁻⁵ ρ X² T₆⁴ (cgs).
pub fn pp_chain_erg_g_s(state: &GasState) -> f64 {
    let t6 = state.temperature_k / 1e6;
    PP_COEFFICIENT_SI
        * SI_TO_CGS
        * state.density_g_cm3
        * state.hydrogen_x
        * state.hydrogen_x
        * t6.powf(PP_TEMPERATURE_EXPONENT)
}

/// The CNO-cycle power law, erg g⁻¹ s⁻¹: 8.24 × 10⁻²⁴ ρ X X_CNO T₆^19.9 (cgs), with
/// X_CNO = [`CNO_FRACTION_OF_METALS`] · Z.
pub fn cno_cycle_erg_g_s(state: &GasState) -> f64 {
    let t6 = state.temperature_k / 1e6;
    CNO_COEFFICIENT_SI
        * SI_TO_CGS
        * state.density_g_cm3
        * state.hydrogen_x
        * CNO_FRACTION_OF_METALS
        * state.metals_z
        * t6.powf(CNO_TEMPERATURE_EXPONENT)
}

/// Which energy-generation laws a star uses.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct EnergyLaws {
    /// Hydrogen burning by the pp chain ([`pp_chain_erg_g_s`]).
    pub pp_chain: bool,
    /// Hydrogen burning by the CNO cycle ([`cno_cycle_erg_g_s`]).
    pub cno_cycle: bool,
}

impl Default for EnergyLaws {
    /// Both, pp chain + CNO cycle.
    fn default() -> Self {
        Self {
            pp_chain: true,
            cno_cycle: true,
        }
    }
}

impl EnergyLaws {
    /// ε at `state`, erg g⁻¹ s⁻¹: the sum of the chosen laws.
    pub fn erg_g_s(&self, state: &GasState) -> f64 {
        let mut total = 0.0;
        if self.pp_chain {
            total += pp_chain_erg_g_s(state);
        }
        if self.cno_cycle {
            total += cno_cycle_erg_g_s(state);
        }
        total
    }

    /// "pp chain + CNO cycle (power laws)".
    pub fn describe(&self) -> String {
        let parts: Vec<&str> = [(self.pp_chain, "pp chain"), (self.cno_cycle, "CNO cycle")]
            .iter()
            .filter(|(on, _)| *on)
            .map(|(_, name)| *name)
            .collect();
        format!("{} (power laws)", parts.join(" + "))
    }

    /// Reads `pp`, `cno` or `pp+cno` (in any order); `none` gives None (no energy
    /// generation).
    ///
    /// # Errors
    /// A message naming the part that was not understood.
    pub fn parse_short(text: &str) -> Result<Option<Self>, String> {
        let text = text.trim();
        if text == "none" {
            return Ok(None);
        }
        let mut laws = Self {
            pp_chain: false,
            cno_cycle: false,
        };
        for term in text.split('+').map(str::trim) {
            match term {
                "pp" => laws.pp_chain = true,
                "cno" => laws.cno_cycle = true,
                _ => {
                    return Err(format!(
                        "{term:?}: expected pp, cno, pp+cno or none (energy-generation power laws)"
                    ));
                }
            }
        }
        Ok(Some(laws))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn short_names_parse() {
        assert_eq!(
            EnergyLaws::parse_short("pp+cno").unwrap(),
            Some(EnergyLaws::default())
        );
        assert_eq!(
            EnergyLaws::parse_short("cno").unwrap(),
            Some(EnergyLaws {
                pp_chain: false,
                cno_cycle: true
            })
        );
        assert_eq!(EnergyLaws::parse_short("none").unwrap(), None);
        assert!(EnergyLaws::parse_short("triple-alpha").is_err());
        assert_eq!(
            EnergyLaws::default().describe(),
            "pp chain + CNO cycle (power laws)"
        );
    }

    #[test]
    fn laws_scale_as_written() {
        let state = |rho: f64, t: f64, x: f64, z: f64| GasState {
            density_g_cm3: rho,
            temperature_k: t,
            hydrogen_x: x,
            metals_z: z,
        };
        // ε_pp ∝ ρ X² T⁴: doubling T multiplies it by 16; no hydrogen, no burning.
        let a = pp_chain_erg_g_s(&state(10.0, 1e7, 0.7, 0.02));
        let b = pp_chain_erg_g_s(&state(10.0, 2e7, 0.7, 0.02));
        assert!((b / a - 16.0).abs() < 1e-12);
        assert_eq!(pp_chain_erg_g_s(&state(10.0, 1e7, 0.0, 0.02)), 0.0);
        // ε_CNO ∝ Z: no metals, no CNO cycle.
        assert_eq!(cno_cycle_erg_g_s(&state(10.0, 1e7, 0.7, 0.0)), 0.0);
        let c = cno_cycle_erg_g_s(&state(10.0, 1e7, 0.7, 0.02));
        let d = cno_cycle_erg_g_s(&state(10.0, 1e7, 0.7, 0.04));
        assert!((d / c - 2.0).abs() < 1e-12);
    }
}
