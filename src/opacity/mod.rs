//! Analytic opacity laws for stellar gas, in cgs units.
//!
//! Every law maps a [`GasState`] (density in g cm⁻³, temperature in K, hydrogen and metal
//! mass fractions X and Z) to a mass opacity κ in cm² g⁻¹, and says which fraction of that
//! opacity is true scattering (the photon survives and changes direction) rather than
//! absorption. The photon mean free path is 1/(κρ) cm.
//!
//! The formulas are the textbook power-law fits collected in Carroll & Ostlie, *An
//! Introduction to Modern Astrophysics*, ch. 9. They are order-of-magnitude descriptions,
//! each valid only in its own regime; [`SmoothHMinusBlend`] joins the H⁻ law to the
//! electron-scattering and Kramers laws so that one law covers a whole star.
//!
//! Model files describe a law with [`OpacitySpec`] (JSON, tagged by `"kind"`), which
//! [`OpacitySpec::build`] validates into a boxed [`OpacityLaw`]. Tabulated opacities κ(T, ρ)
//! (a long-form CSV of our own, interpolated in log space) are in [`table`].
//!
//! ```
//! use sojourn::opacity::{GasState, OpacitySpec};
//!
//! let spec: OpacitySpec = serde_json::from_str(r#"{ "kind": "electron_scattering" }"#).unwrap();
//! let law = spec.build().unwrap();
//! let state = GasState {
//!     density_g_cm3: 1.0,
//!     temperature_k: 1e7,
//!     hydrogen_x: 0.7,
//!     metals_z: 0.02,
//! };
//! // 0.2 (1 + X) cm²/g, all of it scattering.
//! assert!((law.opacity_cm2_g(&state) - 0.34).abs() < 1e-12);
//! assert_eq!(law.scattering_fraction(&state), 1.0);
//! ```

use serde::{Deserialize, Serialize};
use thiserror::Error;

mod spec_de;
mod steffen;
pub mod table;

pub use table::{
    OpacityTable, OpacityTableError, OutsidePolicy, OutsideTable, TableOpacity, TableRange,
};

/// Coefficient of the electron-scattering opacity κ_es = 0.2 (1 + X), cm² g⁻¹.
/// Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9.
pub const ELECTRON_SCATTERING_COEFFICIENT_CM2_G: f64 = 0.2;

/// Coefficient of the Kramers free–free opacity
/// κ_ff = 3.68e22 g_ff (1 − Z)(1 + X) ρ T^−3.5, cgs (cm² g⁻¹ with ρ in g cm⁻³ and T in K).
/// Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9.
pub const KRAMERS_FREE_FREE_COEFFICIENT: f64 = 3.68e22;

/// Coefficient of the Kramers bound–free opacity
/// κ_bf = 4.34e25 (g_bf / t) Z (1 + X) ρ T^−3.5, cgs (cm² g⁻¹ with ρ in g cm⁻³ and T in K).
/// Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9.
pub const KRAMERS_BOUND_FREE_COEFFICIENT: f64 = 4.34e25;

/// Coefficient of the H⁻ opacity κ_H⁻ = 2.5e−31 (Z / 0.02) ρ^½ T⁹, cgs (cm² g⁻¹ with ρ in
/// g cm⁻³ and T in K). Carroll & Ostlie 2007, *An Introduction to Modern Astrophysics*,
/// eq. (9.28), 7.9e−34 in SI units (docs/references.md, Stellar structure 13).
pub const H_MINUS_COEFFICIENT: f64 = 2.5e-31;

/// Metal mass fraction the H⁻ coefficient [`H_MINUS_COEFFICIENT`] is normalised to.
pub const H_MINUS_REFERENCE_METALS_Z: f64 = 0.02;

/// The local state of the gas at which an opacity law is evaluated.
///
/// The fields are not validated: laws evaluate their formula as written, so a NaN or a
/// negative density gives a meaningless (often NaN) opacity.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct GasState {
    /// Mass density ρ, g cm⁻³.
    pub density_g_cm3: f64,
    /// Temperature T, K.
    pub temperature_k: f64,
    /// Hydrogen mass fraction X (dimensionless, 0 ..= 1).
    pub hydrogen_x: f64,
    /// Metal mass fraction Z (dimensionless, 0 ..= 1). The helium fraction is Y = 1 − X − Z.
    pub metals_z: f64,
}

impl GasState {
    /// Helium mass fraction Y = 1 − X − Z (dimensionless).
    pub fn helium_y(&self) -> f64 {
        1.0 - self.hydrogen_x - self.metals_z
    }
}

/// A mass opacity law κ(ρ, T, X, Z).
///
/// Implementations are immutable, so one law can be shared between threads.
pub trait OpacityLaw: Send + Sync + std::fmt::Debug {
    /// Mass opacity κ at `state`, cm² g⁻¹.
    fn opacity_cm2_g(&self, state: &GasState) -> f64;

    /// Fraction of [`opacity_cm2_g`](OpacityLaw::opacity_cm2_g) that is true scattering
    /// rather than absorption (dimensionless, 0 ..= 1): the single-scattering albedo of the
    /// gas. Electron scattering is 1; the Kramers and H⁻ laws are 0.
    fn scattering_fraction(&self, state: &GasState) -> f64;

    /// Photon mean free path 1 / (κ ρ) at `state`, cm. Infinite where κρ = 0.
    fn mean_free_path_cm(&self, state: &GasState) -> f64 {
        1.0 / (self.opacity_cm2_g(state) * state.density_g_cm3)
    }

    /// The temperature range over which the law is meant to hold, as documented on each law
    /// (lowest, highest), K. Stellar-profile media end where the gas falls below the lowest
    /// temperature (see [`crate::medium::profile`]) and note any gas above the highest.
    /// Default: no limit, (0, ∞).
    fn temperature_range_k(&self) -> TemperatureRange {
        TemperatureRange::UNLIMITED
    }
}

/// A temperature range, K: the regime in which an opacity law is meant to hold.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TemperatureRange {
    /// Lowest temperature, K (0: no lower limit).
    pub min_k: f64,
    /// Highest temperature, K (+∞: no upper limit; serialised as null).
    pub max_k: f64,
}

