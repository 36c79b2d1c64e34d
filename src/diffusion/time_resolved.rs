//! Time-resolved diffusion through a slab: how long photons of a short pulse take to come
//! back out (reflectance) or through (transmittance).
//!
//! A pencil beam falls at t = 0 on a slab of thickness `d` (cm) with absorption `μa` and
//! reduced scattering `μs′` (cm⁻¹) and refractive index `n`. Following Patterson, Chance &
//! Wilson 1989 (Appl. Opt. 28:2331) the beam is replaced by an isotropic point source at
//! depth `z₀ = 1/μs′`, photons diffuse with `D = 1/(3(μa + μs′))` (cm) at speed `v = c/n`,
//! and the photon density vanishes on two planes, enforced by image sources
//! (docs/references.md, Diffusion theory 3):
//!
//! * [`Boundary::Zero`]: on the physical surfaces `z = 0, d` (the original PCW condition);
//! * [`Boundary::Extrapolated`]: on the extrapolated boundaries `z = −z_e` and `z = d + z_e`,
//!   `z_e = 2 A D`, with `A = (1 + R_eff)/(1 − R_eff)` from the index mismatch (Kienle &
//!   Patterson 1997, JOSA A 14:246; Contini, Martelli & Zaccanti 1997, Appl. Opt. 36:4587),
//!   computed from the Fresnel integrals of Haskell et al. 1994 ([`boundary_factor_a`]).
//!
//! With `L = d + 2 z_e` the images sit at `z₊ₘ = 2mL + z₀` (positive) and
//! `z₋ₘ = 2mL − 2z_e − z₀` (negative), m ∈ ℤ. The escaping flux is Fick's current at the
//! physical surfaces. Integrated over the whole surface (the quantities a photon-counting
//! Monte Carlo tallies as escape time), per incident photon and per second:
//!
//! ```text
//! R(t) = ½ (4πDv)^(−½) t^(−3/2) e^(−μa v t) Σₘ [ z₊ₘ e^(−z₊ₘ²/4Dvt) − z₋ₘ e^(−z₋ₘ²/4Dvt) ]
//! T(t) = ½ (4πDv)^(−½) t^(−3/2) e^(−μa v t) Σₘ [ (d−z₊ₘ) e^(−(d−z₊ₘ)²/4Dvt) − (d−z₋ₘ) e^(−(d−z₋ₘ)²/4Dvt) ]
//! ```
//!
//! and at distance ρ from the beam axis `R(ρ, t) = R(t) e^(−ρ²/4Dvt) / (4πDvt)` (cm⁻² s⁻¹;
//! the transverse Gaussian separates). The image sums are used while `Dvt/L² < 0.05`, where
//! three images on each side suffice. Later the same functions are evaluated from the
//! equivalent eigenmode series (Poisson summation of the images), with `x₀ = z₀ + z_e`:
//!
//! ```text
//! R(t) = (2Dv/L) Σₙ (nπ/L) cos(nπ z_e/L) sin(nπ x₀/L) e^(−(μa v + Dv n²π²/L²) t)
//! T(t) = (2Dv/L) Σₙ (nπ/L) (−1)^(n+1) cos(nπ z_e/L) sin(nπ x₀/L) e^(−(μa v + Dv n²π²/L²) t)
//! ```
//!
//! whose first term gives the late-time decay rate `μa v + D v π²/L²` of both.
//!
//! Diffusion fails at early times (t ≲ a few `1/(v μs′)`): compare shapes and late-time
//! decay with Monte Carlo, not the rising edge.
//!
//! ```
//! use sojourn::diffusion::time_resolved::{Boundary, DiffusionSlab, SlabOptics};
//!
//! let optics = SlabOptics {
//!     mua_per_cm: 0.1,
//!     musp_per_cm: 10.0,
//!     thickness_cm: 2.0,
//!     n_medium: 1.4,
//!     n_outside: 1.0,
//! };
//! let slab = DiffusionSlab::new(optics, Boundary::Extrapolated).unwrap();
//! let t = 2e-9; // s
//! assert!(slab.transmittance_per_s(t) > 0.0);
//! // Steady state: everything that enters is reflected, transmitted or absorbed.
//! assert!(slab.steady_reflectance() + slab.steady_transmittance() < 1.0);
//! ```

