//! Steady spatially resolved diffuse reflectance R(ρ) of a semi-infinite medium under a
//! narrow beam at normal incidence: the dipole model with the extrapolated boundary of
//! Farrell, Patterson & Wilson 1992 (Med. Phys. 19:879, eq. 2 with the extrapolated
//! boundary of their section II.B).
//!
//! The beam is replaced by an isotropic point source one transport mean free path deep,
//! z₀ = 1/μt′ (μt′ = μa + μs′), and an image source of opposite sign at −z₀ − 2 z_b, so
//! that the fluence vanishes at the extrapolated boundary z = −z_b, z_b = 2 A D with
//! D = 1/(3 μt′). The reflectance is the flux through the face, −D ∂φ/∂z at z = 0:
//!
//! ```text
//! R(ρ) = (a′/4π) [ z₀ (μeff + 1/r₁) e^(−μeff r₁)/r₁² + (z₀ + 2 z_b)(μeff + 1/r₂) e^(−μeff r₂)/r₂² ]
//! ```
//!
//! with a′ = μs′/μt′, μeff = √(3 μa μt′), r₁² = z₀² + ρ², r₂² = (z₀ + 2 z_b)² + ρ², per unit
//! area and per photon entering. The boundary factor A comes from the Fresnel moments of
//! the face ([`super::boundary::boundary_factor_a`], Haskell et al. 1994) rather than
//! Farrell et al.'s empirical fit; both are 1 for a matched face.

use std::f64::consts::PI;

use super::boundary::boundary_factor_a;

/// The dipole of a semi-infinite medium (see the module docs). Lengths in cm.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Dipole {
    /// Absorption coefficient μa, 1/cm.
    pub mua_per_cm: f64,
    /// Reduced scattering coefficient μs′, 1/cm.
    pub musp_per_cm: f64,
    /// Boundary factor A of the face (1 for a matched face).
    pub boundary_factor: f64,
}

impl Dipole {
    /// The dipole for absorption `mua_per_cm`, reduced scattering `musp_per_cm` and the
    /// relative index `n_rel = n_inside / n_outside` of the face. None unless μs′ > 0 and
    /// both coefficients are finite and ≥ 0.
    pub fn new(mua_per_cm: f64, musp_per_cm: f64, n_rel: f64) -> Option<Self> {
        let valid = mua_per_cm.is_finite()
            && mua_per_cm >= 0.0
            && musp_per_cm.is_finite()
            && musp_per_cm > 0.0
            && n_rel.is_finite()
            && n_rel > 0.0;
        valid.then(|| Self {
            mua_per_cm,
            musp_per_cm,
            boundary_factor: boundary_factor_a(n_rel),
        })
    }

    /// Transport mean free path 1/μt′, cm: the depth z₀ of the source.
    pub fn transport_mean_free_path_cm(&self) -> f64 {
        1.0 / (self.mua_per_cm + self.musp_per_cm)
    }

    /// Effective attenuation coefficient μeff = √(3 μa μt′), 1/cm.
    pub fn effective_attenuation_per_cm(&self) -> f64 {
        (3.0 * self.mua_per_cm * (self.mua_per_cm + self.musp_per_cm)).sqrt()
    }

    /// Extrapolation distance z_b = 2 A D, cm.
    pub fn extrapolation_length_cm(&self) -> f64 {
        2.0 * self.boundary_factor * self.transport_mean_free_path_cm() / 3.0
    }

    /// R(ρ): diffuse reflectance per unit area at distance `rho_cm` from the beam, per
    /// photon entering, 1/cm².
    pub fn reflectance_per_cm2(&self, rho_cm: f64) -> f64 {
        let mutp = self.mua_per_cm + self.musp_per_cm;
        let albedo = self.musp_per_cm / mutp;
        let z0 = 1.0 / mutp;
        let zp = z0 + 2.0 * self.extrapolation_length_cm();
        let mu_eff = self.effective_attenuation_per_cm();
        let term = |z: f64| {
            let r = (z * z + rho_cm * rho_cm).sqrt();
            z * (mu_eff + 1.0 / r) * (-mu_eff * r).exp() / (r * r)
        };
        albedo / (4.0 * PI) * (term(z0) + term(zp))
    }

    /// The average of R(ρ) over the ring a ≤ ρ < b, 1/cm²: ∫ R 2πρ dρ / (π (b² − a²)), by
    /// Gauss–Legendre quadrature in ln ρ (panels of 16 nodes, one per factor e^(1/4)).
    pub fn ring_average_per_cm2(&self, a_cm: f64, b_cm: f64) -> f64 {
        let total = ring_integral(|rho| self.reflectance_per_cm2(rho), a_cm, b_cm);
        total / (PI * (b_cm * b_cm - a_cm * a_cm))
    }

