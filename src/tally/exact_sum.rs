//! An exact, order-independent accumulator for sums of `f64` values.
//!
//! Floating-point addition is not associative, so a sum computed by several threads, or by
//! several shards merged later, would depend on how the work was split. [`ExactSum`] keeps
//! the sum exactly, as a fixed-point integer in units of 2⁻¹⁰⁷⁴ (the smallest subnormal)
//! written in base-2³² limbs, so any grouping of the same values gives the same state, and
//! the conversion to `f64` ([`ExactSum::value`]) is correctly rounded from that state.
//!
//! Only the window of limbs the values have touched is stored (a `Vec` of typically 3 to 6
//! limbs for values spanning a few decades; empty and unallocated for a zero sum), so the
//! accumulator is small enough to keep thousands of them, e.g. one per layer and outcome.
//!
//! Canonical form (after [`ExactSum::merge`], on serialisation and in comparisons): every
//! limb but the top one lies in [0, 2³²), the top one in [−2³¹, 2³¹) (it carries the sign),
//! no redundant top limb, no zero bottom limb. Each integer has exactly one canonical form,
//! so equal sums have equal serialisations.

use std::borrow::Cow;

use serde::{Deserialize, Serialize};

use super::error::TallyError;

/// Bits carried by each limb once normalised.
const LIMB_BITS: u32 = 32;
/// Limb radix 2³².
const RADIX: i64 = 1 << LIMB_BITS;
/// Half the radix: the top limb lies in [−HALF, HALF).
const HALF: i64 = 1 << (LIMB_BITS - 1);
/// Exponent offset: an `f64` mantissa bit of weight 2⁻¹⁰⁷⁴ sits at bit 0.
const BIT_OFFSET: i32 = 1074;
/// Highest limb index a sum of fewer than 2⁶⁴ finite `f64` values can reach: their
/// magnitude stays below 2¹⁰⁸⁸, bit 2162 of the fixed-point integer, plus a sign limb.
const MAX_LIMB_INDEX: u32 = 68;
/// Additions allowed between normalisations: each adds less than 2³² to a limb, and the
/// limbs are i64, so 2³⁰ additions can never overflow (nor can a merge of two such states).
const ADDS_BEFORE_NORMALISE: u32 = 1 << 30;

/// Exact sum of finite `f64` values (non-finite values poison the sum to NaN).
///
/// # Examples
/// ```
/// use sojourn::tally::ExactSum;
/// // One accumulator per layer: an empty one takes 32 bytes and no heap memory.
/// let mut path_by_layer = vec![ExactSum::new(); 2_500];
/// for path_cm in [0.1, 0.2, 0.3] {
///     path_by_layer[7].add(path_cm);
/// }
/// // The exact sum, correctly rounded, where left-to-right addition gives 0.6000000000000001.
/// assert_eq!(path_by_layer[7].value(), 0.6);
/// assert_ne!(0.1 + 0.2 + 0.3, 0.6);
/// ```
#[derive(Debug, Clone, Default)]
pub struct ExactSum {
    /// Index of `limbs[0]`: limb `k` carries bits `32 k .. 32 k + 31` of the integer.
    low: u32,
    /// The touched window of limbs, lowest first; empty for zero.
    limbs: Vec<i64>,
    /// Additions since the last normalisation.
    pending: u32,
    /// A non-finite value was added.
    poisoned: bool,
}

impl PartialEq for ExactSum {
    /// Equal exact values (and poisoning), whatever the internal carries.
    fn eq(&self, other: &Self) -> bool {
        let (a, b) = (self.normalised(), other.normalised());
        a.poisoned == b.poisoned && a.low == b.low && a.limbs == b.limbs
    }
}

impl Eq for ExactSum {}

impl ExactSum {
    /// An empty sum (zero). Takes no heap memory until a non-zero value is added.
    pub fn new() -> Self {
        Self::default()
    }

