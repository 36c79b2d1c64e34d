//! A sphere's shells as the radial diffusion sees them: piecewise-constant diffusion
//! coefficient, scattering and absorption rates, and the exact integrals over radius that
//! the first-passage tables are built from.
//!
//! The radial part of three-dimensional diffusion with coefficient D(r) has the generator
//! L f = r⁻² (r² D f′)′ (Gardiner, *Stochastic Methods*, 4th ed., 2009, ch. 5: a
//! one-dimensional diffusion in its natural scale s and speed measure m). Its scale function
//! has s′(r) = 1/(r² D) and its speed measure is m(dr) = r² dr, so that
//! L f = (1/r²) d/dr (1/s′ · df/dr). With D constant on each shell these integrals are
//! elementary; they are written here in forms free of cancellation.

/// One radial piece of constant properties.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Piece {
    /// Inner radius, cm.
    pub(super) lower_cm: f64,
    /// Outer radius, cm.
    pub(super) upper_cm: f64,
    /// Diffusion coefficient, cm²/s.
    pub(super) diffusion: f64,
    /// Scatterings per second, v σ_s.
    pub(super) scattering_rate: f64,
    /// Absorptions per second, v σ_a.
    pub(super) absorption_rate: f64,
    /// Index of the medium's cell (shell) this piece belongs to (the extrapolation pieces
    /// beyond a passage's exits count as the shell next to the exit).
    pub(super) shell: usize,
}

impl Piece {
    /// ∫ dr / (r² D) over `[p, q]` inside this piece (p > 0): (q − p)/(p q D).
    pub(super) fn scale(&self, p: f64, q: f64) -> f64 {
        (q - p) / (p * q * self.diffusion)
    }

    /// ∫ dr / √D over `[p, q]`: the diffusion distance, used to place grid points.
    pub(super) fn diffusion_distance(&self, p: f64, q: f64) -> f64 {
        (q - p) / self.diffusion.sqrt()
    }
}

/// ∫ r² dr over `[p, q]`.
pub(super) fn volume(p: f64, q: f64) -> f64 {
    (q - p) * (q * q + q * p + p * p) / 3.0
}

/// ∫ (1/p − 1/r) r² dr over `[p, q]`, p > 0: (q − p)² (2q + p) / (6 p). This is D times the
/// integral of (s(r) − s(p)) r² dr over one piece.
pub(super) fn scale_moment(p: f64, q: f64) -> f64 {
    let h = q - p;
    h * h * (2.0 * q + p) / (6.0 * p)
}

/// The pieces covering `[from, to]` of a list of pieces sorted by radius (clipped at the
/// ends).
pub(super) fn clip(pieces: &[Piece], from: f64, to: f64) -> Vec<Piece> {
    pieces
        .iter()
        .filter(|piece| piece.upper_cm > from && piece.lower_cm < to)
        .map(|piece| Piece {
            lower_cm: piece.lower_cm.max(from),
            upper_cm: piece.upper_cm.min(to),
            ..*piece
        })
        .filter(|piece| piece.upper_cm > piece.lower_cm)
        .collect()
}

/// Integrals of one grid interval `[x, y]` (x > 0) of a 1-D finite-volume grid in the
/// scale coordinate.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct IntervalIntegrals {
    /// Δs = ∫ dr/(r² D).
    pub(super) scale: f64,
    /// ∫ r² dr, and the same weighted by the scattering and absorption rates.
    pub(super) volume: [f64; 3],
    /// ∫ (s(r) − s(x))/Δs · r² dr (the part of the volume that a hat function in s
    /// gives to the upper end), and the same rate-weighted.
    pub(super) upper_share: [f64; 3],
}

