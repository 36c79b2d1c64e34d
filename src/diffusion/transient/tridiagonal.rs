//! Linear algebra on the tridiagonal pencil (K, C): solves of `(αC + βK) x = r` by the
//! Thomas algorithm, the inertia count of `K − σC`, and the smallest eigenvalue λ₁ of
//! `K x = λ C x` with its eigenvector.
//!
//! K is a symmetric M-matrix (positive diagonal, non-positive off-diagonal, diagonally
//! dominant, strictly so at the faces) and C is positive and diagonal, so `αC + βK` with
//! α, β ≥ 0 is symmetric positive definite and the Thomas algorithm needs no pivoting. The
//! number of negative pivots of the LDLᵀ factorisation of `K − σC` is the number of
//! eigenvalues below σ (Sylvester's law of inertia; the Sturm-sequence count of Golub & Van
//! Loan, *Matrix Computations*, 4th ed., §8.4.1), so bisection on it gives λ₁ of the discrete
//! operator to rounding: the factorisation is backward stable, so the relative error is
//! about ε λ_max/λ₁ (4e−12 for a uniform chain of 200 nodes).

use super::system::System;

/// Solves `(alpha C + beta K) x = rhs` into `out`, `scratch` of the same length as the
/// system (Thomas algorithm).
pub(super) fn solve(
    system: &System,
    alpha: f64,
    beta: f64,
    rhs: &[f64],
    out: &mut [f64],
    scratch: &mut [f64],
) {
    let n = system.len();
    let (capacity, diagonal, link) = (&system.capacity, &system.diagonal, &system.link);
    let mut inverse = 1.0 / (alpha * capacity[0] + beta * diagonal[0]);
    out[0] = rhs[0] * inverse;
    for i in 1..n {
        let off = -beta * link[i - 1];
        scratch[i - 1] = off * inverse;
        inverse = 1.0 / (alpha * capacity[i] + beta * diagonal[i] - off * scratch[i - 1]);
        out[i] = (rhs[i] - off * out[i - 1]) * inverse;
    }
    for i in (0..n - 1).rev() {
        out[i] -= scratch[i] * out[i + 1];
    }
}

/// Number of eigenvalues of `K x = λ C x` below `sigma`: the negative pivots of the LDLᵀ
/// factorisation of `K − σC`.
pub(super) fn count_below(system: &System, sigma: f64) -> usize {
    let mut count = 0;
    let mut pivot = 0.0;
    for i in 0..system.len() {
        let d = system.stiffness_diagonal(i) - sigma * system.capacity[i];
        pivot = if i == 0 {
            d
        } else {
            let off = system.link[i - 1];
            d - off * off / pivot
        };
        if pivot == 0.0 {
            // An exact zero pivot: perturb by a relative epsilon (the usual convention).
            pivot = -f64::EPSILON * d.abs().max(f64::MIN_POSITIVE);
        }
        if pivot < 0.0 {
            count += 1;
        }
    }
    count
}

/// `(xᵀ K x) / (xᵀ C x)`.
fn rayleigh_quotient(system: &System, x: &[f64], work: &mut [f64]) -> f64 {
    system.apply_stiffness(x, work);
    let numerator: f64 = x.iter().zip(work.iter()).map(|(a, b)| a * b).sum();
    let denominator: f64 = x.iter().zip(&system.capacity).map(|(a, c)| a * a * c).sum();
    numerator / denominator
}

/// Scales `x` to unit C-norm (xᵀ C x = 1) and returns its former norm.
fn normalise(system: &System, x: &mut [f64]) -> f64 {
    let norm: f64 = x
        .iter()
        .zip(&system.capacity)
        .map(|(a, c)| a * a * c)
        .sum::<f64>()
        .sqrt();
    for v in x.iter_mut() {
        *v /= norm;
    }
    norm
}

