//! Radiative and convective zones of a stellar model: the Schwarzschild criterion on its
//! radial structure, and a mixing-length estimate of how fast convection crosses a zone.
//!
//! At every row of the structure ([`RadialStructure`]):
//!
//! * the pressure of fully ionised ideal gas plus radiation, P = ρ k T / (μ m_u) + a T⁴ / 3,
//!   with μ = 1 / (2X + 3Y/4 + Z/2) and the gas fraction β = P_gas / P;
//! * the radiative gradient, the d ln T / d ln P that radiative diffusion alone needs to
//!   carry the local luminosity,
//!   ∇_rad = 3 κ L P / (16 π a c G m T⁴) (Kippenhahn, Weigert & Weiss 2012, *Stellar
//!   Structure and Evolution*, ch. 5; docs/references.md, Stellar structure 2), with
//!   L/m → ε at the centre;
//! * the adiabatic gradient of ideal monatomic gas with radiation,
//!   ∇_ad = (8 − 6β) / (32 − 24β − 3β²): from the first law with u = (3/2) P_gas/ρ + aT⁴/ρ
//!   at constant entropy (the form (1 + (1−β)(4+β)/β²) / (5/2 + 4(1−β)(4+β)/β²) of KWW ch. 13,
//!   as recalled; the form used is derived here and checked against a numerical adiabat);
//!   2/5 for β = 1, 1/4 for β → 0;
//! * the model's own gradient ∇ = d ln T / d ln P, by differences between neighbouring rows
//!   (centred inside, one-sided at the ends).
//!
//! A row is convective where ∇_rad > ∇_ad (the Schwarzschild criterion; composition
//! gradients are ignored), radiative otherwise; a zone boundary lies where ∇_rad − ∇_ad
//! changes sign, interpolated linearly between the two rows. Zones need L(r), so a model
//! without energy generation has none.
//!
//! The criterion asks whether radiation *could* carry the model's luminosity with the
//! model's temperature and opacity. A polytrope's own gradient ∇ is fixed by its index
//! (1/(n + 1)), not by this balance, so for a polytrope the zones say where a real star of
//! that structure would convect, not what the polytrope does.
//!
//! **Crossing a convective zone.** Efficient convection in mixing-length theory carries
//! the flux F = L / (4π r²) with F = 4 ρ c_p T v³ / (g δ ℓ) (KWW ch. 7: the mixing-length
//! speed and convective flux with ∇ − ∇_ad eliminated; docs/references.md, Stellar
//! structure 2); for a monatomic ideal gas (δ = 1, c_p T = 5P / (2ρ), and
//! g H_P = P/ρ) with ℓ = α H_P this is v = (α F / (10 ρ))^(1/3). The speed is capped at the
//! adiabatic sound speed √(5P / (3ρ)) (the estimate fails near the surface, where
//! convection is inefficient). The crossing time is ∫ dr / v over the zone, with
//! α = [`MIXING_LENGTH_ALPHA`].

use serde::Serialize;

use crate::medium::profile::{RadialStructure, StructureRow};
use crate::units::{
    ATOMIC_MASS_UNIT_G, BOLTZMANN_ERG_K, GRAVITATIONAL_CONSTANT_CGS, RADIATION_CONSTANT_CGS,
    SPEED_OF_LIGHT_CM_S,
};

/// Mixing-length parameter α = ℓ / H_P used for convective crossing times (solar-calibrated
/// models use about 1.6–2.2; common practice).
pub const MIXING_LENGTH_ALPHA: f64 = 1.8;

/// The adiabatic gradient ∇_ad = (8 − 6β) / (32 − 24β − 3β²) of fully ionised ideal gas
/// mixed with radiation, β = P_gas / P (dimensionless; 2/5 at β = 1).
pub fn adiabatic_gradient(beta: f64) -> f64 {
    (8.0 - 6.0 * beta) / (32.0 - 24.0 * beta - 3.0 * beta * beta)
}

/// Mean molecular weight of fully ionised gas, μ = 1 / (2X + 3Y/4 + Z/2).
pub fn mean_molecular_weight(hydrogen_x: f64, metals_z: f64) -> f64 {
    let helium = (1.0 - hydrogen_x - metals_z).max(0.0);
    1.0 / (2.0 * hydrogen_x + 0.75 * helium + 0.5 * metals_z)
}

