//! An exact, order-independent accumulator for sums of `f64` values.
//!
//! Floating-point addition is not associative, so a sum computed by several threads, or by
//! several shards merged later, would depend on how the work was split. [`ExactSum`] keeps
//! the sum exactly as a fixed-point integer spread over 32-bit limbs that span the whole
//! `f64` exponent range, so any grouping of the same values gives the same state, and the
//! final conversion to `f64` is a deterministic function of that state. This is what makes a
//! seeded run bit-identical whatever the thread count or shard split.

use serde::{Deserialize, Serialize};

/// Bits carried by each limb once normalised.
const LIMB_BITS: u32 = 32;
/// Exponent offset: an `f64` mantissa bit of weight 2^-1074 sits at bit 0.
const BIT_OFFSET: i32 = 1074;
/// Number of limbs: enough for bit positions 0..=2098 plus carry headroom.
const LIMBS: usize = 68;
/// Additions allowed between normalisations: each adds less than 2^32 to a limb, and the
/// limbs are i64, so 2^30 additions can never overflow.
const ADDS_BEFORE_NORMALISE: u32 = 1 << 30;

/// Exact sum of finite `f64` values (non-finite values poison the sum to NaN). The limbs
/// live on the heap so that tallies stay small on the stack of rayon's workers.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ExactSum {
    limbs: Box<[i64; LIMBS]>,
    pending: u32,
    poisoned: bool,
}

impl Default for ExactSum {
    fn default() -> Self {
        Self::new()
    }
}

impl ExactSum {
    /// An empty sum (zero).
    pub fn new() -> Self {
        Self {
            limbs: Box::new([0; LIMBS]),
            pending: 0,
            poisoned: false,
        }
    }

    /// Adds `value` exactly.
    pub fn add(&mut self, value: f64) {
        if !value.is_finite() {
            self.poisoned = true;
            return;
        }
        if value == 0.0 {
            return;
        }
        let bits = value.to_bits();
        let negative = bits >> 63 == 1;
        let biased_exponent = ((bits >> 52) & 0x7ff) as i32;
        let fraction = bits & ((1u64 << 52) - 1);
        let (mantissa, exponent) = if biased_exponent == 0 {
            (fraction, -1074)
        } else {
            (fraction | (1u64 << 52), biased_exponent - 1075)
        };
        let position = (exponent + BIT_OFFSET) as u32;
        let limb = (position / LIMB_BITS) as usize;
        let shift = position % LIMB_BITS;
        let wide = (mantissa as u128) << shift;
        let mask = (1u128 << LIMB_BITS) - 1;
        for k in 0..3 {
            let chunk = ((wide >> (LIMB_BITS * k as u32)) & mask) as i64;
            if chunk != 0 {
                if negative {
                    self.limbs[limb + k] -= chunk;
                } else {
                    self.limbs[limb + k] += chunk;
                }
            }
        }
        self.pending += 1;
        if self.pending >= ADDS_BEFORE_NORMALISE {
            self.normalise();
        }
    }

    /// Adds another exact sum into this one (exact).
    pub fn merge(&mut self, other: &ExactSum) {
        let mut other = other.clone();
        other.normalise();
        self.normalise();
        for (mine, theirs) in self.limbs.iter_mut().zip(other.limbs.iter()) {
            *mine += theirs;
        }
        self.poisoned |= other.poisoned;
        self.normalise();
    }

    /// Propagates carries so that every limb but the top lies in [0, 2^32).
    fn normalise(&mut self) {
        let mut carry = 0i64;
        for limb in self.limbs[..LIMBS - 1].iter_mut() {
            let value = *limb + carry;
            carry = value >> LIMB_BITS;
            *limb = value - (carry << LIMB_BITS);
        }
        self.limbs[LIMBS - 1] += carry;
        self.pending = 0;
    }

