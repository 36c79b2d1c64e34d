//! Running moments of a quantity: count, exact sums, extremes, and for weighted photons
//! the weighted sums that give honest means and standard errors.
//!
//! Analog photons (weight 1): mean x̄ = Σx/n, unbiased variance
//! s² = (Σx²/n − x̄²) · n/(n − 1), standard error of the mean s/√n.
//!
//! Weighted photons (weights wᵢ ∈ [0, 1]): the mean is the ratio estimator
//! m = Σwx / Σw. Its variance is estimated by the linearised (delta-method) formula of the
//! ratio estimator (Cochran 1977, *Sampling Techniques*, 3rd ed., ch. 6: the sample
//! estimate of the variance of a ratio under simple random sampling, with no
//! finite-population correction):
//!
//! var(m) ≈ n/(n − 1) · Σ wᵢ² (xᵢ − m)² / (Σw)²,
//!
//! which reduces to s²/n for unit weights. The spread of the distribution is the
//! reliability-weighted unbiased variance V = (Σwx²/Σw − m²) · V₁² / (V₁² − V₂), V₁ = Σw,
//! V₂ = Σw² (common practice; s² for unit weights), and the effective sample size is Kish's
//! n_eff = V₁² / V₂ (Kish 1965, *Survey Sampling*, §11.7).
//!
//! Every sum is exact ([`ExactSum`], [`WeightSum`]); each product w·x is rounded once, the
//! same way on every thread, so merges are bit-identical in any order. NaN and ±∞ values
//! are counted ([`Moments::non_finite`]) but kept out of the sums and extremes.

use serde::{Deserialize, Serialize};

use super::error::TallyError;
use super::exact_sum::{ExactSum, ExactSumRepr};
use super::weight::{Weight, WeightSum};

/// Sums kept only once some photon carried a weight other than 1.
#[derive(Debug, Clone, PartialEq)]
struct WeightedSums {
    /// Σw.
    weight: WeightSum,
    /// Σw².
    weight_squared: ExactSum,
    /// Σw x.
    sum: ExactSum,
    /// Σw x².
    sum_of_squares: ExactSum,
    /// Σw² x.
    sum_w2_x: ExactSum,
    /// Σw² x².
    sum_w2_x2: ExactSum,
}

/// Count, exact sums and extremes of a stream of values (see the module docs).
/// Mergeable in any order with a bit-identical result.
#[derive(Debug, Clone, PartialEq)]
pub struct Moments {
    count: u64,
    non_finite: u64,
    sum: ExactSum,
    sum_of_squares: ExactSum,
    min: f64,
    max: f64,
    weighted: Option<Box<WeightedSums>>,
}

impl Default for Moments {
    fn default() -> Self {
        Self::new()
    }
}

impl Moments {
    /// No values yet.
    pub fn new() -> Self {
        Self {
            count: 0,
            non_finite: 0,
            sum: ExactSum::new(),
            sum_of_squares: ExactSum::new(),
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            weighted: None,
        }
    }

    /// Adds one value of weight 1.
    #[inline]
    pub fn add(&mut self, value: f64) {
        self.add_weighted(value, Weight::ONE);
    }

    /// Adds one value of weight `weight`. The first weight other than 1 switches on the
    /// weighted sums (earlier values count with weight 1).
    #[inline]
    pub fn add_weighted(&mut self, value: f64, weight: Weight) {
        if !weight.is_one() && self.weighted.is_none() {
            self.make_weighted();
        }
        self.count += 1;
        if !value.is_finite() {
            self.non_finite += 1;
            return;
        }
        let value = value + 0.0; // −0 → +0, so that min and max never depend on order
        self.sum.add(value);
        self.sum_of_squares.add(value * value);
        self.min = self.min.min(value);
        self.max = self.max.max(value);
        if let Some(sums) = &mut self.weighted {
            let w = weight.value();
            let wx = w * value;
            sums.weight.add(weight);
            sums.weight_squared.add(w * w);
            sums.sum.add(wx);
            sums.sum_of_squares.add(wx * value);
            sums.sum_w2_x.add(w * wx);
            sums.sum_w2_x2.add(wx * wx);
        }
    }