use crate::units::SPEED_OF_LIGHT_CM_S;
use std::f64::consts::PI;

/// `Dvt/L²` below which the image sums are used, above which the eigenmode series.
const IMAGE_SWITCH_TAU: f64 = 0.05;

/// Errors from [`DiffusionSlab::new`].
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[non_exhaustive]
pub enum TimeResolvedError {
    /// A parameter is NaN, infinite or out of its range.
    #[error("{name} must be {requirement}, got {value}")]
    InvalidParameter {
        /// Name of the parameter.
        name: &'static str,
        /// What it must satisfy.
        requirement: &'static str,
        /// The value given.
        value: f64,
    },
    /// The equivalent isotropic source `z₀ = 1/μs′` does not lie inside the slab.
    #[error(
        "source depth 1/μs′ = {source_depth_cm} cm is not inside the slab of thickness \
         {thickness_cm} cm: diffusion theory needs a slab many transport lengths thick"
    )]
    SourceOutsideSlab {
        /// `1/μs′`, cm.
        source_depth_cm: f64,
        /// Slab thickness, cm.
        thickness_cm: f64,
    },
}

/// Boundary condition on the photon density.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Boundary {
    /// Density zero on the physical surfaces, `z_e = 0` (Patterson, Chance & Wilson 1989).
    Zero,
    /// Density zero on extrapolated boundaries `z_e = 2AD` outside each surface, with `A`
    /// from [`boundary_factor_a`] for the relative index `n_medium / n_outside` (any value;
    /// A ≥ 1 above 1, slightly above 1 below it).
    Extrapolated,
    /// Extrapolated boundaries `z_e = 2AD` with the given `A` (≥ 0), e.g. `A = 1` for the
    /// common matched-index choice `z_e = 2D`.
    ExtrapolatedWithA(f64),
}

/// Optical properties and geometry of the slab, cgs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SlabOptics {
    /// Absorption coefficient μa, cm⁻¹ (≥ 0).
    pub mua_per_cm: f64,
    /// Reduced scattering coefficient μs′ = μs (1 − g), cm⁻¹ (> 0).
    pub musp_per_cm: f64,
    /// Slab thickness d, cm (> 1/μs′).
    pub thickness_cm: f64,
    /// Refractive index of the slab (≥ 1); sets the speed `c/n`.
    pub n_medium: f64,
    /// Refractive index of the surroundings (> 0); only the ratio enters, through `A`.
    pub n_outside: f64,
}

pub use super::boundary::{boundary_factor_a, effective_reflection};

/// A slab in the diffusion approximation with its image-source solution; see the module
/// documentation for the formulas.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DiffusionSlab {
    mua_per_cm: f64,
    thickness_cm: f64,
    diffusion_cm: f64,
    speed_cm_s: f64,
    z0_cm: f64,
    ze_cm: f64,
    /// `d + 2 z_e`, cm.
    span_cm: f64,
}

fn check(
    name: &'static str,
    requirement: &'static str,
    value: f64,
    ok: bool,
) -> Result<(), TimeResolvedError> {
    if value.is_finite() && ok {
        Ok(())
    } else {
        Err(TimeResolvedError::InvalidParameter {
            name,
            requirement,
            value,
        })
    }
}

/// `sinh(a)/sinh(b)` for `0 ≤ a ≤ b`, without overflow.
fn sinh_ratio(a: f64, b: f64) -> f64 {
    if b == 0.0 {
        return 1.0;
    }
    if b < 1.0 {
        a.sinh() / b.sinh()
    } else {
        (a - b).exp() * (-(-2.0 * a).exp_m1()) / (-(-2.0 * b).exp_m1())
    }
}