impl TemperatureRange {
    /// No limit: (0, ∞) K.
    pub const UNLIMITED: Self = Self {
        min_k: 0.0,
        max_k: f64::INFINITY,
    };

    /// The range common to `self` and `other` (the larger minimum, the smaller maximum).
    pub fn intersect(self, other: Self) -> Self {
        Self {
            min_k: self.min_k.max(other.min_k),
            max_k: self.max_k.min(other.max_k),
        }
    }

    /// Whether `temperature_k` lies in [min, max].
    pub fn contains(&self, temperature_k: f64) -> bool {
        (self.min_k..=self.max_k).contains(&temperature_k)
    }
}

/// Lower end of the electron-scattering range, K: hydrogen is ionised above ≈ 10⁴ K; in
/// cooler gas free electrons recombine and 0.2 (1 + X) overestimates the opacity.
pub const ELECTRON_SCATTERING_MIN_TEMPERATURE_K: f64 = 1e4;

/// Upper end of the electron-scattering range, K: well below the electron rest energy
/// (m_e c²/k_B ≈ 6e9 K), so that Klein–Nishina corrections stay small.
pub const ELECTRON_SCATTERING_MAX_TEMPERATURE_K: f64 = 1e9;

/// Kramers laws (free–free and bound–free): lowest temperature, K. Carroll & Ostlie,
/// *An Introduction to Modern Astrophysics*, ch. 9 give them for ionised stellar interiors;
/// below ≈ 10⁴ K the gas recombines and κ ∝ T^−3.5 diverges as T → 0.
pub const KRAMERS_MIN_TEMPERATURE_K: f64 = 1e4;

/// Kramers laws: highest temperature, K (above ≈ 10⁸ K electron scattering dominates by
/// far and the fits are not meant to be used).
pub const KRAMERS_MAX_TEMPERATURE_K: f64 = 1e8;

/// H⁻ law: lowest temperature, K (below, molecules dominate; the range of Carroll & Ostlie
/// 2007, eq. (9.28): docs/references.md, Stellar structure 13).
pub const H_MINUS_MIN_TEMPERATURE_K: f64 = 3000.0;

/// H⁻ law: highest temperature, K (above, H⁻ is destroyed and κ ∝ T⁹ is absurd; the same
/// range).
pub const H_MINUS_MAX_TEMPERATURE_K: f64 = 6000.0;

/// Errors from building an opacity law.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum OpacityError {
    /// A constant opacity must be finite and non-negative (cm² g⁻¹).
    #[error("constant opacity must be finite and >= 0 cm^2/g, got {0}")]
    InvalidConstant(f64),
    /// A scattering fraction must lie in 0 ..= 1.
    #[error("scattering fraction must lie in 0..=1, got {0}")]
    InvalidScatteringFraction(f64),
    /// A Gaunt factor must be finite and positive.
    #[error("{which} Gaunt factor must be finite and > 0, got {value}")]
    InvalidGaunt {
        /// Which Gaunt factor: "free-free" or "bound-free".
        which: &'static str,
        /// The rejected value.
        value: f64,
    },
    /// The guillotine factor must be finite and at least 1.
    #[error("guillotine factor must be finite and >= 1 (usually 1 to 100), got {0}")]
    InvalidGuillotine(f64),
    /// A sum of laws needs at least one term.
    #[error("a sum of opacity laws needs at least one law")]
    EmptySum,
}

fn check_gaunt(which: &'static str, value: f64) -> Result<f64, OpacityError> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(OpacityError::InvalidGaunt { which, value })
    }
}

/// A constant (grey) opacity, κ = `value_cm2_g` everywhere, with a fixed scattering
/// fraction. Valid wherever the user says it is: a modelling choice, not a physical law.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ConstantOpacity {
    value_cm2_g: f64,
    scattering_fraction: f64,
}

impl ConstantOpacity {
    /// A constant opacity of `value_cm2_g` (cm² g⁻¹) of which `scattering_fraction`
    /// (0 ..= 1) is scattering.
    ///
    /// # Errors
    /// [`OpacityError::InvalidConstant`] unless `value_cm2_g` is finite and ≥ 0;
    /// [`OpacityError::InvalidScatteringFraction`] unless the fraction is in 0 ..= 1.
    pub fn new(value_cm2_g: f64, scattering_fraction: f64) -> Result<Self, OpacityError> {
        if !(value_cm2_g.is_finite() && value_cm2_g >= 0.0) {
            return Err(OpacityError::InvalidConstant(value_cm2_g));
        }
        if !(0.0..=1.0).contains(&scattering_fraction) {
            return Err(OpacityError::InvalidScatteringFraction(scattering_fraction));
        }
        Ok(Self {
            value_cm2_g,
            scattering_fraction,
        })
    }

    /// The opacity, cm² g⁻¹.
    pub fn value_cm2_g(&self) -> f64 {
        self.value_cm2_g
    }
}

impl OpacityLaw for ConstantOpacity {
    fn opacity_cm2_g(&self, _state: &GasState) -> f64 {
        self.value_cm2_g
    }

    fn scattering_fraction(&self, _state: &GasState) -> f64 {
        self.scattering_fraction
    }
}

/// Thomson scattering by free electrons in fully ionised gas:
/// κ_es = 0.2 (1 + X) cm² g⁻¹ (Carroll & Ostlie, *An Introduction to Modern Astrophysics*,
/// ch. 9). Pure scattering (fraction 1).
///
/// Valid where the gas is ionised (hydrogen from T ≈ 10⁴ K, helium fully from ≈ 10⁵ K in
/// stellar interiors) and the photon energy is far below the electron rest energy (T ≪ 10⁹ K,
/// no Klein–Nishina correction). Independent of ρ and T. Range used by sojourn:
/// [`ELECTRON_SCATTERING_MIN_TEMPERATURE_K`] to [`ELECTRON_SCATTERING_MAX_TEMPERATURE_K`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct ElectronScattering;

impl OpacityLaw for ElectronScattering {
    fn opacity_cm2_g(&self, state: &GasState) -> f64 {
        ELECTRON_SCATTERING_COEFFICIENT_CM2_G * (1.0 + state.hydrogen_x)
    }