    /// Adds `value` exactly. A non-finite value poisons the sum ([`ExactSum::value`] is then
    /// NaN).
    #[inline]
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
        let limb = position / LIMB_BITS;
        let wide = (mantissa as u128) << (position % LIMB_BITS);
        self.cover(limb, limb + 3);
        let base = (limb - self.low) as usize;
        let mask = (1u128 << LIMB_BITS) - 1;
        for k in 0..3 {
            let chunk = ((wide >> (LIMB_BITS * k as u32)) & mask) as i64;
            if negative {
                self.limbs[base + k] -= chunk;
            } else {
                self.limbs[base + k] += chunk;
            }
        }
        self.pending += 1;
        if self.pending >= ADDS_BEFORE_NORMALISE {
            self.normalise();
        }
    }

    /// Adds another exact sum into this one (exact; any order of merges gives the same state).
    pub fn merge(&mut self, other: &ExactSum) {
        self.poisoned |= other.poisoned;
        if !other.limbs.is_empty() {
            let top = other.low + other.limbs.len() as u32;
            self.cover(other.low, top);
            let base = (other.low - self.low) as usize;
            for (mine, theirs) in self.limbs[base..].iter_mut().zip(&other.limbs) {
                *mine += theirs;
            }
        }
        self.normalise();
    }

    /// The exact sum of `count` ones (the same state as adding 1.0 `count` times).
    pub fn of_count(count: u64) -> Self {
        let mut sum = ExactSum::new();
        sum.add((count >> 32) as f64 * 4_294_967_296.0);
        sum.add((count & 0xffff_ffff) as f64);
        sum.normalise();
        sum
    }

    /// Whether the sum is exactly zero (and not poisoned).
    pub fn is_zero(&self) -> bool {
        !self.poisoned && self.normalised().limbs.is_empty()
    }

    /// Whether a non-finite value was added.
    pub fn is_poisoned(&self) -> bool {
        self.poisoned
    }

    /// The sum correctly rounded to `f64` (round to nearest, ties to even; ±∞ beyond the
    /// `f64` range; NaN if poisoned). A deterministic function of the exact state.
    pub fn value(&self) -> f64 {
        if self.poisoned {
            return f64::NAN;
        }
        let state = self.normalised();
        let Some(&top) = state.limbs.last() else {
            return 0.0;
        };
        if top < 0 {
            let mut magnitude = state.into_owned();
            magnitude.limbs.iter_mut().for_each(|limb| *limb = -*limb);
            magnitude.normalise();
            -magnitude.positive_value()
        } else {
            state.positive_value()
        }
    }

    /// The value of a normalised, non-negative state.
    fn positive_value(&self) -> f64 {
        let Some(t) = self.limbs.iter().rposition(|&limb| limb != 0) else {
            return 0.0;
        };
        let global_top = self.low as i64 + t as i64;
        if global_top <= 2 {
            // Below 2⁹⁶ units of 2⁻¹⁰⁷⁴: the integer fits in a u128 and needs one rounding.
            let integer = self.limbs[..=t]
                .iter()
                .enumerate()
                .fold(0u128, |acc, (k, &limb)| {
                    acc | (limb as u128) << (LIMB_BITS as i64 * (self.low as i64 + k as i64))
                });
            return integer as f64 * f64::from_bits(1);
        }
        // The top three limbs hold at least 65 significant bits; a sticky bit stands for
        // everything below them, so one rounding of the u128 gives the correctly rounded sum.
        let mut gathered = 0u128;
        for j in 0..3 {
            let limb = self.limbs.get(t.wrapping_sub(j)).copied().unwrap_or(0);
            gathered = gathered << LIMB_BITS | limb as u128;
        }
        if self.limbs[..t.saturating_sub(2)].iter().any(|&l| l != 0) {
            gathered |= 1;
        }
        let exponent = LIMB_BITS as i64 * (global_top - 2) - BIT_OFFSET as i64;
        gathered as f64 * power_of_two(exponent)
    }

    /// Grows the window so that it covers limbs `from..to`.
    #[inline]
    fn cover(&mut self, from: u32, to: u32) {
        if self.limbs.is_empty() {
            self.low = from;
            self.limbs.resize((to - from) as usize, 0);
            return;
        }
        if from < self.low {
            let extra = (self.low - from) as usize;
            self.limbs.splice(0..0, std::iter::repeat_n(0, extra));
            self.low = from;
        }
        let end = self.low as usize + self.limbs.len();
        if to as usize > end {
            self.limbs.resize(to as usize - self.low as usize, 0);
        }
    }

    /// This sum in canonical form (borrowed when it already is).
    fn normalised(&self) -> Cow<'_, ExactSum> {
        if self.pending == 0 && self.is_canonical() {
            Cow::Borrowed(self)
        } else {
            let mut copy = self.clone();
            copy.normalise();
            Cow::Owned(copy)
        }
    }

    fn is_canonical(&self) -> bool {
        let Some((&top, rest)) = self.limbs.split_last() else {
            return true;
        };
        let digits_ok = rest.iter().all(|&limb| (0..RADIX).contains(&limb));
        // A zero top limb is kept only as the sign limb of a top digit ≥ 2³¹.
        let top_ok = (-HALF..HALF).contains(&top)
            && (top != 0 || rest.last().is_some_and(|&next| next >= HALF));
        let no_sign_limb = !(top == -1 && rest.last().is_some_and(|&next| next >= HALF));
        let bottom_ok = self.limbs[0] != 0;
        digits_ok && top_ok && no_sign_limb && bottom_ok
    }

    /// Propagates carries into canonical form (see the module docs).
    fn normalise(&mut self) {
        self.pending = 0;
        if self.limbs.is_empty() {
            self.low = 0;
            return;
        }
        let mut carry = 0i64;
        let last = self.limbs.len() - 1;
        for limb in self.limbs[..last].iter_mut() {
            let value = *limb + carry;
            carry = value >> LIMB_BITS;
            *limb = value - (carry << LIMB_BITS);
        }
        let mut top = self.limbs[last] + carry;
        while !(-HALF..HALF).contains(&top) {
            let carry = top >> LIMB_BITS;
            let index = self.limbs.len() - 1;
            self.limbs[index] = top - (carry << LIMB_BITS);
            self.limbs.push(carry);
            top = carry;
        }
        let index = self.limbs.len() - 1;
        self.limbs[index] = top;
        while self.limbs.len() >= 2 {
            let top = self.limbs[self.limbs.len() - 1];
            let next = self.limbs[self.limbs.len() - 2];
            if top == 0 && next < HALF {
                self.limbs.pop();
            } else if top == -1 && next >= HALF {
                self.limbs.pop();
                let index = self.limbs.len() - 1;
                self.limbs[index] = next - RADIX;
            } else {
                break;
            }
        }
        if self.limbs == [0] {
            self.limbs.clear();
            self.low = 0;
            return;
        }
        let zeros = self.limbs.iter().take_while(|&&limb| limb == 0).count();
        if zeros > 0 {
            self.limbs.drain(..zeros);
            self.low += zeros as u32;
        }
    }

    /// The canonical state as `(limb index, limb value)` pairs of the non-zero limbs and
    /// the top limb (which is zero when it only carries the sign).
    fn canonical_limbs(&self) -> Vec<(u32, i64)> {
        let state = self.normalised();
        let top = state.limbs.len().saturating_sub(1);
        state
            .limbs
            .iter()
            .enumerate()
            .filter(|(k, limb)| **limb != 0 || *k == top)
            .map(|(k, limb)| (state.low + k as u32, *limb))
            .collect()
    }

    /// Rebuilds a sum from its serialised form, refusing anything but the canonical form
    /// this type writes and a `value` that disagrees with the limbs.
    pub(crate) fn from_repr(repr: ExactSumRepr) -> Result<Self, TallyError> {
        let mut sum = ExactSum {
            poisoned: repr.poisoned,
            ..ExactSum::new()
        };
        let mut previous: Option<u32> = None;
        for (k, &(index, limb)) in repr.limbs.iter().enumerate() {
            if index > MAX_LIMB_INDEX {
                return Err(TallyError::OutOfRange {
                    field: format!("limbs[{k}]"),
                    value: format!("limb index {index}"),
                    allowed: format!("0..={MAX_LIMB_INDEX}"),
                });
            }
            if previous.is_some_and(|p| p >= index) {
                return Err(TallyError::malformed(
                    format!("limbs[{k}]"),
                    "limb indices must increase",
                ));
            }
            previous = Some(index);
            sum.cover(index, index + 1);
            let slot = (index - sum.low) as usize;
            sum.limbs[slot] = limb;
        }
        if sum.canonical_limbs() != repr.limbs || !sum.is_canonical() {
            return Err(TallyError::malformed(
                "limbs",
                "not in canonical form (digits in [0, 2^32) under a signed top limb in [-2^31, 2^31), no other zero limbs listed)",
            ));
        }
        let expected = (!sum.poisoned).then(|| sum.value());
        let same = match (repr.value, expected) {
            (Some(a), Some(b)) => a.to_bits() == b.to_bits(),
            (None, None) => true,
            _ => false,
        };
        if !same {
            return Err(TallyError::mismatch(
                "value",
                "the rounded value disagrees with the exact limbs",
                format_value(repr.value),
                format_value(expected),
            ));
        }
        Ok(sum)
    }
}