    /// Adds all values of another set of moments.
    pub fn merge(&mut self, other: &Moments) {
        if other.weighted.is_some() && self.weighted.is_none() {
            self.make_weighted();
        }
        if let Some(mine) = &mut self.weighted {
            let theirs = match &other.weighted {
                Some(theirs) => std::borrow::Cow::Borrowed(theirs.as_ref()),
                None => std::borrow::Cow::Owned(other.unit_weighted_sums()),
            };
            mine.weight.merge(theirs.weight);
            mine.weight_squared.merge(&theirs.weight_squared);
            mine.sum.merge(&theirs.sum);
            mine.sum_of_squares.merge(&theirs.sum_of_squares);
            mine.sum_w2_x.merge(&theirs.sum_w2_x);
            mine.sum_w2_x2.merge(&theirs.sum_w2_x2);
        }
        self.count += other.count;
        self.non_finite += other.non_finite;
        self.sum.merge(&other.sum);
        self.sum_of_squares.merge(&other.sum_of_squares);
        self.min = self.min.min(other.min);
        self.max = self.max.max(other.max);
    }

    /// The weighted sums these values would have had with weight 1 each.
    fn unit_weighted_sums(&self) -> WeightedSums {
        let n = self.finite_count();
        WeightedSums {
            weight: WeightSum::of_unit_weights(n),
            weight_squared: ExactSum::of_count(n),
            sum: self.sum.clone(),
            sum_of_squares: self.sum_of_squares.clone(),
            sum_w2_x: self.sum.clone(),
            sum_w2_x2: self.sum_of_squares.clone(),
        }
    }

    /// Keeps weighted sums from now on, giving the values so far weight 1.
    pub(crate) fn make_weighted(&mut self) {
        if self.weighted.is_none() {
            self.weighted = Some(Box::new(self.unit_weighted_sums()));
        }
    }

    /// Whether weighted sums are kept (some value carried a weight other than 1).
    pub fn is_weighted(&self) -> bool {
        self.weighted.is_some()
    }

    /// Number of values added (non-finite ones included).
    pub fn count(&self) -> u64 {
        self.count
    }

    /// Number of NaN or infinite values (counted, but left out of sums and extremes).
    pub fn non_finite(&self) -> u64 {
        self.non_finite
    }

    /// Number of finite values (those in the sums).
    pub fn finite_count(&self) -> u64 {
        self.count - self.non_finite
    }

    /// Sum of the finite values, unweighted.
    pub fn sum(&self) -> f64 {
        self.sum.value()
    }

    /// The exact unweighted sum of the finite values.
    pub(crate) fn exact_sum(&self) -> &ExactSum {
        &self.sum
    }

    /// Sum of the weights of the finite values (their number for analog photons).
    pub fn weight(&self) -> f64 {
        self.weight_sum().value()
    }

    pub(crate) fn weight_sum(&self) -> WeightSum {
        match &self.weighted {
            Some(sums) => sums.weight,
            None => WeightSum::of_unit_weights(self.finite_count()),
        }
    }

    /// Sum of the squared weights of the finite values.
    pub fn weight_squared(&self) -> f64 {
        match &self.weighted {
            Some(sums) => sums.weight_squared.value(),
            None => self.finite_count() as f64,
        }
    }

    /// Kish's effective sample size (Σw)²/Σw² (the count for analog photons; 0 when every
    /// weight is 0).
    pub fn effective_count(&self) -> f64 {
        match &self.weighted {
            None => self.finite_count() as f64,
            Some(sums) => {
                let (v1, v2) = (sums.weight.value(), sums.weight_squared.value());
                if v2 > 0.0 { v1 * v1 / v2 } else { 0.0 }
            }
        }
    }