    fn scattering_fraction(&self, _state: &GasState) -> f64 {
        1.0
    }

    fn temperature_range_k(&self) -> TemperatureRange {
        TemperatureRange {
            min_k: ELECTRON_SCATTERING_MIN_TEMPERATURE_K,
            max_k: ELECTRON_SCATTERING_MAX_TEMPERATURE_K,
        }
    }
}

/// The range of both Kramers laws, K.
fn kramers_range() -> TemperatureRange {
    TemperatureRange {
        min_k: KRAMERS_MIN_TEMPERATURE_K,
        max_k: KRAMERS_MAX_TEMPERATURE_K,
    }
}

/// Kramers free–free (bremsstrahlung) absorption:
/// κ_ff = 3.68e22 g_ff (1 − Z)(1 + X) ρ T^−3.5 cm² g⁻¹, ρ in g cm⁻³, T in K
/// (Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9). Pure absorption
/// (scattering fraction 0).
///
/// `gaunt_ff` is the (frequency-averaged) free–free Gaunt factor, of order 1. Valid in
/// ionised stellar interiors, roughly 10⁴ K ≲ T ≲ 10⁸ K, where it falls below electron
/// scattering at high T and low ρ.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KramersFreeFree {
    gaunt_ff: f64,
}

impl KramersFreeFree {
    /// Free–free law with Gaunt factor `gaunt_ff` (dimensionless, usually ≈ 1).
    ///
    /// # Errors
    /// [`OpacityError::InvalidGaunt`] unless `gaunt_ff` is finite and > 0.
    pub fn new(gaunt_ff: f64) -> Result<Self, OpacityError> {
        Ok(Self {
            gaunt_ff: check_gaunt("free-free", gaunt_ff)?,
        })
    }

    /// The free–free Gaunt factor (dimensionless).
    pub fn gaunt_ff(&self) -> f64 {
        self.gaunt_ff
    }
}

impl Default for KramersFreeFree {
    /// Gaunt factor 1.
    fn default() -> Self {
        Self { gaunt_ff: 1.0 }
    }
}

impl OpacityLaw for KramersFreeFree {
    fn opacity_cm2_g(&self, state: &GasState) -> f64 {
        KRAMERS_FREE_FREE_COEFFICIENT
            * self.gaunt_ff
            * (1.0 - state.metals_z)
            * (1.0 + state.hydrogen_x)
            * state.density_g_cm3
            * state.temperature_k.powf(-3.5)
    }

    fn scattering_fraction(&self, _state: &GasState) -> f64 {
        0.0
    }

    fn temperature_range_k(&self) -> TemperatureRange {
        kramers_range()
    }
}

/// Kramers bound–free (photo-ionisation) absorption by metals:
/// κ_bf = 4.34e25 (g_bf / t) Z (1 + X) ρ T^−3.5 cm² g⁻¹, ρ in g cm⁻³, T in K
/// (Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9). Pure absorption
/// (scattering fraction 0).
///
/// `gaunt_bf` is the bound–free Gaunt factor (≈ 1) and `guillotine_t` the guillotine
/// factor, which corrects for ionisation of the absorbing electrons and is usually quoted
/// between 1 and 100. Valid in stellar interiors, roughly 10⁴ K ≲ T ≲ 10⁸ K.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KramersBoundFree {
    gaunt_bf: f64,
    guillotine_t: f64,
}

impl KramersBoundFree {
    /// Bound–free law with Gaunt factor `gaunt_bf` (> 0, usually ≈ 1) and guillotine factor
    /// `guillotine_t` (≥ 1, usually 1 to 100).
    ///
    /// # Errors
    /// [`OpacityError::InvalidGaunt`] unless `gaunt_bf` is finite and > 0;
    /// [`OpacityError::InvalidGuillotine`] unless `guillotine_t` is finite and ≥ 1.
    pub fn new(gaunt_bf: f64, guillotine_t: f64) -> Result<Self, OpacityError> {
        let gaunt_bf = check_gaunt("bound-free", gaunt_bf)?;
        if !(guillotine_t.is_finite() && guillotine_t >= 1.0) {
            return Err(OpacityError::InvalidGuillotine(guillotine_t));
        }
        Ok(Self {
            gaunt_bf,
            guillotine_t,
        })
    }

    /// The bound–free Gaunt factor (dimensionless).
    pub fn gaunt_bf(&self) -> f64 {
        self.gaunt_bf
    }

    /// The guillotine factor t (dimensionless).
    pub fn guillotine_t(&self) -> f64 {
        self.guillotine_t
    }
}

impl Default for KramersBoundFree {
    /// Gaunt factor 1, guillotine factor 1 (the largest bound–free opacity the law allows).
    fn default() -> Self {
        Self {
            gaunt_bf: 1.0,
            guillotine_t: 1.0,
        }
    }
}

impl OpacityLaw for KramersBoundFree {
    fn opacity_cm2_g(&self, state: &GasState) -> f64 {
        KRAMERS_BOUND_FREE_COEFFICIENT
            * (self.gaunt_bf / self.guillotine_t)
            * state.metals_z
            * (1.0 + state.hydrogen_x)
            * state.density_g_cm3
            * state.temperature_k.powf(-3.5)
    }

    fn scattering_fraction(&self, _state: &GasState) -> f64 {
        0.0
    }

    fn temperature_range_k(&self) -> TemperatureRange {
        kramers_range()
    }
}

/// Absorption by the negative hydrogen ion, the dominant opacity of cool stellar
/// atmospheres and envelopes:
/// κ_H⁻ = 2.5e−31 (Z / 0.02) ρ^½ T⁹ cm² g⁻¹, ρ in g cm⁻³, T in K
/// (Carroll & Ostlie 2007, *An Introduction to Modern Astrophysics*, eq. (9.28);
/// docs/references.md, Stellar structure 13). Pure
/// absorption (scattering fraction 0).
///
/// Valid only for roughly 3000 K ≲ T ≲ 6000 K and 10⁻¹⁰ ≲ ρ ≲ 10⁻⁵ g cm⁻³; the T⁹ growth
/// makes it absurdly large in hotter gas, so on its own it describes atmospheres only.
/// [`SmoothHMinusBlend`] caps it with the interior laws.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct HMinus;

