//! Checks of the standalone H-function solver in `tests_support/chandrasekhar.rs`
//! against the reference values of docs/references.md, Transport 2. Each value is compared to the
//! digits given: within half a unit of its last digit (plus 1e−9 for the solver).

use crate::support::chandrasekhar::{HFunction, gauss_legendre_01, plane_albedo};

/// |got − want| ≤ ½ unit in the last of `decimals` places (+1e−9).
fn assert_digits(got: f64, want: f64, decimals: i32, what: &str) {
    let tol = 0.5 * 10f64.powi(-decimals) + 1e-9;
    assert!(
        (got - want).abs() <= tol,
        "{what}: got {got}, reference {want} (tolerance {tol:e})"
    );
}

#[test]
fn gauss_legendre_is_exact_for_polynomials() {
    for n in [1usize, 2, 5, 64, 96] {
        let (x, w) = gauss_legendre_01(n);
        assert!(x.windows(2).all(|p| p[0] < p[1]));
        for k in 0..(2 * n).min(40) {
            let q: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(k as i32)).sum();
            assert!(
                (q - 1.0 / (k as f64 + 1.0)).abs() < 1e-14,
                "n={n} k={k}: {q}"
            );
        }
    }
}

#[test]
fn conservative_scattering() {
    let h = HFunction::new(1.0);
    // docs/references.md, Transport 2, Chandrasekhar 1950, Radiative Transfer, ch. V: ω = 1: H(1) =
    // 2.90781
    assert_digits(h.eval(1.0), 2.90781, 5, "H(1), ω = 1");
    // docs/references.md, Transport 2, Chandrasekhar 1950, ch. V: ω = 1: ∫₀¹ H dμ = 2 (exact)
    assert!((h.moment(0) - 2.0).abs() < 1e-10, "α₀ = {}", h.moment(0));
    // docs/references.md, Transport 2, Chandrasekhar 1950, ch. V: ω = 1: ∫₀¹ H μ dμ = 2/√3 (exact)
    assert!(
        (h.moment(1) - 2.0 / 3f64.sqrt()).abs() < 1e-10,
        "α₁ = {}",
        h.moment(1)
    );
    // Exact from the equation: 1/H(0) = sqrt(1−ω) + (ω/2) ∫H = 1 at ω = 1.
    assert!((h.eval(0.0) - 1.0).abs() < 1e-10);
}

#[test]
fn milne_problem_emergent_intensity() {
    let h = HFunction::new(1.0);
    let h1 = h.eval(1.0);
    // docs/references.md, Transport 2, Milne problem (ω = 1): I(0, μ)/I(0, 1) = H(μ)/H(1):
    // μ = 0 → 0.3439, 0.2 → 0.4988, 0.5 → 0.6922
    assert_digits(h.eval(0.0) / h1, 0.3439, 4, "H(0)/H(1)");
    assert_digits(h.eval(0.2) / h1, 0.4988, 4, "H(0.2)/H(1)");
    assert_digits(h.eval(0.5) / h1, 0.6922, 4, "H(0.5)/H(1)");
    // Eddington's approximation 0.4 + 0.6 μ (docs/references.md, Transport 2, for comparison) is
    // visibly different at the limb.
    assert!((h.eval(0.0) / h1 - 0.4).abs() > 0.05);
}

#[test]
fn absorbing_medium() {
    let h = HFunction::new(0.9);
    // docs/references.md, Transport 2, Chandrasekhar 1950, ch. V: ω = 0.9: H(1) = 1.85010
    assert_digits(h.eval(1.0), 1.85010, 5, "H(1), ω = 0.9");
    // docs/references.md, Transport 2, plane albedo A(μ₀) = 1 − H(μ₀) sqrt(1−ω): ω = 0.9, μ₀ = 1:
    // 0.41495
    assert_digits(plane_albedo(0.9, 1.0), 0.41495, 5, "plane albedo");
    assert_digits(h.plane_albedo(1.0), 0.41495, 5, "plane albedo (method)");
    // Zeroth moment from integrating the equation (Chandrasekhar 1950, ch. V):
    // α₀ = (2/ω)(1 − sqrt(1 − ω)).
    let alpha0 = 2.0 / 0.9 * (1.0 - 0.1f64.sqrt());
    assert!((h.moment(0) - alpha0).abs() < 1e-10);
}

#[test]
fn node_count_convergence_and_limits() {
    // 64 and 96 nodes agree to 1e-9 everywhere on [0, 1].
    for omega in [0.3, 0.9, 0.99, 1.0] {
        let a = HFunction::with_nodes(omega, 64);
        let b = HFunction::new(omega);
        for i in 0..=20 {
            let mu = i as f64 / 20.0;
            assert!((a.eval(mu) - b.eval(mu)).abs() < 1e-9, "ω={omega} μ={mu}");
        }
        // Nyström interpolation reproduces the node values.
        for (m, v) in b.nodes.iter().zip(&b.values) {
            assert!((b.eval(*m) - v).abs() < 1e-12);
        }
    }
    // No scattering: H ≡ 1 and the albedo is 0.
    let h = HFunction::new(0.0);
    assert!(h.values.iter().all(|v| (v - 1.0).abs() < 1e-15));
    assert!(plane_albedo(0.0, 0.5).abs() < 1e-15);
    // Conservative: everything is reflected.
    assert!(plane_albedo(1.0, 0.3).abs() - 1.0 < 1e-15);
}