    /// Mean (weighted for weighted photons), kept inside [min, max]; `None` without values
    /// or without weight.
    pub fn mean(&self) -> Option<f64> {
        let n = self.finite_count();
        let raw = match &self.weighted {
            None if n > 0 => self.sum.value() / n as f64,
            Some(sums) if sums.weight.raw() > 0 => sums.sum.value() / sums.weight.value(),
            _ => return None,
        };
        Some(raw.clamp(self.min, self.max))
    }

    /// Unbiased variance of the distribution (reliability-weighted for weighted photons),
    /// `None` with fewer than two values, no weight spread, or squares beyond `f64`.
    pub fn variance(&self) -> Option<f64> {
        let n = self.finite_count();
        if n < 2 {
            return None;
        }
        let variance = match &self.weighted {
            None => {
                let n = n as f64;
                let mean = self.sum.value() / n;
                let second = self.sum_of_squares.value() / n;
                (second - mean * mean) * n / (n - 1.0)
            }
            Some(sums) => {
                let (v1, v2) = (sums.weight.value(), sums.weight_squared.value());
                let denominator = v1 * v1 - v2;
                if v1 <= 0.0 || denominator <= 0.0 {
                    return None;
                }
                let mean = sums.sum.value() / v1;
                let second = sums.sum_of_squares.value() / v1;
                (second - mean * mean) * (v1 * v1 / denominator)
            }
        };
        variance.is_finite().then_some(variance.max(0.0))
    }

    /// Standard deviation of the distribution.
    pub fn std_dev(&self) -> Option<f64> {
        self.variance().map(f64::sqrt)
    }

    /// Standard error of the mean: s/√n for analog photons, the ratio-estimator formula of
    /// the module docs for weighted ones.
    pub fn std_error(&self) -> Option<f64> {
        let Some(sums) = &self.weighted else {
            return self
                .variance()
                .map(|v| (v / self.finite_count() as f64).sqrt());
        };
        let n = self.finite_count();
        let v1 = sums.weight.value();
        if n < 2 || v1 <= 0.0 {
            return None;
        }
        let mean = sums.sum.value() / v1;
        let spread = sums.sum_w2_x2.value() - 2.0 * mean * sums.sum_w2_x.value()
            + mean * mean * sums.weight_squared.value();
        let n = n as f64;
        let variance = n / (n - 1.0) * spread.max(0.0) / (v1 * v1);
        variance.is_finite().then(|| variance.sqrt())
    }

    /// Smallest finite value.
    pub fn min(&self) -> Option<f64> {
        (self.min <= self.max).then_some(self.min)
    }

    /// Largest finite value.
    pub fn max(&self) -> Option<f64> {
        (self.min <= self.max).then_some(self.max)
    }

    /// Rebuilds moments from their serialised form, refusing sums and extremes that no set
    /// of values can have.
    pub(crate) fn from_repr(repr: MomentsRepr) -> Result<Self, TallyError> {
        let exact =
            |name: &str, repr: ExactSumRepr| ExactSum::from_repr(repr).map_err(|e| e.within(name));
        let mut moments = Moments {
            count: repr.count,
            non_finite: repr.non_finite,
            sum: exact("sum", repr.sum)?,
            sum_of_squares: exact("sum_of_squares", repr.sum_of_squares)?,
            min: f64::INFINITY,
            max: f64::NEG_INFINITY,
            weighted: None,
        };
        if let Some(sums) = repr.weighted {
            let exact = |name: &str, repr: ExactSumRepr| {
                ExactSum::from_repr(repr).map_err(|e| e.within("weighted").within(name))
            };
            moments.weighted = Some(Box::new(WeightedSums {
                weight: sums.weight,
                weight_squared: exact("weight_squared", sums.weight_squared)?,
                sum: exact("sum", sums.sum)?,
                sum_of_squares: exact("sum_of_squares", sums.sum_of_squares)?,
                sum_w2_x: exact("sum_w2_x", sums.sum_w2_x)?,
                sum_w2_x2: exact("sum_w2_x2", sums.sum_w2_x2)?,
            }));
        }
        if moments.non_finite > moments.count {
            return Err(TallyError::mismatch(
                "non_finite",
                "more non-finite values than values",
                moments.non_finite,
                format!("at most {}", moments.count),
            ));
        }
        let n = moments.finite_count();
        match (n, repr.min, repr.max) {
            (0, None, None) => return moments.check_empty(),
            (_, Some(min), Some(max)) if n > 0 => {
                moments.min = min;
                moments.max = max;
            }
            _ => {
                return Err(TallyError::malformed(
                    "min",
                    format!(
                        "min and max must be given exactly when there are finite values ({n} here)"
                    ),
                ));
            }
        }
        moments.check_extremes()?;
        moments.check_sums()?;
        moments.check_weighted_sums()?;
        Ok(moments)
    }