impl OpacityLaw for HMinus {
    fn opacity_cm2_g(&self, state: &GasState) -> f64 {
        H_MINUS_COEFFICIENT
            * (state.metals_z / H_MINUS_REFERENCE_METALS_Z)
            * state.density_g_cm3.sqrt()
            * state.temperature_k.powi(9)
    }

    fn scattering_fraction(&self, _state: &GasState) -> f64 {
        0.0
    }

    fn temperature_range_k(&self) -> TemperatureRange {
        TemperatureRange {
            min_k: H_MINUS_MIN_TEMPERATURE_K,
            max_k: H_MINUS_MAX_TEMPERATURE_K,
        }
    }
}

/// The sum of several opacity laws, κ = Σ κᵢ (cm² g⁻¹): independent processes acting in
/// parallel, as in κ_es + κ_ff + κ_bf for an ionised interior.
///
/// The scattering fraction is the opacity-weighted mean Σ fᵢ κᵢ / Σ κᵢ (0 where the total
/// opacity is 0). Valid where every term is.
#[derive(Debug)]
pub struct SumOfLaws(Vec<Box<dyn OpacityLaw>>);

impl SumOfLaws {
    /// The sum of `laws`.
    ///
    /// # Errors
    /// [`OpacityError::EmptySum`] if `laws` is empty.
    pub fn new(laws: Vec<Box<dyn OpacityLaw>>) -> Result<Self, OpacityError> {
        if laws.is_empty() {
            return Err(OpacityError::EmptySum);
        }
        Ok(Self(laws))
    }

    /// The summed laws.
    pub fn laws(&self) -> &[Box<dyn OpacityLaw>] {
        &self.0
    }
}

impl OpacityLaw for SumOfLaws {
    fn opacity_cm2_g(&self, state: &GasState) -> f64 {
        self.0.iter().map(|law| law.opacity_cm2_g(state)).sum()
    }

    fn scattering_fraction(&self, state: &GasState) -> f64 {
        let (total, scattering) = self.0.iter().fold((0.0, 0.0), |(total, scattering), law| {
            let kappa = law.opacity_cm2_g(state);
            (
                total + kappa,
                scattering + kappa * law.scattering_fraction(state),
            )
        });
        if total > 0.0 { scattering / total } else { 0.0 }
    }

    /// The range common to all terms.
    fn temperature_range_k(&self) -> TemperatureRange {
        self.0
            .iter()
            .fold(TemperatureRange::UNLIMITED, |range, law| {
                range.intersect(law.temperature_range_k())
            })
    }
}

/// One opacity law from the photosphere to the centre of a star: the H⁻ law joined to the
/// ionised-interior laws by a harmonic combination,
///
/// κ = 1 / (1/κ_H⁻ + 1/(κ_es + κ_ff + κ_bf))   (cm² g⁻¹),
///
/// the form used for stellar-structure toy models, κ = κ_mol + 1/(1/κ_H⁻ + 1/(κ_e + κ_Kramers)),
/// here without the molecular term (Kippenhahn, Weigert & Weiss 2012, *Stellar Structure
/// and Evolution*, §17.5, as recalled; a rule of the trade, not a check value). The
/// component laws are those of Carroll & Ostlie,
/// *An Introduction to Modern Astrophysics*, ch. 9 ([`HMinus`], [`ElectronScattering`],
/// [`KramersFreeFree`], [`KramersBoundFree`]).
///
/// The smaller of κ_H⁻ and the interior sum dominates: H⁻ in cool gas (T ≲ 6000 K), the
/// interior laws in hot gas, where κ_H⁻ grows as T⁹. Below ≈ 3000 K molecules (not modelled)
/// would dominate, so the law is meant for T ≳ 3000 K. A smooth fit, not tabulated opacity:
/// expect order-of-magnitude accuracy near the junction (≈ 10⁴ K).
///
/// Scattering fraction: with κ_int = κ_es + κ_ff + κ_bf, the harmonic form satisfies
/// κ/κ_H⁻ + κ/κ_int = 1, which splits κ into an H⁻ share κ/κ_H⁻ (→ 1 in cool gas) and an
/// interior share κ/κ_int (→ 1 in hot gas). The H⁻ share is absorption; the interior share
/// scatters in the proportion κ_es/κ_int. The fraction is therefore
/// (κ/κ_int)(κ_es/κ_int). This split is a convention of this crate: the blend itself does
/// not define one.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct SmoothHMinusBlend {
    free_free: KramersFreeFree,
    bound_free: KramersBoundFree,
}

impl SmoothHMinusBlend {
    /// The blend with the given Kramers laws (electron scattering and H⁻ have no
    /// parameters).
    pub fn new(free_free: KramersFreeFree, bound_free: KramersBoundFree) -> Self {
        Self {
            free_free,
            bound_free,
        }
    }

    /// The interior opacities (κ_es, κ_ff + κ_bf) and κ_H⁻, cm² g⁻¹.
    fn parts(&self, state: &GasState) -> (f64, f64, f64) {
        (
            ElectronScattering.opacity_cm2_g(state),
            self.free_free.opacity_cm2_g(state) + self.bound_free.opacity_cm2_g(state),
            HMinus.opacity_cm2_g(state),
        )
    }
}

/// 1/(1/a + 1/b), with 0 and ∞ handled as limits (0 if either is 0, the other if one is ∞).
fn harmonic(a: f64, b: f64) -> f64 {
    1.0 / (1.0 / a + 1.0 / b)
}

impl OpacityLaw for SmoothHMinusBlend {
    fn opacity_cm2_g(&self, state: &GasState) -> f64 {
        let (es, kramers, h_minus) = self.parts(state);
        harmonic(h_minus, es + kramers)
    }

    fn scattering_fraction(&self, state: &GasState) -> f64 {
        let (es, kramers, h_minus) = self.parts(state);
        let interior = es + kramers;
        let kappa = harmonic(h_minus, interior);
        if kappa > 0.0 && interior > 0.0 {
            (kappa / interior) * (es / interior)
        } else {
            0.0
        }
    }

