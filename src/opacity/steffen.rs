//! Monotone piecewise-cubic interpolation in one dimension (Steffen 1990, A&A 239:443,
//! "A simple method for monotonic interpolation in one dimension"; docs/references.md,
//! Stellar structure 5).
//!
//! Between two nodes the interpolant is the cubic Hermite polynomial through the two values
//! with slopes chosen so that it never leaves the range of those two values (no new extrema,
//! no overshoot next to a steep feature) and is continuous with a continuous first
//! derivative. Interior slopes: with secants s₋ and s₊ and the slope p of the parabola through
//! the three nodes, y′ = (sign s₋ + sign s₊) · min(|s₋|, |s₊|, |p|/2). End slopes: the
//! parabola's slope p at the end node, set to 0 if it opposes the first secant and limited
//! to twice that secant. Linear data are reproduced exactly.

/// The slope at node `k` of the data (`xs`, `ys`), xs strictly increasing, at least 2 nodes.
/// A node without a neighbour on one side takes the end condition.
fn slope(xs: &[f64], ys: &[f64], k: usize) -> f64 {
    let n = xs.len();
    let secant = |i: usize| (ys[i + 1] - ys[i]) / (xs[i + 1] - xs[i]);
    if n == 2 {
        return secant(0);
    }
    if k == 0 || k == n - 1 {
        // End condition: the parabola through the three end nodes, limited.
        let (s0, s1, h0, h1) = if k == 0 {
            (secant(0), secant(1), xs[1] - xs[0], xs[2] - xs[1])
        } else {
            (
                secant(n - 2),
                secant(n - 3),
                xs[n - 1] - xs[n - 2],
                xs[n - 2] - xs[n - 3],
            )
        };
        let p = s0 * (1.0 + h0 / (h0 + h1)) - s1 * h0 / (h0 + h1);
        return if p * s0 <= 0.0 {
            0.0
        } else if p.abs() > 2.0 * s0.abs() {
            2.0 * s0
        } else {
            p
        };
    }
    let (below, above) = (secant(k - 1), secant(k));
    let (h_below, h_above) = (xs[k] - xs[k - 1], xs[k + 1] - xs[k]);
    let p = (below * h_above + above * h_below) / (h_below + h_above);
    (below.signum() * f64::from(below != 0.0) + above.signum() * f64::from(above != 0.0))
        * below.abs().min(above.abs()).min(0.5 * p.abs())
}

/// The interpolant at `x` on the interval between nodes `cell` and `cell + 1` of (`xs`, `ys`)
/// (xs strictly increasing, at least 2 nodes, `cell + 1 < xs.len()`). The slopes at the two
/// nodes use their neighbours in `xs`, so pass the whole data or a window that reaches one
/// node beyond each end of the interval (or the data's real end).
pub(crate) fn interpolate(xs: &[f64], ys: &[f64], cell: usize, x: f64) -> f64 {
    let (x0, x1) = (xs[cell], xs[cell + 1]);
    let (y0, y1) = (ys[cell], ys[cell + 1]);
    let h = x1 - x0;
    let t = (x - x0) / h;
    let (d0, d1) = (slope(xs, ys, cell), slope(xs, ys, cell + 1));
    let t2 = t * t;
    let t3 = t2 * t;
    let h00 = 2.0 * t3 - 3.0 * t2 + 1.0;
    let h10 = t3 - 2.0 * t2 + t;
    let h01 = -2.0 * t3 + 3.0 * t2;
    let h11 = t3 - t2;
    h00 * y0 + h10 * h * d0 + h01 * y1 + h11 * h * d1
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn linear_data_are_reproduced_exactly() {
        let xs = [0.0, 0.5, 2.0, 2.5, 4.0];
        let ys: Vec<f64> = xs.iter().map(|x| 3.0 - 2.0 * x).collect();
        for cell in 0..4 {
            for t in [0.0, 0.3, 0.7, 1.0] {
                let x = xs[cell] + t * (xs[cell + 1] - xs[cell]);
                assert!((interpolate(&xs, &ys, cell, x) - (3.0 - 2.0 * x)).abs() < 1e-13);
            }
        }
        // Two nodes: the straight line.
        assert!((interpolate(&[1.0, 3.0], &[2.0, 6.0], 0, 2.0) - 4.0).abs() < 1e-15);
    }

    #[test]
    fn no_overshoot_next_to_a_step() {
        // A step: a cubic spline would overshoot on both sides; Steffen's never leaves the
        // range of the two nodes of each interval.
        let xs = [0.0, 1.0, 2.0, 3.0, 4.0, 5.0];
        let ys: [f64; 6] = [0.0, 0.0, 0.0, 1.0, 1.0, 1.0];
        for cell in 0..5 {
            let (lo, hi) = (ys[cell].min(ys[cell + 1]), ys[cell].max(ys[cell + 1]));
            for k in 0..=50 {
                let x = xs[cell] + k as f64 / 50.0;
                let y = interpolate(&xs, &ys, cell, x);
                assert!((lo - 1e-15..=hi + 1e-15).contains(&y), "x = {x}: {y}");
            }
        }
        // At a local extremum the slope is 0.
        let peak = interpolate(&[0.0, 1.0, 2.0], &[0.0, 1.0, 0.0], 0, 1.0);
        assert!((peak - 1.0).abs() < 1e-15);
    }

    #[test]
    fn smooth_data_converge_at_third_order() {
        // A monotone smooth step, ln(1 + e^(2x)) on [−3, 3] (the shape of κ_es + κ_Kramers in
        // log space): halving the spacing cuts the largest error by ≈ 8.
        let f = |x: f64| (2.0 * x).exp().ln_1p();
        let error = |n: usize| {
            let xs: Vec<f64> = (0..=n).map(|k| -3.0 + 6.0 * k as f64 / n as f64).collect();
            let ys: Vec<f64> = xs.iter().map(|&x| f(x)).collect();
            let mut worst: f64 = 0.0;
            for cell in 1..n - 1 {
                for k in 0..10 {
                    let x = xs[cell] + (k as f64 + 0.5) / 10.0 * (xs[cell + 1] - xs[cell]);
                    worst = worst.max((interpolate(&xs, &ys, cell, x) - f(x)).abs());
                }
            }
            worst
        };
        let (coarse, fine) = (error(20), error(40));
        assert!(coarse / fine > 6.0, "{coarse} / {fine}");
        assert!(fine < 1e-4, "{fine}");
    }
}
