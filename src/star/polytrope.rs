//! Polytropic stars: a Lane–Emden solution scaled to a mass and a radius, with density,
//! pressure and temperature profiles in cgs units.
//!
//! With r = α ξ and ρ = ρc θⁿ (Chandrasekhar 1939, *An Introduction to the Study of Stellar
//! Structure*, ch. IV):
//!
//! - α = R / ξ₁ (cm), ρ̄ = 3M / (4πR³), ρc = ρ̄ · (ρc/ρ̄) with ρc/ρ̄ = ξ₁ / (3(−θ′(ξ₁)));
//! - the mass–radius relation α² = (n + 1) K ρc^(1/n − 1) / (4πG) fixes the polytropic
//!   constant K of P = K ρ^(1 + 1/n); equivalently P = Pc θ^(n+1) with
//!   Pc = 4πG α² ρc² / (n + 1) (dyn cm⁻²), which also holds for n = 0;
//! - m(r) = 4π α³ ρc (−ξ² θ′(ξ)) = M (−ξ²θ′) / (−ξ₁²θ′(ξ₁)).
//!
//! Temperature: ideal gas of fully ionised matter, P_gas = ρ k_B T / (μ m_u) with
//! μ = 1 / (2X + 3Y/4 + Z/2), Y = 1 − X − Z. With [`PressureModel::IdealGas`] all the
//! pressure is gas pressure. With [`PressureModel::EddingtonStandardModel`] (n = 3 only) a
//! constant fraction 1 − β of P is radiation pressure aT⁴/3 (Eddington's standard model),
//! β solving Eddington's quartic 1 − β = C μ⁴ β⁴ (M/M☉)² (see [`eddington_coefficient`]);
//! then T = β μ m_u P / (k_B ρ). Either way T = Tc θ.
//!
//! ```
//! use sojourn::star::{Composition, LaneEmdenSolution, Polytrope, PressureModel};
//! use sojourn::units::{SOLAR_MASS_G, SOLAR_RADIUS_CM};
//!
//! let sun = Polytrope::new(
//!     LaneEmdenSolution::solve(3.0).unwrap(),
//!     SOLAR_MASS_G,
//!     SOLAR_RADIUS_CM,
//!     Composition::new(0.7, 0.02).unwrap(),
//!     PressureModel::IdealGas,
//! )
//! .unwrap();
//! // ρc = 54.18 ρ̄ ≈ 76 g/cm³ for an n = 3 Sun.
//! assert!((sun.central_density_g_cm3() - 76.0).abs() < 1.0);
//! let profile = sun.profile(200);
//! assert_eq!(profile.len(), 200);
//! assert_eq!(profile[199].radius_cm, SOLAR_RADIUS_CM);
//! ```

use serde::{Deserialize, Serialize};
use thiserror::Error;

use super::lane_emden::LaneEmdenSolution;
use crate::opacity::GasState;
use crate::units::{
    ATOMIC_MASS_UNIT_G, BOLTZMANN_ERG_K, GRAVITATIONAL_CONSTANT_CGS, RADIATION_CONSTANT_CGS,
    SOLAR_MASS_G,
};

/// Errors from building a polytrope.
#[derive(Debug, Clone, PartialEq, Error)]
#[non_exhaustive]
pub enum PolytropeError {
    /// The mass must be finite and positive (g).
    #[error("mass must be finite and > 0 g, got {0}")]
    InvalidMass(f64),
    /// The radius must be finite and positive (cm).
    #[error("radius must be finite and > 0 cm, got {0}")]
    InvalidRadius(f64),
    /// X and Z must lie in 0 ..= 1 with X + Z ≤ 1.
    #[error(
        "composition needs 0 <= X, 0 <= Z and X + Z <= 1, got X = {hydrogen_x}, Z = {metals_z}"
    )]
    InvalidComposition {
        /// Hydrogen mass fraction given.
        hydrogen_x: f64,
        /// Metal mass fraction given.
        metals_z: f64,
    },
    /// The mean molecular weight must be finite and positive.
    #[error("mean molecular weight must be finite and > 0, got {0}")]
    InvalidMeanMolecularWeight(f64),
    /// The mass parameter −ξ₁²θ′(ξ₁) must be finite and positive.
    #[error("Lane-Emden mass parameter must be finite and > 0, got {0}")]
    InvalidMassParameter(f64),
    /// Eddington's standard model is an n = 3 polytrope.
    #[error("the Eddington standard model needs polytropic index 3, got {0}")]
    EddingtonNeedsIndexThree(f64),
}