impl DiffusionSlab {
    /// Builds the slab solution from its optics and boundary condition.
    ///
    /// # Errors
    ///
    /// [`TimeResolvedError::InvalidParameter`] for a non-finite or out-of-range field
    /// (μa < 0, μs′ ≤ 0, d ≤ 0, n_medium < 1, n_outside ≤ 0, A < 0) and
    /// [`TimeResolvedError::SourceOutsideSlab`] if `1/μs′ ≥ d`.
    pub fn new(optics: SlabOptics, boundary: Boundary) -> Result<Self, TimeResolvedError> {
        let SlabOptics {
            mua_per_cm,
            musp_per_cm,
            thickness_cm,
            n_medium,
            n_outside,
        } = optics;
        check(
            "mua_per_cm",
            "finite and ≥ 0",
            mua_per_cm,
            mua_per_cm >= 0.0,
        )?;
        check(
            "musp_per_cm",
            "finite and > 0",
            musp_per_cm,
            musp_per_cm > 0.0,
        )?;
        check(
            "thickness_cm",
            "finite and > 0",
            thickness_cm,
            thickness_cm > 0.0,
        )?;
        check("n_medium", "finite and ≥ 1", n_medium, n_medium >= 1.0)?;
        check("n_outside", "finite and > 0", n_outside, n_outside > 0.0)?;
        let z0_cm = 1.0 / musp_per_cm;
        if z0_cm >= thickness_cm {
            return Err(TimeResolvedError::SourceOutsideSlab {
                source_depth_cm: z0_cm,
                thickness_cm,
            });
        }
        let diffusion_cm = 1.0 / (3.0 * (mua_per_cm + musp_per_cm));
        let a = match boundary {
            Boundary::Zero => 0.0,
            Boundary::Extrapolated => boundary_factor_a(n_medium / n_outside),
            Boundary::ExtrapolatedWithA(a) => {
                check("A", "finite and ≥ 0", a, a >= 0.0)?;
                a
            }
        };
        let ze_cm = 2.0 * a * diffusion_cm;
        Ok(Self {
            mua_per_cm,
            thickness_cm,
            diffusion_cm,
            speed_cm_s: SPEED_OF_LIGHT_CM_S / n_medium,
            z0_cm,
            ze_cm,
            span_cm: thickness_cm + 2.0 * ze_cm,
        })
    }

    /// Diffusion coefficient in the PCW convention, `D = 1/(3(μa + μs′))`, cm (the diffusivity
    /// is `D v`, cm² s⁻¹).
    pub fn diffusion_cm(&self) -> f64 {
        self.diffusion_cm
    }

    /// Speed of light in the slab `v = c/n`, cm s⁻¹.
    pub fn speed_cm_s(&self) -> f64 {
        self.speed_cm_s
    }

    /// Depth of the equivalent isotropic source `z₀ = 1/μs′`, cm.
    pub fn source_depth_cm(&self) -> f64 {
        self.z0_cm
    }

    /// Extrapolation length `z_e = 2AD` (0 for [`Boundary::Zero`]), cm.
    pub fn extrapolation_length_cm(&self) -> f64 {
        self.ze_cm
    }

    /// Late-time decay rate of both `R(t)` and `T(t)`, s⁻¹:
    /// `μa v + D v π² / (d + 2 z_e)²` (slowest eigenmode of the slab).
    pub fn decay_rate_per_s(&self) -> f64 {
        let dv = self.diffusion_cm * self.speed_cm_s;
        self.mua_per_cm * self.speed_cm_s + dv * PI * PI / (self.span_cm * self.span_cm)
    }

    /// `Dvt/L²` at time `t_s`.
    fn tau(&self, t_s: f64) -> f64 {
        self.diffusion_cm * self.speed_cm_s * t_s / (self.span_cm * self.span_cm)
    }

    /// Image-source sums for (R, T) per second at `t_s > 0`.
    fn images(&self, t_s: f64) -> (f64, f64) {
        let dv = self.diffusion_cm * self.speed_cm_s;
        let four_dvt = 4.0 * dv * t_s;
        let l = self.span_cm;
        let d = self.thickness_cm;
        let g = |a: f64| a * (-a * a / four_dvt).exp();
        let mut r_sum = 0.0;
        let mut t_sum = 0.0;
        let mut m = 0i64;
        loop {
            let signs: &[f64] = if m == 0 { &[0.0] } else { &[1.0, -1.0] };
            for &sg in signs {
                let shift = 2.0 * sg * m as f64 * l;
                let zp = shift + self.z0_cm;
                let zm = shift - 2.0 * self.ze_cm - self.z0_cm;
                r_sum += g(zp) - g(zm);
                t_sum += g(d - zp) - g(d - zm);
            }
            m += 1;
            // Every image with |m'| ≥ m lies at least 2(m−1)L away, every primary source
            // within L: stop when those are e^(−60) below the primaries.
            let far = 2.0 * (m - 1) as f64 * l;
            if m >= 2 && far * far - l * l > 60.0 * four_dvt {
                break;
            }
        }
        let pref = 0.5 / (4.0 * PI * dv).sqrt() / (t_s * t_s.sqrt())
            * (-self.mua_per_cm * self.speed_cm_s * t_s).exp();
        (pref * r_sum, pref * t_sum)
    }