    /// Total diffuse reflectance ∫ R(ρ) 2πρ dρ, per photon entering (closed form of the
    /// integral: (a′/2) [e^(−μeff z₀) + e^(−μeff (z₀ + 2 z_b))]).
    pub fn total_reflectance(&self) -> f64 {
        let mutp = self.mua_per_cm + self.musp_per_cm;
        let z0 = 1.0 / mutp;
        let zp = z0 + 2.0 * self.extrapolation_length_cm();
        let mu_eff = self.effective_attenuation_per_cm();
        0.5 * self.musp_per_cm / mutp * ((-mu_eff * z0).exp() + (-mu_eff * zp).exp())
    }
}

/// ∫ f(ρ) 2πρ dρ over [a, b], Gauss–Legendre in ln ρ (a > 0) or in ρ (a = 0).
fn ring_integral(f: impl Fn(f64) -> f64, a: f64, b: f64) -> f64 {
    const NODES: [f64; 8] = [
        0.095_012_509_837_637_44,
        0.281_603_550_779_258_9,
        0.458_016_777_657_227_4,
        0.617_876_244_402_643_8,
        0.755_404_408_355_003,
        0.865_631_202_387_831_8,
        0.944_575_023_073_232_6,
        0.989_400_934_991_649_9,
    ];
    const WEIGHTS: [f64; 8] = [
        0.189_450_610_455_068_5,
        0.182_603_415_044_923_6,
        0.169_156_519_395_002_5,
        0.149_595_988_816_576_7,
        0.124_628_971_255_533_9,
        0.095_158_511_682_492_78,
        0.062_253_523_938_647_89,
        0.027_152_459_411_754_09,
    ];
    let panel = |lo: f64, hi: f64, g: &dyn Fn(f64) -> f64| {
        let (mid, half) = (0.5 * (lo + hi), 0.5 * (hi - lo));
        NODES
            .iter()
            .zip(WEIGHTS)
            .map(|(x, w)| w * (g(mid - half * x) + g(mid + half * x)))
            .sum::<f64>()
            * half
    };
    if a <= 0.0 {
        // Linear panels near the axis, then logarithmic ones.
        let start = b.min(1e-6 * b.max(1e-300));
        let near = panel(0.0, start, &|rho| f(rho) * 2.0 * PI * rho);
        return near + ring_integral(f, start, b);
    }
    let (la, lb) = (a.ln(), b.ln());
    let panels = ((lb - la) * 4.0).ceil().max(1.0) as usize;
    let step = (lb - la) / panels as f64;
    (0..panels)
        .map(|i| {
            let lo = la + step * i as f64;
            panel(lo, lo + step, &|l| {
                let rho = l.exp();
                f(rho) * 2.0 * PI * rho * rho
            })
        })
        .sum()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_ring_integrals_add_up_to_the_closed_form_total() {
        // ∫₀^∞ R 2πρ dρ has the closed form of total_reflectance (the integral of each
        // source's flux through the plane, z e^(−μ r)(μ + 1/r)/r² over the plane = 2π e^(−μ z)).
        let dipole = Dipole::new(0.1, 10.0, 1.4).unwrap();
        let numeric = ring_integral(|rho| dipole.reflectance_per_cm2(rho), 0.0, 1e3);
        let exact = dipole.total_reflectance();
        assert!((numeric / exact - 1.0).abs() < 1e-8, "{numeric} {exact}");
    }

    #[test]
    fn matched_face_values_by_hand() {
        // μa = 0.01, μs′ = 1 per cm, matched face (A = 1): z₀ = 1/1.01 cm, z_b = 2/(3·1.01)
        // cm, μeff = √(0.0303); at ρ = 2 cm, written out term by term.
        let dipole = Dipole::new(0.01, 1.0, 1.0).unwrap();
        assert_eq!(dipole.boundary_factor, 1.0);
        let (z0, zb, mu) = (1.0 / 1.01, 2.0 / (3.0 * 1.01), 0.0303f64.sqrt());
        let zp = z0 + 2.0 * zb;
        let (r1, r2) = ((z0 * z0 + 4.0f64).sqrt(), (zp * zp + 4.0f64).sqrt());
        let expected = (1.0 / 1.01) / (4.0 * PI)
            * (z0 * (mu + 1.0 / r1) * (-mu * r1).exp() / (r1 * r1)
                + zp * (mu + 1.0 / r2) * (-mu * r2).exp() / (r2 * r2));
        assert!((dipole.reflectance_per_cm2(2.0) / expected - 1.0).abs() < 1e-14);
    }
}