/// Chemical composition by mass fraction: hydrogen X, metals Z, helium Y = 1 − X − Z.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Composition {
    hydrogen_x: f64,
    metals_z: f64,
}

impl Composition {
    /// A composition with hydrogen fraction `hydrogen_x` and metal fraction `metals_z`.
    ///
    /// # Errors
    /// [`PolytropeError::InvalidComposition`] unless 0 ≤ X, 0 ≤ Z and X + Z ≤ 1 (NaN
    /// rejected).
    pub fn new(hydrogen_x: f64, metals_z: f64) -> Result<Self, PolytropeError> {
        let in_unit = |v: f64| (0.0..=1.0).contains(&v);
        if in_unit(hydrogen_x) && in_unit(metals_z) && hydrogen_x + metals_z <= 1.0 {
            Ok(Self {
                hydrogen_x,
                metals_z,
            })
        } else {
            Err(PolytropeError::InvalidComposition {
                hydrogen_x,
                metals_z,
            })
        }
    }

    /// Hydrogen mass fraction X.
    pub fn hydrogen_x(&self) -> f64 {
        self.hydrogen_x
    }

    /// Metal mass fraction Z.
    pub fn metals_z(&self) -> f64 {
        self.metals_z
    }

    /// Helium mass fraction Y = 1 − X − Z.
    pub fn helium_y(&self) -> f64 {
        (1.0 - self.hydrogen_x - self.metals_z).max(0.0)
    }

    /// Mean molecular weight of fully ionised gas, μ = 1 / (2X + 3Y/4 + Z/2)
    /// (dimensionless; mean particle mass in units of m_u). Metals are counted as giving
    /// about A/2 electrons per nucleus of mass A (the usual approximation).
    pub fn mean_molecular_weight(&self) -> f64 {
        1.0 / (2.0 * self.hydrogen_x + 0.75 * self.helium_y() + 0.5 * self.metals_z)
    }
}

/// How the pressure of the polytrope is split between gas and radiation.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PressureModel {
    /// All pressure is ideal-gas pressure (β = 1).
    #[default]
    IdealGas,
    /// Eddington's standard model (n = 3 only): a constant fraction 1 − β of the pressure
    /// is radiation pressure, β from Eddington's quartic.
    EddingtonStandardModel,
}

/// One point of a polytrope's profile, cgs.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ProfilePoint {
    /// Distance from the centre, cm.
    pub radius_cm: f64,
    /// Density, g cm⁻³.
    pub density_g_cm3: f64,
    /// Temperature, K.
    pub temperature_k: f64,
    /// Total pressure (gas plus radiation), dyn cm⁻².
    pub pressure_dyn_cm2: f64,
    /// Mass inside `radius_cm`, g.
    pub mass_g: f64,
}

/// The Eddington-quartic coefficient C in 1 − β = C μ⁴ β⁴ (M/M☉)², dimensionless.
///
/// From P = K ρ^(4/3) with P_gas = β P = ρ k_B T/(μ m_u) and P_rad = (1 − β) P = aT⁴/3,
/// K³ = 3 (1 − β) k_B⁴ / (a μ⁴ m_u⁴ β⁴); the n = 3 mass relation
/// M = 4π (K/(πG))^(3/2) ω₃ gives K³ = π G³ M² / (16 ω₃²). Equating,
/// C = a π G³ M☉² m_u⁴ / (48 ω₃² k_B⁴), where ω₃ = −ξ₁²θ′(ξ₁) of the n = 3 solution
/// (2.01824; Chandrasekhar 1939). With the constants of [`crate::units`] C ≈ 0.00299; the
/// usual textbook form quotes ≈ 0.003 (as recalled; C itself is derived here from the
/// constants and ω₃, docs/references.md, Stellar structure 3).
pub fn eddington_coefficient(omega_3: f64) -> f64 {
    let g = GRAVITATIONAL_CONSTANT_CGS;
    let m_over_k = ATOMIC_MASS_UNIT_G / BOLTZMANN_ERG_K;
    RADIATION_CONSTANT_CGS
        * std::f64::consts::PI
        * g
        * g
        * g
        * SOLAR_MASS_G
        * SOLAR_MASS_G
        * m_over_k.powi(4)
        / (48.0 * omega_3 * omega_3)
}