    fn check_empty(self) -> Result<Self, TallyError> {
        let mut sums = vec![("sum", &self.sum), ("sum_of_squares", &self.sum_of_squares)];
        if let Some(weighted) = &self.weighted {
            if weighted.weight.raw() != 0 {
                return Err(TallyError::weights(
                    "weighted.weight",
                    "a weight without values",
                ));
            }
            sums.extend([
                ("weighted.weight_squared", &weighted.weight_squared),
                ("weighted.sum", &weighted.sum),
                ("weighted.sum_of_squares", &weighted.sum_of_squares),
                ("weighted.sum_w2_x", &weighted.sum_w2_x),
                ("weighted.sum_w2_x2", &weighted.sum_w2_x2),
            ]);
        }
        for (name, sum) in sums {
            if !sum.is_zero() {
                return Err(TallyError::mismatch(
                    name,
                    "the sum of no values",
                    format!("{:e}", sum.value()),
                    0,
                ));
            }
        }
        Ok(self)
    }

    fn check_extremes(&self) -> Result<(), TallyError> {
        for (which, value) in [("min", self.min), ("max", self.max)] {
            if !value.is_finite() {
                return Err(TallyError::ImpossibleExtreme {
                    field: which.into(),
                    which,
                    value,
                    reason: "the extremes are of finite values".into(),
                });
            }
        }
        if self.min > self.max {
            return Err(TallyError::MinAboveMax {
                field: String::new(),
                min: self.min,
                max: self.max,
            });
        }
        Ok(())
    }

    /// The range [lo², hi²] of the squares of values in [min, max].
    fn square_range(&self) -> (f64, f64) {
        let (a, b) = (self.min.abs(), self.max.abs());
        let low = if self.min <= 0.0 && self.max >= 0.0 {
            0.0
        } else {
            a.min(b)
        };
        (low * low, a.max(b) * a.max(b))
    }

    fn check_sums(&self) -> Result<(), TallyError> {
        let n = self.finite_count();
        let nf = n as f64;
        if self.sum.is_poisoned() {
            return Err(TallyError::malformed(
                "sum",
                "poisoned by a non-finite value",
            ));
        }
        let sum = self.sum.value();
        let mean = sum / nf;
        if !within(mean, self.min, self.max, n) {
            return Err(TallyError::MeanOutsideRange {
                field: "sum".into(),
                mean,
                min: self.min,
                max: self.max,
            });
        }
        // One value is the max and the others are at least the min, and vice versa.
        let least = self.max + (nf - 1.0) * self.min;
        let most = self.min + (nf - 1.0) * self.max;
        if !within(sum, least, f64::INFINITY, n) {
            return Err(TallyError::ImpossibleExtreme {
                field: "max".into(),
                which: "max",
                value: self.max,
                reason: format!(
                    "the {n} values sum to {sum:e}, less than max + (n − 1)·min = {least:e}"
                ),
            });
        }
        if !within(sum, f64::NEG_INFINITY, most, n) {
            return Err(TallyError::ImpossibleExtreme {
                field: "min".into(),
                which: "min",
                value: self.min,
                reason: format!(
                    "the {n} values sum to {sum:e}, more than min + (n − 1)·max = {most:e}"
                ),
            });
        }
        let (low, high) = self.square_range();
        if self.sum_of_squares.is_poisoned() {
            if high.is_finite() {
                return Err(TallyError::malformed(
                    "sum_of_squares",
                    "poisoned, though no square of a value in [min, max] overflows",
                ));
            }
            return Ok(());
        }
        let second = self.sum_of_squares.value() / nf;
        if !within(second, low.max(mean * mean), high, n) {
            return Err(TallyError::OutOfRange {
                field: "sum_of_squares".into(),
                value: format!("mean square {second:e}"),
                allowed: format!(
                    "[{:e}, {high:e}] (the squares of values in [min, max] with this mean)",
                    low.max(mean * mean)
                ),
            });
        }
        Ok(())
    }

