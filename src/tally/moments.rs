//! Running moments of a quantity (count, exact sums of values and squares, extremes).

use serde::{Deserialize, Serialize};

use super::exact_sum::ExactSum;

/// Count, exact sum, exact sum of squares, minimum and maximum of a stream of values.
/// Mergeable in any order with a bit-identical result.
#[derive(Debug, Clone, Default, PartialEq, Serialize, Deserialize)]
pub struct Moments {
    count: u64,
    sum: ExactSum,
    sum_of_squares: ExactSum,
    min: Option<f64>,
    max: Option<f64>,
}

impl Moments {
    /// No values yet.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds one value.
    pub fn add(&mut self, value: f64) {
        self.count += 1;
        self.sum.add(value);
        self.sum_of_squares.add(value * value);
        self.min = Some(self.min.map_or(value, |m| m.min(value)));
        self.max = Some(self.max.map_or(value, |m| m.max(value)));
    }

    /// Adds all values of another set of moments.
    pub fn merge(&mut self, other: &Moments) {
        self.count += other.count;
        self.sum.merge(&other.sum);
        self.sum_of_squares.merge(&other.sum_of_squares);
        self.min = match (self.min, other.min) {
            (Some(a), Some(b)) => Some(a.min(b)),
            (a, b) => a.or(b),
        };
        self.max = match (self.max, other.max) {
            (Some(a), Some(b)) => Some(a.max(b)),
            (a, b) => a.or(b),
        };
    }

    /// Number of values.
    pub fn count(&self) -> u64 {
        self.count
    }

    /// Sum of the values.
    pub fn sum(&self) -> f64 {
        self.sum.value()
    }

    /// Sample mean, or `None` without values.
    pub fn mean(&self) -> Option<f64> {
        (self.count > 0).then(|| self.sum.value() / self.count as f64)
    }

    /// Unbiased sample variance, or `None` with fewer than two values.
    pub fn variance(&self) -> Option<f64> {
        if self.count < 2 {
            return None;
        }
        let n = self.count as f64;
        let mean = self.sum.value() / n;
        let second = self.sum_of_squares.value() / n;
        Some(((second - mean * mean) * n / (n - 1.0)).max(0.0))
    }

    /// Standard deviation of the values.
    pub fn std_dev(&self) -> Option<f64> {
        self.variance().map(f64::sqrt)
    }

    /// Standard error of the mean, sqrt(variance / count).
    pub fn std_error(&self) -> Option<f64> {
        self.variance().map(|v| (v / self.count as f64).sqrt())
    }

    /// Smallest value.
    pub fn min(&self) -> Option<f64> {
        self.min
    }

    /// Largest value.
    pub fn max(&self) -> Option<f64> {
        self.max
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mean_and_variance_of_a_known_set() {
        let mut moments = Moments::new();
        for v in [2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0] {
            moments.add(v);
        }
        assert_eq!(moments.mean(), Some(5.0));
        // Sum of squared deviations 32 over n - 1 = 7.
        assert!((moments.variance().unwrap() - 32.0 / 7.0).abs() < 1e-12);
        assert_eq!(moments.min(), Some(2.0));
        assert_eq!(moments.max(), Some(9.0));
    }
}