    /// Eigenmode series for (R, T) per second at `t_s > 0`.
    fn modes(&self, t_s: f64) -> (f64, f64) {
        let dv = self.diffusion_cm * self.speed_cm_s;
        let l = self.span_cm;
        let x0 = self.z0_cm + self.ze_cm;
        let k1 = PI / l;
        let base = dv * k1 * k1 * t_s; // π² τ
        let mut r_sum = 0.0;
        let mut t_sum = 0.0;
        let mut n = 1.0_f64;
        let mut sign = 1.0;
        loop {
            let kn = n * k1;
            let w = kn * (kn * self.ze_cm).cos() * (kn * x0).sin() * (-n * n * base).exp();
            r_sum += w;
            t_sum += sign * w;
            // |term| ≤ k_n e^(−n²π²τ), decreasing in n here.
            let bound = kn * (-n * n * base).exp();
            if (n >= 2.0 && bound < 1e-17 * r_sum.abs().max(t_sum.abs())) || bound == 0.0 {
                break;
            }
            n += 1.0;
            sign = -sign;
        }
        let pref = 2.0 * dv / l * (-self.mua_per_cm * self.speed_cm_s * t_s).exp();
        (pref * r_sum, pref * t_sum)
    }

    /// (R, T) per second, choosing the fast form.
    fn flux(&self, t_s: f64) -> (f64, f64) {
        if t_s.is_nan() {
            return (f64::NAN, f64::NAN);
        }
        if t_s <= 0.0 || t_s == f64::INFINITY {
            return (0.0, 0.0);
        }
        if self.tau(t_s) < IMAGE_SWITCH_TAU {
            self.images(t_s)
        } else {
            self.modes(t_s)
        }
    }

    /// Total (surface-integrated) time-resolved diffuse reflectance `R(t)`: fraction of the
    /// incident photons leaving through the entry face per second at time `t_s` (s) after
    /// the pulse, s⁻¹. Zero for `t ≤ 0`. Patterson, Chance & Wilson 1989 (Appl. Opt.
    /// 28:2331) with the boundary chosen at construction (docs/references.md, Diffusion theory 3).
    pub fn reflectance_per_s(&self, t_s: f64) -> f64 {
        self.flux(t_s).0
    }

    /// Total (surface-integrated) time-resolved transmittance `T(t)` through the far face,
    /// s⁻¹, at time `t_s` (s). Zero for `t ≤ 0`. Same model as [`Self::reflectance_per_s`].
    pub fn transmittance_per_s(&self, t_s: f64) -> f64 {
        self.flux(t_s).1
    }

    /// Spatially resolved reflectance at distance `rho_cm` (cm) from the beam axis and time
    /// `t_s` (s): `R(t) e^(−ρ²/4Dvt)/(4πDvt)`, cm⁻² s⁻¹ (Patterson, Chance & Wilson 1989;
    /// Contini, Martelli & Zaccanti 1997).
    pub fn reflectance_per_cm2_s(&self, rho_cm: f64, t_s: f64) -> f64 {
        self.reflectance_per_s(t_s) * self.transverse(rho_cm, t_s)
    }

    /// Spatially resolved transmittance at distance `rho_cm` (cm) from the beam axis and
    /// time `t_s` (s): `T(t) e^(−ρ²/4Dvt)/(4πDvt)`, cm⁻² s⁻¹.
    pub fn transmittance_per_cm2_s(&self, rho_cm: f64, t_s: f64) -> f64 {
        self.transmittance_per_s(t_s) * self.transverse(rho_cm, t_s)
    }

