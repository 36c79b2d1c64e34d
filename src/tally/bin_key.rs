//! Histogram bins keyed on the bits of an `f64`.
//!
//! A positive finite value x = (1 + f) · 2^e (0 ≤ f < 1) falls in the bin keyed by its
//! exponent e and the top [`RESOLUTION_BITS`] bits of its fraction f. Inside each octave
//! [2^e, 2^(e+1)) there are 2¹⁰ bins of equal width 2^(e−10), so a bin [a, b) has
//! b/a − 1 ≤ 2⁻¹⁰ ≈ 0.098 % everywhere. Subnormal values are keyed the same way after
//! normalisation (those with fewer than 10 bits below their leading bit get a bin of their
//! own), so the bins cover every positive `f64`, from 2⁻¹⁰⁷⁴ to `f64::MAX`, at that
//! resolution. Keys increase with the value, and a key is computed from the bits alone with
//! no logarithm.
//!
//! Key layout: `(E << 10) | top`, where `top` holds the 10 fraction bits and E is the
//! extended exponent: the biased IEEE exponent plus 52 for normal numbers (53..=2098), and
//! 1 + the position of the leading bit for subnormals (1..=52).

/// Fraction bits that select a bin inside its octave: 2¹⁰ = 1024 bins per octave.
pub const RESOLUTION_BITS: u32 = 10;

/// Largest relative width (b − a)/a of any bin [a, b): 2⁻¹⁰ ≈ 0.098 %.
pub const RELATIVE_BIN_WIDTH: f64 = 1.0 / (1u64 << RESOLUTION_BITS) as f64;

/// Extended exponent offset of normal numbers (one per subnormal bit position).
const SUBNORMAL_EXPONENTS: u64 = 52;
/// Smallest valid key (the subnormal 2⁻¹⁰⁷⁴).
pub(crate) const MIN_KEY: u32 = 1 << RESOLUTION_BITS;
/// Largest valid key (the bin of `f64::MAX`).
pub(crate) const MAX_KEY: u32 = ((2046 + SUBNORMAL_EXPONENTS as u32 + 1) << RESOLUTION_BITS) - 1;

/// The key of a positive, finite `value`.
#[inline]
pub(crate) fn key_of(value: f64) -> u32 {
    debug_assert!(value > 0.0 && value.is_finite());
    let bits = value.to_bits();
    if bits >> 52 != 0 {
        ((bits >> (52 - RESOLUTION_BITS)) + (SUBNORMAL_EXPONENTS << RESOLUTION_BITS)) as u32
    } else {
        let leading = 63 - bits.leading_zeros();
        let rest = bits ^ (1u64 << leading);
        let top = if leading >= RESOLUTION_BITS {
            rest >> (leading - RESOLUTION_BITS)
        } else {
            rest << (RESOLUTION_BITS - leading)
        };
        (((leading + 1) << RESOLUTION_BITS) as u64 | top) as u32
    }
}

/// The bit pattern of the lower edge of bin `key` and the step (in bit patterns) to the
/// next bin's lower edge. `None` for a key no value maps to.
fn lower_bits_and_step(key: u32) -> Option<(u64, u64)> {
    if !(MIN_KEY..=MAX_KEY).contains(&key) {
        return None;
    }
    let exponent = (key >> RESOLUTION_BITS) as u64;
    let top = (key & ((1 << RESOLUTION_BITS) - 1)) as u64;
    let found = if exponent > SUBNORMAL_EXPONENTS {
        let biased = exponent - SUBNORMAL_EXPONENTS;
        let shift = 52 - RESOLUTION_BITS;
        ((biased << 52) | (top << shift), 1u64 << shift)
    } else {
        let leading = (exponent - 1) as u32;
        if leading >= RESOLUTION_BITS {
            let shift = leading - RESOLUTION_BITS;
            ((1u64 << leading) | (top << shift), 1u64 << shift)
        } else {
            let shift = RESOLUTION_BITS - leading;
            if top & ((1 << shift) - 1) != 0 {
                return None;
            }
            ((1u64 << leading) | (top >> shift), 1)
        }
    };
    Some(found)
}

/// Whether some positive `f64` falls in bin `key`.
pub(crate) fn is_valid_key(key: u32) -> bool {
    lower_bits_and_step(key).is_some()
}

/// The bin `[low, high)` of a valid key (`high` is +∞ for the bin of `f64::MAX`).
///
/// # Panics
/// For a key that [`is_valid_key`] rejects (a programming error: keys come from
/// [`key_of`] or from validated data).
pub(crate) fn bin_edges(key: u32) -> (f64, f64) {
    let (bits, step) = lower_bits_and_step(key).expect("valid histogram key");
    (f64::from_bits(bits), f64::from_bits(bits + step))
}

/// The lower edge of the bin holding positive finite `value`.
pub(crate) fn snap_down(value: f64) -> f64 {
    bin_edges(key_of(value)).0
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    #[test]
    fn keys_cover_the_whole_positive_range() {
        let smallest = f64::from_bits(1);
        assert_eq!(key_of(smallest), MIN_KEY);
        assert_eq!(key_of(f64::MAX), MAX_KEY);
        assert_eq!(bin_edges(MIN_KEY), (smallest, 2.0 * smallest));
        assert_eq!(bin_edges(MAX_KEY).1, f64::INFINITY);
        let (low, high) = bin_edges(key_of(1.0));
        assert_eq!((low, high), (1.0, 1.0 + RELATIVE_BIN_WIDTH));
        // The last subnormal bin ends where the normal numbers begin.
        let last_subnormal = f64::from_bits((1 << 52) - 1);
        assert_eq!(bin_edges(key_of(last_subnormal)).1, f64::MIN_POSITIVE);
        assert_eq!(key_of(f64::MIN_POSITIVE), key_of(last_subnormal) + 1);
    }

    #[test]
    fn integers_below_2048_have_bins_of_their_own() {
        for n in 1..2048u32 {
            let (low, high) = bin_edges(key_of(n as f64));
            assert_eq!(low, n as f64);
            assert!(high <= n as f64 + 1.0);
        }
    }

    #[test]
    fn keys_of_sparse_subnormals_are_checked() {
        // 2⁻¹⁰⁷⁴ · 2 has one bit: its key's low fraction bits are zero, others are invalid.
        let key = key_of(f64::from_bits(2));
        assert!(is_valid_key(key));
        assert!(!is_valid_key(key + 1));
        assert!(!is_valid_key(0));
        assert!(!is_valid_key(MAX_KEY + 1));
    }

    proptest! {
        #[test]
        fn every_value_lies_in_its_bin_and_bins_are_narrow(bits in 1u64..0x7ff0_0000_0000_0000) {
            let value = f64::from_bits(bits);
            let key = key_of(value);
            prop_assert!(is_valid_key(key));
            let (low, high) = bin_edges(key);
            prop_assert!(low <= value && value < high);
            // At most 2⁻¹⁰ wide, or a bin that holds a single representable value.
            prop_assert!(high - low <= RELATIVE_BIN_WIDTH * low || f64::from_bits(low.to_bits() + 1) == high);
            // Keys are monotonic: the next representable value has the same or the next key.
            let next = f64::from_bits(bits + 1);
            if next.is_finite() {
                let next_key = key_of(next);
                prop_assert!(next_key == key || (next_key > key && bin_edges(next_key).0 == high));
            }
        }
    }
}