/// The gas-pressure fraction β of Eddington's standard model: the root in (0, 1) of
/// 1 − β = C μ⁴ β⁴ (M/M☉)² ([`eddington_coefficient`]), for mass `mass_g` (g), mean
/// molecular weight `mean_molecular_weight` and n = 3 mass parameter `omega_3`
/// (−ξ₁²θ′(ξ₁), e.g. [`LaneEmdenSolution::mass_parameter`]).
///
/// The quartic's left side falls and its right side rises on [0, 1], so the root is
/// unique; Newton's method from β = 1 converges to it monotonically (the function is
/// concave), and is run to machine precision.
///
/// # Errors
/// [`PolytropeError::InvalidMass`], [`PolytropeError::InvalidMeanMolecularWeight`] or
/// [`PolytropeError::InvalidMassParameter`] for non-finite or non-positive inputs.
pub fn eddington_beta(
    mass_g: f64,
    mean_molecular_weight: f64,
    omega_3: f64,
) -> Result<f64, PolytropeError> {
    if !(mass_g.is_finite() && mass_g > 0.0) {
        return Err(PolytropeError::InvalidMass(mass_g));
    }
    if !(mean_molecular_weight.is_finite() && mean_molecular_weight > 0.0) {
        return Err(PolytropeError::InvalidMeanMolecularWeight(
            mean_molecular_weight,
        ));
    }
    if !(omega_3.is_finite() && omega_3 > 0.0) {
        return Err(PolytropeError::InvalidMassParameter(omega_3));
    }
    let m = mass_g / SOLAR_MASS_G;
    let c = eddington_coefficient(omega_3) * mean_molecular_weight.powi(4) * m * m;
    // f(β) = 1 − β − c β⁴: f(0) = 1 > 0, f(1) = −c < 0, f′ < 0, f″ ≤ 0.
    let mut beta: f64 = 1.0;
    for _ in 0..200 {
        let f = 1.0 - beta - c * beta.powi(4);
        let df = -1.0 - 4.0 * c * beta.powi(3);
        let next = (beta - f / df).clamp(0.0, 1.0);
        if (next - beta).abs() <= 1e-16 * beta.max(f64::MIN_POSITIVE) {
            return Ok(next);
        }
        beta = next;
    }
    Ok(beta)
}

/// A polytropic star of index n, mass M and radius R: a [`LaneEmdenSolution`] scaled to cgs.
#[derive(Debug, Clone, PartialEq)]
pub struct Polytrope {
    solution: LaneEmdenSolution,
    mass_g: f64,
    radius_cm: f64,
    composition: Composition,
    pressure_model: PressureModel,
    mean_molecular_weight: f64,
    beta: f64,
    length_scale_cm: f64,
    central_density_g_cm3: f64,
    central_pressure_dyn_cm2: f64,
    central_temperature_k: f64,
}