    fn check_weighted_sums(&self) -> Result<(), TallyError> {
        let Some(sums) = &self.weighted else {
            return Ok(());
        };
        let n = self.finite_count();
        if !sums.weight.fits(n) {
            return Err(TallyError::weights(
                "weighted.weight",
                format!(
                    "Σw = {} exceeds the {n} values (weights lie in [0, 1])",
                    sums.weight
                ),
            ));
        }
        let v1 = sums.weight.value();
        let v2 = sums.weight_squared.value();
        if sums.weight_squared.is_poisoned() || !(0.0..=v1 * (1.0 + 1e-12)).contains(&v2) {
            return Err(TallyError::weights(
                "weighted.weight_squared",
                format!("Σw² = {v2:e} is outside [0, Σw = {v1:e}] (weights lie in [0, 1])"),
            ));
        }
        if v1 == 0.0 {
            for (name, sum) in [
                ("weighted.sum", &sums.sum),
                ("weighted.sum_of_squares", &sums.sum_of_squares),
                ("weighted.sum_w2_x", &sums.sum_w2_x),
                ("weighted.sum_w2_x2", &sums.sum_w2_x2),
            ] {
                if !sum.is_zero() {
                    return Err(TallyError::weights(
                        name,
                        "non-zero, though every weight is 0",
                    ));
                }
            }
            return Ok(());
        }
        let (low, high) = self.square_range();
        let mut ratios = vec![
            ("weighted.sum", &sums.sum, v1, (self.min, self.max)),
            (
                "weighted.sum_of_squares",
                &sums.sum_of_squares,
                v1,
                (low, high),
            ),
        ];
        // Squared weights below ~1e-125 underflow; their ratios are then not meaningful.
        if v2 > 1e-250 {
            ratios.push((
                "weighted.sum_w2_x",
                &sums.sum_w2_x,
                v2,
                (self.min, self.max),
            ));
            ratios.push(("weighted.sum_w2_x2", &sums.sum_w2_x2, v2, (low, high)));
        }
        for (name, sum, weight, (lowest, highest)) in ratios {
            if sum.is_poisoned() && !highest.is_finite() {
                continue;
            }
            let ratio = sum.value() / weight;
            if sum.is_poisoned() || !within(ratio, lowest, highest, n) {
                return Err(TallyError::MeanOutsideRange {
                    field: name.into(),
                    mean: ratio,
                    min: lowest,
                    max: highest,
                });
            }
        }
        Ok(())
    }

    fn to_repr(&self) -> MomentsRepr {
        let exact = ExactSum::to_repr;
        MomentsRepr {
            count: self.count,
            non_finite: self.non_finite,
            sum: exact(&self.sum),
            sum_of_squares: exact(&self.sum_of_squares),
            min: self.min(),
            max: self.max(),
            weighted: self.weighted.as_ref().map(|sums| WeightedRepr {
                weight: sums.weight,
                weight_squared: exact(&sums.weight_squared),
                sum: exact(&sums.sum),
                sum_of_squares: exact(&sums.sum_of_squares),
                sum_w2_x: exact(&sums.sum_w2_x),
                sum_w2_x2: exact(&sums.sum_w2_x2),
            }),
        }
    }
}

