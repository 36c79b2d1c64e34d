//! Phase functions: the distribution of the scattering angle, and sampling from it.

use rand::{Rng, RngExt};

use crate::medium::{MediumError, Quantity};

/// The anisotropy g of a Henyey–Greenstein phase function: the mean cosine of the
/// scattering angle (dimensionless), always strictly between −1 and 1. Its field is
/// private, so [`Anisotropy::new`] (or [`PhaseFunction::henyey_greenstein`]) is the only
/// way to build one, and an invalid g cannot exist:
///
/// ```compile_fail
/// use sojourn::transport::{Anisotropy, PhaseFunction};
/// let forward = PhaseFunction::HenyeyGreenstein(Anisotropy(1.5)); // private field
/// ```
///
/// ```
/// use sojourn::transport::{Anisotropy, PhaseFunction};
/// assert!(Anisotropy::new(1.5).is_err());
/// assert!(PhaseFunction::henyey_greenstein(1.5).is_err());
/// assert_eq!(Anisotropy::new(0.8).unwrap().value(), 0.8);
/// ```
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Anisotropy(f64);

impl Anisotropy {
    /// The anisotropy `g`, checked.
    ///
    /// # Errors
    /// [`MediumError::InvalidValue`] for `g` outside (−1, 1) or NaN.
    pub fn new(g: f64) -> Result<Self, MediumError> {
        if g.is_nan() || g <= -1.0 || g >= 1.0 {
            return Err(MediumError::value(
                "g",
                g,
                Quantity::Dimensionless,
                "an anisotropy strictly between -1 and 1",
            ));
        }
        Ok(Self(g))
    }

    /// The mean cosine g, in (−1, 1).
    pub fn value(self) -> f64 {
        self.0
    }
}

/// Angular distribution of single scattering, as a function of the cosine μ of the angle
/// between the incoming and outgoing directions (azimuth uniform).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum PhaseFunction {
    /// p(μ) = 1/2: all directions equally likely.
    Isotropic,
    /// Henyey & Greenstein (1941), ApJ 93:70:
    /// p(μ) = (1 − g²) / (2 (1 + g² − 2gμ)^{3/2}), mean cosine g, −1 < g < 1.
    HenyeyGreenstein(Anisotropy),
    /// Rayleigh / Thomson dipole scattering of unpolarised light:
    /// p(μ) = (3/8)(1 + μ²) (Chandrasekhar 1950, Radiative Transfer, §17); ⟨μ²⟩ = 2/5.
    Rayleigh,
}

impl PhaseFunction {
    /// A Henyey–Greenstein phase function with anisotropy `g` (−1 < g < 1).
    ///
    /// # Errors
    /// [`MediumError::InvalidValue`] for `g` outside (−1, 1) or NaN.
    pub fn henyey_greenstein(g: f64) -> Result<Self, MediumError> {
        Anisotropy::new(g).map(PhaseFunction::HenyeyGreenstein)
    }

    /// Mean cosine of the scattering angle, ⟨μ⟩ (the anisotropy g).
    pub fn mean_cosine(&self) -> f64 {
        match *self {
            PhaseFunction::Isotropic | PhaseFunction::Rayleigh => 0.0,
            PhaseFunction::HenyeyGreenstein(g) => g.value(),
        }
    }

    /// Probability density of μ on [−1, 1] (integrates to 1).
    pub fn density(&self, mu: f64) -> f64 {
        match *self {
            PhaseFunction::Isotropic => 0.5,
            PhaseFunction::HenyeyGreenstein(g) => {
                let g = g.value();
                (1.0 - g * g) / (2.0 * (1.0 + g * g - 2.0 * g * mu).powf(1.5))
            }
            PhaseFunction::Rayleigh => 0.375 * (1.0 + mu * mu),
        }
    }

    /// Draws the cosine of the scattering angle by exact inversion of the cumulative
    /// distribution.
    pub fn sample_cosine<R: Rng + ?Sized>(&self, rng: &mut R) -> f64 {
        let xi: f64 = rng.random();
        match *self {
            PhaseFunction::Isotropic => 2.0 * xi - 1.0,
            PhaseFunction::HenyeyGreenstein(g) => {
                let g = g.value();
                if g.abs() < 1e-6 {
                    return 2.0 * xi - 1.0;
                }
                // Inverse CDF (Henyey & Greenstein 1941; e.g. Witt 1977, ApJS 35:1, eq. 18).
                let ratio = (1.0 - g * g) / (1.0 - g + 2.0 * g * xi);
                ((1.0 + g * g - ratio * ratio) / (2.0 * g)).clamp(-1.0, 1.0)
            }
            PhaseFunction::Rayleigh => {
                // CDF (3/8)(μ + μ³/3) + 1/2 = ξ, i.e. μ³ + 3μ − (8ξ − 4) = 0, solved by
                // Cardano's formula (one real root).
                let u = 4.0 * xi - 2.0;
                let root = (u * u + 1.0).sqrt();
                ((u + root).cbrt() + (u - root).cbrt()).clamp(-1.0, 1.0)
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn densities_integrate_to_one() {
        for phase in [
            PhaseFunction::Isotropic,
            PhaseFunction::Rayleigh,
            PhaseFunction::henyey_greenstein(0.3).unwrap(),
            PhaseFunction::henyey_greenstein(-0.6).unwrap(),
        ] {
            let n = 200_000;
            let integral: f64 = (0..n)
                .map(|k| phase.density(-1.0 + (k as f64 + 0.5) * 2.0 / n as f64) * 2.0 / n as f64)
                .sum();
            assert!((integral - 1.0).abs() < 1e-6, "{phase:?}: {integral}");
        }
    }

    #[test]
    fn anisotropy_outside_the_open_interval_is_rejected() {
        for g in [1.0, -1.0, 1.5, f64::NAN] {
            assert!(PhaseFunction::henyey_greenstein(g).is_err());
        }
    }
}