    fn transverse(&self, rho_cm: f64, t_s: f64) -> f64 {
        if t_s <= 0.0 {
            return 0.0;
        }
        let four_dvt = 4.0 * self.diffusion_cm * self.speed_cm_s * t_s;
        (-rho_cm * rho_cm / four_dvt).exp() / (PI * four_dvt)
    }

    /// `κ = √(μa/D)`, cm⁻¹.
    fn kappa(&self) -> f64 {
        (self.mua_per_cm / self.diffusion_cm).sqrt()
    }

    /// Steady-state (time-integrated) total diffuse reflectance `∫ R(t) dt`, dimensionless.
    ///
    /// Solving `D u″ − μa u = −δ(z − z₀)` on `[−z_e, d + z_e]` with `u = 0` at both ends and
    /// taking Fick's current at `z = 0` gives, with `κ = √(μa/D)`, `L = d + 2z_e`:
    /// `R = cosh(κ z_e) sinh(κ(d + z_e − z₀)) / sinh(κL)`, which tends to
    /// `(d + z_e − z₀)/L` as μa → 0. The same follows from integrating the image series term
    /// by term, `∫₀^∞ t^(−3/2) e^(−α/t − βt) dt = √(π/α) e^(−2√(αβ))` (the method of
    /// Contini, Martelli & Zaccanti 1997, Appl. Opt. 36:4587).
    pub fn steady_reflectance(&self) -> f64 {
        let k = self.kappa();
        let l = self.span_cm;
        let a = l - self.z0_cm - self.ze_cm;
        if k * l < 1e-8 {
            return a / l;
        }
        cosh_times_sinh_ratio(k * self.ze_cm, k * a, k * l)
    }

    /// Steady-state (time-integrated) total transmittance `∫ T(t) dt`, dimensionless:
    /// `cosh(κ z_e) sinh(κ(z₀ + z_e)) / sinh(κL)`, → `(z₀ + z_e)/L` as μa → 0 (derivation as
    /// for [`Self::steady_reflectance`]).
    pub fn steady_transmittance(&self) -> f64 {
        let k = self.kappa();
        let l = self.span_cm;
        let a = self.z0_cm + self.ze_cm;
        if k * l < 1e-8 {
            return a / l;
        }
        cosh_times_sinh_ratio(k * self.ze_cm, k * a, k * l)
    }
}