impl Polytrope {
    /// Scales `solution` to mass `mass_g` (g) and radius `radius_cm` (cm) with the given
    /// composition and pressure model.
    ///
    /// # Errors
    /// [`PolytropeError::InvalidMass`] / [`PolytropeError::InvalidRadius`] unless finite and
    /// positive; [`PolytropeError::EddingtonNeedsIndexThree`] for
    /// [`PressureModel::EddingtonStandardModel`] with n ≠ 3.
    pub fn new(
        solution: LaneEmdenSolution,
        mass_g: f64,
        radius_cm: f64,
        composition: Composition,
        pressure_model: PressureModel,
    ) -> Result<Self, PolytropeError> {
        if !(mass_g.is_finite() && mass_g > 0.0) {
            return Err(PolytropeError::InvalidMass(mass_g));
        }
        if !(radius_cm.is_finite() && radius_cm > 0.0) {
            return Err(PolytropeError::InvalidRadius(radius_cm));
        }
        let n = solution.index();
        let mu = composition.mean_molecular_weight();
        let beta = match pressure_model {
            PressureModel::IdealGas => 1.0,
            PressureModel::EddingtonStandardModel => {
                if (n - 3.0).abs() > 1e-12 {
                    return Err(PolytropeError::EddingtonNeedsIndexThree(n));
                }
                eddington_beta(mass_g, mu, solution.mass_parameter())?
            }
        };
        let length_scale_cm = radius_cm / solution.xi1();
        let mean_density = 3.0 * mass_g / (4.0 * std::f64::consts::PI * radius_cm.powi(3));
        let central_density_g_cm3 = mean_density * solution.central_to_mean_density();
        let central_pressure_dyn_cm2 = 4.0
            * std::f64::consts::PI
            * GRAVITATIONAL_CONSTANT_CGS
            * length_scale_cm
            * length_scale_cm
            * central_density_g_cm3
            * central_density_g_cm3
            / (n + 1.0);
        let central_temperature_k = beta * mu * ATOMIC_MASS_UNIT_G * central_pressure_dyn_cm2
            / (BOLTZMANN_ERG_K * central_density_g_cm3);
        Ok(Self {
            solution,
            mass_g,
            radius_cm,
            composition,
            pressure_model,
            mean_molecular_weight: mu,
            beta,
            length_scale_cm,
            central_density_g_cm3,
            central_pressure_dyn_cm2,
            central_temperature_k,
        })
    }

    /// The polytropic index n.
    pub fn index(&self) -> f64 {
        self.solution.index()
    }

    /// The Lane–Emden solution the star is scaled from.
    pub fn solution(&self) -> &LaneEmdenSolution {
        &self.solution
    }

    /// Total mass M, g.
    pub fn mass_g(&self) -> f64 {
        self.mass_g
    }

    /// Radius R, cm.
    pub fn radius_cm(&self) -> f64 {
        self.radius_cm
    }

    /// The composition.
    pub fn composition(&self) -> Composition {
        self.composition
    }

    /// The pressure model.
    pub fn pressure_model(&self) -> PressureModel {
        self.pressure_model
    }

    /// Mean molecular weight μ of the fully ionised gas (dimensionless).
    pub fn mean_molecular_weight(&self) -> f64 {
        self.mean_molecular_weight
    }

    /// Gas-pressure fraction β = P_gas / P (dimensionless): 1 for an ideal-gas polytrope.
    pub fn beta(&self) -> f64 {
        self.beta
    }

    /// Length scale α = R / ξ₁, cm (r = α ξ).
    pub fn length_scale_cm(&self) -> f64 {
        self.length_scale_cm
    }

    /// Mean density ρ̄ = 3M / (4πR³), g cm⁻³.
    pub fn mean_density_g_cm3(&self) -> f64 {
        self.central_density_g_cm3 / self.solution.central_to_mean_density()
    }

    /// Central density ρc, g cm⁻³.
    pub fn central_density_g_cm3(&self) -> f64 {
        self.central_density_g_cm3
    }

    /// Central pressure Pc = 4πG α² ρc² / (n + 1), dyn cm⁻².
    pub fn central_pressure_dyn_cm2(&self) -> f64 {
        self.central_pressure_dyn_cm2
    }

    /// Central temperature Tc = β μ m_u Pc / (k_B ρc), K.
    pub fn central_temperature_k(&self) -> f64 {
        self.central_temperature_k
    }

    /// Polytropic constant K of P = K ρ^(1 + 1/n), cgs (dyn cm⁻² (g cm⁻³)^−(1+1/n)); None for
    /// n = 0, where the relation does not exist (the density is uniform).
    pub fn polytropic_constant_cgs(&self) -> Option<f64> {
        let n = self.index();
        (n > 0.0)
            .then(|| self.central_pressure_dyn_cm2 / self.central_density_g_cm3.powf(1.0 + 1.0 / n))
    }