/// Whether `value` lies in [low, high] up to the rounding of the bounds and of the sums.
fn within(value: f64, low: f64, high: f64, n: u64) -> bool {
    let scale = [low, high]
        .iter()
        .filter(|b| b.is_finite())
        .map(|b| b.abs())
        .fold(0.0, f64::max);
    let slack = 1e-9 * scale + n as f64 * f64::from_bits(4);
    value >= low - slack && value <= high + slack
}

/// Serialised form of the weighted sums of [`Moments`].
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct WeightedRepr {
    weight: WeightSum,
    weight_squared: ExactSumRepr,
    sum: ExactSumRepr,
    sum_of_squares: ExactSumRepr,
    sum_w2_x: ExactSumRepr,
    sum_w2_x2: ExactSumRepr,
}

/// Serialised form of [`Moments`].
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct MomentsRepr {
    count: u64,
    #[serde(default, skip_serializing_if = "is_zero")]
    non_finite: u64,
    sum: ExactSumRepr,
    sum_of_squares: ExactSumRepr,
    min: Option<f64>,
    max: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    weighted: Option<WeightedRepr>,
}

fn is_zero(value: &u64) -> bool {
    *value == 0
}

impl Serialize for Moments {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        self.to_repr().serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for Moments {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let repr = MomentsRepr::deserialize(deserializer)?;
        Moments::from_repr(repr).map_err(serde::de::Error::custom)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn moments_of(values: &[f64]) -> Moments {
        let mut moments = Moments::new();
        values.iter().for_each(|&v| moments.add(v));
        moments
    }

    #[test]
    fn mean_and_variance_of_a_known_set() {
        let moments = moments_of(&[2.0, 4.0, 4.0, 4.0, 5.0, 5.0, 7.0, 9.0]);
        assert_eq!(moments.mean(), Some(5.0));
        // Sum of squared deviations 32 over n - 1 = 7.
        assert!((moments.variance().unwrap() - 32.0 / 7.0).abs() < 1e-12);
        assert_eq!(moments.min(), Some(2.0));
        assert_eq!(moments.max(), Some(9.0));
        assert_eq!(moments.effective_count(), 8.0);
    }

    #[test]
    fn subnormal_values_have_their_mean() {
        let moments = moments_of(&[2.9e-312, 2.9e-312]);
        assert_eq!(moments.mean(), Some(2.9e-312));
    }

    #[test]
    fn unit_weights_give_the_analog_numbers() {
        let values = [1.5, 2.0, 7.25, 3.0, 3.0];
        let analog = moments_of(&values);
        let mut weighted = Moments::new();
        weighted.make_weighted();
        values.iter().for_each(|&v| weighted.add(v));
        let close = |a: Option<f64>, b: Option<f64>| (a.unwrap() / b.unwrap() - 1.0).abs() < 1e-14;
        assert!(close(analog.mean(), weighted.mean()));
        assert!(close(analog.variance(), weighted.variance()));
        assert!(close(analog.std_error(), weighted.std_error()));
        assert_eq!(weighted.effective_count(), 5.0);
    }

    #[test]
    fn weighted_mean_and_its_error_against_a_direct_evaluation() {
        let data = [(1.0, 0.5), (2.0, 0.25), (4.0, 1.0), (8.0, 0.125)];
        let mut moments = Moments::new();
        for (x, w) in data {
            moments.add_weighted(x, Weight::new(w).unwrap());
        }
        let v1: f64 = data.iter().map(|d| d.1).sum();
        let mean: f64 = data.iter().map(|d| d.0 * d.1).sum::<f64>() / v1;
        assert!((moments.mean().unwrap() - mean).abs() < 1e-15);
        // Cochran's ratio-estimator variance, summed term by term.
        let spread: f64 = data.iter().map(|(x, w)| (w * (x - mean)).powi(2)).sum();
        let expected = (4.0 / 3.0 * spread / (v1 * v1)).sqrt();
        assert!((moments.std_error().unwrap() / expected - 1.0).abs() < 1e-12);
        let v2: f64 = data.iter().map(|d| d.1 * d.1).sum();
        assert!((moments.effective_count() - v1 * v1 / v2).abs() < 1e-12);
    }

