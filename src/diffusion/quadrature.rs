//! Composite Gauss–Legendre quadrature for the diffusion modules' own tests.

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