/// `cosh(c) sinh(a)/sinh(b)` for `0 ≤ c`, `a ≤ b`, `c + a ≤ b`, without overflow.
fn cosh_times_sinh_ratio(c: f64, a: f64, b: f64) -> f64 {
    if b < 1.0 {
        return c.cosh() * sinh_ratio(a, b);
    }
    // cosh(c) e^(a−b) = ½ (e^(c+a−b) + e^(−c+a−b)), both exponents ≤ 0.
    0.5 * ((c + a - b).exp() + (-c + a - b).exp()) * (-(-2.0 * a).exp_m1()) / (-(-2.0 * b).exp_m1())
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    /// ∫ g(t) dt over (0, ∞) for a pulse response: substitution t = e^y and composite
    /// 5-point Gauss–Legendre in y between `t_min` and `t_max`.
    fn integrate_time(g: impl Fn(f64) -> f64, t_min: f64, t_max: f64) -> f64 {
        let y = |u: f64| u.exp();
        crate::diffusion::quadrature::gauss_legendre_5(
            |u| g(y(u)) * y(u),
            t_min.ln(),
            t_max.ln(),
            600,
        )
    }

    fn cases() -> Vec<(SlabOptics, Boundary)> {
        let tissue = SlabOptics {
            mua_per_cm: 0.1,
            musp_per_cm: 10.0,
            thickness_cm: 2.0,
            n_medium: 1.4,
            n_outside: 1.0,
        };
        vec![
            (tissue, Boundary::Extrapolated),
            (tissue, Boundary::Zero),
            (
                SlabOptics {
                    mua_per_cm: 0.0,
                    ..tissue
                },
                Boundary::Extrapolated,
            ),
            (
                SlabOptics {
                    mua_per_cm: 0.0,
                    n_medium: 1.0,
                    ..tissue
                },
                Boundary::Zero,
            ),
            (
                SlabOptics {
                    mua_per_cm: 0.02,
                    musp_per_cm: 5.0,
                    thickness_cm: 0.5,
                    n_medium: 1.33,
                    n_outside: 1.0,
                },
                Boundary::ExtrapolatedWithA(1.0),
            ),
            (
                SlabOptics {
                    mua_per_cm: 0.3,
                    musp_per_cm: 20.0,
                    thickness_cm: 3.0,
                    n_medium: 1.0,
                    n_outside: 1.0,
                },
                Boundary::Extrapolated,
            ),
        ]
    }

    #[test]
    fn image_and_mode_forms_agree() {
        for (optics, boundary) in cases() {
            let slab = DiffusionSlab::new(optics, boundary).unwrap();
            let dv = slab.diffusion_cm * slab.speed_cm_s;
            let l2 = slab.span_cm * slab.span_cm;
            let peak = slab
                .images(0.02 * l2 / dv)
                .0
                .max(slab.images(0.02 * l2 / dv).1);
            for i in 0..=60 {
                let tau = 0.01 * 1.07f64.powi(i);
                let t = tau * l2 / dv;
                let (ri, ti) = slab.images(t);
                let (rm, tm) = slab.modes(t);
                assert!(
                    (ri - rm).abs() < 1e-12 * peak && (ti - tm).abs() < 1e-12 * peak,
                    "{optics:?} τ = {tau}: R {ri} vs {rm}, T {ti} vs {tm}"
                );
                // Relative agreement where both are well conditioned: the mode series loses
                // relative precision on the tiny early transmittance, the image sum on the
                // late tail (images of size O(1) cancel to e^(−π²τ)).
                if (0.03..0.4).contains(&tau) {
                    assert_relative_eq!(ri, rm, max_relative = 1e-12);
                    assert_relative_eq!(ti, tm, max_relative = 1e-12);
                }
            }
        }
    }

    /// docs/references.md, Diffusion theory 3: the time integrals of R(t) and T(t) equal the
    /// steady-state slab results (closed form derived in `steady_reflectance`; method of Contini,
    /// Martelli & Zaccanti 1997, Appl. Opt. 36:4587); without absorption R + T = 1.
    #[test]
    fn time_integrals_match_steady_state() {
        for (optics, boundary) in cases() {
            let slab = DiffusionSlab::new(optics, boundary).unwrap();
            let dv = slab.diffusion_cm * slab.speed_cm_s;
            // Below t_min the earliest arrival is suppressed by e^(−700); beyond t_max the
            // decay by e^(−60).
            let t_min = slab.z0_cm * slab.z0_cm / (4.0 * dv * 700.0);
            let t_max = 60.0 / slab.decay_rate_per_s();
            let r = integrate_time(|t| slab.reflectance_per_s(t), t_min, t_max);
            let tr = integrate_time(|t| slab.transmittance_per_s(t), t_min, t_max);
            assert_relative_eq!(r, slab.steady_reflectance(), max_relative = 1e-10);
            assert_relative_eq!(tr, slab.steady_transmittance(), max_relative = 1e-10);
            if optics.mua_per_cm == 0.0 {
                assert_relative_eq!(r + tr, 1.0, max_relative = 1e-10);
            } else {
                assert!(r + tr < 1.0);
            }
        }
    }

    /// The log-slope at late times equals the decay rate. Checked on the image sums, which
    /// do not contain the rate explicitly, between τ = Dvt/L² = 0.6 and 1.0: there the
    /// second mode is down by e^(−3π²·0.6) ≈ 2e−8 and the cancellation among the images
    /// costs ~e^(π²)·1e−16, so 1e−6 is a safe tolerance. The public functions (mode
    /// series beyond τ = 0.05) are checked at τ = 2 to 3 to 1e−10.
    #[test]
    fn late_time_decay_rate() {
        for (optics, boundary) in cases() {
            let slab = DiffusionSlab::new(optics, boundary).unwrap();
            let dv = slab.diffusion_cm * slab.speed_cm_s;
            let l2 = slab.span_cm * slab.span_cm;
            let rate = slab.decay_rate_per_s();
            let (t1, t2) = (0.6 * l2 / dv, l2 / dv);
            let (r1, tr1) = slab.images(t1);
            let (r2, tr2) = slab.images(t2);
            assert_relative_eq!((r1 / r2).ln() / (t2 - t1), rate, max_relative = 1e-6);
            assert_relative_eq!((tr1 / tr2).ln() / (t2 - t1), rate, max_relative = 1e-6);
            let (t1, t2) = (2.0 * l2 / dv, 3.0 * l2 / dv);
            let slope = (slab.reflectance_per_s(t1) / slab.reflectance_per_s(t2)).ln();
            assert_relative_eq!(slope / (t2 - t1), rate, max_relative = 1e-10);
            let slope = (slab.transmittance_per_s(t1) / slab.transmittance_per_s(t2)).ln();
            assert_relative_eq!(slope / (t2 - t1), rate, max_relative = 1e-10);
        }
    }

    #[test]
    fn spatially_resolved_integrates_to_total() {
        let (optics, boundary) = cases()[0];
        let slab = DiffusionSlab::new(optics, boundary).unwrap();
        let t = 1e-9;
        let dv = slab.diffusion_cm * slab.speed_cm_s;
        let rho_max = (4.0 * dv * t * 50.0).sqrt();
        let n = 4000;
        let h = rho_max / n as f64;
        // Midpoint rule on 2πρ R(ρ, t).
        let integral: f64 = (0..n)
            .map(|i| {
                let rho = (i as f64 + 0.5) * h;
                2.0 * PI * rho * slab.reflectance_per_cm2_s(rho, t) * h
            })
            .sum();
        assert_relative_eq!(integral, slab.reflectance_per_s(t), max_relative = 1e-6);
        assert_relative_eq!(
            slab.transmittance_per_cm2_s(0.0, t),
            slab.transmittance_per_s(t) / (4.0 * PI * dv * t),
            max_relative = 1e-14
        );
    }

    #[test]
    fn boundary_factor_from_index() {
        // Haskell et al. 1994 Fresnel integrals: R_eff(1) = 0, R_eff(1.4) ≈ 0.493 (A ≈ 2.95).
        assert_eq!(effective_reflection(1.0), 0.0);
        assert!((boundary_factor_a(1.4) - 2.95).abs() < 0.01);
        let slab = DiffusionSlab::new(cases()[0].0, Boundary::Extrapolated).unwrap();
        assert_relative_eq!(
            slab.extrapolation_length_cm(),
            2.0 * boundary_factor_a(1.4) * slab.diffusion_cm()
        );
        assert_relative_eq!(slab.source_depth_cm(), 0.1);
        assert_relative_eq!(slab.speed_cm_s(), SPEED_OF_LIGHT_CM_S / 1.4);
    }

    #[test]
    fn invalid_inputs() {
        let good = cases()[0].0;
        let e = DiffusionSlab::new(
            SlabOptics {
                musp_per_cm: 0.4,
                ..good
            },
            Boundary::Zero,
        );
        assert!(matches!(
            e,
            Err(TimeResolvedError::SourceOutsideSlab { .. })
        ));
        let e = DiffusionSlab::new(
            SlabOptics {
                mua_per_cm: -1.0,
                ..good
            },
            Boundary::Zero,
        );
        assert!(matches!(
            e,
            Err(TimeResolvedError::InvalidParameter {
                name: "mua_per_cm",
                ..
            })
        ));
        let e = DiffusionSlab::new(
            SlabOptics {
                thickness_cm: f64::NAN,
                ..good
            },
            Boundary::Zero,
        );
        assert!(matches!(e, Err(TimeResolvedError::InvalidParameter { .. })));
        // A denser outside medium is a valid face (A slightly above 1), and so is a large
        // index step, where total internal reflection makes A large but finite.
        for n_outside in [1.5, 0.35] {
            let slab = DiffusionSlab::new(SlabOptics { n_outside, ..good }, Boundary::Extrapolated)
                .unwrap();
            assert!(slab.extrapolation_length_cm() > 0.0);
            assert!(slab.steady_reflectance().is_finite());
        }
        let slab = DiffusionSlab::new(good, Boundary::Zero).unwrap();
        assert_eq!(slab.reflectance_per_s(0.0), 0.0);
        assert_eq!(slab.reflectance_per_s(-1.0), 0.0);
        assert!(slab.reflectance_per_s(f64::NAN).is_nan());
        assert_eq!(slab.transmittance_per_s(1e-15), 0.0);
    }
}