fn format_value(value: Option<f64>) -> String {
    value.map_or_else(|| "null (poisoned)".to_string(), |v| format!("{v:e}"))
}

/// 2^exponent as `f64` (subnormal below 2⁻¹⁰²², +∞ above 2¹⁰²³, 0 below 2⁻¹⁰⁷⁴).
fn power_of_two(exponent: i64) -> f64 {
    if exponent > 1023 {
        f64::INFINITY
    } else if exponent >= -1022 {
        f64::from_bits(((exponent + 1023) as u64) << 52)
    } else if exponent >= -1074 {
        f64::from_bits(1u64 << (exponent + 1074))
    } else {
        0.0
    }
}

/// Serialised form of an [`ExactSum`]: its rounded value (for readers; `null` when
/// poisoned) and its exact state as `[limb index, limb]` pairs.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct ExactSumRepr {
    value: Option<f64>,
    #[serde(default, skip_serializing_if = "std::ops::Not::not")]
    poisoned: bool,
    limbs: Vec<(u32, i64)>,
}

impl ExactSum {
    /// The serialised form.
    pub(crate) fn to_repr(&self) -> ExactSumRepr {
        ExactSumRepr {
            value: (!self.poisoned).then(|| self.value()),
            poisoned: self.poisoned,
            limbs: self.canonical_limbs(),
        }
    }
}