    /// From the H⁻ lower limit (3000 K) to the Kramers upper limit (10⁸ K).
    fn temperature_range_k(&self) -> TemperatureRange {
        TemperatureRange {
            min_k: H_MINUS_MIN_TEMPERATURE_K,
            max_k: KRAMERS_MAX_TEMPERATURE_K,
        }
    }
}

fn one() -> f64 {
    1.0
}

/// An opacity law as written in a model file (JSON), tagged by `"kind"`.
///
/// ```json
/// { "kind": "sum", "laws": [
///     { "kind": "electron_scattering" },
///     { "kind": "kramers_free_free", "gaunt": 1.0 },
///     { "kind": "kramers_bound_free", "gaunt": 1.0, "guillotine": 10.0 } ] }
/// ```
///
/// Unknown fields are rejected. [`OpacitySpec::build`] validates the numbers and returns
/// the law.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case")]
pub enum OpacitySpec {
    /// [`ConstantOpacity`]: `value_cm2_g` (cm² g⁻¹, ≥ 0) and `scattering_fraction`
    /// (0 ..= 1, default 1: a grey scatterer).
    Constant {
        /// Opacity, cm² g⁻¹.
        value_cm2_g: f64,
        /// Fraction of the opacity that is scattering; default 1.
        #[serde(default = "one")]
        scattering_fraction: f64,
    },
    /// [`ElectronScattering`], 0.2 (1 + X) cm² g⁻¹. (An empty struct variant, so that
    /// `deny_unknown_fields` applies to it.)
    ElectronScattering {},
    /// [`KramersFreeFree`] with Gaunt factor `gaunt` (default 1).
    KramersFreeFree {
        /// Free–free Gaunt factor g_ff; default 1.
        #[serde(default = "one")]
        gaunt: f64,
    },
    /// [`KramersBoundFree`] with Gaunt factor `gaunt` (default 1) and guillotine factor
    /// `guillotine` (default 1, the upper bound of the law; textbook values lie between 1
    /// and 100).
    KramersBoundFree {
        /// Bound–free Gaunt factor g_bf; default 1.
        #[serde(default = "one")]
        gaunt: f64,
        /// Guillotine factor t (≥ 1); default 1.
        #[serde(default = "one")]
        guillotine: f64,
    },
    /// [`HMinus`], 2.5e−31 (Z/0.02) ρ^½ T⁹ cm² g⁻¹ (≈ 3000–6000 K only). (An empty struct
    /// variant, so that `deny_unknown_fields` applies to it.)
    HMinus {},
    /// [`SumOfLaws`]: the sum of `laws` (at least one).
    Sum {
        /// The summed laws.
        laws: Vec<OpacitySpec>,
    },
    /// [`SmoothHMinusBlend`]: 1/(1/κ_H⁻ + 1/(κ_es + κ_ff + κ_bf)), with the Kramers
    /// parameters `gaunt_ff`, `gaunt_bf`, `guillotine` (each default 1).
    Smooth {
        /// Free–free Gaunt factor; default 1.
        #[serde(default = "one")]
        gaunt_ff: f64,
        /// Bound–free Gaunt factor; default 1.
        #[serde(default = "one")]
        gaunt_bf: f64,
        /// Guillotine factor t (≥ 1); default 1.
        #[serde(default = "one")]
        guillotine: f64,
    },
}

impl OpacitySpec {
    /// Validates the specification and builds the law.
    ///
    /// # Errors
    /// The first invalid parameter found, as an [`OpacityError`].
    pub fn build(&self) -> Result<Box<dyn OpacityLaw>, OpacityError> {
        Ok(match self {
            OpacitySpec::Constant {
                value_cm2_g,
                scattering_fraction,
            } => Box::new(ConstantOpacity::new(*value_cm2_g, *scattering_fraction)?),
            OpacitySpec::ElectronScattering {} => Box::new(ElectronScattering),
            OpacitySpec::KramersFreeFree { gaunt } => Box::new(KramersFreeFree::new(*gaunt)?),
            OpacitySpec::KramersBoundFree { gaunt, guillotine } => {
                Box::new(KramersBoundFree::new(*gaunt, *guillotine)?)
            }
            OpacitySpec::HMinus {} => Box::new(HMinus),
            OpacitySpec::Sum { laws } => Box::new(SumOfLaws::new(
                laws.iter()
                    .map(OpacitySpec::build)
                    .collect::<Result<Vec<_>, _>>()?,
            )?),
            OpacitySpec::Smooth {
                gaunt_ff,
                gaunt_bf,
                guillotine,
            } => Box::new(SmoothHMinusBlend::new(
                KramersFreeFree::new(*gaunt_ff)?,
                KramersBoundFree::new(*gaunt_bf, *guillotine)?,
            )),
        })
    }
}

impl OpacitySpec {
    /// Reads a law from a short name or from JSON, as a command line gives it:
    ///
    /// * JSON: `{"kind": "kramers_bound_free", "guillotine": 10}` (the model-file form);
    /// * a name: `electron_scattering` (or `es`), `kramers_free_free` (`ff`),
    ///   `kramers_bound_free` (`bf`), `kramers` (free–free + bound–free), `h_minus`,
    ///   `smooth`, or `constant:VALUE` (cm² g⁻¹, pure scattering);
    /// * a sum of names joined by `+`: `es+kramers` (electron scattering + Kramers free–free
    ///   + bound–free, Gaunt and guillotine factors 1).
    ///
    /// # Errors
    /// A message naming the part that was not understood.
    pub fn parse_short(text: &str) -> Result<Self, String> {
        let text = text.trim();
        if text.starts_with('{') {
            let spec: OpacitySpec =
                serde_json::from_str(text).map_err(|error| format!("{text}: {error}"))?;
            spec.build().map_err(|error| format!("{text}: {error}"))?;
            return Ok(spec);
        }
        let mut laws = Vec::new();
        for term in text.split('+') {
            let term = term.trim();
            match term {
                "electron_scattering" | "es" => laws.push(OpacitySpec::ElectronScattering {}),
                "kramers_free_free" | "ff" => {
                    laws.push(OpacitySpec::KramersFreeFree { gaunt: 1.0 })
                }
                "kramers_bound_free" | "bf" => laws.push(OpacitySpec::KramersBoundFree {
                    gaunt: 1.0,
                    guillotine: 1.0,
                }),
                "kramers" => {
                    laws.push(OpacitySpec::KramersFreeFree { gaunt: 1.0 });
                    laws.push(OpacitySpec::KramersBoundFree {
                        gaunt: 1.0,
                        guillotine: 1.0,
                    });
                }
                "h_minus" => laws.push(OpacitySpec::HMinus {}),
                "smooth" => laws.push(OpacitySpec::Smooth {
                    gaunt_ff: 1.0,
                    gaunt_bf: 1.0,
                    guillotine: 1.0,
                }),
                _ => match term.strip_prefix("constant:").map(str::parse::<f64>) {
                    Some(Ok(value)) => laws.push(OpacitySpec::Constant {
                        value_cm2_g: value,
                        scattering_fraction: 1.0,
                    }),
                    _ => {
                        return Err(format!(
                            "{term:?}: expected es, ff, bf, kramers, h_minus, smooth, \
                             constant:VALUE (joined with +), or a JSON law {{\"kind\": ...}}"
                        ));
                    }
                },
            }
        }
        let spec = if laws.len() == 1 {
            laws.pop().expect("one law")
        } else {
            OpacitySpec::Sum { laws }
        };
        spec.build().map_err(|error| format!("{text}: {error}"))?;
        Ok(spec)
    }
}

