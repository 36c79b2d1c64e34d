//! Uncertainties of the fitted coefficients: the measurement uncertainties and the Monte
//! Carlo standard errors of the predictions, propagated to (ln μa, ln μs′) through the
//! Jacobian at the solution (linear error propagation of a weighted least-squares
//! estimator; docs/references.md, Fit 3).
//!
//! With weights W = diag(1/s²) the estimator moves by δp = −G δy, G = (JᵀWJ)⁻¹JᵀW, for a
//! change δy of the measurements or of the Monte Carlo predictions, so
//! Cov p = G (C_measured + C_Monte Carlo) Gᵀ. With as many measurements as unknowns G is
//! J⁻¹ and the weights drop out.

use nalgebra::{DMatrix, Matrix2};

/// The covariance of (ln μa, ln μs′), whole and by source, and how well the data fix the
/// two coefficients.
#[derive(Debug, Clone, PartialEq)]
pub struct Propagated {
    /// Covariance from both sources.
    pub total: Matrix2<f64>,
    /// From the measurement uncertainties alone.
    pub measurement: Matrix2<f64>,
    /// From the Monte Carlo noise of the predictions alone.
    pub monte_carlo: Matrix2<f64>,
    /// Smallest over largest singular value of the weighted Jacobian W^½J: near 0 when the
    /// measurements fix only one combination of μa and μs′.
    pub conditioning: f64,
    /// The parameter (0: ln μa, 1: ln μs′) on which no prediction depends at all (a zero
    /// column of the Jacobian), if one: its variance is then infinite and the other's is
    /// propagated alone.
    pub undetermined: Option<usize>,
}

/// Propagates `measurement_variance` (diagonal) and `monte_carlo` (covariance of the
/// predictions) through `jacobian` (rows: measurements; columns: d/d ln μa, d/d ln μs′),
/// with the fit's scales `scale`. `None` when JᵀWJ is singular with neither column zero.
pub fn propagate(
    jacobian: &DMatrix<f64>,
    scale: &[f64],
    measurement_variance: &[f64],
    monte_carlo: &DMatrix<f64>,
) -> Option<Propagated> {
    let m = jacobian.nrows();
    let weights = DMatrix::from_diagonal(&nalgebra::DVector::from_iterator(
        m,
        scale.iter().map(|s| 1.0 / (s * s)),
    ));
    let weighted_sqrt = DMatrix::from_fn(m, 2, |i, j| jacobian[(i, j)] / scale[i]);
    let singular = weighted_sqrt.clone().svd(false, false).singular_values;
    let largest = singular.max();
    let conditioning = if largest > 0.0 {
        singular.min() / largest
    } else {
        0.0
    };
    let measured =
        DMatrix::from_diagonal(&nalgebra::DVector::from_column_slice(measurement_variance));
    let zero: Vec<usize> = (0..2)
        .filter(|&j| jacobian.column(j).iter().all(|v| *v == 0.0))
        .collect();
    if let [undetermined] = zero[..] {
        // One parameter moves nothing: propagate to the other alone.
        let other = 1 - undetermined;
        let column = jacobian.column(other).into_owned();
        let normal = (column.transpose() * &weights * &column)[(0, 0)];
        let gain = (column.transpose() * &weights) / normal;
        let alone = |c: &DMatrix<f64>| {
            let v = (&gain * c * gain.transpose())[(0, 0)];
            let mut m = Matrix2::zeros();
            m[(undetermined, undetermined)] = f64::INFINITY;
            m[(other, other)] = v;
            m
        };
        let measurement = alone(&measured);
        let monte_carlo = alone(monte_carlo);
        return Some(Propagated {
            total: measurement + monte_carlo,
            measurement,
            monte_carlo,
            conditioning: 0.0,
            undetermined: Some(undetermined),
        });
    }
    let normal = jacobian.transpose() * &weights * jacobian;
    let inverse = normal.try_inverse()?;
    let gain = inverse * jacobian.transpose() * &weights;
    let to2 = |c: DMatrix<f64>| Matrix2::new(c[(0, 0)], c[(0, 1)], c[(1, 0)], c[(1, 1)]);
    let measurement = to2(&gain * measured * gain.transpose());
    let monte_carlo = to2(&gain * monte_carlo * gain.transpose());
    Some(Propagated {
        total: measurement + monte_carlo,
        measurement,
        monte_carlo,
        conditioning,
        undetermined: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn square_case_is_the_inverse_jacobian_sandwich() {
        let j = DMatrix::from_row_slice(2, 2, &[2.0, 0.0, 0.0, 0.5]);
        let p = propagate(&j, &[1.0, 7.0], &[0.04, 0.01], &DMatrix::zeros(2, 2)).unwrap();
        // δ ln μa = δR / 2, δ ln μs′ = δT / 0.5: variances 0.04/4 and 0.01/0.25.
        assert!((p.total[(0, 0)] - 0.01).abs() < 1e-12);
        assert!((p.total[(1, 1)] - 0.04).abs() < 1e-12);
        assert!(p.total[(0, 1)].abs() < 1e-12);
    }
}
