//! Reflection and transmission of plane-parallel slabs by the doubling method, computed
//! independently of the crate under test, for reference values of the Monte Carlo
//! (docs/references.md, Transport 6).
//!
//! The azimuth-averaged radiance is carried in flux channels: the cosines μᵢ of a quadrature
//! on [0, 1] with weights wᵢ, channel i holding the flux 2 wᵢ μᵢ I(μᵢ) of one hemisphere.
//! Reflection and transmission of a layer are then matrices acting on channel fluxes, and
//! layers combine by plain matrix products: a homogeneous layer, the same seen from either
//! face, doubled onto itself gives
//!
//! ```text
//! R₂ = R + T R (1 − R R)⁻¹ T,   T₂ = T (1 − R R)⁻¹ T
//! ```
//!
//! (van de Hulst 1980, *Multiple Light Scattering*, vol. 1, ch. 5; Hansen & Travis 1974,
//! Space Sci. Rev. 16:527, §3.4). A layer of optical thickness Δτ ≪ μ starts as single
//! scattering: Rᵢⱼ = ω Δτ wᵢ h(−μᵢ, μⱼ) / (2 μⱼ), Tᵢⱼ = δᵢⱼ e^(−Δτ/μⱼ) + ω Δτ wᵢ h(μᵢ, μⱼ) / (2 μⱼ),
//! with h the azimuthal average of the phase function, normalised so that ½ ∫₋₁¹ h dμ = 1
//! (each column is rescaled so that the quadrature conserves energy exactly). A collimated
//! beam travels in an extra channel of weight 0: light starts there and leaves it, but no
//! scattered light enters it, so the beam's direction need not be a quadrature node. The
//! total reflectance of a beam is the sum of its column of R, the total transmittance (with
//! the unscattered e^(−τ/μ₀)) the sum of its column of T.
//!
//! A refractive face above a half-space is a diagonal operator: the flux in channel i going
//! up is reflected back down with the Fresnel reflectance r(μᵢ) of unpolarised light (Born &
//! Wolf, *Principles of Optics*, §1.5.2; total internal reflection beyond the critical
//! angle), the rest leaves. The quadrature is split at the critical cosine, where r(μ) has a
//! kink.
#![allow(dead_code)] // Included by `mod` into test binaries that use only part of it.

use nalgebra::{DMatrix, DVector};

use super::chandrasekhar::gauss_legendre_01;

/// A phase function given as p(cos Θ), normalised to (1/4π) ∫ p dΩ = 1.
pub type Phase = fn(f64, f64) -> f64;

/// Henyey–Greenstein, p(cos Θ) = (1 − g²) / (1 + g² − 2 g cos Θ)^(3/2) (Henyey & Greenstein
/// 1941, ApJ 93:70).
pub fn henyey_greenstein(g: f64, cos_theta: f64) -> f64 {
    (1.0 - g * g) / (1.0 + g * g - 2.0 * g * cos_theta).powf(1.5)
}

/// Isotropic scattering, p = 1 (the parameter is unused).
pub fn isotropic(_g: f64, _cos_theta: f64) -> f64 {
    1.0
}

/// Azimuthal average (1/2π) ∫ p(μ μ′ + √(1−μ²) √(1−μ′²) cos φ) dφ by the trapezoid rule on
/// 512 points (exponentially accurate for a smooth periodic integrand).
fn azimuthal_average(phase: Phase, g: f64, mu: f64, mu_prime: f64) -> f64 {
    const POINTS: usize = 512;
    let sines = ((1.0 - mu * mu).max(0.0) * (1.0 - mu_prime * mu_prime).max(0.0)).sqrt();
    (0..POINTS)
        .map(|k| {
            let phi = 2.0 * std::f64::consts::PI * k as f64 / POINTS as f64;
            phase(g, (mu * mu_prime + sines * phi.cos()).clamp(-1.0, 1.0))
        })
        .sum::<f64>()
        / POINTS as f64
}

/// A quadrature for the diffuse field plus one beam channel of weight 0.
#[derive(Debug, Clone)]
pub struct Channels {
    /// Cosines μᵢ; the last one is the beam's.
    pub mu: Vec<f64>,
    /// Weights wᵢ on [0, 1] (the beam's is 0).
    pub weight: Vec<f64>,
}

impl Channels {
    /// Gauss–Legendre on the pieces [b₀, b₁], [b₁, b₂], … of [0, 1] given by `breaks` (0 and 1
    /// included), `nodes` points each, plus the beam at cosine `beam_mu`.
    pub fn new(breaks: &[f64], nodes: usize, beam_mu: f64) -> Self {
        let (x, w) = gauss_legendre_01(nodes);
        let mut mu = Vec::new();
        let mut weight = Vec::new();
        for piece in breaks.windows(2) {
            let (a, b) = (piece[0], piece[1]);
            for (xi, wi) in x.iter().zip(&w) {
                mu.push(a + (b - a) * xi);
                weight.push((b - a) * wi);
            }
        }
        mu.push(beam_mu);
        weight.push(0.0);
        Self { mu, weight }
    }

    /// Number of channels, the beam's included.
    pub fn len(&self) -> usize {
        self.mu.len()
    }

    /// Index of the beam channel.
    pub fn beam(&self) -> usize {
        self.mu.len() - 1
    }
}