impl OpacitySpec {
    /// A short readable description of the law, e.g.
    /// "electron scattering + Kramers free-free (g = 1) + Kramers bound-free (g = 1, t = 10)".
    pub fn describe(&self) -> String {
        match self {
            OpacitySpec::Constant {
                value_cm2_g,
                scattering_fraction,
            } => {
                let value = if (1e-3..1e6).contains(&value_cm2_g.abs()) || *value_cm2_g == 0.0 {
                    format!("{value_cm2_g}")
                } else {
                    format!("{value_cm2_g:e}")
                };
                format!("constant {value} cm^2/g (scattering fraction {scattering_fraction})")
            }
            OpacitySpec::ElectronScattering {} => "electron scattering".to_string(),
            OpacitySpec::KramersFreeFree { gaunt } => format!("Kramers free-free (g = {gaunt})"),
            OpacitySpec::KramersBoundFree { gaunt, guillotine } => {
                format!("Kramers bound-free (g = {gaunt}, t = {guillotine})")
            }
            OpacitySpec::HMinus {} => "H-minus".to_string(),
            OpacitySpec::Sum { laws } => laws
                .iter()
                .map(OpacitySpec::describe)
                .collect::<Vec<_>>()
                .join(" + "),
            OpacitySpec::Smooth {
                gaunt_ff,
                gaunt_bf,
                guillotine,
            } => format!(
                "smooth H-minus / (electron scattering + Kramers) blend (g_ff = {gaunt_ff}, \
                 g_bf = {gaunt_bf}, t = {guillotine})"
            ),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn state(rho: f64, t: f64, x: f64, z: f64) -> GasState {
        GasState {
            density_g_cm3: rho,
            temperature_k: t,
            hydrogen_x: x,
            metals_z: z,
        }
    }

    // Three (ρ, T, X, Z) points. The expected values are the Carroll & Ostlie, *An
    // Introduction to Modern Astrophysics*, ch. 9 formulas evaluated by hand:
    //   electron scattering 0.2(1+X); free–free 3.68e22 g_ff (1−Z)(1+X) ρ T^−3.5;
    //   bound–free 4.34e25 (g_bf/t) Z(1+X) ρ T^−3.5; H⁻ 2.5e−31 (Z/0.02) ρ^½ T⁹
    //   (docs/references.md, Stellar structure 13).
    //
    // A: ρ = 0.1, T = 1e6 (T^−3.5 = 1e−21), X = 0.7, Z = 0.02
    //    es = 0.2·1.7 = 0.34
    //    ff = 3.68e22·0.98·1.7·0.1·1e−21 = 6.13088
    //    bf (g=1, t=1) = 4.34e25·0.02·1.7·0.1·1e−21 = 147.56
    // B: ρ = 100, T = 1e7 (T^−3.5 = 10^−24.5 = 3.16227766e−25), X = 0.5, Z = 0.01
    //    es = 0.2·1.5 = 0.3
    //    ff (g=1) = 3.68e22·0.99·1.5·100·3.16227766e−25 = 5.4648·0.316227766 = 1.728121
    //    bf (g=1, t=10) = 4.34e25·0.1·0.01·1.5·100·3.16227766e−25 = 6.51·0.316227766
    //       = 2.058643
    // C: ρ = 1e−6, T = 5000 (T⁹ = 1.953125e33), X = 0.7, Z = 0.02
    //    H⁻ = 2.5e−31·1·1e−3·1.953125e33 = 0.48828125
    //    With Z = 0.01 instead: half, 0.244140625.

    #[test]
    fn electron_scattering_matches_hand_values() {
        // Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9: electron
        // scattering 0.2(1+X).
        let law = ElectronScattering;
        assert_relative_eq!(
            law.opacity_cm2_g(&state(0.1, 1e6, 0.7, 0.02)),
            0.34,
            max_relative = 1e-12
        );
        assert_relative_eq!(
            law.opacity_cm2_g(&state(100.0, 1e7, 0.5, 0.01)),
            0.3,
            max_relative = 1e-12
        );
        assert_relative_eq!(
            law.opacity_cm2_g(&state(1e-6, 5e3, 0.0, 0.02)),
            0.2,
            max_relative = 1e-12
        );
        assert_eq!(law.scattering_fraction(&state(1.0, 1e7, 0.7, 0.02)), 1.0);
    }

    #[test]
    fn kramers_free_free_matches_hand_values() {
        // Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9: free–free (Kramers)
        // 3.68e22 g_ff (1−Z)(1+X) ρ T^−3.5.
        let law = KramersFreeFree::default();
        assert_relative_eq!(
            law.opacity_cm2_g(&state(0.1, 1e6, 0.7, 0.02)),
            6.13088,
            max_relative = 1e-12
        );
        assert_relative_eq!(
            law.opacity_cm2_g(&state(100.0, 1e7, 0.5, 0.01)),
            1.728_121,
            max_relative = 1e-6
        );
        // Gaunt factor scales linearly; ρ = 1e-6 at T = 1e4 (T^−3.5 = 1e−14), X = 0, Z = 0:
        // 3.68e22·2·1·1·1e−6·1e−14 = 736.
        let doubled = KramersFreeFree::new(2.0).unwrap();
        assert_relative_eq!(
            doubled.opacity_cm2_g(&state(1e-6, 1e4, 0.0, 0.0)),
            736.0,
            max_relative = 1e-12
        );
        assert_eq!(law.scattering_fraction(&state(1.0, 1e7, 0.7, 0.02)), 0.0);
    }

    #[test]
    fn kramers_bound_free_matches_hand_values() {
        // Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9: bound–free (Kramers)
        // 4.34e25 (g_bf/t) Z(1+X) ρ T^−3.5.
        let law = KramersBoundFree::default();
        assert_relative_eq!(
            law.opacity_cm2_g(&state(0.1, 1e6, 0.7, 0.02)),
            147.56,
            max_relative = 1e-12
        );
        let t10 = KramersBoundFree::new(1.0, 10.0).unwrap();
        assert_relative_eq!(
            t10.opacity_cm2_g(&state(100.0, 1e7, 0.5, 0.01)),
            2.058_643,
            max_relative = 1e-6
        );
        // Z = 0: no metals, no bound–free opacity.
        assert_eq!(law.opacity_cm2_g(&state(1.0, 1e6, 0.7, 0.0)), 0.0);
        assert_eq!(law.scattering_fraction(&state(1.0, 1e7, 0.7, 0.02)), 0.0);
    }

    #[test]
    fn h_minus_matches_hand_values() {
        // Carroll & Ostlie, *An Introduction to Modern Astrophysics*, ch. 9: H⁻
        // 2.5e−31 (Z/0.02) ρ^½ T⁹, valid for 3000–6000 K (eq. (9.28); docs/references.md,
        // Stellar structure 13).
        let law = HMinus;
        assert_relative_eq!(
            law.opacity_cm2_g(&state(1e-6, 5e3, 0.7, 0.02)),
            0.488_281_25,
            max_relative = 1e-12
        );
        assert_relative_eq!(
            law.opacity_cm2_g(&state(1e-6, 5e3, 0.7, 0.01)),
            0.244_140_625,
            max_relative = 1e-12
        );
        // ρ = 1e−8 (ρ^½ = 1e−4), T = 4000 (T⁹ = 2.62144e32): 2.5e−31·1e−4·2.62144e32 = 6.5536e−3.
        assert_relative_eq!(
            law.opacity_cm2_g(&state(1e-8, 4e3, 0.7, 0.02)),
            6.5536e-3,
            max_relative = 1e-12
        );
        assert_eq!(law.scattering_fraction(&state(1e-6, 5e3, 0.7, 0.02)), 0.0);
    }

    #[test]
    fn sum_adds_opacities_and_weights_scattering() {
        // Point A above: 0.34 + 6.13088 + 147.56 = 154.03088; scattering share 0.34/154.03088.
        let sum = SumOfLaws::new(vec![
            Box::new(ElectronScattering),
            Box::new(KramersFreeFree::default()),
            Box::new(KramersBoundFree::default()),
        ])
        .unwrap();
        let a = state(0.1, 1e6, 0.7, 0.02);
        assert_relative_eq!(sum.opacity_cm2_g(&a), 154.030_88, max_relative = 1e-12);
        assert_relative_eq!(
            sum.scattering_fraction(&a),
            0.34 / 154.030_88,
            max_relative = 1e-12
        );
        assert_eq!(SumOfLaws::new(vec![]).unwrap_err(), OpacityError::EmptySum);
    }

    #[test]
    fn smooth_blend_is_harmonic_and_picks_the_regime() {
        let blend = SmoothHMinusBlend::default();
        // Point C: κ_H⁻ = 0.48828125; interior: es = 0.34,
        // ff = 3.68e22·0.98·1.7·1e−6·5000^−3.5, bf = 4.34e25·0.02·1.7·1e−6·5000^−3.5
        // (5000^−3.5 = 1/(1.25e11·70.71067812) = 1.131370850e−13).
        let c = state(1e-6, 5e3, 0.7, 0.02);
        let t35 = 1.131_370_850e-13;
        let es = 0.34;
        let ff = 3.68e22 * 0.98 * 1.7 * 1e-6 * t35;
        let bf = 4.34e25 * 0.02 * 1.7 * 1e-6 * t35;
        let interior = es + ff + bf;
        let expected = 1.0 / (1.0 / 0.488_281_25 + 1.0 / interior);
        assert_relative_eq!(blend.opacity_cm2_g(&c), expected, max_relative = 1e-8);
        assert_relative_eq!(
            blend.scattering_fraction(&c),
            (expected / interior) * (es / interior),
            max_relative = 1e-8
        );
        // Cool gas: H⁻ dominates (interior ≈ 1.2e3 ≫ 0.49).
        assert!((blend.opacity_cm2_g(&c) / 0.488_281_25 - 1.0).abs() < 1e-3);
        // Hot interior (point B): interior laws dominate, κ_H⁻ is astronomically large.
        let b = state(100.0, 1e7, 0.5, 0.01);
        let interior_b = 0.3 + 1.728_121 + 4.34e25 * 0.01 * 1.5 * 100.0 * 3.162_277_66e-25;
        assert_relative_eq!(blend.opacity_cm2_g(&b), interior_b, max_relative = 1e-6);
        // Zero temperature: κ_H⁻ = 0, so κ = 0 (no NaN).
        assert_eq!(blend.opacity_cm2_g(&state(1.0, 0.0, 0.7, 0.02)), 0.0);
        assert_eq!(blend.scattering_fraction(&state(1.0, 0.0, 0.7, 0.02)), 0.0);
    }

    #[test]
    fn mean_free_path_is_one_over_kappa_rho() {
        let law = ConstantOpacity::new(0.4, 1.0).unwrap();
        let s = state(2.5, 1e7, 0.7, 0.02);
        assert_relative_eq!(law.mean_free_path_cm(&s), 1.0, max_relative = 1e-15);
    }

    #[test]
    fn spec_parses_builds_and_applies_defaults() {
        let json = r#"{ "kind": "sum", "laws": [
            { "kind": "electron_scattering" },
            { "kind": "kramers_free_free" },
            { "kind": "kramers_bound_free", "guillotine": 10.0 },
            { "kind": "h_minus" },
            { "kind": "constant", "value_cm2_g": 1.5 },
            { "kind": "smooth", "gaunt_ff": 1.0 } ] }"#;
        let spec: OpacitySpec = serde_json::from_str(json).unwrap();
        let OpacitySpec::Sum { laws } = &spec else {
            panic!("expected a sum");
        };
        assert_eq!(laws[1], OpacitySpec::KramersFreeFree { gaunt: 1.0 });
        assert_eq!(
            laws[2],
            OpacitySpec::KramersBoundFree {
                gaunt: 1.0,
                guillotine: 10.0
            }
        );
        assert_eq!(
            laws[4],
            OpacitySpec::Constant {
                value_cm2_g: 1.5,
                scattering_fraction: 1.0
            }
        );
        let law = spec.build().unwrap();
        let a = state(0.1, 1e6, 0.7, 0.02);
        assert!(law.opacity_cm2_g(&a) > 1.5);
    }