    /// The sum rounded to `f64` (within a few units in the last place; deterministic).
    pub fn value(&self) -> f64 {
        if self.poisoned {
            return f64::NAN;
        }
        let mut state = self.clone();
        state.normalise();
        let negative = state.limbs[LIMBS - 1] < 0;
        if negative {
            for limb in state.limbs.iter_mut() {
                *limb = -*limb;
            }
            state.normalise();
        }
        let mut total = 0.0f64;
        for (index, &limb) in state.limbs.iter().enumerate().rev() {
            if limb != 0 {
                let exponent = (index as i32) * LIMB_BITS as i32 - BIT_OFFSET;
                total += (limb as f64) * 2f64.powi(exponent);
            }
        }
        if negative { -total } else { total }
    }

    /// The canonical (normalised) state as `(limb index, limb value)` pairs of the non-zero
    /// limbs, for serialisation.
    fn canonical_limbs(&self) -> Vec<(u8, i64)> {
        let mut state = self.clone();
        state.normalise();
        state
            .limbs
            .iter()
            .enumerate()
            .filter(|(_, limb)| **limb != 0)
            .map(|(index, limb)| (index as u8, *limb))
            .collect()
    }
}

/// Serialised form of an [`ExactSum`]: its rounded value (for readers) and its exact state.
#[derive(Serialize, Deserialize)]
struct ExactSumRepr {
    value: f64,
    #[serde(default)]
    poisoned: bool,
    limbs: Vec<(u8, i64)>,
}

impl Serialize for ExactSum {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        ExactSumRepr {
            value: if self.poisoned { 0.0 } else { self.value() },
            poisoned: self.poisoned,
            limbs: self.canonical_limbs(),
        }
        .serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for ExactSum {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let repr = ExactSumRepr::deserialize(deserializer)?;
        let mut sum = ExactSum::new();
        sum.poisoned = repr.poisoned;
        for (index, limb) in repr.limbs {
            let slot = sum.limbs.get_mut(index as usize).ok_or_else(|| {
                serde::de::Error::custom(format!("exact-sum limb index {index} out of range"))
            })?;
            *slot = limb;
        }
        sum.normalise();
        Ok(sum)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn small_integers_sum_exactly() {
        let mut sum = ExactSum::new();
        for k in 1..=100 {
            sum.add(k as f64);
        }
        assert_eq!(sum.value(), 5050.0);
    }

    #[test]
    fn cancellation_is_exact() {
        // 1e100 + 1 - 1e100 is 1 exactly, which naive f64 summation loses.
        let mut sum = ExactSum::new();
        sum.add(1e100);
        sum.add(1.0);
        sum.add(-1e100);
        assert_eq!(sum.value(), 1.0);
        let mut negative = ExactSum::new();
        negative.add(-2.5);
        negative.add(1e-300);
        assert_eq!(negative.value(), -2.5);
    }

    #[test]
    fn serde_round_trip_keeps_the_state() {
        let mut sum = ExactSum::new();
        for value in [3.0e-20, 7.5e12, -1.25, 4.0e30] {
            sum.add(value);
        }
        let text = serde_json::to_string(&sum).unwrap();
        let back: ExactSum = serde_json::from_str(&text).unwrap();
        assert_eq!(back.canonical_limbs(), sum.canonical_limbs());
        assert_eq!(back.value(), sum.value());
    }

    proptest! {
        #[test]
        fn any_grouping_gives_the_same_state(
            values in proptest::collection::vec(-1e30f64..1e30, 1..60),
            split in 0usize..60,
        ) {
            let split = split.min(values.len());
            let mut whole = ExactSum::new();
            for v in &values { whole.add(*v); }
            let mut left = ExactSum::new();
            let mut right = ExactSum::new();
            for v in values[..split].iter().rev() { left.add(*v); }
            for v in &values[split..] { right.add(*v); }
            right.merge(&left);
            prop_assert_eq!(whole.canonical_limbs(), right.canonical_limbs());
            prop_assert_eq!(whole.value(), right.value());
            let naive: f64 = values.iter().sum();
            let scale: f64 = values.iter().map(|v| v.abs()).sum();
            prop_assert!((whole.value() - naive).abs() <= 1e-12 * scale.max(1e-300));
        }
    }
}