impl Serialize for ExactSum {
    fn serialize<S: serde::Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        self.to_repr().serialize(serializer)
    }
}

impl<'de> Deserialize<'de> for ExactSum {
    fn deserialize<D: serde::Deserializer<'de>>(deserializer: D) -> Result<Self, D::Error> {
        let repr = ExactSumRepr::deserialize(deserializer)?;
        ExactSum::from_repr(repr).map_err(serde::de::Error::custom)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn sum_of(values: &[f64]) -> ExactSum {
        let mut sum = ExactSum::new();
        values.iter().for_each(|&v| sum.add(v));
        sum
    }

    #[test]
    fn small_integers_sum_exactly() {
        let values: Vec<f64> = (1..=100).map(f64::from).collect();
        assert_eq!(sum_of(&values).value(), 5050.0);
    }

    #[test]
    fn cancellation_is_exact() {
        // 1e100 + 1 - 1e100 is 1 exactly, which naive f64 summation loses.
        assert_eq!(sum_of(&[1e100, 1.0, -1e100]).value(), 1.0);
        assert_eq!(sum_of(&[-2.5, 1e-300]).value(), -2.5);
        assert!(sum_of(&[3.0, -3.0]).is_zero());
        assert_eq!(sum_of(&[3.0, -3.0]), ExactSum::new());
    }

    #[test]
    fn subnormal_sums_are_exact() {
        // The smallest subnormals: the sum of three is exactly three units.
        let unit = f64::from_bits(1);
        assert_eq!(sum_of(&[unit, unit, unit]).value(), 3.0 * unit);
        let tiny = 2.9e-312;
        assert_eq!(sum_of(&[tiny]).value(), tiny);
        assert_eq!(sum_of(&[tiny, tiny]).value(), 2.0 * tiny);
    }

    #[test]
    fn extremes_round_correctly() {
        assert_eq!(sum_of(&[f64::MAX]).value(), f64::MAX);
        assert_eq!(sum_of(&[f64::MAX, f64::MAX]).value(), f64::INFINITY);
        assert_eq!(sum_of(&[-f64::MAX, -f64::MAX]).value(), f64::NEG_INFINITY);
        assert_eq!(sum_of(&[f64::MIN_POSITIVE]).value(), f64::MIN_POSITIVE);
        // 1 + 2⁻⁵³ is a tie: rounds to even (1); one more unit far below breaks the tie up.
        let half_ulp = 2f64.powi(-53);
        assert_eq!(sum_of(&[1.0, half_ulp]).value(), 1.0);
        assert_eq!(sum_of(&[1.0, half_ulp, 1e-300]).value(), 1.0 + f64::EPSILON);
        assert!(sum_of(&[1.0, f64::NAN]).value().is_nan());
    }

    #[test]
    fn a_top_digit_above_half_the_radix_keeps_its_sign_limb() {
        // 3 · 2⁴⁴ = 3 · 2³⁰ · 2³²ᐧ³⁴⁻¹⁰⁷⁴: a top digit above 2³¹, positive only with a zero
        // limb above it.
        let sum = sum_of(&[3.0 * 2f64.powi(44)]);
        let limbs = sum.canonical_limbs();
        assert_eq!(limbs.last().unwrap().1, 0, "{limbs:?}");
        let back: ExactSum = serde_json::from_str(&serde_json::to_string(&sum).unwrap()).unwrap();
        assert_eq!(back, sum);
        assert_eq!(back.value(), 3.0 * 2f64.powi(44));
    }

