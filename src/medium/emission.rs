//! Where a star's energy is released: the sampler of the energy-generation source.
//!
//! Photons of [`super::Source::EnergyGeneration`] start at a radius drawn with probability
//! ∝ ε ρ r² dr, the luminosity released in each shell, dL = 4π r² ρ ε dr, on the model's own
//! profile ([`super::profile::RadialStructure`]: ρ and ε linear in r between table rows).
//! Sampling is exact for that piecewise-linear profile: the table interval by inversion of
//! the cumulative luminosity (binary search), then the radius inside it by rejection, with
//! proposals ∝ r² (r = (a³ + u (b³ − a³))^(1/3)) accepted with probability
//! ρ(r) ε(r) / (max ρ · max ε) on the interval. The direction is isotropic; by spherical
//! symmetry the photon starts on the z axis, as the point source does.

use rand::{Rng, RngExt};

use super::profile::RadialStructure;
use super::profile::structure::gauss4;

/// One table interval of the emission profile: radii, and ρ, ε at its ends (linear between).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Piece {
    inner_cm: f64,
    outer_cm: f64,
    density: (f64, f64),
    energy: (f64, f64),
}

impl Piece {
    /// ρ ε at fraction `s` of the interval, erg cm⁻³ s⁻¹.
    fn emissivity(&self, s: f64) -> f64 {
        let rho = self.density.0 + s * (self.density.1 - self.density.0);
        let eps = self.energy.0 + s * (self.energy.1 - self.energy.0);
        rho * eps
    }

    /// 4π ∫ r² ρ ε dr from the inner radius to `to_cm` (exact: a polynomial of degree 4).
    fn luminosity_to(&self, to_cm: f64) -> f64 {
        let width = self.outer_cm - self.inner_cm;
        4.0 * std::f64::consts::PI
            * gauss4(self.inner_cm, to_cm, |r| {
                r * r * self.emissivity((r - self.inner_cm) / width)
            })
    }

    /// The piece ending at `radius_cm` instead (ρ and ε interpolated there).
    fn cut_at(&self, radius_cm: f64) -> Self {
        let s = (radius_cm - self.inner_cm) / (self.outer_cm - self.inner_cm);
        let at = |(a, b): (f64, f64)| a + s * (b - a);
        Self {
            inner_cm: self.inner_cm,
            outer_cm: radius_cm,
            density: (self.density.0, at(self.density)),
            energy: (self.energy.0, at(self.energy)),
        }
    }
}

/// The luminosity-weighted distribution of starting radii of a sphere, with the medium's
/// shell boundaries to find the starting layer. Immutable: share it between threads.
#[derive(Debug, Clone, PartialEq)]
pub struct EmissionSampler {
    pieces: Vec<Piece>,
    /// Luminosity inside the outer radius of each piece, erg s⁻¹.
    cumulative: Vec<f64>,
    /// Outer radius of each layer of the medium, cm.
    boundaries_cm: Vec<f64>,
}

impl EmissionSampler {
    /// The sampler of `structure`'s energy generation for a medium whose layers end at
    /// `boundaries_cm`; None if the structure has no energy generation or no luminosity.
    pub fn new(structure: &RadialStructure, boundaries_cm: &[f64]) -> Option<Self> {
        if !structure.has_energy_generation() {
            return None;
        }
        let rows = structure.rows();
        let pieces: Vec<Piece> = rows
            .windows(2)
            .map(|pair| Piece {
                inner_cm: pair[0].radius_cm,
                outer_cm: pair[1].radius_cm,
                density: (pair[0].density_g_cm3, pair[1].density_g_cm3),
                energy: (
                    pair[0].energy_generation_erg_g_s.unwrap_or(0.0),
                    pair[1].energy_generation_erg_g_s.unwrap_or(0.0),
                ),
            })
            .collect();
        Self::from_pieces(pieces, boundaries_cm.to_vec())
    }

    fn from_pieces(pieces: Vec<Piece>, boundaries_cm: Vec<f64>) -> Option<Self> {
        let mut total = 0.0;
        let cumulative: Vec<f64> = pieces
            .iter()
            .map(|piece| {
                total += piece.luminosity_to(piece.outer_cm);
                total
            })
            .collect();
        (total > 0.0 && total.is_finite()).then_some(Self {
            pieces,
            cumulative,
            boundaries_cm,
        })
    }

    /// The total luminosity of the source, L = ∫ ε dm, erg s⁻¹.
    pub fn luminosity_erg_s(&self) -> f64 {
        *self.cumulative.last().expect("a sampler has pieces")
    }

    /// The luminosity released inside `radius_cm`, erg s⁻¹ (exact for the piecewise-linear
    /// profile).
    pub fn luminosity_inside(&self, radius_cm: f64) -> f64 {
        let k = self.pieces.partition_point(|p| p.outer_cm <= radius_cm);
        if k >= self.pieces.len() {
            return self.luminosity_erg_s();
        }
        let before = if k == 0 { 0.0 } else { self.cumulative[k - 1] };
        let piece = &self.pieces[k];
        if radius_cm <= piece.inner_cm {
            return before;
        }
        before + piece.luminosity_to(radius_cm)
    }