    #[test]
    fn non_finite_values_are_counted_apart() {
        let moments = moments_of(&[1.0, f64::NAN, 3.0, f64::INFINITY]);
        assert_eq!((moments.count(), moments.non_finite()), (4, 2));
        assert_eq!(moments.mean(), Some(2.0));
        assert_eq!(moments.max(), Some(3.0));
    }

    #[test]
    fn tampered_moments_are_refused() {
        let good = serde_json::to_value(moments_of(&[1e-9, 2e-9, 3e-9])).unwrap();
        let refuse = |edit: &dyn Fn(&mut serde_json::Value), needle: &str| {
            let mut bad = good.clone();
            edit(&mut bad);
            let error = serde_json::from_value::<Moments>(bad)
                .unwrap_err()
                .to_string();
            assert!(error.contains(needle), "{needle}: {error}");
        };
        refuse(
            &|v| v["max"] = serde_json::json!(1e308),
            "max 1e308 is impossible",
        );
        refuse(
            &|v| v["min"] = serde_json::json!(4e-9),
            "min 4e-9 is above max",
        );
        refuse(
            &|v| v["max"] = serde_json::json!(2.1e-9),
            "min 1e-9 is impossible",
        );
        refuse(&|v| v["count"] = serde_json::json!(1), "lies outside");
        refuse(
            &|v| v["non_finite"] = serde_json::json!(7),
            "more non-finite values",
        );
        refuse(
            &|v| v["min"] = serde_json::Value::Null,
            "min and max must be given",
        );
        // A limb changed with the rounded value left alone: the sum contradicts itself.
        refuse(
            &|v| {
                let limbs = v["sum"]["limbs"].as_array_mut().unwrap();
                let last = limbs.len() - 1;
                let top = limbs[last][1].as_i64().unwrap();
                limbs[last][1] = serde_json::json!(top + 1000);
            },
            "sum.value",
        );
        // A limb changed and the value made to match: the mean now exceeds the max.
        let mut other = ExactSum::new();
        [1e-9, 2e-9, 3e-9, 1e-6].iter().for_each(|&v| other.add(v));
        refuse(
            &|v| v["sum"] = serde_json::to_value(&other).unwrap(),
            "lies outside [min 1e-9, max 3e-9]",
        );
    }

    proptest! {
        #[test]
        fn weighted_sums_merge_bit_identically_in_any_order(
            data in proptest::collection::vec((1e-12f64..1e12, 0.0f64..=1.0), 1..80),
            split in 0usize..80,
            analog_left in any::<bool>(),
        ) {
            let split = split.min(data.len());
            let weight = |i: usize| if analog_left && i < split {
                Weight::ONE
            } else {
                Weight::new(data[i].1).unwrap()
            };
            let mut whole = Moments::new();
            (0..data.len()).for_each(|i| whole.add_weighted(data[i].0, weight(i)));
            let (mut left, mut right) = (Moments::new(), Moments::new());
            (0..split).rev().for_each(|i| left.add_weighted(data[i].0, weight(i)));
            (split..data.len()).rev().for_each(|i| right.add_weighted(data[i].0, weight(i)));
            let mut one_way = left.clone();
            one_way.merge(&right);
            right.merge(&left);
            prop_assert_eq!(&whole, &right);
            prop_assert_eq!(&whole, &one_way);
            let text = serde_json::to_string(&whole).unwrap();
            prop_assert_eq!(&text, &serde_json::to_string(&right).unwrap());
            let back: Moments = serde_json::from_str(&text).unwrap();
            prop_assert_eq!(&back, &whole);
        }
    }
}