/// Total pressure P = ρ k T / (μ m_u) + a T⁴ / 3 (dyn cm⁻²) and β = P_gas / P.
pub fn pressure_and_beta(density_g_cm3: f64, temperature_k: f64, mu: f64) -> (f64, f64) {
    let gas = density_g_cm3 * BOLTZMANN_ERG_K * temperature_k / (mu * ATOMIC_MASS_UNIT_G);
    let radiation = RADIATION_CONSTANT_CGS * temperature_k.powi(4) / 3.0;
    let total = gas + radiation;
    (total, if total > 0.0 { gas / total } else { 1.0 })
}

/// The gradients at one row of the structure.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct GradientRow {
    /// Radius, cm.
    pub radius_cm: f64,
    /// Total pressure (ideal gas + radiation), dyn cm⁻².
    pub pressure_dyn_cm2: f64,
    /// Gas-pressure fraction β = P_gas / P.
    pub beta: f64,
    /// Radiative gradient 3κLP / (16πacGmT⁴) (None without L(r) or where T = 0).
    pub nabla_rad: Option<f64>,
    /// Adiabatic gradient (8 − 6β) / (32 − 24β − 3β²).
    pub nabla_ad: f64,
    /// The model's own d ln T / d ln P (None where T or P is 0).
    pub nabla: Option<f64>,
}

/// ∇_rad at a row (None where T = 0 or m = L = 0 without ε).
fn radiative_gradient(row: &StructureRow, pressure: f64) -> Option<f64> {
    let t = row.temperature_k?;
    let luminosity = row.luminosity_erg_s?;
    if t <= 0.0 {
        return None;
    }
    let l_over_m = if row.mass_g > 0.0 {
        luminosity / row.mass_g
    } else {
        row.energy_generation_erg_g_s?
    };
    Some(
        3.0 * row.opacity_cm2_g * l_over_m * pressure
            / (16.0
                * std::f64::consts::PI
                * RADIATION_CONSTANT_CGS
                * SPEED_OF_LIGHT_CM_S
                * GRAVITATIONAL_CONSTANT_CGS
                * t.powi(4)),
    )
}

/// The gradients at every row of `structure`; None unless every row has a temperature and
/// a composition.
pub fn gradients(structure: &RadialStructure) -> Option<Vec<GradientRow>> {
    if !structure.has_temperature_and_composition() {
        return None;
    }
    let rows = structure.rows();
    let state: Vec<(f64, f64)> = rows
        .iter()
        .map(|row| {
            let mu = mean_molecular_weight(row.hydrogen_x.unwrap(), row.metals_z.unwrap());
            pressure_and_beta(row.density_g_cm3, row.temperature_k.unwrap(), mu)
        })
        .collect();
    let logs = |k: usize| {
        let t = rows[k].temperature_k.unwrap();
        let p = state[k].0;
        (t > 0.0 && p > 0.0).then(|| (t.ln(), p.ln()))
    };
    Some(
        (0..rows.len())
            .map(|k| {
                let (pressure, beta) = state[k];
                let (lo, hi) = (k.saturating_sub(1), (k + 1).min(rows.len() - 1));
                let nabla = match (logs(lo), logs(hi)) {
                    (Some((t0, p0)), Some((t1, p1))) if p1 != p0 => Some((t1 - t0) / (p1 - p0)),
                    _ => None,
                };
                GradientRow {
                    radius_cm: rows[k].radius_cm,
                    pressure_dyn_cm2: pressure,
                    beta,
                    nabla_rad: radiative_gradient(&rows[k], pressure),
                    nabla_ad: adiabatic_gradient(beta),
                    nabla,
                }
            })
            .collect(),
    )
}

/// Radiative or convective.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ZoneKind {
    /// ∇_rad ≤ ∇_ad: radiative diffusion carries the luminosity.
    Radiative,
    /// ∇_rad > ∇_ad: the layer is unstable to convection (Schwarzschild).
    Convective,
}

impl ZoneKind {
    /// "radiative" or "convective".
    pub fn name(self) -> &'static str {
        match self {
            ZoneKind::Radiative => "radiative",
            ZoneKind::Convective => "convective",
        }
    }
}

