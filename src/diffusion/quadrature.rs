//! Composite Gauss–Legendre quadrature for the diffusion modules (Fresnel moments) and their
//! tests.

/// Composite 5-point Gauss–Legendre integral of `g` over [a, b] with `panels` panels
/// (nodes and weights: Abramowitz & Stegun 1964, Table 25.4).
pub(crate) fn gauss_legendre_5(g: impl Fn(f64) -> f64, a: f64, b: f64, panels: usize) -> f64 {
    const X: [f64; 5] = [
        -0.906_179_845_938_664,
        -0.538_469_310_105_683,
        0.0,
        0.538_469_310_105_683,
        0.906_179_845_938_664,
    ];
    const W: [f64; 5] = [
        0.236_926_885_056_189_1,
        0.478_628_670_499_366_5,
        0.568_888_888_888_888_9,
        0.478_628_670_499_366_5,
        0.236_926_885_056_189_1,
    ];
    let h = (b - a) / panels as f64;
    let mut sum = 0.0;
    for i in 0..panels {
        let mid = a + h * (i as f64 + 0.5);
        for (x, w) in X.iter().zip(W) {
            sum += w * g(mid + 0.5 * h * x);
        }
    }
    0.5 * h * sum
}

/// Nodes and weights of the `n`-point Gauss–Legendre rule on [0, 1] (n ≥ 1), the nodes
/// found as roots of P_n by Newton's method from Tricomi's starting values, the weights
/// from `2 / ((1 − x²) P_n′(x)²)` (Abramowitz & Stegun 1964, eq. 25.4.29; the usual
/// construction, e.g. Press et al., *Numerical Recipes*, 3rd ed., §4.6.1).
pub(crate) fn gauss_legendre_unit(n: usize) -> Vec<(f64, f64)> {
    let mut rule = Vec::with_capacity(n);
    for i in 0..n {
        // Root i of P_n on [−1, 1], counted from the top.
        let mut x = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut derivative = 1.0;
        for _ in 0..100 {
            let (mut p0, mut p1) = (1.0, x);
            for k in 2..=n {
                let p2 = ((2 * k - 1) as f64 * x * p1 - (k - 1) as f64 * p0) / k as f64;
                p0 = p1;
                p1 = p2;
            }
            let pn = if n == 0 { 1.0 } else { p1 };
            let pn_minus = if n == 1 { 1.0 } else { p0 };
            derivative = n as f64 * (x * pn - pn_minus) / (x * x - 1.0);
            let step = pn / derivative;
            x -= step;
            if step.abs() < 1e-16 {
                break;
            }
        }
        let weight = 2.0 / ((1.0 - x * x) * derivative * derivative);
        rule.push((0.5 * (1.0 - x), 0.5 * weight));
    }
    rule
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn unit_rule_integrates_polynomials_exactly() {
        // An n-point rule is exact up to degree 2n − 1: ∫₀¹ x^k dx = 1/(k + 1).
        for n in [1usize, 2, 5, 16, 32] {
            let rule = gauss_legendre_unit(n);
            let total: f64 = rule.iter().map(|(_, w)| w).sum();
            assert!((total - 1.0).abs() < 1e-14, "{n}: {total}");
            for k in 0..(2 * n) as i32 {
                let integral: f64 = rule.iter().map(|(x, w)| w * x.powi(k)).sum();
                assert!(
                    (integral - 1.0 / (k + 1) as f64).abs() < 1e-13,
                    "{n}, x^{k}"
                );
            }
        }
    }
}