/// The smallest eigenvalue λ₁ (s⁻¹) of `K x = λ C x` and its eigenvector, positive and
/// C-normalised.
///
/// Inverse iteration from the uniform vector gives a Rayleigh quotient just above λ₁; the
/// inertia count brackets λ₁ and bisection pins it to relative 1e−15; inverse iteration
/// shifted just below λ₁ then gives the eigenvector.
pub(super) fn smallest_eigenpair(system: &System) -> (f64, Vec<f64>) {
    let n = system.len();
    let mut x = vec![1.0; n];
    let mut rhs = vec![0.0; n];
    let mut scratch = vec![0.0; n];
    let mut work = vec![0.0; n];
    for _ in 0..4 {
        for i in 0..n {
            rhs[i] = system.capacity[i] * x[i];
        }
        solve(system, 0.0, 1.0, &rhs, &mut x, &mut scratch);
        normalise(system, &mut x);
    }
    let quotient = rayleigh_quotient(system, &x, &mut work);
    let mut high = quotient;
    let mut guard = 0;
    while count_below(system, high) == 0 && guard < 2000 {
        high *= 2.0;
        guard += 1;
    }
    let mut low = high * 0.5;
    guard = 0;
    while count_below(system, low) > 0 && guard < 2000 {
        low *= 0.5;
        guard += 1;
    }
    for _ in 0..200 {
        let middle = 0.5 * (low + high);
        if middle <= low || middle >= high || high - low <= 1e-15 * high {
            break;
        }
        if count_below(system, middle) == 0 {
            low = middle;
        } else {
            high = middle;
        }
    }
    let lambda = 0.5 * (low + high);
    // Shifted inverse iteration: K − σC is positive definite for σ below λ₁.
    let shift = lambda * (1.0 - 1e-8);
    for _ in 0..3 {
        for i in 0..n {
            rhs[i] = system.capacity[i] * x[i];
        }
        solve(system, -shift, 1.0, &rhs, &mut x, &mut scratch);
        normalise(system, &mut x);
    }
    if x.iter().sum::<f64>() < 0.0 {
        for v in x.iter_mut() {
            *v = -*v;
        }
    }
    (lambda, x)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    /// A uniform chain of `n` nodes: capacity h, links D/h, held at zero beyond both ends.
    /// Its pencil is (D/h) tridiag(−1, 2, −1) against h I, whose eigenvalues are
    /// λ_k = (4D/h²) sin²(kπ / (2(n + 1))) with eigenvectors sin(jkπ/(n + 1)) (the discrete
    /// Laplacian; e.g. Golub & Van Loan 2013, §4.8).
    fn uniform_chain(n: usize, diffusion: f64) -> System {
        let h = 1.0 / (n + 1) as f64;
        let g = diffusion / h;
        System {
            capacity: vec![h; n],
            link: vec![g; n - 1],
            absorption: vec![0.0; n],
            escape: [g, g],
            diagonal: vec![2.0 * g; n],
            initial: vec![0.0; n],
            layer_parts: Vec::new(),
            prompt: Vec::new(),
        }
    }

    #[test]
    fn smallest_eigenvalue_of_the_discrete_laplacian_is_exact() {
        let (n, diffusion) = (200, 3.0);
        let system = uniform_chain(n, diffusion);
        let h = 1.0 / (n + 1) as f64;
        let exact = |k: usize| {
            4.0 * diffusion / (h * h) * (k as f64 * PI / (2.0 * (n + 1) as f64)).sin().powi(2)
        };
        let (lambda, mode) = smallest_eigenpair(&system);
        // Rounding: ε λ_max/λ₁ ≈ 2.2e−16 × 1.6e4 = 3.6e−12.
        assert!(
            (lambda / exact(1) - 1.0).abs() < 1e-11,
            "{lambda} vs {}",
            exact(1)
        );
        // The eigenvector is the first sine, C-normalised: Σ h sin² = 1/2 → amplitude √2.
        for (j, &x) in mode.iter().enumerate() {
            let expected = 2f64.sqrt() * ((j + 1) as f64 * PI * h).sin();
            assert!((x - expected).abs() < 1e-7, "node {j}: {x} vs {expected}");
        }
        // Inertia: two eigenvalues lie below the midpoint of λ₂ and λ₃.
        assert_eq!(count_below(&system, 0.5 * (exact(2) + exact(3))), 2);
        assert_eq!(count_below(&system, 0.999 * exact(1)), 0);
    }

    #[test]
    fn thomas_solve_inverts_the_shifted_matrix() {
        let system = uniform_chain(50, 0.7);
        let rhs: Vec<f64> = (0..50).map(|i| (i as f64 * 0.37).sin() + 1.5).collect();
        let (mut x, mut scratch, mut kx) = (vec![0.0; 50], vec![0.0; 50], vec![0.0; 50]);
        let (alpha, beta) = (1.3, 0.02);
        solve(&system, alpha, beta, &rhs, &mut x, &mut scratch);
        system.apply_stiffness(&x, &mut kx);
        for i in 0..50 {
            let lhs = alpha * system.capacity[i] * x[i] + beta * kx[i];
            assert!((lhs - rhs[i]).abs() < 1e-12 * rhs[i].abs(), "row {i}");
        }
    }
}