/// A zone: a range of radii of one kind.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Zone {
    /// Inner radius, cm.
    pub inner_radius_cm: f64,
    /// Outer radius, cm.
    pub outer_radius_cm: f64,
    /// Radiative or convective.
    pub kind: ZoneKind,
}

/// The zones of `structure` from its gradients (innermost first, covering the structure from
/// its first to its last row); empty where ∇_rad is known nowhere (no L(r)).
pub fn zones(structure: &RadialStructure, gradients: &[GradientRow]) -> Vec<Zone> {
    let excess: Vec<Option<f64>> = gradients
        .iter()
        .map(|g| g.nabla_rad.map(|n| n - g.nabla_ad))
        .collect();
    if excess.iter().all(Option::is_none) {
        return Vec::new();
    }
    let kind_of = |x: f64| {
        if x > 0.0 {
            ZoneKind::Convective
        } else {
            ZoneKind::Radiative
        }
    };
    let rows = structure.rows();
    let mut zones: Vec<Zone> = Vec::new();
    let mut previous: Option<(f64, f64)> = None;
    for (k, value) in excess.iter().enumerate() {
        let Some(x) = *value else { continue };
        let radius = rows[k].radius_cm;
        match (zones.last_mut(), previous) {
            (None, _) => zones.push(Zone {
                inner_radius_cm: rows[0].radius_cm,
                outer_radius_cm: radius,
                kind: kind_of(x),
            }),
            (Some(zone), Some((r0, x0))) if kind_of(x) != zone.kind => {
                let boundary = r0 + (radius - r0) * x0 / (x0 - x);
                zone.outer_radius_cm = boundary;
                zones.push(Zone {
                    inner_radius_cm: boundary,
                    outer_radius_cm: radius,
                    kind: kind_of(x),
                });
            }
            (Some(zone), _) => zone.outer_radius_cm = radius,
        }
        previous = Some((radius, x));
    }
    if let Some(last) = zones.last_mut() {
        last.outer_radius_cm = structure.outer_radius_cm();
    }
    zones
}

/// Largest mass fraction that may lie above the outermost convective zone for it to count as
/// an *outer* (envelope) convective zone: the radiative layers above it are then an
/// atmosphere (at most 1 % of the mass), not a radiative envelope over a convective core.
pub const ATMOSPHERE_MASS_FRACTION: f64 = 0.01;

/// The inner radius of the outer convective zone, cm: the outermost convective zone, if at
/// most [`ATMOSPHERE_MASS_FRACTION`] of the mass lies above it (a thin radiative atmosphere
/// may). 0 for a star convective from the centre to its atmosphere; None if there is no such
/// zone.
pub fn outer_convective_base_cm(structure: &RadialStructure, zones: &[Zone]) -> Option<f64> {
    let outermost = zones
        .iter()
        .rev()
        .find(|z| z.kind == ZoneKind::Convective)?;
    let total = structure.mass_g();
    let above = total - structure.mass_at(outermost.outer_radius_cm);
    (above <= ATMOSPHERE_MASS_FRACTION * total).then_some(outermost.inner_radius_cm)
}

/// Convective speed of the mixing-length estimate at a point, cm s⁻¹: (α F / (10 ρ))^(1/3)
/// with F = L / (4π r²), capped at the sound speed √(5P / (3ρ)).
pub fn convective_speed_cm_s(row: &StructureRow, pressure_dyn_cm2: f64, alpha: f64) -> f64 {
    let luminosity = row.luminosity_erg_s.unwrap_or(0.0);
    let flux = luminosity / (4.0 * std::f64::consts::PI * row.radius_cm * row.radius_cm);
    let rho = row.density_g_cm3;
    let mixing = (alpha * flux / (10.0 * rho)).cbrt();
    let sound = (5.0 * pressure_dyn_cm2 / (3.0 * rho)).sqrt();
    mixing.min(sound)
}

