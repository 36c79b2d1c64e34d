//! Photon weights as fixed-point integers, and their exact sums.
//!
//! A photon's statistical weight w lies in [0, 1] (analog photons carry exactly 1; implicit
//! capture and absorption rescaling lower it). The tally rounds each weight once, to the
//! nearest multiple of 2⁻⁶³ ([`Weight`]), and adds the resulting integers in `u128`
//! ([`WeightSum`]). Integer addition is associative, so sums merge exactly and in any order:
//! a run gives the same bits whatever the thread count or shard split. Every weight in
//! [2⁻¹⁰, 1] is kept exactly (its 53-bit mantissa fits in the 63 fraction bits); smaller
//! weights are off by at most 2⁻⁶⁴ in absolute terms. The sums have room for 2⁶⁵ photons of
//! weight 1, far beyond any run.
//!
//! Why fixed point and not [`super::ExactSum`]: there are one or two weight sums per
//! histogram bin, so each must be small (16 bytes here against a heap window of limbs) and
//! cheap to add (one integer addition).

use serde::de::Error as _;
use serde::{Deserialize, Deserializer, Serialize, Serializer};

/// Fraction bits of the fixed-point representation: a weight w is stored as round(w · 2⁶³).
pub const WEIGHT_FRACTION_BITS: u32 = 63;

/// The fixed-point value of weight 1.
const ONE: u64 = 1 << WEIGHT_FRACTION_BITS;

/// One photon's weight, rounded once to a multiple of 2⁻⁶³ and known to lie in [0, 1].
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct Weight(u64);

impl Weight {
    /// Weight 1: an analog photon.
    pub const ONE: Weight = Weight(ONE);

    /// Rounds `w` to the fixed-point grid. `None` unless 0 ≤ w ≤ 1 (NaN included).
    #[inline]
    pub fn new(w: f64) -> Option<Weight> {
        if w == 1.0 {
            return Some(Weight::ONE);
        }
        if !(0.0..=1.0).contains(&w) {
            return None;
        }
        // w · 2⁶³ is exact (a power-of-two scaling); rounding only drops bits below 2⁻⁶³.
        Some(Weight((w * ONE as f64).round() as u64))
    }

    /// Whether this is exactly weight 1.
    pub fn is_one(self) -> bool {
        self.0 == ONE
    }

    /// The rounded weight as `f64` (exact: the integer has at most 53 significant bits).
    pub fn value(self) -> f64 {
        self.0 as f64 * (1.0 / ONE as f64)
    }

    /// The fixed-point integer, round(w · 2⁶³).
    pub fn raw(self) -> u64 {
        self.0
    }

    /// 1 − w, exact on the fixed-point grid: a weight and its complement add up to exactly
    /// one photon.
    pub fn complement(self) -> Weight {
        Weight(ONE - self.0)
    }

    /// Whether this is exactly weight 0.
    pub fn is_zero(self) -> bool {
        self.0 == 0
    }
}

/// An exact sum of [`Weight`]s (fixed point, 2⁻⁶³ units, in a `u128`).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct WeightSum(u128);

impl WeightSum {
    /// Zero.
    pub const ZERO: WeightSum = WeightSum(0);

    /// The sum of `count` weights of 1.
    pub fn of_unit_weights(count: u64) -> WeightSum {
        WeightSum(count as u128 * ONE as u128)
    }

    /// Adds one weight.
    pub fn add(&mut self, weight: Weight) {
        self.0 += weight.0 as u128;
    }

    /// Adds another sum (exact).
    pub fn merge(&mut self, other: WeightSum) {
        self.0 += other.0;
    }

    /// The sum of another, `None` on overflow (only damaged data can overflow).
    pub fn checked_add(self, other: WeightSum) -> Option<WeightSum> {
        self.0.checked_add(other.0).map(WeightSum)
    }

    /// The sum as `f64` (rounded to nearest; exact for analog sums below 2⁵³ photons).
    pub fn value(self) -> f64 {
        self.0 as f64 * (1.0 / ONE as f64)
    }

    /// The fixed-point integer (units of 2⁻⁶³).
    pub fn raw(self) -> u128 {
        self.0
    }

    /// Whether the sum is at most `count` weights of 1 (what `count` photons can carry).
    pub fn fits(self, count: u64) -> bool {
        self <= WeightSum::of_unit_weights(count)
    }
}

/// Shown as its value and its exact fixed-point integer, e.g. `1 (9223372036854775809·2^-63)`.
impl std::fmt::Display for WeightSum {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{} ({}·2^-63)", self.value(), self.0)
    }
}

/// Serialised as the decimal string of the fixed-point integer: JSON numbers beyond 2⁶⁴ do
/// not survive every JSON reader, strings do.
impl Serialize for WeightSum {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        serializer.serialize_str(&self.0.to_string())
    }
}

impl<'de> Deserialize<'de> for WeightSum {
    fn deserialize<D: Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let text = String::deserialize(deserializer)?;
        text.parse::<u128>().map(WeightSum).map_err(|_| {
            D::Error::custom(format!(
                "weight sum {text:?}: expected a whole number of 2^-63 units as a decimal string"
            ))
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn weights_outside_zero_one_are_refused() {
        for bad in [-0.1, 1.0 + f64::EPSILON, f64::NAN, f64::INFINITY] {
            assert_eq!(Weight::new(bad), None, "{bad}");
        }
        assert!(Weight::new(1.0).unwrap().is_one());
        assert_eq!(Weight::new(0.0).unwrap().raw(), 0);
    }

    #[test]
    fn weights_above_two_to_minus_ten_are_exact() {
        for w in [
            1.0,
            0.5,
            0.3,
            0.123456789,
            2f64.powi(-10),
            0.999_999_999_999,
        ] {
            assert_eq!(Weight::new(w).unwrap().value(), w);
        }
        let tiny = 1e-15;
        let rounded = Weight::new(tiny).unwrap().value();
        assert!((rounded - tiny).abs() <= 2f64.powi(-64));
    }

    #[test]
    fn serde_keeps_every_bit() {
        let mut sum = WeightSum::of_unit_weights(u64::MAX);
        sum.add(Weight::new(0.3).unwrap());
        let text = serde_json::to_string(&sum).unwrap();
        let value: serde_json::Value = serde_json::from_str(&text).unwrap();
        let back: WeightSum = serde_json::from_value(value).unwrap();
        assert_eq!(back, sum);
        assert!(serde_json::from_str::<WeightSum>("\"-1\"").is_err());
        assert!(serde_json::from_str::<WeightSum>("12").is_err());
    }

    proptest! {
        #[test]
        fn sums_merge_bit_identically_in_any_order(
            weights in proptest::collection::vec(0.0f64..=1.0, 1..80),
            split in 0usize..80,
        ) {
            let split = split.min(weights.len());
            let quantized: Vec<Weight> = weights.iter().map(|&w| Weight::new(w).unwrap()).collect();
            let mut forward = WeightSum::ZERO;
            quantized.iter().for_each(|&w| forward.add(w));
            let (mut left, mut right) = (WeightSum::ZERO, WeightSum::ZERO);
            quantized[..split].iter().rev().for_each(|&w| left.add(w));
            quantized[split..].iter().rev().for_each(|&w| right.add(w));
            right.merge(left);
            prop_assert_eq!(forward, right);
            let naive: f64 = weights.iter().sum();
            prop_assert!((forward.value() - naive).abs() <= 1e-12 * weights.len() as f64);
        }
    }
}