    #[test]
    fn spec_rejects_unknown_fields_and_kinds() {
        for json in [
            r#"{ "kind": "kramers_free_free", "gaunt": 1.0, "extra": 2 }"#,
            r#"{ "kind": "constant", "value": 1.0 }"#,
            r#"{ "kind": "electron_scattering", "x": 1 }"#,
            r#"{ "kind": "h_minus", "gaunt": 1 }"#,
            r#"{ "kind": "thomson" }"#,
            r#"{ "gaunt": 1.0 }"#,
        ] {
            assert!(serde_json::from_str::<OpacitySpec>(json).is_err(), "{json}");
        }
    }

    #[test]
    fn spec_validation_errors() {
        let bad = [
            (
                OpacitySpec::Constant {
                    value_cm2_g: -1.0,
                    scattering_fraction: 1.0,
                },
                OpacityError::InvalidConstant(-1.0),
            ),
            (
                OpacitySpec::Constant {
                    value_cm2_g: 1.0,
                    scattering_fraction: 1.5,
                },
                OpacityError::InvalidScatteringFraction(1.5),
            ),
            (
                OpacitySpec::KramersFreeFree { gaunt: 0.0 },
                OpacityError::InvalidGaunt {
                    which: "free-free",
                    value: 0.0,
                },
            ),
            (
                OpacitySpec::KramersBoundFree {
                    gaunt: 1.0,
                    guillotine: 0.5,
                },
                OpacityError::InvalidGuillotine(0.5),
            ),
            (OpacitySpec::Sum { laws: vec![] }, OpacityError::EmptySum),
        ];
        for (spec, error) in bad {
            assert_eq!(spec.build().unwrap_err(), error);
        }
        // NaN is rejected too (NaN != NaN, so match the variant).
        assert!(matches!(
            OpacitySpec::Smooth {
                gaunt_ff: f64::NAN,
                gaunt_bf: 1.0,
                guillotine: 1.0
            }
            .build(),
            Err(OpacityError::InvalidGaunt { .. })
        ));
        assert!(matches!(
            ConstantOpacity::new(f64::NAN, 1.0),
            Err(OpacityError::InvalidConstant(_))
        ));
        assert!(matches!(
            KramersBoundFree::new(1.0, f64::INFINITY),
            Err(OpacityError::InvalidGuillotine(_))
        ));
    }