    #[test]
    fn negative_sums_are_canonical() {
        let sum = sum_of(&[-1.0, -2.0f64.powi(31), 5e-20]);
        assert!(sum.normalised().is_canonical());
        assert_eq!(sum.value(), -1.0 - 2.0f64.powi(31) + 5e-20);
        let back = sum_of(&[5e-20, -1.0, -2.0f64.powi(31)]);
        assert_eq!(back.canonical_limbs(), sum.canonical_limbs());
    }

    #[test]
    fn a_count_is_the_sum_of_that_many_ones() {
        for count in [0u64, 1, 7, 1 << 32, (1 << 53) + 1, u64::MAX] {
            let mut ones = ExactSum::of_count(count.min(1000));
            if count <= 1000 {
                let mut added = ExactSum::new();
                (0..count).for_each(|_| added.add(1.0));
                assert_eq!(added, ones);
            }
            ones = ExactSum::of_count(count);
            assert_eq!(ones.value(), count as f64);
        }
    }

    #[test]
    fn a_sum_over_a_few_decades_stays_small() {
        let sum = sum_of(&[1e-9, 3e-8, 2e-7]);
        assert!(sum.normalised().limbs.len() <= 4, "{:?}", sum);
        assert!(std::mem::size_of::<ExactSum>() <= 40);
    }

    #[test]
    fn serde_round_trip_keeps_the_state() {
        let sum = sum_of(&[3.0e-20, 7.5e12, -1.25, 4.0e30]);
        let text = serde_json::to_string(&sum).unwrap();
        let back: ExactSum = serde_json::from_str(&text).unwrap();
        assert_eq!(back.canonical_limbs(), sum.canonical_limbs());
        assert_eq!(back.value().to_bits(), sum.value().to_bits());
        let poisoned = sum_of(&[1.0, f64::INFINITY]);
        let text = serde_json::to_string(&poisoned).unwrap();
        assert!(
            serde_json::from_str::<ExactSum>(&text)
                .unwrap()
                .value()
                .is_nan()
        );
    }

    #[test]
    fn tampered_states_are_refused() {
        let sum = sum_of(&[1.5, 2.25]);
        let mut value: serde_json::Value = serde_json::to_value(&sum).unwrap();
        value["value"] = serde_json::json!(100.0);
        let error = serde_json::from_value::<ExactSum>(value).unwrap_err();
        assert!(
            error.to_string().contains("disagrees with the exact limbs"),
            "{error}"
        );
        for limbs in [
            r#"[[1, 5], [1, 6]]"#,
            r#"[[3, 5], [2, 6]]"#,
            r#"[[2, 4294967296], [3, 1]]"#,
            r#"[[69, 1]]"#,
            r#"[[2, 0]]"#,
        ] {
            let text = format!(r#"{{"value": 0.0, "limbs": {limbs}}}"#);
            assert!(serde_json::from_str::<ExactSum>(&text).is_err(), "{limbs}");
        }
    }

    proptest! {
        #[test]
        fn any_grouping_gives_the_same_state(
            values in proptest::collection::vec(-1e30f64..1e30, 1..60),
            split in 0usize..60,
        ) {
            let split = split.min(values.len());
            let whole = sum_of(&values);
            let mut left = ExactSum::new();
            let mut right = ExactSum::new();
            for v in values[..split].iter().rev() { left.add(*v); }
            for v in &values[split..] { right.add(*v); }
            right.merge(&left);
            prop_assert_eq!(whole.canonical_limbs(), right.canonical_limbs());
            prop_assert_eq!(whole.value().to_bits(), right.value().to_bits());
            let naive: f64 = values.iter().sum();
            let scale: f64 = values.iter().map(|v| v.abs()).sum();
            prop_assert!((whole.value() - naive).abs() <= 1e-12 * scale.max(1e-300));
        }

        #[test]
        fn value_is_correctly_rounded(
            a in any::<f64>().prop_filter("finite", |v| v.is_finite()),
            b in any::<f64>().prop_filter("finite", |v| v.is_finite()),
        ) {
            // The sum of two doubles correctly rounded is what f64 addition gives (IEEE 754).
            let sum = sum_of(&[a, b]);
            prop_assert!(sum.value() == a + b, "{} + {}", a, b);
        }
    }
}
