//! Levenberg–Marquardt on two parameters (ln μa, ln μs′) with a forward-difference
//! Jacobian, bounds by clamping, and Marquardt's scaling of the damping by the diagonal of
//! JᵀJ (Marquardt 1963, SIAM J. Appl. Math. 11:431; docs/references.md, Fit 2).
//!
//! Residuals are (predicted − measured) / scale, with a fixed scale per measurement (its
//! combined standard uncertainty), so the misfit χ² = Σ residual² is a fixed function of
//! the parameters when the forward model uses common random numbers.
//!
//! **Stopping.** The fit has converged when a step (accepted, or proposed after the
//! damping grew) changes both parameters by less than the tolerance in their logarithm
//! (0.001 is 0.1 %) while no residual exceeds [`STALLED_RESIDUAL`] scales, or when every
//! residual is below [`NEGLIGIBLE_RESIDUAL`] scales (the measurements are matched far
//! inside their uncertainty). It stops unconverged after the iteration cap, when the steps
//! become that small with a residual still above [`STALLED_RESIDUAL`] (stalled), or when
//! the damping runs past [`MAX_DAMPING`] without a step that lowers the misfit.

use nalgebra::{Matrix2, Vector2};

use super::error::FitError;
use super::forward::ForwardModel;

/// A residual this small (in units of its scale) counts as matched.
pub const NEGLIGIBLE_RESIDUAL: f64 = 0.02;

/// A residual (in scales) above which a solver that can no longer move has not converged.
pub const STALLED_RESIDUAL: f64 = 3.0;

/// Damping past which the solver gives up looking for a better step.
pub const MAX_DAMPING: f64 = 1e10;

/// Largest step in either logarithm (a factor e^1.5 ≈ 4.5 per iteration).
const MAX_LOG_STEP: f64 = 1.5;

/// Settings of one solve.
#[derive(Debug, Clone)]
pub struct Settings {
    /// Iteration cap (Jacobians computed).
    pub max_iterations: usize,
    /// Convergence tolerance on the step in ln μa and ln μs′.
    pub tolerance: f64,
    /// Forward-difference step in the logarithms.
    pub difference_step: f64,
    /// Lower bounds of (ln μa, ln μs′).
    pub lower: [f64; 2],
    /// Upper bounds of (ln μa, ln μs′).
    pub upper: [f64; 2],
}

/// Where a solve ended.
#[derive(Debug, Clone, PartialEq)]
pub struct Solution {
    /// The final (ln μa, ln μs′).
    pub parameters: [f64; 2],
    /// Predictions there.
    pub predicted: Vec<f64>,
    /// Misfit χ² there.
    pub misfit: f64,
    /// Iterations (Jacobians) used.
    pub iterations: usize,
    /// Whether the stopping criterion was met.
    pub converged: bool,
    /// Why the solver stopped, in words.
    pub reason: String,
    /// The accepted points, start first.
    pub path: Vec<[f64; 2]>,
}

/// Weighted residuals and their squared sum.
fn misfit(predicted: &[f64], measured: &[f64], scale: &[f64]) -> (Vec<f64>, f64) {
    let residuals: Vec<f64> = predicted
        .iter()
        .zip(measured)
        .zip(scale)
        .map(|((p, m), s)| (p - m) / s)
        .collect();
    let sum = residuals.iter().map(|r| r * r).sum();
    (residuals, sum)
}

fn clamp(p: [f64; 2], settings: &Settings) -> [f64; 2] {
    [
        p[0].clamp(settings.lower[0], settings.upper[0]),
        p[1].clamp(settings.lower[1], settings.upper[1]),
    ]
}

/// The weighted Jacobian d(residual)/d(parameter) at `p` by forward differences (backward
/// where the forward point is past a bound or outside the model).
fn jacobian(
    model: &mut dyn ForwardModel,
    p: [f64; 2],
    at_p: &[f64],
    scale: &[f64],
    settings: &Settings,
) -> Result<Option<Vec<[f64; 2]>>, FitError> {
    let mut columns = vec![[0.0; 2]; at_p.len()];
    for j in 0..2 {
        let mut done = false;
        for sign in [1.0, -1.0] {
            let h = sign * settings.difference_step;
            let mut q = p;
            q[j] += h;
            if q[j] > settings.upper[j] || q[j] < settings.lower[j] {
                continue;
            }
            if let Some(values) = model.predict(q)? {
                for (k, column) in columns.iter_mut().enumerate() {
                    column[j] = (values[k] - at_p[k]) / h / scale[k];
                }
                done = true;
                break;
            }
        }
        if !done {
            return Ok(None);
        }
    }
    Ok(Some(columns))
}