    /// The profile point at dimensionless radius ξ (0 ≤ ξ ≤ ξ₁ assumed).
    fn point_at_xi(&self, xi: f64, radius_cm: f64) -> Option<ProfilePoint> {
        let n = self.index();
        let theta = self.solution.theta(xi)?.max(0.0);
        let dtheta = self.solution.dtheta(xi)?;
        let mass_fraction = (-xi * xi * dtheta / self.solution.mass_parameter()).clamp(0.0, 1.0);
        Some(ProfilePoint {
            radius_cm,
            density_g_cm3: self.central_density_g_cm3 * theta.powf(n),
            temperature_k: self.central_temperature_k * theta,
            pressure_dyn_cm2: self.central_pressure_dyn_cm2 * theta.powf(n + 1.0),
            mass_g: self.mass_g * mass_fraction,
        })
    }

    /// The centre of the star (r = 0).
    pub fn central(&self) -> ProfilePoint {
        ProfilePoint {
            radius_cm: 0.0,
            density_g_cm3: self.central_density_g_cm3,
            temperature_k: self.central_temperature_k,
            pressure_dyn_cm2: self.central_pressure_dyn_cm2,
            mass_g: 0.0,
        }
    }

    /// The profile at `radius_cm` (cm); None outside 0 ..= R or for NaN. At r = R the
    /// density, temperature and pressure are 0 (for n = 0 the density stays ρc).
    pub fn at_radius(&self, radius_cm: f64) -> Option<ProfilePoint> {
        if !(0.0..=self.radius_cm).contains(&radius_cm) {
            return None;
        }
        let xi = (radius_cm / self.length_scale_cm).min(self.solution.xi1());
        self.point_at_xi(xi, radius_cm)
    }

    /// The gas state at `radius_cm` for evaluating an [`OpacityLaw`](crate::opacity::OpacityLaw);
    /// None outside 0 ..= R.
    pub fn gas_state_at(&self, radius_cm: f64) -> Option<GasState> {
        let point = self.at_radius(radius_cm)?;
        Some(GasState {
            density_g_cm3: point.density_g_cm3,
            temperature_k: point.temperature_k,
            hydrogen_x: self.composition.hydrogen_x,
            metals_z: self.composition.metals_z,
        })
    }