/// The integrals of `[x, y]` over `pieces` (which must cover it; x > 0).
pub(super) fn interval_integrals(pieces: &[Piece], x: f64, y: f64) -> IntervalIntegrals {
    let parts = clip(pieces, x, y);
    let mut scale = 0.0;
    let mut volume_sum = [0.0; 3];
    // ∫ (s(r) − s(x)) r² dr, and rate-weighted, before division by Δs.
    let mut moment = [0.0; 3];
    for part in &parts {
        let (p, q) = (part.lower_cm, part.upper_cm);
        let weights = [1.0, part.scattering_rate, part.absorption_rate];
        let v = volume(p, q);
        // Within the part: s(r) − s(x) = scale_so_far + (1/p − 1/r)/D.
        let m = scale * v + scale_moment(p, q) / part.diffusion;
        for k in 0..3 {
            volume_sum[k] += weights[k] * v;
            moment[k] += weights[k] * m;
        }
        scale += part.scale(p, q);
    }
    IntervalIntegrals {
        scale,
        volume: volume_sum,
        upper_share: moment.map(|m| m / scale),
    }
}

/// The unweighted volume integrals of `[x, y]` (x > 0) split by shell: for each clipped
/// part, its shell, ∫ r² dr and the part of it a hat function in s gives to the upper end
/// (as in [`IntervalIntegrals::upper_share`]). The parts add up to `interval_integrals`.
pub(super) fn interval_parts(pieces: &[Piece], x: f64, y: f64) -> Vec<(usize, f64, f64)> {
    let parts = clip(pieces, x, y);
    let total_scale: f64 = parts
        .iter()
        .map(|part| part.scale(part.lower_cm, part.upper_cm))
        .sum();
    let mut scale = 0.0;
    parts
        .iter()
        .map(|part| {
            let (p, q) = (part.lower_cm, part.upper_cm);
            let v = volume(p, q);
            let m = scale * v + scale_moment(p, q) / part.diffusion;
            scale += part.scale(p, q);
            (part.shell, v, m / total_scale)
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn uniform(lower: f64, upper: f64, diffusion: f64) -> Piece {
        Piece {
            lower_cm: lower,
            upper_cm: upper,
            diffusion,
            scattering_rate: 2.0,
            absorption_rate: 0.5,
            shell: 0,
        }
    }

    #[test]
    fn elementary_integrals_match_quadrature() {
        let (p, q, d) = (0.3, 1.7, 2.5);
        let n = 200_000;
        let h = (q - p) / n as f64;
        let mid = |k: usize| p + (k as f64 + 0.5) * h;
        let scale: f64 = (0..n).map(|k| h / (mid(k).powi(2) * d)).sum();
        let moment: f64 = (0..n)
            .map(|k| (1.0 / p - 1.0 / mid(k)) * mid(k).powi(2) * h)
            .sum();
        let piece = uniform(0.0, 5.0, d);
        assert!((piece.scale(p, q) / scale - 1.0).abs() < 1e-9);
        assert!((scale_moment(p, q) / moment - 1.0).abs() < 1e-9);
        assert!((volume(p, q) - (q.powi(3) - p.powi(3)) / 3.0).abs() < 1e-14);
    }

    #[test]
    fn interval_integrals_add_up_across_pieces() {
        // Two pieces of different D: the hat shares of the two ends add to the volume, and
        // the upper share lies between 0 and the volume.
        let pieces = [uniform(0.0, 1.0, 1.0), uniform(1.0, 2.0, 4.0)];
        let whole = interval_integrals(&pieces, 0.5, 1.5);
        assert!((whole.volume[0] - volume(0.5, 1.5)).abs() < 1e-14);
        assert!(whole.upper_share[0] > 0.0 && whole.upper_share[0] < whole.volume[0]);
        let expected_scale = pieces[0].scale(0.5, 1.0) + pieces[1].scale(1.0, 1.5);
        assert!((whole.scale - expected_scale).abs() < 1e-15);
        assert!((whole.volume[1] - 2.0 * whole.volume[0]).abs() < 1e-14);
    }
}