    /// Outer radius of the emitting region (the medium's surface or a truncation), cm.
    pub fn outer_radius_cm(&self) -> f64 {
        self.pieces.last().map_or(0.0, |p| p.outer_cm)
    }

    /// The same source restricted to r < `radius_cm` (and renormalised), for a medium
    /// whose layers now end at `boundaries_cm`; None if nothing is released below.
    pub fn truncated_at(&self, radius_cm: f64, boundaries_cm: &[f64]) -> Option<Self> {
        let pieces: Vec<Piece> = self
            .pieces
            .iter()
            .filter(|p| p.inner_cm < radius_cm)
            .map(|p| {
                if p.outer_cm > radius_cm {
                    p.cut_at(radius_cm)
                } else {
                    *p
                }
            })
            .collect();
        Self::from_pieces(pieces, boundaries_cm.to_vec())
    }

    /// Draws a starting radius (cm) and the index of the layer holding it.
    pub fn sample<R: Rng + ?Sized>(&self, rng: &mut R) -> (f64, usize) {
        let target = rng.random::<f64>() * self.luminosity_erg_s();
        let k = self
            .cumulative
            .partition_point(|&c| c <= target)
            .min(self.pieces.len() - 1);
        let piece = &self.pieces[k];
        let bound = piece.density.0.max(piece.density.1) * piece.energy.0.max(piece.energy.1);
        let (a3, b3) = (piece.inner_cm.powi(3), piece.outer_cm.powi(3));
        let width = piece.outer_cm - piece.inner_cm;
        let radius = loop {
            let r = (a3 + rng.random::<f64>() * (b3 - a3))
                .cbrt()
                .clamp(piece.inner_cm, piece.outer_cm);
            if rng.random::<f64>() * bound < piece.emissivity((r - piece.inner_cm) / width) {
                break r;
            }
        };
        let layer = self
            .boundaries_cm
            .partition_point(|&b| b <= radius)
            .min(self.boundaries_cm.len() - 1);
        (radius, layer)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::medium::profile::StructureRow;
    use rand::SeedableRng;

    fn structure() -> RadialStructure {
        // ρ = 2 − r, ε = 3 + r on [0, 2] (two table intervals).
        let row = |r: f64| StructureRow {
            radius_cm: r,
            density_g_cm3: 2.0 - r,
            temperature_k: None,
            hydrogen_x: None,
            metals_z: None,
            opacity_cm2_g: 1.0,
            energy_generation_erg_g_s: Some(3.0 + r),
            mass_g: 0.0,
            luminosity_erg_s: None,
        };
        RadialStructure::new(vec![row(0.0), row(1.0), row(2.0)], vec![], 0.0, 0.0)
    }

    #[test]
    fn samples_follow_the_luminosity_profile() {
        let s = structure();
        let sampler = EmissionSampler::new(&s, &[0.5, 1.5, 2.0]).unwrap();
        let total = s.luminosity_erg_s().unwrap();
        assert!((sampler.luminosity_erg_s() / total - 1.0).abs() < 1e-14);
        // Fraction of samples inside r against L(r)/L, and the layer index: 10⁵ draws,
        // binomial σ ≤ 0.0016, tolerance 4σ.
        let mut rng = rand_xoshiro::Xoshiro256PlusPlus::seed_from_u64(3);
        let n = 100_000;
        let mut inside = [0usize; 3];
        for _ in 0..n {
            let (r, layer) = sampler.sample(&mut rng);
            assert!((0.0..=2.0).contains(&r));
            let expected_layer = [0.5, 1.5, 2.0].partition_point(|&b| b <= r).min(2);
            assert_eq!(layer, expected_layer);
            for (slot, edge) in [0.5, 1.0, 1.5].iter().enumerate() {
                if r < *edge {
                    inside[slot] += 1;
                }
            }
        }
        for (slot, edge) in [0.5, 1.0, 1.5].iter().enumerate() {
            let p = s.luminosity_at(*edge).unwrap() / total;
            let observed = inside[slot] as f64 / n as f64;
            let sigma = (p * (1.0 - p) / n as f64).sqrt();
            assert!(
                (observed - p).abs() < 4.0 * sigma,
                "r < {edge}: {observed} vs {p}"
            );
            assert!((sampler.luminosity_inside(*edge) / total - p).abs() < 1e-14);
        }
        // Truncated at r = 1: renormalised to L(1).
        let cut = sampler.truncated_at(1.0, &[0.5, 1.0]).unwrap();
        assert!((cut.luminosity_erg_s() / s.luminosity_at(1.0).unwrap() - 1.0).abs() < 1e-14);
        for _ in 0..1000 {
            assert!(cut.sample(&mut rng).0 <= 1.0);
        }
    }
}