/// Reflection and transmission matrices of a homogeneous layer (the same from either face).
#[derive(Debug, Clone)]
pub struct Layer {
    /// Reflection, channel fluxes in → out.
    pub r: DMatrix<f64>,
    /// Transmission, with the unscattered part on the diagonal.
    pub t: DMatrix<f64>,
    /// Optical thickness.
    pub tau: f64,
}

impl Layer {
    /// A layer of optical thickness `tau`, albedo `omega`, phase function `phase(g, ·)`,
    /// started as single scattering in a sublayer of thickness tau / 2^`doublings` and
    /// doubled.
    pub fn new(
        channels: &Channels,
        tau: f64,
        omega: f64,
        phase: Phase,
        g: f64,
        doublings: u32,
    ) -> Self {
        let n = channels.len();
        let thin = tau / 2f64.powi(doublings as i32);
        let mut reflect = DMatrix::zeros(n, n);
        let mut transmit = DMatrix::zeros(n, n);
        for j in 0..n {
            let mu_j = channels.mu[j];
            // Scattering of channel j (going down) into every channel i.
            let mut down = vec![0.0; n];
            let mut up = vec![0.0; n];
            for i in 0..n {
                if channels.weight[i] == 0.0 {
                    continue;
                }
                down[i] = azimuthal_average(phase, g, channels.mu[i], mu_j);
                up[i] = azimuthal_average(phase, g, -channels.mu[i], mu_j);
            }
            // Normalise so that the quadrature conserves energy: Σᵢ wᵢ (h↓ + h↑) = 2.
            let total: f64 = (0..n).map(|i| channels.weight[i] * (down[i] + up[i])).sum();
            let scale = 2.0 / total;
            for i in 0..n {
                let factor = omega * thin * channels.weight[i] * scale / (2.0 * mu_j);
                reflect[(i, j)] = factor * up[i];
                transmit[(i, j)] = factor * down[i];
            }
            transmit[(j, j)] += (-thin / mu_j).exp();
        }
        let mut layer = Self {
            r: reflect,
            t: transmit,
            tau: thin,
        };
        for _ in 0..doublings {
            layer = layer.doubled();
        }
        layer
    }

    /// The layer stacked on a copy of itself.
    pub fn doubled(&self) -> Self {
        let n = self.r.nrows();
        let bounce = DMatrix::identity(n, n) - &self.r * &self.r;
        let inverse_t = bounce.lu().solve(&self.t).expect("1 − R R is invertible");
        Self {
            r: &self.r + &self.t * &self.r * &inverse_t,
            t: &self.t * &inverse_t,
            tau: 2.0 * self.tau,
        }
    }

    /// Total reflectance of a beam in `channel`: the sum of its column of R.
    pub fn reflectance(&self, channel: usize) -> f64 {
        self.r.column(channel).sum()
    }

    /// Total transmittance of a beam in `channel`, unscattered light included.
    pub fn transmittance(&self, channel: usize) -> f64 {
        self.t.column(channel).sum()
    }
}

/// Fresnel reflectance of unpolarised light going from index `n_from` into `n_to` at
/// incidence cosine `mu` (1 beyond the critical angle).
pub fn fresnel(n_from: f64, n_to: f64, mu: f64) -> f64 {
    let sin_t = n_from / n_to * (1.0 - mu * mu).max(0.0).sqrt();
    if sin_t >= 1.0 {
        return 1.0;
    }
    let cos_t = (1.0 - sin_t * sin_t).sqrt();
    let s = (n_from * mu - n_to * cos_t) / (n_from * mu + n_to * cos_t);
    let p = (n_from * cos_t - n_to * mu) / (n_from * cos_t + n_to * mu);
    0.5 * (s * s + p * p)
}

/// Total reflectance (specular part included) of a half-space of index `n` under a medium of
/// index 1, isotropic scattering with albedo `omega`, for a beam at normal incidence.
/// `nodes` Gauss points on each side of the critical cosine; the half-space is a slab of
/// optical thickness 128 (its transmission is checked to be below 10⁻¹²).
pub fn semi_infinite_with_index(omega: f64, n: f64, nodes: usize) -> f64 {
    let critical = (1.0 - 1.0 / (n * n)).sqrt();
    let channels = Channels::new(&[0.0, critical, 1.0], nodes, 1.0);
    let thick = Layer::new(&channels, 128.0, omega, isotropic, 0.0, 31);
    assert!(
        thick.transmittance(channels.beam()) < 1e-12,
        "the slab must be thick enough to be a half-space"
    );
    let specular = fresnel(1.0, n, 1.0);
    let size = channels.len();
    // Light inside going up in channel i is reflected back down with r(μᵢ).
    let internal = DMatrix::from_diagonal(&DVector::from_iterator(
        size,
        channels.mu.iter().map(|&mu| fresnel(n, 1.0, mu)),
    ));
    let mut entering = DVector::zeros(size);
    entering[channels.beam()] = 1.0 - specular;
    // Upward flux u = R (d + D u): u = (1 − R D)⁻¹ R d.
    let system = DMatrix::identity(size, size) - &thick.r * &internal;
    let up = system
        .lu()
        .solve(&(&thick.r * entering))
        .expect("1 − R D is invertible");
    let escaped: f64 = (0..size).map(|i| (1.0 - internal[(i, i)]) * up[i]).sum();
    specular + escaped
}