    #[test]
    fn temperature_ranges_follow_the_documented_regimes() {
        let spec: OpacitySpec = serde_json::from_str(
            r#"{ "kind": "sum", "laws": [
                { "kind": "electron_scattering" },
                { "kind": "kramers_free_free" },
                { "kind": "kramers_bound_free" } ] }"#,
        )
        .unwrap();
        let range = spec.build().unwrap().temperature_range_k();
        assert_eq!(range.min_k, 1e4);
        assert_eq!(range.max_k, 1e8);
        assert!(range.contains(1e6) && !range.contains(5e3));
        let blend = SmoothHMinusBlend::default().temperature_range_k();
        assert_eq!((blend.min_k, blend.max_k), (3000.0, 1e8));
        let h = HMinus.temperature_range_k();
        assert_eq!((h.min_k, h.max_k), (3000.0, 6000.0));
        let constant = ConstantOpacity::new(1.0, 1.0)
            .unwrap()
            .temperature_range_k();
        assert_eq!(constant, TemperatureRange::UNLIMITED);
        assert_eq!(
            spec.describe(),
            "electron scattering + Kramers free-free (g = 1) + Kramers bound-free (g = 1, t = 1)"
        );
        let tiny = OpacitySpec::Constant {
            value_cm2_g: 4.7e-11,
            scattering_fraction: 1.0,
        };
        assert_eq!(
            tiny.describe(),
            "constant 4.7e-11 cm^2/g (scattering fraction 1)"
        );
    }

    #[test]
    fn short_names_parse() {
        assert_eq!(
            OpacitySpec::parse_short("es").unwrap(),
            OpacitySpec::ElectronScattering {}
        );
        let OpacitySpec::Sum { laws } = OpacitySpec::parse_short("es+kramers").unwrap() else {
            panic!("a sum");
        };
        assert_eq!(laws.len(), 3);
        assert_eq!(
            OpacitySpec::parse_short("constant:0.4").unwrap(),
            OpacitySpec::Constant {
                value_cm2_g: 0.4,
                scattering_fraction: 1.0
            }
        );
        assert_eq!(
            OpacitySpec::parse_short(r#"{"kind": "kramers_bound_free", "guillotine": 10}"#)
                .unwrap(),
            OpacitySpec::KramersBoundFree {
                gaunt: 1.0,
                guillotine: 10.0
            }
        );
        assert!(OpacitySpec::parse_short("thomson").is_err());
        assert!(OpacitySpec::parse_short("constant:-1").is_err());
        assert!(
            OpacitySpec::parse_short(r#"{"kind": "kramers_bound_free", "guillotine": 0.5}"#)
                .is_err()
        );
    }
}