/// The time convection takes to cross from `inner_cm` to `outer_cm`, ∫ dr / v with the
/// mixing-length speed [`convective_speed_cm_s`] at the midpoint of each piece between rows
/// (and the boundaries), s. None without L(r), temperature or composition.
pub fn convective_crossing_time_s(
    structure: &RadialStructure,
    inner_cm: f64,
    outer_cm: f64,
    alpha: f64,
) -> Option<f64> {
    if !(structure.has_energy_generation() && structure.has_temperature_and_composition()) {
        return None;
    }
    let mut edges: Vec<f64> = vec![inner_cm];
    edges.extend(
        structure
            .rows()
            .iter()
            .map(|r| r.radius_cm)
            .filter(|&r| r > inner_cm && r < outer_cm),
    );
    edges.push(outer_cm);
    let mut time = 0.0;
    for pair in edges.windows(2) {
        let mid = 0.5 * (pair[0] + pair[1]);
        let row = structure.at(mid);
        let t = row.temperature_k?;
        let mu = mean_molecular_weight(row.hydrogen_x?, row.metals_z?);
        let (pressure, _) = pressure_and_beta(row.density_g_cm3, t, mu);
        let speed = convective_speed_cm_s(&row, pressure, alpha);
        if speed > 0.0 && speed.is_finite() {
            time += (pair[1] - pair[0]) / speed;
        } else {
            return None;
        }
    }
    Some(time)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn adiabatic_gradient_limits() {
        // Monatomic ideal gas 2/5, radiation 1/4 (Chandrasekhar 1939).
        assert!((adiabatic_gradient(1.0) - 0.4).abs() < 1e-15);
        assert!((adiabatic_gradient(0.0) - 0.25).abs() < 1e-15);
        // Monotone in between.
        let mut previous = adiabatic_gradient(0.0);
        for k in 1..=100 {
            let value = adiabatic_gradient(k as f64 / 100.0);
            assert!(value > previous);
            previous = value;
        }
    }

    #[test]
    fn adiabatic_gradient_matches_a_numerical_adiabat() {
        // Independent check: the entropy per gram of ideal monatomic gas plus radiation,
        // s = (k/μm_u)((3/2) ln T + ln V) + (4/3) a T³ V (V = 1/ρ), held fixed while T
        // changes by a small factor; d ln T / d ln P from the two states.
        let mu: f64 = 0.6;
        let gas = BOLTZMANN_ERG_K / (mu * ATOMIC_MASS_UNIT_G);
        let a = RADIATION_CONSTANT_CGS;
        let entropy =
            |t: f64, v: f64| gas * (1.5 * t.ln() + v.ln()) + 4.0 / 3.0 * a * t.powi(3) * v;
        let pressure = |t: f64, v: f64| gas * t / v + a * t.powi(4) / 3.0;
        for (rho, t) in [(1.0, 1e7), (1e-3, 1e7), (1e-6, 1e7), (1e-2, 3e7)] {
            let (v0, t0) = (1.0 / rho, t);
            let s0 = entropy(t0, v0);
            let t1 = t0 * (1.0 + 1e-6);
            // s increases with V: bisect for the V that keeps s.
            let (mut lo, mut hi) = (v0 * 0.5, v0 * 1.5);
            for _ in 0..200 {
                let mid = 0.5 * (lo + hi);
                if entropy(t1, mid) < s0 {
                    lo = mid
                } else {
                    hi = mid
                }
            }
            let v1 = 0.5 * (lo + hi);
            let numeric = (t1 / t0).ln() / (pressure(t1, v1) / pressure(t0, v0)).ln();
            let (_, beta) = pressure_and_beta(rho, t, mu);
            let formula = adiabatic_gradient(beta);
            assert!(
                (numeric / formula - 1.0).abs() < 1e-5,
                "β = {beta}: {numeric} vs {formula}"
            );
        }
    }

    #[test]
    fn pressure_splits_into_gas_and_radiation() {
        let (p, beta) = pressure_and_beta(1.0, 1e7, 0.6);
        let gas = BOLTZMANN_ERG_K * 1e7 / (0.6 * ATOMIC_MASS_UNIT_G);
        assert!((beta * p / gas - 1.0).abs() < 1e-14);
        let radiation = RADIATION_CONSTANT_CGS * 1e28 / 3.0;
        assert!(((1.0 - beta) * p / radiation - 1.0).abs() < 1e-9);
    }
}