/// Solves from `start` for the parameters whose predictions match `measured` (weighted by
/// 1/`scale`).
///
/// # Errors
/// Whatever the forward model reports.
pub fn solve(
    model: &mut dyn ForwardModel,
    start: [f64; 2],
    measured: &[f64],
    scale: &[f64],
    settings: &Settings,
) -> Result<Solution, FitError> {
    let mut p = clamp(start, settings);
    let Some(mut predicted) = model.predict(p)? else {
        return Ok(Solution {
            parameters: p,
            predicted: Vec::new(),
            misfit: f64::INFINITY,
            iterations: 0,
            converged: false,
            reason: "the forward model cannot be evaluated at the starting point".into(),
            path: vec![p],
        });
    };
    let (mut residuals, mut chi2) = misfit(&predicted, measured, scale);
    let mut path = vec![p];
    let mut damping = 1e-3;
    let mut iterations = 0;
    let finish = |p, predicted, chi2, iterations, converged, reason: String, path| Solution {
        parameters: p,
        predicted,
        misfit: chi2,
        iterations,
        converged,
        reason,
        path,
    };
    loop {
        if residuals.iter().all(|r| r.abs() <= NEGLIGIBLE_RESIDUAL) {
            let reason = format!(
                "every measurement matched within {NEGLIGIBLE_RESIDUAL} of its combined \
                 standard uncertainty"
            );
            return Ok(finish(p, predicted, chi2, iterations, true, reason, path));
        }
        if iterations >= settings.max_iterations {
            let reason = format!(
                "iteration cap ({}) reached with χ² = {chi2:.3e}",
                settings.max_iterations
            );
            return Ok(finish(p, predicted, chi2, iterations, false, reason, path));
        }
        iterations += 1;
        let Some(columns) = jacobian(model, p, &predicted, scale, settings)? else {
            let reason = "the forward model cannot be evaluated beside the current point".into();
            return Ok(finish(p, predicted, chi2, iterations, false, reason, path));
        };
        let mut normal = Matrix2::zeros();
        let mut gradient = Vector2::zeros();
        for (row, r) in columns.iter().zip(&residuals) {
            let j = Vector2::new(row[0], row[1]);
            normal += j * j.transpose();
            gradient += j * *r;
        }
        loop {
            let mut damped = normal;
            for d in 0..2 {
                damped[(d, d)] += damping * normal[(d, d)].max(1e-12);
            }
            let step = damped
                .try_inverse()
                .map(|inverse| -(inverse * gradient))
                .unwrap_or_else(Vector2::zeros);
            let longest = step.amax();
            let step = if longest > MAX_LOG_STEP {
                step * (MAX_LOG_STEP / longest)
            } else {
                step
            };
            let trial = clamp([p[0] + step[0], p[1] + step[1]], settings);
            let moved = (trial[0] - p[0]).abs().max((trial[1] - p[1]).abs());
            if moved < settings.tolerance {
                let worst = residuals.iter().fold(0.0f64, |w, r| w.max(r.abs()));
                if worst > STALLED_RESIDUAL {
                    let reason = format!(
                        "stalled: no step lowers the misfit, yet a measurement is missed by \
                         {worst:.1} times its combined standard uncertainty (χ² = {chi2:.3e}); \
                         the model does not reach the measurements from here"
                    );
                    return Ok(finish(p, predicted, chi2, iterations, false, reason, path));
                }
                let reason = format!(
                    "the next step changes μa and μs′ by less than {:.2} % (χ² = {chi2:.3e})",
                    settings.tolerance * 100.0
                );
                return Ok(finish(p, predicted, chi2, iterations, true, reason, path));
            }
            if let Some(values) = model.predict(trial)? {
                let (trial_residuals, trial_chi2) = misfit(&values, measured, scale);
                if trial_chi2 < chi2 {
                    p = trial;
                    predicted = values;
                    residuals = trial_residuals;
                    chi2 = trial_chi2;
                    path.push(p);
                    damping = (damping / 5.0).max(1e-9);
                    break;
                }
            }
            damping *= 5.0;
            if damping > MAX_DAMPING {
                let reason = format!(
                    "no step lowers the misfit χ² = {chi2:.3e} (a flat or rough objective)"
                );
                return Ok(finish(p, predicted, chi2, iterations, false, reason, path));
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// R = a/(a + b), T = b/(a + b) · e^(−a) style toy map with a known root.
    struct Toy;

    impl ForwardModel for Toy {
        fn predict(&mut self, p: [f64; 2]) -> Result<Option<Vec<f64>>, FitError> {
            let (a, s) = (p[0].exp(), p[1].exp());
            Ok(Some(vec![s / (1.0 + s + a), (-a).exp() / (1.0 + s)]))
        }
    }

    #[test]
    fn finds_the_root_of_a_smooth_map() {
        let truth = [0.3f64.ln(), 2.0f64.ln()];
        let measured = Toy.predict(truth).unwrap().unwrap();
        let settings = Settings {
            max_iterations: 50,
            tolerance: 1e-6,
            difference_step: 1e-6,
            lower: [-20.0, -20.0],
            upper: [10.0, 10.0],
        };
        let solution = solve(&mut Toy, [0.0, 0.0], &measured, &[1e-3, 1e-3], &settings).unwrap();
        assert!(solution.converged, "{}", solution.reason);
        assert!((solution.parameters[0] - truth[0]).abs() < 1e-4);
        assert!((solution.parameters[1] - truth[1]).abs() < 1e-4);
    }
}