    /// The profile at `n_points` radii from the centre (first point, r = 0) to the surface
    /// (last point, r = R exactly), `n_points` at least 2 (smaller requests give 2).
    ///
    /// Grid: uniform in u ∈ [0, 1] with ξ = ξ₁ (1 − (1 − u)²). The spacing is 2ξ₁/(N − 1) at
    /// the centre, shrinks linearly towards the surface and is ξ₁/(N − 1)² in the last
    /// interval, so the steep outer layers (ρ ∝ (ξ₁ − ξ)ⁿ, where the optical depth
    /// builds up) are resolved without wasting points in the smooth core.
    pub fn profile(&self, n_points: usize) -> Vec<ProfilePoint> {
        let n_points = n_points.max(2);
        let xi1 = self.solution.xi1();
        (0..n_points)
            .map(|i| {
                if i == 0 {
                    return self.central();
                }
                let u = i as f64 / (n_points - 1) as f64;
                let (xi, radius_cm) = if i == n_points - 1 {
                    (xi1, self.radius_cm)
                } else {
                    let xi = xi1 * (1.0 - (1.0 - u) * (1.0 - u));
                    (xi, xi * self.length_scale_cm)
                };
                self.point_at_xi(xi, radius_cm)
                    .expect("grid points lie within the Lane-Emden table")
            })
            .collect()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::star::LaneEmdenSolution;
    use crate::units::SOLAR_RADIUS_CM;
    use std::f64::consts::PI;

    fn star(n: f64, pressure: PressureModel) -> Polytrope {
        Polytrope::new(
            LaneEmdenSolution::solve(n).unwrap(),
            SOLAR_MASS_G,
            SOLAR_RADIUS_CM,
            Composition::new(0.7, 0.02).unwrap(),
            pressure,
        )
        .unwrap()
    }

    /// 4π ∫₀^R ρ r² dr by composite Simpson on `at_radius`.
    fn mass_integral(p: &Polytrope) -> f64 {
        let m = 40_000;
        let h = p.radius_cm() / m as f64;
        let f = |r: f64| p.at_radius(r).unwrap().density_g_cm3 * r * r;
        let mut sum = f(0.0) + f(p.radius_cm());
        for k in 1..m {
            sum += f(k as f64 * h) * if k % 2 == 1 { 4.0 } else { 2.0 };
        }
        4.0 * PI * sum * h / 3.0
    }

    #[test]
    fn mass_integral_equals_mass() {
        for n in [0.0, 1.0, 1.5, 3.0, 4.0] {
            let p = star(n, PressureModel::IdealGas);
            let m = mass_integral(&p);
            assert!((m / SOLAR_MASS_G - 1.0).abs() < 1e-6, "n = {n}: {m}");
            // The profile's enclosed mass reaches M at the surface.
            let profile = p.profile(50);
            assert!((profile[49].mass_g / SOLAR_MASS_G - 1.0).abs() < 1e-12);
        }
    }

    #[test]
    fn hydrostatic_equilibrium_holds() {
        // dP/dr = −G m ρ / r², checked by central differences of the profile.
        for n in [1.0, 1.5, 3.0] {
            let p = star(n, PressureModel::IdealGas);
            for frac in [0.1, 0.3, 0.5, 0.7, 0.9] {
                let r = frac * p.radius_cm();
                let dr = 1e-5 * p.radius_cm();
                let dp = (p.at_radius(r + dr).unwrap().pressure_dyn_cm2
                    - p.at_radius(r - dr).unwrap().pressure_dyn_cm2)
                    / (2.0 * dr);
                let here = p.at_radius(r).unwrap();
                let expected =
                    -GRAVITATIONAL_CONSTANT_CGS * here.mass_g * here.density_g_cm3 / (r * r);
                assert!((dp / expected - 1.0).abs() < 1e-6, "n = {n}, r/R = {frac}");
            }
        }
    }

    #[test]
    fn ideal_gas_law_and_polytropic_relation_hold() {
        let p = star(1.5, PressureModel::IdealGas);
        let k = p.polytropic_constant_cgs().unwrap();
        let mu = p.mean_molecular_weight();
        for point in p.profile(30).iter().take(29) {
            let ideal = point.density_g_cm3 * BOLTZMANN_ERG_K * point.temperature_k
                / (mu * ATOMIC_MASS_UNIT_G);
            assert!((ideal / point.pressure_dyn_cm2 - 1.0).abs() < 1e-12);
            let poly = k * point.density_g_cm3.powf(1.0 + 1.0 / 1.5);
            assert!((poly / point.pressure_dyn_cm2 - 1.0).abs() < 1e-9);
        }
        // Mass–radius relation (Chandrasekhar 1939): R = α ξ₁ with
        // α² = (n+1) K ρc^(1/n − 1) / (4πG).
        let alpha2 = 2.5 * k * p.central_density_g_cm3().powf(1.0 / 1.5 - 1.0)
            / (4.0 * PI * GRAVITATIONAL_CONSTANT_CGS);
        let r = alpha2.sqrt() * p.solution().xi1();
        assert!((r / SOLAR_RADIUS_CM - 1.0).abs() < 1e-12);
    }

    #[test]
    fn mean_molecular_weight_of_ionised_gas() {
        // μ = 1/(2X + 3Y/4 + Z/2): X = 0.7, Z = 0.02, Y = 0.28: 1/(1.4 + 0.21 + 0.01) = 1/1.62.
        let c = Composition::new(0.7, 0.02).unwrap();
        assert!((c.mean_molecular_weight() - 1.0 / 1.62).abs() < 1e-12);
        // Pure hydrogen 1/2, pure helium 4/3.
        assert!((Composition::new(1.0, 0.0).unwrap().mean_molecular_weight() - 0.5).abs() < 1e-15);
        assert!(
            (Composition::new(0.0, 0.0).unwrap().mean_molecular_weight() - 4.0 / 3.0).abs() < 1e-15
        );
    }

    #[test]
    fn eddington_coefficient_matches_the_usual_form() {
        // Usual textbook form 1 − β = 0.003 μ⁴ β⁴ (M/M☉)² (as recalled, also as 0.002979;
        // the coefficient is recomputed from the constants and ω₃ in `eddington_coefficient`).
        // Loose tolerance: the recalled value, and constants, may differ in the last digits.
        let omega3 = LaneEmdenSolution::solve(3.0).unwrap().mass_parameter();
        let c = eddington_coefficient(omega3);
        assert!((c / 0.002979 - 1.0).abs() < 0.01, "{c}");
        // μ = 1, M = M☉: 1 − β ≈ 0.003 (as recalled), exactly c β⁴ with the solved β.
        let beta = eddington_beta(SOLAR_MASS_G, 1.0, omega3).unwrap();
        assert!((1.0 - beta - c * beta.powi(4)).abs() < 1e-15);
        assert!(((1.0 - beta) / 0.003 - 1.0).abs() < 0.03, "{}", 1.0 - beta);
        // μ = 0.6, M = M☉: 1 − β ≈ c·0.6⁴ ≈ 3.9e−4.
        let beta = eddington_beta(SOLAR_MASS_G, 0.6, omega3).unwrap();
        assert!(
            ((1.0 - beta) / (c * 0.1296) - 1.0).abs() < 2e-3,
            "{}",
            1.0 - beta
        );
        // Heavy stars are radiation dominated: β falls with mass.
        let b10 = eddington_beta(10.0 * SOLAR_MASS_G, 0.6, omega3).unwrap();
        let b100 = eddington_beta(100.0 * SOLAR_MASS_G, 0.6, omega3).unwrap();
        assert!(beta > b10 && b10 > b100 && b100 > 0.0);
        assert!((1.0 - b100 - c * 0.1296 * 1e4 * b100.powi(4)).abs() < 1e-13);
    }

    #[test]
    fn eddington_model_is_dimensionally_consistent() {
        // Derivation check from first principles, with the constants written out:
        // K from the n = 3 mass relation, M = 4π (K/(πG))^(3/2) ω₃, must equal K from the
        // gas/radiation split, K³ = 3(1 − β) k⁴ / (a μ⁴ m_u⁴ β⁴), and at the centre
        // aTc⁴/3 = (1 − β) Pc, ρc k Tc/(μ m_u) = β Pc.
        let mass = 10.0 * SOLAR_MASS_G;
        let p = Polytrope::new(
            LaneEmdenSolution::solve(3.0).unwrap(),
            mass,
            5.0 * SOLAR_RADIUS_CM,
            Composition::new(0.7, 0.02).unwrap(),
            PressureModel::EddingtonStandardModel,
        )
        .unwrap();
        let beta = p.beta();
        let mu = p.mean_molecular_weight();
        let omega3 = p.solution().mass_parameter();
        let (g, a, k, mu_g): (f64, f64, f64, f64) = (
            6.674_30e-8,
            7.565_733e-15,
            1.380_649e-16,
            1.660_539_066_60e-24,
        );
        let k_mass = PI * g * (mass / (4.0 * PI * omega3)).powf(2.0 / 3.0);
        let k_rad =
            (3.0 * (1.0 - beta) * k.powi(4) / (a * (mu * mu_g).powi(4) * beta.powi(4))).cbrt();
        assert!((k_mass / k_rad - 1.0).abs() < 1e-6, "{k_mass} vs {k_rad}");
        let k_model = p.polytropic_constant_cgs().unwrap();
        assert!((k_model / k_mass - 1.0).abs() < 1e-9);
        let c = p.central();
        let p_rad = a * c.temperature_k.powi(4) / 3.0;
        assert!((p_rad / ((1.0 - beta) * c.pressure_dyn_cm2) - 1.0).abs() < 1e-6);
        let p_gas = c.density_g_cm3 * k * c.temperature_k / (mu * mu_g);
        assert!((p_gas / (beta * c.pressure_dyn_cm2) - 1.0).abs() < 1e-9);
        // A 10 M☉, μ ≈ 0.62 star has 1 − β of a few per cent.
        assert!((0.01..0.1).contains(&(1.0 - beta)), "{}", 1.0 - beta);
    }

    #[test]
    fn profile_grid_is_monotone_and_refined_at_the_surface() {
        let p = star(3.0, PressureModel::IdealGas);
        let profile = p.profile(101);
        assert_eq!(profile[0], p.central());
        assert_eq!(profile[100].radius_cm, SOLAR_RADIUS_CM);
        assert_eq!(profile[100].density_g_cm3, 0.0);
        assert_eq!(profile[100].temperature_k, 0.0);
        for w in profile.windows(2) {
            assert!(w[1].radius_cm > w[0].radius_cm);
            assert!(w[1].density_g_cm3 < w[0].density_g_cm3);
            assert!(w[1].temperature_k < w[0].temperature_k);
            assert!(w[1].mass_g > w[0].mass_g);
        }
        let first = profile[1].radius_cm;
        let last = profile[100].radius_cm - profile[99].radius_cm;
        assert!((first / last - 199.0).abs() < 1e-6 * 199.0); // (2/(N−1)) / (1/(N−1)²)
        assert_eq!(p.profile(0).len(), 2);
    }

    #[test]
    fn central_values_scale_as_expected() {
        // ρc = ρ̄ (ρc/ρ̄) and Tc = μ m_u Pc / (k ρc) for the n = 3 Sun.
        let p = star(3.0, PressureModel::IdealGas);
        let mean = 3.0 * SOLAR_MASS_G / (4.0 * PI * SOLAR_RADIUS_CM.powi(3));
        assert!((p.mean_density_g_cm3() / mean - 1.0).abs() < 1e-12);
        assert!(
            (p.central_density_g_cm3() / (mean * p.solution().central_to_mean_density()) - 1.0)
                .abs()
                < 1e-12
        );
        let tc = p.mean_molecular_weight() * ATOMIC_MASS_UNIT_G * p.central_pressure_dyn_cm2()
            / (BOLTZMANN_ERG_K * p.central_density_g_cm3());
        assert!((p.central_temperature_k() / tc - 1.0).abs() < 1e-12);
        assert_eq!(p.beta(), 1.0);
        // Uniform sphere (n = 0): Pc = (3/8π) G M² / R⁴ (Pc = 2πGρ²R²/3).
        let u = star(0.0, PressureModel::IdealGas);
        let pc = 3.0 * GRAVITATIONAL_CONSTANT_CGS * SOLAR_MASS_G.powi(2)
            / (8.0 * PI * SOLAR_RADIUS_CM.powi(4));
        assert!((u.central_pressure_dyn_cm2() / pc - 1.0).abs() < 1e-8);
        assert_eq!(u.polytropic_constant_cgs(), None);
    }

    #[test]
    fn gas_state_carries_composition() {
        let p = star(1.5, PressureModel::IdealGas);
        let s = p.gas_state_at(0.5 * SOLAR_RADIUS_CM).unwrap();
        assert_eq!(s.hydrogen_x, 0.7);
        assert_eq!(s.metals_z, 0.02);
        assert!(s.temperature_k > 0.0 && s.density_g_cm3 > 0.0);
        assert_eq!(p.gas_state_at(2.0 * SOLAR_RADIUS_CM), None);
        assert_eq!(p.at_radius(-1.0), None);
        assert_eq!(p.at_radius(f64::NAN), None);
    }

    #[test]
    fn invalid_inputs_are_errors() {
        let sol = || LaneEmdenSolution::solve(1.5).unwrap();
        let comp = Composition::new(0.7, 0.02).unwrap();
        for m in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert!(matches!(
                Polytrope::new(sol(), m, 1.0, comp, PressureModel::IdealGas),
                Err(PolytropeError::InvalidMass(_))
            ));
        }
        for r in [0.0, -1.0, f64::NAN] {
            assert!(matches!(
                Polytrope::new(sol(), 1.0, r, comp, PressureModel::IdealGas),
                Err(PolytropeError::InvalidRadius(_))
            ));
        }
        assert_eq!(
            Polytrope::new(sol(), 1.0, 1.0, comp, PressureModel::EddingtonStandardModel),
            Err(PolytropeError::EddingtonNeedsIndexThree(1.5))
        );
        for (x, z) in [(0.8, 0.3), (-0.1, 0.0), (f64::NAN, 0.0), (0.7, 1.1)] {
            assert!(Composition::new(x, z).is_err());
        }
        assert!(eddington_beta(f64::NAN, 0.6, 2.0).is_err());
        assert!(eddington_beta(1.0, 0.0, 2.0).is_err());
        assert!(eddington_beta(1.0, 0.6, -2.0).is_err());
    }
}
